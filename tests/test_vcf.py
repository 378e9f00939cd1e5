"""VCF intake through real files read by pysam/htslib (plain, bgzipped + tabix, BCF).

Gene coordinates are GRCh38 MANE Select spans from MANE release 1.5
(MANE.GRCh38.v1.5.summary.txt.gz): RPE65 chr1:68,428,822-68,449,954 (-),
RHO chr3:129,528,639-129,535,344 (+), RPGR chrX:38,284,408-38,327,509 (-).
Record contents below are made up for the tests; the checks are against the VCF
specification (v4.3: GT encoding, '|' phasing, Number=A/R, haploid GT) and htslib's own parse.
"""
from __future__ import annotations

import gzip
import random
import shutil
from dataclasses import asdict

import pysam
import pysam.bcftools
import pytest

from irdtriage.errors import InputError
from irdtriage.models import Gene, Panel, Span
from irdtriage.vcf import QualityThresholds, quality_flags, read_vcf, trim_alleles

RPE65 = Gene("RPE65", "HGNC:10294", "retinoid isomerohydrolase RPE65", "NM_000329.3", "ENST00000262340.6",
             "NP_000320.1", "-", Span("1", 68428822, 68449954), None, ("AR",), ("LOF",), (), "visual_cycle")
RHO = Gene("RHO", "HGNC:10012", "rhodopsin", "NM_000539.3", "ENST00000296271.4", "NP_000530.1", "+",
           Span("3", 129528639, 129535344), None, ("AD", "AR"), ("LOF", "GOF", "DN"), (), "chain")
RPGR = Gene("RPGR", "HGNC:10295", "retinitis pigmentosa GTPase regulator", "NM_001034853.2",
            "ENST00000645032.1", "NP_001030025.1", "-", Span("X", 38284408, 38327509), None, ("XLR",),
            ("LOF",), (), "module")
PANEL = Panel("test", "0", "", {"RPE65": RPE65, "RHO": RHO, "RPGR": RPGR}, {})

# GRCh38 lengths (standards notes / 1000 Genomes GRCh38 reference index)
CONTIGS38 = {"1": 248956422, "3": 198295559, "X": 156040895, "7": 159345973}

HEADER = """##fileformat=VCFv4.2
##FILTER=<ID=PASS,Description="All filters passed">
##FILTER=<ID=LowQual,Description="Low quality">
{contigs}##INFO=<ID=AC,Number=A,Type=Integer,Description="Allele count">
##INFO=<ID=AF,Number=A,Type=Float,Description="Allele frequency">
##INFO=<ID=AN,Number=1,Type=Integer,Description="Allele number">
##INFO=<ID=RC,Number=R,Type=Integer,Description="Read count per allele">
##INFO=<ID=DB,Number=0,Type=Flag,Description="Known">
##FORMAT=<ID={gt},Number=1,Type=String,Description="Genotype">
##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">
##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">
##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">
##FORMAT=<ID=PS,Number=1,Type=Integer,Description="Phase set">
#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t{samples}
"""


def vcf_text(records, samples=("proband",), chr_prefix="chr", contigs=CONTIGS38, gt="GT"):
    c = "".join(f"##contig=<ID={chr_prefix}{k},length={v}>\n" for k, v in contigs.items())
    head = HEADER.format(contigs=c, samples="\t".join(samples), gt=gt)
    body = "".join(chr_prefix + r + "\n" for r in records)
    return head + body


def write(tmp_path, name, text):
    p = tmp_path / name
    p.write_text(text)
    return p


def bgzip_index(path):
    """bgzip + tabix via pysam (htslib); returns the .vcf.gz path."""
    return pysam.tabix_index(str(path), preset="vcf", force=True, keep_original=True)


def to_bcf(vcf_path, out, index=True):
    with pysam.VariantFile(str(vcf_path)) as src, pysam.VariantFile(str(out), "wb", header=src.header) as dst:
        for rec in src:
            dst.write(rec)
    if index:
        pysam.bcftools.index("-f", str(out))  # htslib's bcftools bundled with pysam: writes .csi
    return out


