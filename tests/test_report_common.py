"""Display helpers shared by the writers: provenance markers out of report prose, plain
genotype-fit labels. Expected strings are typed here; the markers are the project's own
convention ("from memory", "common practice", DEVELOPERS.md)."""
import pytest

from irdtriage.models import GENOTYPE_FITS, ZYGOSITIES
from irdtriage.report.common import (
    GENOTYPE_FIT_LABELS,
    ZYGOSITY_LABELS,
    ZYGOSITY_SHORT,
    genotype_fit_label,
    prose_notes,
    strip_provenance,
)


@pytest.mark.parametrize("raw, prose", [
    ("Limited evidence: few families (from memory).", "Limited evidence: few families."),
    ("A recurrent missense (p.(Arg844His); from memory) in few families.",
     "A recurrent missense (p.(Arg844His)) in few families."),
    ("Two alleles (both from memory); dietary treatment.", "Two alleles; dietary treatment."),
    ("Null alleles are the rule (common practice).", "Null alleles are the rule."),
    ("Carriers show signs, from memory.", "Carriers show signs."),
    ("Nothing to strip here.", "Nothing to strip here."),
])
def test_strip_provenance(raw, prose):
    assert strip_provenance(raw) == prose


def test_prose_notes_drops_curation_notes_only():
    notes = ["GRCh37 span is the GENCODE canonical transcript; use padding.", "On GRCh37 the gene lies on the - strand.",
             "Few families (from memory)."]
    assert prose_notes(notes) == ["On GRCh37 the gene lies on the - strand.", "Few families."]


def test_every_genotype_fit_and_zygosity_has_a_label():
    assert set(GENOTYPE_FIT_LABELS) == set(GENOTYPE_FITS)
    assert set(ZYGOSITY_LABELS) == set(ZYGOSITIES) == set(ZYGOSITY_SHORT)
    assert genotype_fit_label("biallelic phase unknown") == "two alleles, phase not determined"
