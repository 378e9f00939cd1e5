"""Phenopacket writer validated by the GA4GH reference implementation: the protobuf classes of
the `phenopackets` PyPI package (json_format.ParseDict, unknown fields refused), and compared
with case records of the GA4GH phenopacket-store (../shared/refdata/phenopackets)."""
import json
from pathlib import Path

import phenopackets
import pytest
from google.protobuf import json_format

from irdtriage import CAUTION, __version__
from irdtriage.errors import InputError
from irdtriage.report.phenopacket_out import InvalidPhenopacket, to_phenopacket, write_phenopacket

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"
REFDATA = Path(__file__).resolve().parents[1].parent / "shared" / "refdata" / "phenopackets"


def _parse(obj):
    return json_format.ParseDict(obj, phenopackets.Phenopacket(), ignore_unknown_fields=False)


def test_new_phenopacket_validates_and_round_trips(tmp_path):
    r = json.loads(FIXTURE.read_text())
    path = write_phenopacket(r, tmp_path / "x.phenopacket.json")
    pp = json.loads(path.read_text())
    msg = _parse(pp)  # source: GA4GH Phenopacket v2 schema (phenopackets package)
    again = _parse(json_format.MessageToDict(msg))
    assert again == msg
    assert msg.subject.id == "EXAMPLE-PROBAND" and phenopackets.Sex.Name(msg.subject.sex) == "FEMALE"
    assert msg.meta_data.phenopacket_schema_version == "2.0"
    assert msg.meta_data.created_by == f"irdtriage {__version__}"
    assert {res.id for res in msg.meta_data.resources} >= {"hp", "geno", "so", "hgnc"}
    assert [pf.type.id for pf in msg.phenotypic_features] == ["HP:0000510", "HP:0000662"]
    (interp,) = msg.interpretations
    assert phenopackets.Interpretation.ProgressStatus.Name(interp.progress_status) == "IN_PROGRESS"
    assert " ".join(CAUTION.split()) in interp.summary
    gis = interp.diagnosis.genomic_interpretations
    assert len(gis) == 3
    vi = gis[0].variant_interpretation
    assert phenopackets.AcmgPathogenicityClassification.Name(vi.acmg_pathogenicity_classification) == "LIKELY_PATHOGENIC"
    assert [(x.syntax, x.value) for x in vi.variation_descriptor.expressions] == [
        ("hgvs.c", "NM_EXAMPLE1.1:c.100C>T"), ("hgvs.p", "p.(Arg34Ter)")]
    vr = vi.variation_descriptor.vcf_record
    assert (vr.genome_assembly, vr.chrom, vr.pos, vr.ref, vr.alt) == ("GRCh38", "chr1", 1000100, "C", "T")
    assert phenopackets.GenomicInterpretation.InterpretationStatus.Name(gis[2].interpretation_status) == "CANDIDATE"
    assert not interp.diagnosis.HasField("disease")  # no disease id in the result: left out, not invented


def test_disease_used_when_given():
    r = json.loads(FIXTURE.read_text())
    r["genes"][0]["diseases"] = [{"id": "OMIM:000000", "label": "example disease"}]
    pp = to_phenopacket(r)
    assert pp["interpretations"][0]["diagnosis"]["disease"] == {"id": "OMIM:000000", "label": "example disease"}


def test_invalid_output_is_refused(tmp_path):
    r = json.loads(FIXTURE.read_text())
    r["sample"]["sex"] = "NOT_A_SEX"
    with pytest.raises(InvalidPhenopacket):
        write_phenopacket(r, tmp_path / "bad.json")
    assert not list(tmp_path.iterdir())


def test_invalid_input_phenopacket_is_input_error():
    r = json.loads(FIXTURE.read_text())
    with pytest.raises(InputError, match="not a valid GA4GH Phenopacket"):
        to_phenopacket(r, {"id": "x", "subject": {"id": "y", "sexx": "MALE"}}, "in.json")


@pytest.mark.skipif(not REFDATA.is_dir(), reason="../shared/refdata/phenopackets is absent (GA4GH phenopacket-store extract)")
def test_with_phenopacket_store_case_as_input():
    # source: GA4GH phenopacket-store case record; its allelicState terms are the reference for GENO ids
    src = sorted((REFDATA / "RPGRIP1").glob("*.json"))[0]
    original = json.loads(src.read_text())
    answer = original.pop("interpretations")
    ref_states = {}
    for it in answer:
        for gi in it["diagnosis"]["genomicInterpretations"]:
            st = gi["variantInterpretation"]["variationDescriptor"].get("allelicState")
            if st:
                ref_states[st["label"]] = st["id"]
    r = json.loads(FIXTURE.read_text())
    for f in r["findings"]:
        f["zygosity"] = "homozygous" if "homozygous" in ref_states else "heterozygous"
    pp = to_phenopacket(r, original, src)
    _parse(pp)
    assert pp["phenotypicFeatures"] == original["phenotypicFeatures"]  # the input is kept
    assert pp["subject"] == original["subject"]
    gi = pp["interpretations"][-1]["diagnosis"]["genomicInterpretations"][0]
    assert gi["subjectOrBiosampleId"] == original["subject"]["id"]
    state = gi["variantInterpretation"]["variationDescriptor"]["allelicState"]
    assert ref_states[state["label"]] == state["id"]
    assert pp["metaData"]["updates"][-1]["updatedBy"] == f"irdtriage {__version__}"
    assert "CAUTION" in pp["metaData"]["updates"][-1]["comment"]


@pytest.mark.skipif(not REFDATA.is_dir(), reason="../shared/refdata/phenopackets is absent (GA4GH phenopacket-store extract)")
def test_geno_ids_match_phenopacket_store():
    # source: every allelicState used in the phenopacket-store extract (heterozygous, homozygous)
    from irdtriage.report.phenopacket_out import ALLELIC_STATE

    seen = {}
    for p in REFDATA.glob("*/*.json"):
        for it in json.loads(p.read_text()).get("interpretations", []):
            for gi in it.get("diagnosis", {}).get("genomicInterpretations", []):
                st = gi.get("variantInterpretation", {}).get("variationDescriptor", {}).get("allelicState")
                if st:
                    seen[st["label"]] = st["id"]
    assert {"heterozygous", "homozygous"} <= set(seen)
    for label, gid in seen.items():
        if label in ALLELIC_STATE:
            assert ALLELIC_STATE[label]["id"] == gid, label