def key(v):
    d = asdict(v)
    d.pop("line")
    return d


RECORDS = [
    # RPE65 multi-allelic with spanning deletion; trio-style phased GT with PS
    "1\t68430000\trs1\tATT\tA,AT,GTT,*\t60\tPASS\tAC=1,1,0,0;AF=0.1,0.2,0.3,0.4;AN=2;RC=5,6,7,8,9\tGT:AD:DP:GQ:PS\t1|2:1,10,9,0,0:20:50:68430000",
    # RPE65 het SNV, low allele balance, LowQual
    "1\t68431000\t.\tC\tT\t12\tLowQual\tAC=1;AF=0.5;AN=2;RC=1,2;DB\tGT:AD:DP:GQ\t0/1:23,2:25:12",
    # outside every gene
    "1\t1000000\t.\tG\tA\t50\tPASS\tAC=1;AF=0.5;AN=2;RC=1,2\tGT:AD:DP:GQ\t0/1:5,5:10:40",
    # RHO hom alt, low depth
    "3\t129530000\t.\tG\tC\t50\tPASS\tAC=2;AF=1;AN=2;RC=0,5\tGT:AD:DP:GQ\t1/1:0,5:5:15",
    # RHO missing genotype
    "3\t129531000\t.\tA\tG\t50\tPASS\tAC=0;AF=0;AN=0;RC=0,0\tGT:AD:DP:GQ\t./.:.:.:.",
    # RPGR haploid (male) call
    "X\t38300000\t.\tT\tC\t50\tPASS\tAC=1;AF=1;AN=1;RC=0,12\tGT:AD:DP:GQ\t1:0,12:12:45",
    # RPGR symbolic allele only
    "X\t38300100\t.\tT\t<DEL>\t50\tPASS\tAC=1;AF=1;AN=1;RC=0,12\tGT:AD:DP:GQ\t1:0,12:12:45",
]


def test_split_trim_genotypes_and_info(tmp_path):
    p = write(tmp_path, "a.vcf", vcf_text(RECORDS))
    res = read_vcf(p, PANEL)
    assert res.build == "GRCh38" and res.proband == "proband" and res.chrom_style == "chr"
    by = {(v.pos, v.ref, v.alt): v for v in res.variants}
    # VCF 4.3 §1.6.1: ALT list 1-based in GT; '*' is a spanning deletion (no own variant)
    a1 = by[(68430000, "ATT", "A")]
    a2 = by[(68430000, "AT", "A")]  # ATT>AT: shared trailing T trimmed
    a3 = by[(68430000, "A", "G")]  # ATT>GTT: shared TT trimmed
    assert (a1.allele_index, a2.allele_index, a3.allele_index) == (1, 2, 3)
    assert a1.original_alts == ("A", "AT", "GTT", "*") and a1.original_ref == "ATT"
    assert a1.calls["proband"].gt == (1, 2) and a2.calls["proband"].gt == (2, 1)
    assert a3.calls["proband"].gt == (2, 2) and a3.calls["proband"].zygosity == "reference"
    assert a1.calls["proband"].phased and a1.calls["proband"].phase_set == 68430000
    assert a1.calls["proband"].zygosity == "heterozygous"
    # Number=A sliced, Number=R keeps (ref, this alt), Number=1 raw
    assert a2.info["AC"] == 1 and a2.info["AF"] == pytest.approx(0.2) and a2.info["AN"] == 2
    assert a2.info["RC"] == (5, 7) and a3.info["RC"] == (5, 8)
    assert (a2.calls["proband"].ad_ref, a2.calls["proband"].ad_alt) == (1, 9)
    assert res.counts["symbolic_skipped"] == 2  # '*' and <DEL>
    assert res.counts["records_read"] == 7
    assert res.counts["in_panel"] == len(res.variants) == 7
    hemi = by[(38300000, "T", "C")].calls["proband"]
    assert hemi.gt == (1,) and hemi.zygosity == "hemizygous"
    nocall = by[(129531000, "A", "G")].calls["proband"]
    assert nocall.gt == (None, None) and nocall.zygosity == "no call"
    assert by[(129530000, "G", "C")].calls["proband"].zygosity == "homozygous"
    # no annotation in this file -> hint
    assert any("no CSQ/ANN annotation" in w for w in res.warnings)
    assert by[(68431000, "C", "T")].line == len(vcf_text(RECORDS).splitlines()) - len(RECORDS) + 2


