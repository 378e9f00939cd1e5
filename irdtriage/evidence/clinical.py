"""Clinical assertions from a local bgzipped, tabix-indexed VCF (ClinVar-style INFO).

Required per record: ``CLNSIG`` (clinical significance; underscores for spaces).
Used when present: ``CLNREVSTAT`` (review status), ``GENEINFO`` (``SYMBOL:id``), and the
protein change of the asserted variant, from the first of the INFO keys in
``EvidenceConfig.assertion_protein_keys`` (``HGVSp``, ``HGVS_P``, ``PROTEIN_CHANGE``,
``CLNHGVSP``, ``MC_PROTEIN``) or from ``CLNHGVS`` when that holds a ``p.`` expression.
Records without a protein change still count for the same-variant match but not for
PS1/PM5 (which compare amino-acid changes).

Same variant: allele-matched after trimming shared bases.  Same codon: records within
3 bp of the variant are returned as ``nearby`` for PS1/PM5 to compare protein changes.
"""
from __future__ import annotations

from typing import Any
from urllib.parse import unquote


from ..errors import InputError
from .alleles import contig_for, trim
from .indexed import open_indexed_vcf


def _scalar(rec, key: str):
    if key not in rec.info:
        return None
    v = rec.info[key]
    if isinstance(v, tuple):
        v = "|".join(str(x) for x in v if x is not None)
    return unquote(str(v)) if v is not None else None


class ClinicalSource:
    def __init__(self, path: str, config):
        self.path = path
        self.config = config
        self.vf = open_indexed_vcf(path, "clinical-assertion VCF")
        if "CLNSIG" not in self.vf.header.info:
            self.vf.close()
            raise InputError("clinical-assertion VCF has no CLNSIG INFO field in its header", path)
        self.contigs = set(self.vf.header.contigs.keys()) | set(self.vf.index.keys())

    def close(self) -> None:
        self.vf.close()

    def _protein(self, rec) -> str:
        for k in self.config.assertion_protein_keys:
            v = _scalar(rec, k)
            if v:
                return v.split(":", 1)[1] if ":" in v and "p." in v.split(":", 1)[1] else v
        h = _scalar(rec, "CLNHGVS") or ""
        if "p." in h:
            return h[h.index("p."):]
        return ""

    def lookup(self, chrom: str, pos: int, ref: str, alt: str, window: int = 3) -> dict[str, Any]:
        out = {"source": "clinical_vcf", "path": self.path, "same_variant": [], "nearby": []}
        contig = contig_for(chrom, self.contigs)
        if contig is None:
            return out
        want = trim(pos, ref, alt)
        for rec in self.vf.fetch(contig, max(0, pos - 1 - window), pos + len(ref) - 1 + window):
            for a in rec.alts or ():
                if a is None or a.startswith("<"):
                    continue
                gene = (_scalar(rec, "GENEINFO") or "").split(":")[0]
                entry = {
                    "id": rec.id, "pos": rec.pos, "ref": rec.ref, "alt": a,
                    "clnsig": _scalar(rec, "CLNSIG") or "", "review": _scalar(rec, "CLNREVSTAT") or "",
                    "protein": self._protein(rec), "gene": gene,
                }
                if trim(rec.pos, rec.ref, a) == want:
                    out["same_variant"].append(entry)
                else:
                    out["nearby"].append(entry)
        return out
