"""Copy-number and structural records through the real pipeline (pysam intake, classification, genotype
fit, ranking) on hand-built GRCh37 VCFs.

Coordinates are typed from the GENCODE-derived canonical transcript table for GRCh37 (spliceai 1.3.1,
``gencode_canonical_grch37.txt.gz``; 0-based starts shown +1 here, ends inclusive);
``tests/external/test_sv_refdata.py`` re-reads them from that table when it is present:

* ABCA4 (minus strand, 50 exons): exon 5 94,568,571-94,568,698; exon 6 94,564,350-94,564,547;
  exon 13 94,528,133-94,528,309; exon 14 94,526,093-94,526,315.  Exons 6-13 are 198 + 90 + 241 +
  140 + 117 + 198 + 206 + 177 = 1,367 nt (c.571-c.1937 on NM_000350), not a multiple of 3: removing
  them shifts the frame, and the shift starts in exon 14, well before the penultimate exon 49, so NMD
  is expected (Abou Tayoun et al., Hum Mutat 2018;39:1517-1524: full or multi-exon deletion, out of
  frame, NMD: PVS1 VeryStrong).
* RPE65 (14 exons): transcript 68,894,505-68,915,642.  A deletion over all of it is a full gene
  deletion (Abou Tayoun 2018, Figure 1: PVS1 VeryStrong).
* RS1 (chrX, 6 exons): transcript 18,658,030-18,690,229.

Genotype expectations are Mendelian (common practice): two heterozygous alleles of a recessive gene
are biallelic with phase unknown until parents or read phasing place them; each carried by a
different parent they are in trans; a deletion on chrX in a male leaves no copy (hemizygous).
The events themselves are constructed for the tests.
"""
from __future__ import annotations

import pytest
from sv_vcf import csq, small_record, sv_record, write_ped, write_vcf

from irdtriage.pipeline import triage

# ABCA4 phenotype: macular dystrophy, reduced visual acuity (HPO annotations of ABCA4 diseases)
ABCA4_HPO = "HP:0007754,HP:0007663"
ABCA4_MANE = "NM_000350.3"  # MANE Select (MANE v1.5 summary)
DEL_6_13 = sv_record("chr1", 94527000, "<DEL>", "SVTYPE=DEL;END=94566000;SVLEN=-39000",
                     ["0/1:.:.:60:1", "0/1:.:.:60:1", "0/0:.:.:60:2"])
# exon 14 starts (transcript order) at 94,526,315 = c.1938, so 94,526,200 is c.2053 (codon 685)
STOP_EX14 = small_record("chr1", 94526200, "G", "A",
                               csq("A", "ABCA4", "stop_gained", "14/50", "c.2053C>T", "p.(Gln685Ter)",
                                   "685/2273", feature=ABCA4_MANE),
                               ["0/1:18,17:35:99:.", "0/0:30,0:30:99:.", "0/1:15,15:30:99:."])
# a decoy: one pathogenic-looking allele in another recessive gene (a carrier state)
DECOY_RPE65 = small_record("chr1", 68900000, "G", "A",
                           csq("A", "RPE65", "stop_gained", "5/14", "c.400C>T", "p.(Gln134Ter)", "134/533"),
                           ["0/1:20,20:40:99:.", "0/0:30,0:30:99:.", "0/1:15,15:30:99:."])


def _structural(r, gene=None):
    return [f for f in r["findings"] if f["kind"] == "structural" and (gene is None or f["gene"] == gene)]


def _criterion(f, code):
    return next(c for c in f["criteria"] if c["code"] == code)


def test_deletion_plus_stop_is_biallelic_phase_unknown_and_ranked_first(tmp_path):
    vcf = write_vcf(tmp_path / "kid.vcf", ["KID", "MUM", "DAD"], [DEL_6_13, STOP_EX14, DECOY_RPE65])
    r = triage(vcf, sample="KID", hpo=ABCA4_HPO)
    (sv,) = _structural(r, "ABCA4")
    s = sv["structural"]
    assert s["type"] == "DEL" and s["start"] == 94527001 and s["end"] == 94566000
    assert s["exons"] == list(range(6, 14))
    assert s["frame"] == "out of frame" and s["nmd"] is True
    assert "deletes exons 6-13 of ABCA4" in s["summary"] and "out of frame, NMD expected" in s["summary"]
    pvs1 = _criterion(sv, "PVS1")
    assert pvs1["met"] is True and pvs1["strength"] == "VeryStrong"
    assert _criterion(sv, "PM2")["met"] is None  # no population data for structural events
    top = r["genes"][0]
    assert top["symbol"] == "ABCA4"
    assert top["genotype_fit"] == "biallelic phase unknown"
    assert any("MLPA" in step for step in r["case"]["next_steps"])
    assert not any("not classified by this version" in w for w in r["warnings"])