def test_quality_flags_and_counts(tmp_path):
    p = write(tmp_path, "a.vcf", vcf_text(RECORDS))
    res = read_vcf(p, PANEL)
    by = {(v.pos, v.ref, v.alt): v for v in res.variants}
    q = QualityThresholds()
    lowq = quality_flags(by[(68431000, "C", "T")], "proband", q)
    assert "FILTER=LowQual" in lowq and "GQ 12 < 20" in lowq
    assert "allele balance 0.08 outside 0.2–0.8" in lowq  # 2/(23+2)
    assert quality_flags(by[(129530000, "G", "C")], "proband", q) == ("DP 5 < 8", "GQ 15 < 20")
    assert quality_flags(by[(38300000, "T", "C")], "proband", q) == ()
    assert quality_flags(by[(68430000, "ATT", "A")], "proband", q) == ()  # AB 10/11
    relaxed = QualityThresholds(min_dp=None, min_gq=None, require_pass=False, het_ab_min=None, het_ab_max=None)
    assert quality_flags(by[(68431000, "C", "T")], "proband", relaxed) == ()
    # proband lacks alt: allele 3 (2/2 relative) and the no-call
    assert res.counts["no_alt_in_sample"] == 2
    assert res.counts["failed_quality"] == 2  # LowQual SNV and low-depth hom


def test_chr_and_bare_names_give_same_variants(tmp_path):
    a = read_vcf(write(tmp_path, "chr.vcf", vcf_text(RECORDS)), PANEL)
    b = read_vcf(write(tmp_path, "bare.vcf", vcf_text(RECORDS, chr_prefix="")), PANEL)
    assert a.chrom_style == "chr" and b.chrom_style == ""
    assert [v.key for v in a.variants] == [v.key for v in b.variants]
    assert {v.chrom for v in b.variants} == {"1", "3", "X"}


def test_padding_reaches_splice_region(tmp_path):
    # 30 bp beyond RPE65's MANE end: in with 50 bp padding, out with none
    rec = ["1\t68449984\t.\tC\tT\t50\tPASS\tAC=1;AF=0.5;AN=2;RC=5,5\tGT:AD:DP:GQ\t0/1:5,5:10:40"]
    p = write(tmp_path, "pad.vcf", vcf_text(rec))
    assert len(read_vcf(p, PANEL).variants) == 1
    assert len(read_vcf(p, PANEL, padding=0).variants) == 0
    gz = bgzip_index(p)
    assert len(read_vcf(gz, PANEL).variants) == 1
    assert len(read_vcf(gz, PANEL, padding=0).variants) == 0


def _random_records(seed, n=300):
    rng = random.Random(seed)
    recs = []
    spans = [("1", 68428822 - 200, 68449954 + 200), ("3", 129528639 - 200, 129535344 + 200),
             ("X", 38284408 - 200, 38327509 + 200), ("7", 1000, 500000)]
    for _ in range(n):
        chrom, s, e = rng.choice(spans)
        pos = rng.randint(s, e)
        ref = "".join(rng.choice("ACGT") for _ in range(rng.choice([1, 1, 1, 2, 4])))
        alts = []
        for _ in range(rng.choice([1, 1, 2, 3])):
            a = "".join(rng.choice("ACGT") for _ in range(rng.choice([1, 1, 3])))
            if a != ref and a not in alts:
                alts.append(a)
        if not alts:
            continue
        k = len(alts)
        gts = [rng.choice(["0/1", "1/1", "0|1", "1|0", "./.", f"1/{k}", "0/0"]) for _ in range(3)]
        ad = ",".join(str(rng.randint(0, 30)) for _ in range(k + 1))
        ac = ",".join("1" for _ in alts)
        recs.append((chrom, pos, "\t".join([
            str(pos), ".", ref, ",".join(alts), "50", rng.choice(["PASS", "LowQual", "."]),
            f"AC={ac};AN=6", "GT:AD:DP:GQ",
        ] + [f"{g}:{ad}:{rng.randint(1, 60)}:{rng.randint(1, 99)}" for g in gts])))
    order = {"1": 0, "3": 1, "7": 2, "X": 3}
    recs.sort(key=lambda r: (order[r[0]], r[1]))
    return [c + "\t" + rest for c, _, rest in recs]


