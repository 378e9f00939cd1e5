"""`irdtriage annotate` run as a real subprocess on real files (FASTA read by pysam.FastaFile,
VCFs written and read back by pysam/htslib), and the providers' file readers.

The sequence and transcript are the hand-made two-exon layout of tests/test_annotate_hgvs.py;
expected HGVS values there were worked by hand from the HGVS recommendations.
"""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

from irdtriage import CAUTION
from irdtriage.annotate.providers import FastaSequence, read_gff
from irdtriage.consequence.annotations import all_annotations, annotation_layouts
from irdtriage.errors import InputError
from irdtriage.models import Variant

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
from test_annotate_hgvs import REGION  # noqa: E402

GFF3 = """##gff-version 3
chrT\ttest\tgene\t11\t71\t.\t+\t.\tID=gene-GENE1;Name=GENE1;gene=GENE1
chrT\ttest\tmRNA\t11\t71\t.\t+\t.\tID=rna-NM_TEST.1;Parent=gene-GENE1;gene=GENE1;transcript_id=NM_TEST.1
chrT\ttest\texon\t11\t32\t.\t+\t.\tID=exon-1;Parent=rna-NM_TEST.1
chrT\ttest\texon\t54\t71\t.\t+\t.\tID=exon-2;Parent=rna-NM_TEST.1
chrT\ttest\tCDS\t21\t32\t.\t+\t0\tID=cds-NP_TEST.1;Parent=rna-NM_TEST.1;protein_id=NP_TEST.1
chrT\ttest\tCDS\t54\t65\t.\t+\t0\tID=cds-NP_TEST.1;Parent=rna-NM_TEST.1;protein_id=NP_TEST.1
"""
# The same transcript as a GTF writes it: the CDS rows leave the stop codon (63-65) out.
GTF = """chrT\ttest\ttranscript\t11\t71\t.\t+\t.\tgene_id "G1"; transcript_id "ENST0001"; transcript_version "3"; gene_name "GENE1";
chrT\ttest\texon\t11\t32\t.\t+\t.\tgene_id "G1"; transcript_id "ENST0001"; gene_name "GENE1";
chrT\ttest\texon\t54\t71\t.\t+\t.\tgene_id "G1"; transcript_id "ENST0001"; gene_name "GENE1";
chrT\ttest\tCDS\t21\t32\t.\t+\t0\tgene_id "G1"; transcript_id "ENST0001"; protein_id "ENSP0001";
chrT\ttest\tCDS\t54\t62\t.\t+\t0\tgene_id "G1"; transcript_id "ENST0001"; protein_id "ENSP0001";
chrT\ttest\tstop_codon\t63\t65\t.\t+\t0\tgene_id "G1"; transcript_id "ENST0001";
"""


def run(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="100", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True,
                          cwd=ROOT, env=env, timeout=600)


@pytest.fixture()
def files(tmp_path):
    fa = tmp_path / "ref.fa"
    fa.write_text(">chrT\n" + "\n".join(REGION[i:i + 30] for i in range(0, len(REGION), 30)) + "\n")
    pysam.faidx(str(fa))
    gff = tmp_path / "tx.gff3"
    gff.write_text(GFF3)
    vcf = tmp_path / "in.vcf"
    vcf.write_text(
        "##fileformat=VCFv4.2\n##contig=<ID=chrT,length=76>\n"
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">\n'
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tS1\n"
        "chrT\t2\t.\tC\tT\t50\tPASS\t.\tGT\t0/1\n"
        "chrT\t26\t.\tTA\tT\t50\tPASS\t.\tGT\t0/1\n"
        "chrT\t55\t.\tG\tA,C\t50\tPASS\t.\tGT\t1/2\n")
    return tmp_path, fa, gff, vcf


def _read_back(path: Path) -> dict[tuple[int, str], list]:
    """Entries per (pos, alt) through the project's own annotation reader."""
    out = {}
    with pysam.VariantFile(str(path)) as vf:
        layouts = annotation_layouts(vf.header)
        assert list(layouts) == ["IRDT_TX"]  # the project's own field, not another tool's
        assert any(CAUTION in str(r) for r in vf.header.records)
        for rec in vf:
            for k, alt in enumerate(rec.alts, 1):
                v = Variant(rec.chrom, rec.pos, rec.ref, alt, original_pos=rec.pos, original_ref=rec.ref,
                            original_alts=tuple(rec.alts), allele_index=k,
                            info={"IRDT_TX": rec.info["IRDT_TX"]} if "IRDT_TX" in rec.info else {})
                out[(rec.pos, alt)] = all_annotations(v, layouts)
    return out


