"""Structural findings in the GA4GH phenopacket (irdtriage.sv.phenopacket through
irdtriage.report.phenopacket_out), validated by the reference implementation: the protobuf classes of
the ``phenopackets`` PyPI package (``json_format.ParseDict``, unknown fields refused).

Sources, named beside each check:
* GA4GH VRS 1.2 (schema/vrs.json, ``CopyNumber``, ``SequenceLocation``, ``SequenceInterval``): a copy
  number is a count of copies of a located sequence; intervals are interbase (0-based, end exclusive),
  so the 1-based bases a..b are the interval (a - 1, b).
* NCBI GRCh37.p13 assembly report: chromosome 1 is NC_000001.10.
* Sequence Ontology: SO:0001743 copy_number_loss, SO:0000199 translocation.
* Genotype Ontology: GENO:0000135 heterozygous, GENO:0000136 homozygous (phenopacket-schema v2 docs).
* HGVS nomenclature: a genomic deletion is written ``NC_...:g.start_enddel``.
* GA4GH phenopacket-store (../shared/refdata/phenopackets): structural variants are written with
  ``structuralType``, ``geneContext``, ``moleculeContext`` and ``allelicState``.
The VCFs are invented; the exon coordinates are those typed in tests/test_sv_pipeline.py.
"""
from __future__ import annotations

import json
from pathlib import Path

import phenopackets
import pytest
from google.protobuf import json_format
from sv_vcf import sv_record, write_ped, write_vcf
from test_sv_pipeline import ABCA4_HPO, DEL_6_13, STOP_EX14

from irdtriage.pipeline import triage
from irdtriage.report.phenopacket_out import to_phenopacket

STORE = Path(__file__).resolve().parents[1].parent / "shared" / "refdata" / "phenopackets"


def _descriptors(result):
    pp = to_phenopacket(result)
    msg = json_format.ParseDict(pp, phenopackets.Phenopacket(), ignore_unknown_fields=False)
    gis = msg.interpretations[0].diagnosis.genomic_interpretations
    return pp, [gi.variant_interpretation.variation_descriptor for gi in gis]


def test_heterozygous_deletion_is_a_vrs_copy_number_of_one(tmp_path):
    vcf = write_vcf(tmp_path / "trio.vcf", ["KID", "MUM", "DAD"], [DEL_6_13, STOP_EX14])
    ped = write_ped(tmp_path / "trio.ped", "KID", "MUM", "DAD")
    _, vds = _descriptors(triage(vcf, sample="KID", hpo=ABCA4_HPO, ped=ped))
    (vd,) = [v for v in vds if v.HasField("structural_type")]
    cn = vd.variation.copy_number
    assert cn.number.value == 1  # one of two copies left
    loc = cn.derived_sequence_expression.location
    assert loc.sequence_id == "refseq:NC_000001.10"
    # affected bases 94,527,001..94,566,000 (POS 94,527,000 is the padding base): interbase (94527000, 94566000)
    assert (loc.sequence_interval.start_number.value, loc.sequence_interval.end_number.value) == (94527000, 94566000)
    assert (vd.structural_type.id, vd.structural_type.label) == ("SO:0001743", "copy_number_loss")
    assert (vd.allelic_state.id, vd.gene_context.symbol) == ("GENO:0000135", "ABCA4")
    assert vd.vcf_record.alt == "<DEL>" and vd.vcf_record.pos == 94527000
    assert "END=94566000" in vd.vcf_record.info and "SVLEN=-39000" in vd.vcf_record.info
    assert "NC_000001.10:g.94527001_94566000del" in [e.value for e in vd.expressions]
    ext = {e.name: e.value for e in vd.extensions}
    assert ext["exons"].startswith("6-13 of 50") and ext["reading_frame"] == "out of frame"
    assert "MLPA" in ext["next_step"]


def test_homozygous_whole_gene_deletion_leaves_no_copy(tmp_path):
    vcf = write_vcf(tmp_path / "hom.vcf", ["P1"], [
        sv_record("chr1", 68890000, "<DEL>", "SVTYPE=DEL;END=68920000;SVLEN=-30000", ["1/1:.:.:60:0"])])
    _, vds = _descriptors(triage(vcf, hpo="HP:0000510,HP:0000662"))
    (vd,) = [v for v in vds if v.gene_context.symbol == "RPE65"]
    assert vd.variation.copy_number.number.value == 0
    assert vd.allelic_state.id == "GENO:0000136"


def test_translocation_breakpoint_is_a_structural_type_without_copy_number(tmp_path):
    # one breakend of a chr1;chr19 junction inside ABCA4 intron 13 (between exon 14, ending 94,526,315,
    # and exon 13, starting 94,528,133 on the minus strand); ALT form t[p[ (VCF 4.3 section 5.4)
    vcf = write_vcf(tmp_path / "bnd.vcf", ["P1"], [
        sv_record("chr1", 94527500, "N[chr19:1000000[", "SVTYPE=BND", ["0/1:.:.:60:."])])
    _, vds = _descriptors(triage(vcf, hpo=ABCA4_HPO))
    (vd,) = [v for v in vds if v.HasField("structural_type")]
    assert (vd.structural_type.id, vd.structural_type.label) == ("SO:0000199", "translocation")
    assert not vd.HasField("variation")
    assert vd.vcf_record.alt == "N[chr19:1000000[" and vd.vcf_record.pos == 94527500
    assert "breakpoint within intron 13 of ABCA4" in vd.description


def test_store_records_of_structural_variants_use_the_fields_we_write(tmp_path):
    records = sorted(STORE.glob("*/*.json")) if STORE.is_dir() else []
    store = []
    for p in records:
        pp = json.loads(p.read_text())
        for it in pp.get("interpretations") or []:
            for gi in (it.get("diagnosis") or {}).get("genomicInterpretations") or []:
                vd = (gi.get("variantInterpretation") or {}).get("variationDescriptor") or {}
                if "structuralType" in vd:
                    store.append(vd)
    if not store:
        pytest.skip("GA4GH phenopacket-store records with structuralType not present (../shared/refdata)")
    vcf = write_vcf(tmp_path / "hom.vcf", ["P1"], [
        sv_record("chr1", 68890000, "<DEL>", "SVTYPE=DEL;END=68920000;SVLEN=-30000", ["1/1:.:.:60:0"])])
    pp = to_phenopacket(triage(vcf, hpo="HP:0000510,HP:0000662"))
    ours = [gi["variantInterpretation"]["variationDescriptor"]
            for gi in pp["interpretations"][0]["diagnosis"]["genomicInterpretations"]]
    (vd,) = [v for v in ours if "structuralType" in v]
    for theirs in store:
        missing = {"structuralType", "geneContext", "moleculeContext", "allelicState"} & set(theirs) - set(vd)
        assert not missing, missing
        assert set(theirs["structuralType"]) == set(vd["structuralType"]) == {"id", "label"}