@pytest.mark.parametrize("seed", [1, 2, 3])
def test_indexed_streamed_and_bcf_agree(tmp_path, seed):
    text = vcf_text(_random_records(seed), samples=("proband", "mother", "father"))
    plain = write(tmp_path, "r.vcf", text)
    gz = bgzip_index(plain)
    plain_gz = tmp_path / "plain_gzip.vcf.gz"  # ordinary gzip (not bgzf), cannot be indexed
    plain_gz.write_bytes(gzip.compress(text.encode()))
    bgz_noidx = tmp_path / "noidx.vcf.gz"
    shutil.copy(gz, bgz_noidx)
    bcf = to_bcf(plain, tmp_path / "r.bcf")
    bcf_noidx = to_bcf(plain, tmp_path / "noidx.bcf", index=False)

    results = {name: read_vcf(p, PANEL, sample="mother") for name, p in [
        ("plain", plain), ("indexed", gz), ("gzip", plain_gz), ("bgzf-stream", bgz_noidx),
        ("bcf-indexed", bcf), ("bcf-stream", bcf_noidx)]}
    assert results["indexed"].header_info["access"] == "indexed"
    assert results["bcf-indexed"].header_info["access"] == "indexed"
    assert results["plain"].header_info["access"] == "streamed"
    ref = [key(v) for v in results["indexed"].variants]
    assert ref, "the random records must reach the panel"
    # every record outside the panel spans (chr7 and >padding from genes) is left out
    assert all(v.chrom != "chr7" for v in results["indexed"].variants)
    for name, res in results.items():
        assert [key(v) for v in res.variants] == ref, name
        assert res.counts["in_panel"] == results["indexed"].counts["in_panel"], name
    # streaming reads every record; the indexed path reads only panel regions
    n = text.count("\nchr")
    assert results["plain"].counts["records_read"] == n
    assert results["indexed"].counts["records_read"] < n


def test_deletion_reaching_into_gene_from_outside(tmp_path):
    # starts 60 bp before RHO's padded start, 100 bp long: overlaps by REF length
    ref = "A" * 100
    rec = [f"3\t{129528639 - 50 - 60}\t.\t{ref}\tA\t50\tPASS\tAC=1;AF=0.5;AN=2;RC=5,5\tGT:AD:DP:GQ\t0/1:5,5:10:40"]
    p = write(tmp_path, "del.vcf", vcf_text(rec))
    assert len(read_vcf(p, PANEL).variants) == 1
    assert len(read_vcf(bgzip_index(p), PANEL).variants) == 1


# ---------------------------------------------------------------------------
# Errors: one line naming the file (and the line when streaming)
# ---------------------------------------------------------------------------
def _err(path, **kw):
    with pytest.raises(InputError) as ei:
        read_vcf(path, PANEL, **kw)
    msg = str(ei.value)
    assert "\n" not in msg and str(path) in msg
    return ei.value


def test_error_missing_directory_png_text(tmp_path):
    assert "not found" in _err(tmp_path / "nope.vcf").problem
    assert "directory" in _err(tmp_path).problem
    png = tmp_path / "x.png"
    png.write_bytes(b"\x89PNG\r\n\x1a\n" + b"\0" * 64)
    assert "not a VCF" in _err(png).problem
    txt = write(tmp_path, "notes.txt", "hello\nworld\n")
    assert "not a VCF" in _err(txt).problem
    empty = write(tmp_path, "empty.vcf", "")
    assert "empty" in _err(empty).problem


