"""Genome-build detection from real VCF headers parsed by pysam.

Sources for the contig lengths checked here:
- chr1: GRCh37 249,250,621 bp and GRCh38 248,956,422 bp (project standards notes,
  shared/design/standards.md), cross-checked against the 1000 Genomes GRCh38 reference
  index table (chr1 248956422, chrX 156040895, chrY 57227415).
- GRCh37 chrX 155,270,560 / chr2 243,199,373 and GRCh38 chr2 242,193,529: UCSC hg19/hg38
  chrom.sizes as reproduced in public chromosome-size tables (found with the search tool).
"""
from __future__ import annotations

import pysam
import pytest

from irdtriage.build import check_build, chrom_style, detect_build, explain_build, resolve_build
from irdtriage.errors import InputError


def header(tmp_path, lines, name="h.vcf"):
    p = tmp_path / name
    p.write_text("##fileformat=VCFv4.2\n" + "".join(l + "\n" for l in lines)
                 + "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n")
    with pysam.VariantFile(str(p)) as vf:
        return vf.header


@pytest.mark.parametrize("prefix", ["chr", ""])
def test_grch38_from_chr1_length(tmp_path, prefix):
    h = header(tmp_path, [f"##contig=<ID={prefix}1,length=248956422>", f"##contig=<ID={prefix}X,length=156040895>"])
    assert detect_build(h, "x") == "GRCh38"
    assert chrom_style(h) == prefix


def test_grch37_from_lengths(tmp_path):
    h = header(tmp_path, ["##contig=<ID=1,length=249250621>", "##contig=<ID=2,length=243199373>",
                          "##contig=<ID=X,length=155270560>"])
    build, evidence = explain_build(h)
    assert build == "GRCh37" and "249250621" in evidence


def test_chrX_alone_is_enough(tmp_path):
    assert detect_build(header(tmp_path, ["##contig=<ID=chrX,length=156040895>"])) == "GRCh38"
    assert detect_build(header(tmp_path, ["##contig=<ID=X,length=155270560>"], "b.vcf")) == "GRCh37"


@pytest.mark.parametrize("line,expected", [
    ("##reference=file:///refs/hs37d5.fa", "GRCh37"),
    ("##reference=file:///data/human_g1k_v37.fasta", "GRCh37"),
    ("##reference=/ref/ucsc.hg19.fasta", "GRCh37"),
    ("##reference=GRCh38", "GRCh38"),
    ("##reference=file:///ref/Homo_sapiens_assembly38.fasta", "GRCh38"),
    ("##reference=file:///ref/Homo_sapiens_assembly19.fasta", "GRCh37"),
    ("##assembly=hg38", "GRCh38"),
    ("##reference=/ref/GRCh38_full_analysis_set_plus_decoy_hla.fa", "GRCh38"),
    ("##reference=/ref/hg380.fa", None),
])
def test_reference_lines(tmp_path, line, expected):
    # names: common practice spellings of the two builds (hs37d5 = 1000 Genomes phase 2 reference)
    assert detect_build(header(tmp_path, [line])) == expected


def test_t2t_reference_name_over_grch38_lengths_stops(tmp_path):
    # GRCh38 chr1 is 248,956,422 bp (standards notes); "chm13" names the T2T-CHM13 assembly (common
    # practice): a header naming both is conflicting build evidence, even when contigs say GRCh38
    h = header(tmp_path, ["##reference=chm13v2.0.fa", "##contig=<ID=chr1,length=248956422,assembly=GRCh38>"])
    with pytest.raises(InputError) as ei:
        detect_build(h, "c.vcf")
    assert "chm13v2.0.fa" in str(ei.value) and "T2T-CHM13" in str(ei.value)
    build, _, warns = resolve_build(h, "GRCh38", "c.vcf")  # --build GRCh38 settles it, with a warning
    assert build == "GRCh38" and any("chm13" in w for w in warns)