def test_parents_place_the_deletion_and_stop_in_trans(tmp_path):
    vcf = write_vcf(tmp_path / "trio.vcf", ["KID", "MUM", "DAD"], [DEL_6_13, STOP_EX14])
    ped = write_ped(tmp_path / "trio.ped", "KID", "MUM", "DAD")
    r = triage(vcf, sample="KID", hpo=ABCA4_HPO, ped=ped)
    top = r["genes"][0]
    assert top["symbol"] == "ABCA4"
    assert top["genotype_fit"] == "biallelic in trans"
    (sv,) = _structural(r, "ABCA4")
    # PM3 counts the deletion as an allele: the stop (classified independently) is its partner in trans
    pm3 = _criterion(sv, "PM3")
    assert pm3["met"] is True, pm3


def test_homozygous_whole_gene_deletion_in_a_recessive_gene(tmp_path):
    vcf = write_vcf(tmp_path / "hom.vcf", ["P1"], [
        sv_record("chr1", 68890000, "<DEL>", "SVTYPE=DEL;END=68920000;SVLEN=-30000", ["1/1:.:.:60:0"]),
    ])
    r = triage(vcf, hpo="HP:0000510,HP:0000662")
    (sv,) = _structural(r, "RPE65")
    assert sv["structural"]["extent"] == "whole gene"
    assert sv["zygosity"] == "homozygous"
    assert sv["consequence"] == ["transcript_ablation"]
    pvs1 = _criterion(sv, "PVS1")
    assert pvs1["met"] is True and pvs1["strength"] == "VeryStrong" and "full gene deletion" in pvs1["reason"]
    gene = next(g for g in r["genes"] if g["symbol"] == "RPE65")
    assert gene["genotype_fit"] == "homozygous"


def test_intronic_only_deletion_is_reported_as_such_without_pvs1(tmp_path):
    vcf = write_vcf(tmp_path / "intron.vcf", ["P1"], [
        sv_record("chr1", 94526500, "<DEL>", "SVTYPE=DEL;END=94527800;SVLEN=-1300", ["0/1:.:.:60:1"]),
    ])
    r = triage(vcf, hpo=ABCA4_HPO)
    (sv,) = _structural(r, "ABCA4")
    s = sv["structural"]
    assert s["extent"] == "intronic only" and s["exons"] == []
    assert "within intron 13 of ABCA4" in s["summary"] and "no exon involved" in s["summary"]
    pvs1 = _criterion(sv, "PVS1")
    assert pvs1["met"] is False
    assert sv["consequence"] == ["intron_variant"]
    # Riggs 2020 Table 1, 1B: no protein-coding content, -0.60
    first = s["riggs"]["sections"][0]
    assert (first["section"], first["points"]) == ("1B", -0.6)


def test_apparently_homozygous_variant_inside_a_heterozygous_deletion_is_hemizygous_in_effect(tmp_path):
    stop_ex13 = small_record("chr1", 94528200, "G", "A",
                             csq("A", "ABCA4", "stop_gained", "13/50", "c.1846C>T", "p.(Gln616Ter)", "616/2273"),
                             ["1/1:0,40:40:99:."])
    vcf = write_vcf(tmp_path / "hemi.vcf", ["P1"], [
        sv_record("chr1", 94527000, "<DEL>", "SVTYPE=DEL;END=94566000;SVLEN=-39000", ["0/1:.:.:60:1"]),
        stop_ex13,
    ])
    r = triage(vcf, hpo=ABCA4_HPO)
    top = r["genes"][0]
    assert top["symbol"] == "ABCA4"
    # the stop lies inside the deleted interval: it can only be on the other copy -> in trans
    assert top["genotype_fit"] == "biallelic in trans"
    text = " ".join(top.get("notes", []) + top.get("next_steps", []))
    assert "hemizygous in effect" in text and "loss of the other allele" in text


@pytest.mark.parametrize("call", ["1:.:.:60:0", "1/1:.:.:60:0"])
def test_deletion_on_chrx_in_a_male_is_hemizygous(tmp_path, call):
    # written haploid or as a diploid homozygous call: a male has one chrX copy outside the PARs
    vcf = write_vcf(tmp_path / "male.vcf", ["M1"], [
        sv_record("chrX", 18650000, "<DEL>", "SVTYPE=DEL;END=18700000;SVLEN=-50000", [call]),
    ])
    r = triage(vcf, sex="male", hpo="HP:0000662")
    (sv,) = _structural(r, "RS1")
    assert sv["zygosity"] == "hemizygous"
    gene = next(g for g in r["genes"] if g["symbol"] == "RS1")
    assert gene["genotype_fit"] == "hemizygous"


def test_cnv_record_takes_its_type_from_copy_number(tmp_path):
    # VCF 4.3 <CNV> with FORMAT CN and no GT call: CN 1 of 2 expected copies is a heterozygous loss
    vcf = write_vcf(tmp_path / "cnv.vcf", ["P1"], [
        sv_record("chr1", 94527000, "<CNV>", "SVTYPE=CNV;END=94566000", ["./.:.:.:.:1"]),
    ])
    r = triage(vcf, hpo=ABCA4_HPO)
    (sv,) = _structural(r, "ABCA4")
    assert sv["structural"]["type"] == "DEL" and sv["structural"]["copy_number"] == 1
    assert sv["zygosity"] == "heterozygous"


