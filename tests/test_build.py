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

from irdtriage.build import check_build, chrom_style, detect_build, explain_build
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


def test_contig_lengths_beat_reference_line(tmp_path):
    h = header(tmp_path, ["##reference=hg38.fa", "##contig=<ID=chr1,length=249250621>"])
    assert detect_build(h) == "GRCh37"


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
