"""Where evidence values are found: INFO / annotation key names per evidence kind.

Defaults recognise the key names common annotators write.  Safety decision: a bare ``AF``
(or ``AC``/``AN``) in the *patient's* VCF INFO is the allele frequency among the called
samples, not a population frequency, so bare keys are read only from a population-frequency
VCF given with ``--population-vcf``; in the patient VCF only prefixed keys count.
"""
from __future__ import annotations

import re
from dataclasses import dataclass, replace
from typing import Iterable, Mapping


@dataclass(frozen=True)
class EvidenceConfig:
    # population frequency written into the patient VCF INFO or annotation columns
    af_keys: tuple[str, ...] = ("gnomAD_AF", "gnomADe_AF", "gnomADg_AF", "gnomad_AF", "gnomAD_exomes_AF",
                                "gnomAD_genomes_AF", "ExAC_AF")
    popmax_keys: tuple[str, ...] = ("AF_grpmax", "AF_popmax", "gnomAD_AF_popmax", "gnomAD_AF_grpmax",
                                    "gnomADe_AF_grpmax", "gnomADg_AF_grpmax", "MAX_AF", "gnomADe_MAX_AF")
    faf_keys: tuple[str, ...] = ("faf95_popmax", "fafmax_faf95_max", "gnomAD_faf95_popmax", "faf95_max")
    ac_keys: tuple[str, ...] = ("gnomAD_AC", "gnomADe_AC", "gnomADg_AC")
    an_keys: tuple[str, ...] = ("gnomAD_AN", "gnomADe_AN", "gnomADg_AN")
    hom_keys: tuple[str, ...] = ("gnomAD_nhomalt", "gnomADe_nhomalt", "gnomADg_nhomalt", "gnomAD_Hom",
                                 "gnomAD_HOM")
    # keys read from a population-frequency VCF (its own INFO): bare gnomAD-style names
    pop_af_keys: tuple[str, ...] = ("AF",)
    pop_ac_keys: tuple[str, ...] = ("AC",)
    pop_an_keys: tuple[str, ...] = ("AN",)
    pop_hom_keys: tuple[str, ...] = ("nhomalt", "Hom", "HOM", "AC_Hom")
    # in-silico scores; REVEL rank scores are deliberately not accepted (a different scale)
    revel_keys: tuple[str, ...] = ("REVEL", "REVEL_score", "revel", "dbNSFP_REVEL_score")
    spliceai_string_keys: tuple[str, ...] = ("SpliceAI",)
    spliceai_ds_prefixes: tuple[str, ...] = ("SpliceAI_pred_", "SpliceAI_", "")
    clinsig_keys: tuple[str, ...] = ("CLNSIG", "CLIN_SIG", "ClinVar_CLNSIG", "clinvar_clnsig")
    # clinical-assertion VCF: protein change of the asserted variant (see clinical.py)
    assertion_protein_keys: tuple[str, ...] = ("HGVSp", "HGVS_P", "PROTEIN_CHANGE", "CLNHGVSP", "MC_PROTEIN")
    assertion_gene_keys: tuple[str, ...] = ("GENEINFO", "GENE", "SYMBOL")
    # Field names the patient VCF's annotation layouts declare (CSQ/ANN "Format:" in the header).
    # A declared population-frequency column that is empty for this allele means the annotator
    # ran with that resource and did not find the allele there (see collect.py).
    declared_fields: tuple[str, ...] = ()

    def with_layouts(self, layouts: Mapping[str, Iterable[str]]) -> "EvidenceConfig":
        """A copy that knows the declared annotation fields ({"CSQ": [names], "ANN": [names]})."""
        return replace(self, declared_fields=declared_fields(layouts))

    def frequency_field(self, name: str) -> bool:
        """Is this annotation/INFO field a population-frequency column (gnomAD/ExAC-style)?"""
        known = self.af_keys + self.popmax_keys + self.faf_keys + self.ac_keys + self.an_keys
        return name in known or name.lower() in {k.lower() for k in known} or bool(_FREQ_FIELD.match(name))


_FREQ_FIELD = re.compile(r"^(gnomad[a-z]*|exac)_(.*_)?(af|ac|an)(_.*)?$|^max_af$", re.IGNORECASE)


def declared_fields(layouts: Mapping[str, Iterable[str]] | None) -> tuple[str, ...]:
    """All field names of the declared annotation layouts, in order, without repeats."""
    out: list[str] = []
    for fields in (layouts or {}).values():
        for f in fields or ():
            if f not in out:
                out.append(str(f))
    return tuple(out)