def test_error_truncated_bgzip(tmp_path):
    gz = tmp_path / "t.vcf.gz"
    pysam.tabix_compress(str(write(tmp_path, "t.vcf", vcf_text(RECORDS * 50))), str(gz))
    data = gz.read_bytes()
    cut = tmp_path / "cut.vcf.gz"
    cut.write_bytes(data[: len(data) // 2])
    assert "truncated" in _err(cut).problem
    # plain gzip cut short: found while streaming
    g = tmp_path / "cut_plain.vcf.gz"
    g.write_bytes(gzip.compress(vcf_text(RECORDS * 200).encode())[:-200])
    assert "truncated" in _err(g).problem


def test_error_header_without_chrom_line(tmp_path):
    text = vcf_text(RECORDS).replace("#CHROM\tPOS", "##CHROM\tPOS")
    e = _err(write(tmp_path, "h.vcf", text))
    assert "#CHROM" in e.problem


def test_error_malformed_data_line_names_line(tmp_path):
    recs = list(RECORDS)
    recs[3] = recs[3].replace("129530000", "12953x000")
    text = vcf_text(recs)
    e = _err(write(tmp_path, "m.vcf", text))
    expected_line = text.splitlines().index("chr" + recs[3]) + 1
    assert e.line == expected_line and f"m.vcf:{expected_line}:" in str(e)
    recs = list(RECORDS)
    recs[1] = "1\t68431000\t.\tC"
    text = vcf_text(recs)
    e = _err(write(tmp_path, "m2.vcf", text))
    assert e.line == text.splitlines().index("chr1\t68431000\t.\tC") + 1 and "columns" in e.problem


def test_error_samples_and_gt(tmp_path):
    trio = [r + "\t0/1:5,5:10:40\t0/0:9,0:9:30" for r in RECORDS[1:2]]
    p = write(tmp_path, "trio.vcf", vcf_text(trio, samples=("kid", "mum", "dad")))
    e = _err(p)
    assert "kid, mum, dad" in e.problem and "--sample" in e.problem
    e = _err(p, sample="granny")
    assert "granny" in e.problem and "kid, mum, dad" in e.problem
    res = read_vcf(p, PANEL, sample="mum")
    v = res.variants[0]
    assert res.proband == "mum" and set(v.calls) == {"kid", "mum", "dad"}
    assert v.calls["mum"].zygosity == "heterozygous" and v.calls["dad"].zygosity == "reference"
    nogt = write(tmp_path, "nogt.vcf", vcf_text(RECORDS[:1], gt="XX").replace("GT:AD", "XX:AD"))
    assert "GT" in _err(nogt).problem


def test_error_build_mismatch(tmp_path):
    # GRCh37 chr1 length (standards notes): 249,250,621
    p = write(tmp_path, "b37.vcf", vcf_text(RECORDS[2:3], contigs={"1": 249250621}))
    e = _err(p, build="GRCh38")
    assert "GRCh37" in e.problem and "249250621" in e.problem and "--build GRCh38" in e.problem


def test_trim_alleles():
    # VCF 4.3 §1.6.1: REF/ALT share the leading padding base; trimmed forms
    assert trim_alleles(100, "CTT", "CT") == (100, "CT", "C")
    assert trim_alleles(100, "ACGT", "AGGT") == (101, "C", "G")
    assert trim_alleles(100, "A", "AT") == (100, "A", "AT")


def test_record_spanning_two_intervals_read_once(tmp_path):
    # a deletion reaching from RPE65's padded interval into a second panel gene placed 96 bp
    # later (gene made up for the test) is one record in both access modes
    near = Gene("NEAR", "HGNC:0", "test gene", "", "", "", "+", Span("1", 68450050, 68451000), None, (), (), (), "")
    panel = Panel("t", "0", "", {"RPE65": RPE65, "NEAR": near}, {})
    rec = [f"1\t68449900\t.\t{'A' * 200}\tA\t50\tPASS\tAC=1;AF=0.5;AN=2;RC=5,5\tGT:AD:DP:GQ\t0/1:5,5:10:40"]
    p = write(tmp_path, "span.vcf", vcf_text(rec))
    assert len(read_vcf(p, panel, padding=0).variants) == 1
    assert len(read_vcf(bgzip_index(p), panel, padding=0).variants) == 1
