"""The reporting filter: which alleles become findings and which are only counted.

Rules under test (documented in DEVELOPERS.md): BA1 met -> counted as common; an allele whose
Sequence Ontology consequences are all intronic/flanking is counted unless it lies within 50 nt
of an exon by its HGVS c. offset (HGVS intronic numbering, den Dunnen et al. 2016), SpliceAI
predicts a splice effect (delta >= 0.2, Walker et al. 2023), or a pathogenic assertion is met.
"""
from irdtriage.models import Annotation, CriterionResult, Finding, Variant
from irdtriage.pipeline import _not_reported, intron_offset


def finding(consequence, hgvs_c="", criteria=(), spliceai=None, key_alt="G"):
    v = Variant("chr1", 100, "A", key_alt)
    f = Finding("F1", v, "ABCA4", Annotation("ABCA4", consequence=tuple(consequence), hgvs_c=hgvs_c))
    f.criteria = list(criteria)
    f.evidence = {"spliceai_max": spliceai}
    return f


def test_intron_offset_reads_hgvs_numbering():
    assert intron_offset("c.1611+27G>A") == 27
    assert intron_offset("c.801-25_843del") == 25
    assert intron_offset("c.2991+1655A>G") == 1655
    assert intron_offset("c.100A>G") is None
    assert intron_offset("c.-35C>T") is None  # 5' UTR, not intronic
    assert intron_offset("c.*45A>G") is None  # 3' UTR


def test_common_allele_is_counted_not_reported():
    ba1 = CriterionResult("BA1", True, "StandAlone", "AF 0.3 > 0.05")
    assert _not_reported(finding(["missense_variant"], "c.5A>G", [ba1]), {}) == "common_not_reported"


def test_deep_intronic_without_evidence_is_counted():
    assert _not_reported(finding(["intron_variant"], "c.2991+1655A>G"), {}) == "noncoding_not_reported"


def test_deep_intronic_with_splice_prediction_is_reported():
    assert _not_reported(finding(["intron_variant"], "c.2991+1655A>G", spliceai=0.35), {}) is None
    assert _not_reported(finding(["intron_variant"], "c.2991+1655A>G", spliceai=0.19), {}) == "noncoding_not_reported"


def test_near_exon_intronic_is_reported():
    assert _not_reported(finding(["intron_variant"], "c.1611+27G>A"), {}) is None


def test_coding_and_splice_and_unannotated_are_reported():
    assert _not_reported(finding(["missense_variant"], "c.5A>G"), {}) is None
    assert _not_reported(finding(["splice_region_variant", "intron_variant"], "c.5+4A>G"), {}) is None
    assert _not_reported(finding(["not annotated"]), {}) is None


def test_curated_evidence_keeps_an_allele():
    f = finding(["intron_variant"], "c.2991+1655A>G")
    assert _not_reported(f, {f.variant.key: [CriterionResult("PS3", True, "Strong", "RNA study")]}) is None