def test_reference_line_contradicting_lengths_stops(tmp_path):
    # GRCh37 chr1 is 249,250,621 bp (standards notes); hg38 names GRCh38 (common practice)
    h = header(tmp_path, ["##reference=hg38.fa", "##contig=<ID=chr1,length=249250621>"])
    with pytest.raises(InputError) as ei:
        detect_build(h, "c.vcf")
    msg = str(ei.value)
    assert msg.startswith("c.vcf: ") and "\n" not in msg
    assert "249250621" in msg and "##reference=hg38.fa" in msg and "GRCh37" in msg and "GRCh38" in msg
    # --build naming the build of the lengths settles it, with a warning; the other build is refused
    build, _, warns = resolve_build(h, "GRCh37", "c.vcf")
    assert build == "GRCh37" and any("hg38.fa" in w for w in warns)
    with pytest.raises(InputError) as ei:
        resolve_build(h, "GRCh38", "c.vcf")
    assert "--build GRCh38" in str(ei.value) and "249250621" in str(ei.value)


def test_assembly_line_contradicting_lengths_stops(tmp_path):
    # GRCh38 chr1 248,956,422 bp (standards notes) with an ##assembly naming b37
    h = header(tmp_path, ["##assembly=b37", "##contig=<ID=1,length=248956422>"])
    with pytest.raises(InputError) as ei:
        detect_build(h, "a.vcf")
    assert "##assembly=b37" in str(ei.value) and "248956422" in str(ei.value)


def test_two_reference_names_disagreeing_stop(tmp_path):
    h = header(tmp_path, ["##reference=GRCh38", "##contig=<ID=1,assembly=b37>"])
    with pytest.raises(InputError) as ei:
        detect_build(h, "n.vcf")
    assert "GRCh37" in str(ei.value) and "GRCh38" in str(ei.value)


@pytest.mark.parametrize("lines", [
    ["##contig=<ID=chr1,length=248387328>"],  # T2T-CHM13v2.0 chr1 (from memory)
    ["##reference=file:///ref/chm13v2.0.fa"],
    ["##assembly=T2T-CHM13v2.0"],
])
def test_t2t_is_refused(tmp_path, lines):
    with pytest.raises(InputError) as ei:
        detect_build(header(tmp_path, lines), "t.vcf")
    assert "T2T-CHM13" in str(ei.value) and "not supported" in str(ei.value)


# Chromosome lengths typed in from the UCSC hg19/hg38 chrom.sizes tables (which equal the GRC
# primary-assembly sequence lengths, GCF_000001405.13 / GCF_000001405.26), as printed in
# public VCF headers (GATK b37 dictionary; a GRCh38 contig block). chr22 and chr17 chosen
# because the two builds differ in opposite directions there.
@pytest.mark.parametrize("contig,length,expected", [
    ("22", 51304566, "GRCh37"), ("chr22", 50818468, "GRCh38"),
    ("17", 81195210, "GRCh37"), ("chr17", 83257441, "GRCh38"),
    ("chr11", 135086622, "GRCh38"), ("11", 135006516, "GRCh37"),
])
def test_other_chromosome_lengths(tmp_path, contig, length, expected):
    assert detect_build(header(tmp_path, [f"##contig=<ID={contig},length={length}>"])) == expected


def test_no_evidence_and_mixed_builds(tmp_path):
    assert detect_build(header(tmp_path, ["##contig=<ID=chr1>"])) is None
    assert chrom_style(header(tmp_path, [], "e.vcf")) == ""
    mixed = header(tmp_path, ["##contig=<ID=1,length=249250621>", "##contig=<ID=2,length=242193529>"], "m.vcf")
    with pytest.raises(InputError) as ei:
        detect_build(mixed, "m.vcf")
    assert "two genome builds" in str(ei.value) and str(ei.value).startswith("m.vcf: ")


def test_check_build():
    assert check_build("GRCh38", None, "x.vcf") == "GRCh38"
    assert check_build(None, "hg19", "x.vcf") == "GRCh37"
    assert check_build("GRCh37", "GRCh37", "x.vcf") == "GRCh37"
    with pytest.raises(InputError) as ei:
        check_build("GRCh37", "GRCh38", "x.vcf", "chr1 length 249250621")
    assert str(ei.value).startswith(
        "x.vcf: VCF looks like GRCh37 (chr1 length 249250621) but --build GRCh38 was requested")
    with pytest.raises(InputError):
        check_build(None, "mm10", "x.vcf")