def test_annotate_writes_a_vcf_the_tool_reads_back(files):
    tmp, fa, gff, vcf = files
    out = tmp / "annotated.vcf.gz"
    r = run("annotate", str(vcf), "--reference", str(fa), "--transcripts", str(gff), "--out", str(out))
    assert r.returncode == 0, r.stderr
    assert out.exists() and (tmp / "annotated.vcf.gz.tbi").exists()
    assert not [p for p in tmp.iterdir() if p.name.startswith(".annotated")]  # no temporary file left
    got = _read_back(out)
    (fs,) = got[(26, "T")]
    assert (fs.transcript, fs.hgvs_c, fs.hgvs_p, fs.consequence[0], fs.exon) == (
        "NM_TEST.1", "c.11del", "p.(Lys4SerfsTer?)", "frameshift_variant", "1/2")
    (stop,) = got[(55, "A")]
    (mis,) = got[(55, "C")]
    assert (stop.hgvs_c, stop.hgvs_p) == ("c.14G>A", "p.(Trp5Ter)")
    assert (mis.hgvs_c, mis.hgvs_p, mis.extra["protein_position"]) == ("c.14G>C", "p.(Trp5Ser)", "5/7")
    (up,) = got[(2, "T")]  # 9 nt 5' of the transcript's first base (11 = c.-10): c.-19, upstream
    assert (up.hgvs_c, up.consequence) == ("c.-19C>T", ("upstream_gene_variant",))
    assert "4 of 4 alleles" in r.stdout
    unsorted = tmp / "unsorted.vcf"
    lines = vcf.read_text().splitlines()
    unsorted.write_text("\n".join(lines[:4] + [lines[5], lines[4], lines[6]]) + "\n")
    r = run("annotate", str(unsorted), "--reference", str(fa), "--transcripts", str(gff), "--out", str(out))
    assert r.returncode == 2 and "not sorted" in r.stderr
    assert not [p for p in tmp.iterdir() if p.name.startswith(".annotated")]


def test_annotate_flank_and_without_reference(files):
    tmp, fa, gff, vcf = files
    out = tmp / "plain.vcf"
    r = run("annotate", str(vcf), "--transcripts", str(gff), "--out", str(out))
    assert r.returncode == 0, r.stderr
    assert "amino-acid changes" in r.stdout
    got = _read_back(out)
    (stop,) = got[(55, "A")]
    assert (stop.hgvs_c, stop.hgvs_p) == ("c.14G>A", "p.?")
    assert set(stop.consequence) == {"coding_sequence_variant", "splice_region_variant"}  # exon 2, base 2
    assert "amino-acid change unknown" in stop.extra["notes"].replace("%20", " ")
    (fs,) = got[(26, "T")]
    assert (fs.hgvs_c, fs.consequence[0]) == ("", "frameshift_variant")


def test_bad_inputs_give_one_line_and_exit_2(files):
    tmp, fa, gff, vcf = files
    bad = tmp / "bad.vcf"
    lines = vcf.read_text().splitlines()
    lines[4] = "chrT\t2\t.\tG\tT\t50\tPASS\t.\tGT\t0/1"  # the reference has C at 2
    bad.write_text("\n".join(lines) + "\n")
    r = run("annotate", str(bad), "--reference", str(fa), "--transcripts", str(gff), "--out", str(tmp / "o.vcf"))
    assert r.returncode == 2
    assert r.stderr.strip().count("\n") == 0
    assert f"{bad}:5:" in r.stderr and "does not match the reference FASTA (C)" in r.stderr
    assert not (tmp / "o.vcf").exists()
    broken = tmp / "broken.gff3"
    broken.write_text(GFF3 + "chrT\ttest\texon\t1\t5\t.\t+\n")
    r = run("annotate", str(vcf), "--transcripts", str(broken), "--out", str(tmp / "o.vcf"))
    assert r.returncode == 2 and f"{broken}:8: expected 9 tab-separated columns, found 7" in r.stderr
    r = run("annotate", str(vcf), "--transcripts", str(gff), "--out", str(vcf))
    assert r.returncode == 2 and "overwrite an input" in r.stderr


def test_gtf_and_gff3_give_the_same_model(tmp_path):
    (tmp_path / "a.gff3").write_text(GFF3)
    (tmp_path / "a.gtf").write_text(GTF)
    (g3,) = [m for m in read_gff(str(tmp_path / "a.gff3"))]
    (gt,) = [m for m in read_gff(str(tmp_path / "a.gtf"))]
    assert (g3.transcript_id, g3.gene, g3.protein_id) == ("NM_TEST.1", "GENE1", "NP_TEST.1")
    assert (gt.transcript_id, gt.gene, gt.protein_id) == ("ENST0001.3", "GENE1", "ENSP0001")
    assert g3.exons == gt.exons == ((11, 32), (54, 71))
    assert g3.cds == gt.cds == (21, 65)
    assert g3.chrom == gt.chrom == "T"


def test_fasta_regions_named_chrom_start_end(tmp_path):
    """A FASTA record named CHROM:START-END (pysam.faidx region output) is that region."""
    whole = tmp_path / "whole.fa"
    whole.write_text(">chrT\n" + REGION + "\n")
    pysam.faidx(str(whole))
    with pysam.FastaFile(str(whole)) as fh:
        part = fh.fetch(region="chrT:21-65")
    region = tmp_path / "region.fa"
    region.write_text(">chrT:21-65\n" + part + "\n")
    pysam.faidx(str(region))
    fa = FastaSequence(str(region))
    assert fa.has("T") and fa.has("chrT")
    assert fa.fetch("chrT", 21, 23) == REGION[20:23] == "ATG"
    assert fa.fetch("T", 63, 65) == "TAA"
    assert fa.fetch("chrT", 10, 12) == ""  # before the region
    with pytest.raises(InputError):
        FastaSequence(str(tmp_path / "missing.fa"))
