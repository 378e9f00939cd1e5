"""Concordance report: a CSQ-annotated VCF (written by tests/vcf_builder.py and indexed by pysam)
run through the real ``irdtriage triage --transcripts --reference --verbose``; the VCF's own HGVS
is compared with the built-in annotation and the differences land in result.json and the terminal.

Sources of the expected values:

* ClinGen Evidence Repository export (../shared/refdata/clingen_erepo/erepo_dev.tsv.gz), RS1 rows
  written by an expert panel on NM_000330.4: NC_000023.11:g.18653510C>A = c.184+3143G>T and
  NC_000023.11:g.18646032G>C = c.326+1159C>G.
* RS1 c.304C>T p.(Arg102Trp) and c.305G>A p.(Arg102Gln), the RS1 missense alleles most often
  reported in X-linked retinoschisis (from memory; the reference base at the c. position is
  checked against the LRG record, so a wrong recollection fails).
* LRG_702 (RS1; Locus Reference Genomic record in ../shared/refdata/refseqgene): the GRCh38
  sequence and NM_000330.3 model given to the tool as a region FASTA and a GFF3.

Deliberate differences: the CSQ of g.18653510C>A says c.184+3142G>T (the panel wrote +3143), and
the CSQ of c.305G>A says p.Arg102Leu (the sequence implies Gln). The agreeing entries are written
in other accepted forms (transcript version .4 against the record's .3; p. in one-letter code
without parentheses) so the normalisation is exercised.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

from irdtriage.annotate.hgvs_c import TxMap
from irdtriage.annotate.lrg import read_lrg
from irdtriage.annotate.providers import revcomp

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
from vcf_builder import write_csq_vcf  # noqa: E402

from refseqgene_data import LRG, need  # noqa: E402  (need: also used by test_annotate_equivalence)
CSQ_FORMAT = "Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp"




def cli(*args: str, cwd: Path = ROOT) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="160", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True, cwd=cwd,
                          env=env, timeout=900)


def write_region_fasta(path: Path, chrom: str, start: int, seq: str) -> Path:
    """A FASTA of one region, record named ``chrom:start-end`` (as ``samtools faidx`` writes it)."""
    with open(path, "w") as fh:
        fh.write(f">{chrom}:{start}-{start + len(seq) - 1}\n")
        for i in range(0, len(seq), 60):
            fh.write(seq[i:i + 60] + "\n")
    pysam.faidx(str(path))
    return path


def write_gff3(path: Path, chrom: str, models) -> Path:
    """GFF3 rows (gene, mRNA, exon, CDS) for transcript models on the genome."""
    lines = ["##gff-version 3"]
    for m in models:
        lines.append(f"{chrom}\tt\tgene\t{m.start}\t{m.end}\t.\t{m.strand}\t.\tID=gene-{m.gene};Name={m.gene}")
        lines.append(f"{chrom}\tt\tmRNA\t{m.start}\t{m.end}\t.\t{m.strand}\t.\tID=rna-{m.transcript_id};"
                     f"Parent=gene-{m.gene};gene={m.gene};transcript_id={m.transcript_id}")
        for a, b in m.exons:
            lines.append(f"{chrom}\tt\texon\t{a}\t{b}\t.\t{m.strand}\t.\tParent=rna-{m.transcript_id}")
            if m.cds and a <= m.cds[1] and m.cds[0] <= b:
                lines.append(f"{chrom}\tt\tCDS\t{max(a, m.cds[0])}\t{min(b, m.cds[1])}\t.\t{m.strand}\t0\t"
                             f"Parent=rna-{m.transcript_id};protein_id={m.protein_id}")
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.fixture(scope="module")
def rs1_files(tmp_path_factory):
    need(LRG)
    rec = read_lrg(str(LRG), "GRCh38")
    tmp = tmp_path_factory.mktemp("rs1")
    fa = write_region_fasta(tmp / "rs1_region.fa", "chrX", rec.sequence.start, rec.sequence.seq)
    tx = rec.transcripts.get("NM_000330.3")
    gff = write_gff3(tmp / "rs1.gff3", "chrX", [tx])
    return tmp, rec, tx, fa, gff


HET = ["0/1:20,20:40:99"]


def test_concordance_in_result_and_terminal(rs1_files):
    tmp, rec, tx, fa, gff = rs1_files
    m = TxMap(tx)
    fetch = lambda a, b: rec.sequence.fetch("X", a, b)  # noqa: E731
    # expert-panel rows (erepo export): GRCh38 g. substitutions
    assert fetch(18653510, 18653510) == "C" and fetch(18646032, 18646032) == "G"
    # published missense alleles (from memory): reference base on the minus-strand gene, c.304 C and c.305 G
    g304, g305 = m.c_to_g("304"), m.c_to_g("305")
    assert revcomp(fetch(g304, g304)) == "C" and revcomp(fetch(g305, g305)) == "G"

    def csq(alt, cons, c, p, intron=""):
        return f"{alt}|{cons}|MODIFIER|RS1|ENSG|Transcript|{c.split(':')[0]}|protein_coding||{intron}|{c}|{p}"

    records = sorted([
        # differs: panel wrote c.184+3143G>T; the CSQ says +3142
        ("chrX", 18653510, "C", "A", csq("A", "intron_variant", "NM_000330.4:c.184+3142G>T", "", "3/5"), HET),
        # agrees (transcript version .4 vs the model's .3)
        ("chrX", 18646032, "G", "C", csq("C", "intron_variant", "NM_000330.4:c.326+1159C>G", "", "4/5"), HET),
        # agrees, p. in one-letter code without parentheses
        ("chrX", g304, "G", "A", csq("A", "missense_variant", "NM_000330.4:c.304C>T", "NP_000321.1:p.R102W"), HET),
        # differs in p.: the sequence implies Gln
        ("chrX", g305, "C", "T", csq("T", "missense_variant", "NM_000330.4:c.305G>A", "NP_000321.1:p.Arg102Leu"), HET),
    ], key=lambda r: r[1])
    vcf = write_csq_vcf(tmp / "rs1.vcf", ["P1"], records, CSQ_FORMAT)
    out = tmp / "out"
    r = cli("triage", vcf, "--out", str(out), "--build", "GRCh38", "--sex", "female", "--genes", "RS1",
            "--transcripts", str(gff), "--reference", str(fa), "--verbose")
    assert r.returncode == 0, r.stderr
    res = json.loads((out / "result.json").read_text())
    block = res["annotation_concordance"]
    assert block["reference_sequence"] is True and block["vcf_sources"] == ["CSQ"]
    assert block["alleles_compared"] == 4 and block["alleles_differing"] == 2
    assert block["fields"]["hgvs_c"] == {"compared": 4, "agreeing": 3, "differing": 1}
    assert block["fields"]["hgvs_p"] == {"compared": 2, "agreeing": 1, "differing": 1}
    assert block["fields"]["consequence"] == {"compared": 4, "agreeing": 4, "differing": 0}
    diffs = {(d["pos"], k): v for d in block["differences"] for k, v in d["fields"].items()}
    assert diffs == {
        (18653510, "hgvs_c"): {"vcf": "c.184+3142G>T", "built_in": "c.184+3143G>T"},  # erepo: +3143
        (g305, "hgvs_p"): {"vcf": "p.Arg102Leu", "built_in": "p.(Arg102Gln)"},  # from memory: Arg102Gln
    }
    # the terminal shows a summary line and the differing alleles under --verbose
    assert "HGVS c. 3/4 agree" in r.stdout and "HGVS p. 1/2 agree" in r.stdout
    assert "c.184+3142G>T vs built-in c.184+3143G>T" in r.stdout
    # and the result validates against the schema
    import jsonschema

    schema = json.loads((ROOT / "irdtriage" / "schema" / "result.schema.json").read_text())
    jsonschema.validate(res, schema)
    # without --verbose the terminal has no concordance section; without --transcripts there is no block
    r2 = cli("triage", vcf, "--out", str(tmp / "out2"), "--build", "GRCh38", "--sex", "female", "--genes", "RS1")
    assert r2.returncode == 0, r2.stderr
    assert "concordance" not in r2.stdout
    assert json.loads((tmp / "out2" / "result.json").read_text())["annotation_concordance"] is None


def test_concordance_without_reference_compares_what_needs_none(rs1_files):
    """Without --reference the built-in side has c. of substitutions but no amino-acid change:
    p. is not compared, c. still is."""
    tmp, rec, tx, fa, gff = rs1_files
    m = TxMap(tx)
    g305 = m.c_to_g("305")
    records = [
        ("chrX", g305, "C", "T", f"T|missense_variant|MODERATE|RS1|ENSG|Transcript|NM_000330.4|protein_coding|||"
                                  f"NM_000330.4:c.305G>A|NP_000321.1:p.Arg102Leu", HET),
        ("chrX", 18653510, "C", "A", "A|intron_variant|MODIFIER|RS1|ENSG|Transcript|NM_000330.4|protein_coding||3/5|"
                                     "NM_000330.4:c.184+3143G>T|", HET),
    ]
    vcf = write_csq_vcf(tmp / "noref.vcf", ["P1"], sorted(records, key=lambda r: r[1]), CSQ_FORMAT)
    out = tmp / "out_noref"
    r = cli("triage", vcf, "--out", str(out), "--build", "GRCh38", "--sex", "female", "--genes", "RS1",
            "--transcripts", str(gff))
    assert r.returncode == 0, r.stderr
    block = json.loads((out / "result.json").read_text())["annotation_concordance"]
    assert block["reference_sequence"] is False
    assert block["fields"]["hgvs_c"] == {"compared": 2, "agreeing": 2, "differing": 0}
    assert block["fields"]["hgvs_p"]["compared"] == 0  # the amino-acid change needs the sequence
    assert block["fields"]["consequence"] == {"compared": 1, "agreeing": 1, "differing": 0}  # intron only
