"""Causal variants of published cases (GA4GH phenopacket-store, ../shared/refdata/phenopackets)
run through the criterion engine with frequency unknown and annotation built from their HGVS.

Checks (sources beside them):
* a variant reported as causal must never come out Benign or Likely benign (the cases'
  publications and phenopacket-store curation; with no population data no benign criterion
  can be met);
* predicted null variants (stop, frameshift, canonical +/-1,2 splice, initiation codon) in
  genes where loss of function causes disease meet PVS1 at some strength (Abou Tayoun et al.
  2018 decision tree: every null branch ends at Moderate or above when LOF is a mechanism).

Mechanisms assumed (from memory of the genes' disease literature; not taken from the panel
file so this check stays independent of it): RPGRIP1, CLN3, BBS1, RGS9BP, IFT140 - recessive
loss of function; PRPF31 - dominant haploinsufficiency (loss of function); NRL - recessive
loss of function and dominant gain of function.
"""
import glob
import json
import re
from pathlib import Path

import pytest

from irdtriage.acmg.combine import combine
from irdtriage.acmg.engine import evaluate
from irdtriage.acmg.rules import load_rules
from irdtriage.models import Annotation, Finding, Gene, Span, Variant

REFDATA = Path(__file__).resolve().parents[2].parent / "shared" / "refdata" / "phenopackets"
pytestmark = pytest.mark.external

MECHANISMS = {
    "RPGRIP1": (("AR",), ("LOF",)), "CLN3": (("AR",), ("LOF",)), "BBS1": (("AR",), ("LOF",)),
    "RGS9BP": (("AR",), ("LOF",)), "IFT140": (("AR",), ("LOF",)), "PRPF31": (("AD",), ("LOF",)),
    "NRL": (("AR", "AD"), ("LOF", "GOF")),
}
NULL = {"stop_gained", "frameshift_variant", "splice_donor_variant", "splice_acceptor_variant", "start_lost",
        "exon_loss_variant"}


def consequence(hgvs_c: str, hgvs_p: str) -> str:
    """Sequence Ontology term from HGVS expressions (the mapping this check relies on)."""
    p = hgvs_p.split(":", 1)[-1]
    c = hgvs_c.split(":", 1)[-1]
    span = re.search(r"c\.(\d+)[+-]\d+_(\d+)[+-]\d+del", c)
    if span and span.group(1) != span.group(2):
        return "exon_loss_variant"  # deletion from one intron to another removes whole exon(s)
    if re.search(r"c\.\d+\+[12][ACGT]", c) or re.search(r"c\.\d+\+[12](del|dup|_)", c):
        return "splice_donor_variant"
    if re.search(r"c\.\d+-[12][ACGT]", c) or re.search(r"c\.\d+-[12](del|dup|_)", c):
        return "splice_acceptor_variant"
    if re.search(r"p\.\(?Met1\?", p) or re.search(r"p\.\(?M1\?", p):
        return "start_lost"
    if "fs" in p:
        return "frameshift_variant"
    if "ext" in p:
        return "stop_lost"
    if re.search(r"(Ter|\*)\)?$", p):
        return "stop_gained"
    if p.endswith("=)") or p.endswith("="):
        return "synonymous_variant"
    if re.search(r"p\.\(?[A-Z][a-z]{2}\d+(_[A-Z][a-z]{2}\d+)?del[A-Za-z]*\)?$", p):
        return "inframe_deletion"
    if re.search(r"(dup|ins|delins)", p):
        return "inframe_insertion"
    if re.search(r"c\.-?\d+[+-]\d+", c):
        return "intron_variant"
    if re.search(r"c\.-\d+", c):
        return "5_prime_UTR_variant"
    if re.search(r"c\.\*\d+", c):
        return "3_prime_UTR_variant"
    return "missense_variant"


def causal_variants():
    if not REFDATA.is_dir():
        return []
    out = []
    for path in sorted(glob.glob(str(REFDATA / "*" / "*.json"))):
        data = json.loads(Path(path).read_text())
        for interp in data.get("interpretations", []):
            for gi in interp.get("diagnosis", {}).get("genomicInterpretations", []):
                vd = gi.get("variantInterpretation", {}).get("variationDescriptor", {})
                rec = vd.get("vcfRecord")
                gene = vd.get("geneContext", {}).get("symbol")
                if not rec or gene not in MECHANISMS:
                    continue
                ex = {e["syntax"]: e["value"] for e in vd.get("expressions", [])}
                out.append((Path(path).name, gene, rec, ex.get("hgvs.c", ""), ex.get("hgvs.p", "")))
    return out


CASES = causal_variants()


@pytest.mark.parametrize("c,p,term", [  # HGVS (den Dunnen et al. 2016) -> Sequence Ontology term
    ("c.1639G>T", "p.(Ala547Ser)", "missense_variant"),
    ("c.898C>T", "p.(Arg300Ter)", "stop_gained"),
    ("c.898C>T", "p.(Arg300*)", "stop_gained"),
    ("c.100del", "p.(Gly34AlafsTer5)", "frameshift_variant"),
    ("c.100+1G>A", "p.?", "splice_donor_variant"),
    ("c.101-2A>G", "p.?", "splice_acceptor_variant"),
    ("c.2A>G", "p.(Met1?)", "start_lost"),
    ("c.100+5G>A", "p.?", "intron_variant"),
    ("c.2710+374_2895+78del", "p.?", "exon_loss_variant"),
    ("c.147_149del", "p.(Ser50del)", "inframe_deletion"),
])
def test_hgvs_to_consequence(c, p, term):
    assert consequence(c, p) == term
RULES = load_rules()


def _run(gene, rec, hgvs_c, hgvs_p):
    inh, mech = MECHANISMS[gene]
    g = Gene(gene, "HGNC:0", gene, hgvs_c.split(":")[0], "", "", "+", Span("1", 1, 2), None, inh, mech, (), "x")
    term = consequence(hgvs_c, hgvs_p)
    a = Annotation(gene, hgvs_c.split(":")[0], (term,), hgvs_c.split(":", 1)[-1], hgvs_p.split(":", 1)[-1],
                   exon="", is_mane=True)
    v = Variant(rec["chrom"], int(rec["pos"]), rec["ref"], rec["alt"])
    # phenopacket vcfRecords are GRCh38: the build lets PVS1 use the transcript model when it
    # covers the gene (panels/transcripts.yaml; none of these seven genes at present)
    f = Finding("F", v, gene, a, evidence={"population": None, "build": "GRCh38"})
    crit = evaluate(f, g, RULES)
    return term, {c.code: c for c in crit}, combine(crit)


@pytest.mark.skipif(not REFDATA.is_dir(), reason="../shared/refdata/phenopackets not present (outside reference data)")
def test_refdata_has_cases():
    assert len(CASES) > 100


@pytest.mark.skipif(not REFDATA.is_dir(), reason="../shared/refdata/phenopackets not present (outside reference data)")
@pytest.mark.parametrize("name,gene,rec,hgvs_c,hgvs_p", CASES, ids=[f"{c[0]}:{c[3]}" for c in CASES])
def test_causal_variant(name, gene, rec, hgvs_c, hgvs_p):
    term, crit, cls = _run(gene, rec, hgvs_c, hgvs_p)
    assert cls.classification not in ("Benign", "Likely benign")
    assert cls.point_class not in ("Benign", "Likely benign")
    if term in NULL and "LOF" in MECHANISMS[gene][1]:
        assert crit["PVS1"].met is True, crit["PVS1"].reason
        assert crit["PVS1"].strength in ("VeryStrong", "Strong", "Moderate", "Supporting")