def test_long_explicit_deletion_becomes_a_structural_finding(tmp_path):
    # 60 bp removed from inside ABCA4 exon 13 (94,528,133-94,528,309): 60 is a multiple of 3 (in frame)
    ref = "A" + "C" * 60
    vcf = write_vcf(tmp_path / "long.vcf", ["P1"], [
        ("chr1", 94528200, ref, "A", "CSQ=" + csq("A", "ABCA4", "inframe_deletion", "13/50", "c.1860_1919del",
                                                   "p.(Ala621_Ala640del)", "621/2273"),
         "GT:AD:DP:GQ", ["0/1:20,20:40:99"]),
    ])
    r = triage(vcf, hpo=ABCA4_HPO)
    (sv,) = _structural(r, "ABCA4")
    s = sv["structural"]
    assert s["source"] == "sequence" and s["length"] == 60
    assert s["extent"] == "within one exon" and s["exons"] == [13] and s["frame"] == "in frame"
    assert not [f for f in r["findings"] if f["kind"] == "small"]


def test_structural_calls_from_a_second_vcf(tmp_path):
    # small variants in the main VCF, the deletion in a one-sample structural-variant VCF (another sample name)
    main = write_vcf(tmp_path / "small.vcf", ["KID"], [(*STOP_EX14[:6], STOP_EX14[6][:1])])
    sv = write_vcf(tmp_path / "sv.vcf", ["KID_SV"], [(*DEL_6_13[:6], DEL_6_13[6][:1])])
    r = triage(main, hpo=ABCA4_HPO, sv_vcf=sv)
    (found,) = _structural(r, "ABCA4")
    assert found["structural"]["exons"] == list(range(6, 14))
    assert r["genes"][0]["symbol"] == "ABCA4" and r["genes"][0]["genotype_fit"] == "biallelic phase unknown"
    assert any("KID_SV is read as KID" in w for w in r["warnings"])


def test_translocation_breakpoint_in_abca4_pairs_with_a_stop(tmp_path):
    # one breakend of an invented chr1;chr19 translocation inside ABCA4 intron 13 (between exon 14,
    # ending 94,526,315, and exon 13, starting 94,528,133; minus strand), ALT form t[p[ (VCF 4.3 section
    # 5.4), and the heterozygous stop in exon 14: two disrupted alleles, phase unknown without parents
    bnd = sv_record("chr1", 94527500, "N[chr19:1000000[", "SVTYPE=BND;MATEID=bnd2", ["0/1:.:.:60:."])
    vcf = write_vcf(tmp_path / "bnd.vcf", ["KID"], [bnd, (*STOP_EX14[:6], STOP_EX14[6][:1])])
    r = triage(vcf, hpo=ABCA4_HPO)
    (sv,) = _structural(r, "ABCA4")
    s = sv["structural"]
    assert s["type"] == "BND" and s["extent"] == "breakpoint"
    assert "breakpoint within intron 13 of ABCA4" in s["summary"] and "translocation junction" in s["summary"]
    assert s["breakend"]["mate_chrom"] == "chr19" and s["breakend"]["mate_id"] == "bnd2"
    pvs1 = _criterion(sv, "PVS1")
    assert pvs1["met"] is True and pvs1["strength"] == "Strong"
    top = r["genes"][0]
    assert top["symbol"] == "ABCA4" and top["genotype_fit"] == "biallelic phase unknown"
    # the result still satisfies the bundled JSON schema (checked by jsonschema)
    import json
    from pathlib import Path

    import jsonschema

    schema = Path(__file__).resolve().parents[1] / "irdtriage" / "schema" / "result.schema.json"
    jsonschema.validate(json.loads(json.dumps(r)), json.loads(schema.read_text()))


def test_riggs_section_5_reads_the_parents_calls(tmp_path):
    # DEL_6_13: the unaffected mother carries it, the father does not (PED: both unaffected).  ABCA4
    # is recessive, so inheritance from an unaffected parent is expected: 5B is shown without points
    # (Riggs et al. 2020 Table 1 section 5 is built for dosage-sensitive genes).
    vcf = write_vcf(tmp_path / "trio.vcf", ["KID", "MUM", "DAD"], [DEL_6_13, STOP_EX14])
    ped = write_ped(tmp_path / "trio.ped", "KID", "MUM", "DAD")
    r = triage(vcf, sample="KID", hpo=ABCA4_HPO, ped=ped)
    (sv,) = _structural(r, "ABCA4")
    sections = {x["section"]: x for x in sv["structural"]["riggs"]["sections"]}
    assert sections["5B"]["points"] == 0.0 and "MUM" in sections["5B"]["reason"]
    assert "3A" in sections and "4" in sections
