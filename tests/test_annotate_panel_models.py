"""The panel's own transcript structure (panels/transcripts.yaml) as the default models of
built-in annotation (irdtriage.annotate.panel_models).

Sources of the expected values:

* HGVS nomenclature (varnomen.hgvs.org, "Numbering" and "Coding DNA reference sequence"):
  c.1 is the A of the ATG start codon, c.-1 the base 5' of it, intronic bases are numbered
  from the nearest exon (c.N+1 follows exon base c.N, c.N-1 precedes c.N), and on a
  minus-strand gene the transcript runs from the highest genomic coordinate down. The
  invented two-exon gene below is an input only; the numbers follow from those rules.
* ClinGen Evidence Repository export (../shared/refdata/clingen_erepo/erepo_dev.tsv.gz): the
  8 RS1 rows, each with its GRCh38 g. HGVS and the expert panel's c. on NM_000330.4. The panel
  model of RS1 is named by that accession (MANE Select in MANE v1.5).
* LRG_702.xml (RS1; Locus Reference Genomic project): the record's GRCh38 sequence supplies the
  bases for p. (placed by :func:`irdtriage.annotate.lrg.read_lrg`, as in
  tests/external/test_annotate_refdata.py), and its transcript NM_000330.3 is the
  outside model the panel model is compared with.
* NG_009497.1 FASTA + GFF3 (USH2A; NCBI RefSeqGene): GRCh38 chr1 position = 216,428,397 - NG
  position (refdata README). The GFF3's NM_206933.2 is compared with the panel structure.
* Published alleles (from memory, each checked against the record's reference base, as in
  tests/external/test_annotate_refdata.py): RS1 c.214G>A p.(Glu72Lys), c.304C>T p.(Arg102Trp),
  c.305G>A p.(Arg102Gln), c.325G>C p.(Gly109Arg), c.608C>T p.(Pro203Leu); USH2A c.2299del
  p.(Glu767SerfsTer21), c.2276G>T p.(Cys759Phe), c.4338_4339del p.(Cys1447GlnfsTer29),
  c.11864G>A p.(Trp3955Ter).
"""
from __future__ import annotations

import csv
import gzip
import json
import os
import re
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

from irdtriage.annotate.annotate import TxCache, annotate_allele
from irdtriage.annotate.hgvs_c import TxMap
from irdtriage.annotate.panel_models import panel_transcripts, to_model
from irdtriage.annotate.providers import TranscriptSet, revcomp
from irdtriage.transcripts import Transcript, TranscriptModel

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
from refseqgene_data import LRG, REFDATA, load_ush2a, need  # noqa: E402
EREPO = REFDATA / "clingen_erepo" / "erepo_dev.tsv.gz"

RS1_LITERATURE = [("214", "G", "A", "c.214G>A", "p.(Glu72Lys)"), ("304", "C", "T", "c.304C>T", "p.(Arg102Trp)"),
                  ("305", "G", "A", "c.305G>A", "p.(Arg102Gln)"), ("325", "G", "C", "c.325G>C", "p.(Gly109Arg)"),
                  ("608", "C", "T", "c.608C>T", "p.(Pro203Leu)")]
USH2A_LITERATURE = [("2299", "G", "", "c.2299del", "p.(Glu767SerfsTer21)"),
                    ("2276", "G", "T", "c.2276G>T", "p.(Cys759Phe)"),
                    ("4338", "CT", "", "c.4338_4339del", "p.(Cys1447GlnfsTer29)"),
                    ("11864", "G", "A", "c.11864G>A", "p.(Trp3955Ter)")]


_need = need


def _cli(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], cwd=ROOT, capture_output=True, text=True,
                          env=env, timeout=600)


# --- the mapping, no outside files ---------------------------------------------------------------
def _two_exon_minus() -> TranscriptModel:
    # invented gene (input only): exons 100-199 and 300-399 on the minus strand, CDS 150-351
    # (52 + 50 = 102 nt = 33 codons + stop); transcript order: exon 1 = 300-399, exon 2 = 100-199
    t = Transcript("GENEX", "GRCh38", "7", "-", ((100, 199), (300, 399)), "NM_999999.1", "ENST99999999999.1",
                   cds_start=150, cds_end=351, protein_length=33, mane_boundaries_match=False,
                   mane_end_offsets_nt=(0, -4), source="test structure")
    return TranscriptModel("test", "1", "", "", {("GENEX", "GRCh38"): t})


def test_mapping_of_a_minus_strand_structure():
    model = _two_exon_minus()
    ts = panel_transcripts("GRCh38", model)
    assert len(ts) == 1 and len(panel_transcripts("GRCh37", model)) == 0
    tx = ts.get("NM_999999")
    assert (tx.transcript_id, tx.gene, tx.chrom, tx.strand) == ("NM_999999.1", "GENEX", "7", "-")
    assert tx.exons == ((100, 199), (300, 399)) and tx.cds == (150, 351)
    assert "GENCODE-derived" in tx.source and "NM_999999.1" in tx.source and "0/-4 nt" in tx.source
    assert ts.overlapping("chr7", 250, 250) == [tx]  # intronic, inside the span
    # HGVS numbering on the minus strand (varnomen): c.1 at 351 (the A of ATG on the transcript),
    # c.-1 at 352, exon 1 ends at 300 = c.52, 299 = c.52+1, 200 = c.53-1, 199 = c.53
    cache = TxCache(None)
    expect = {351: ("c.1T>C", "1/2", ""), 352: ("c.-1T>C", "1/2", ""), 300: ("c.52T>C", "1/2", ""),
              299: ("c.52+1T>C", "", "1/1"), 200: ("c.53-1T>C", "", "1/1"), 199: ("c.53T>C", "2/2", "")}
    for pos, (c, exon, intron) in expect.items():
        got = annotate_allele("7", pos, "A", "G", ts, cache)  # A>G forward = T>C on the transcript
        assert [(x.hgvs_c, x.exon, x.intron) for x in got] == [(c, exon, intron)], pos
    donor = annotate_allele("7", 299, "A", "G", ts, cache)[0]
    assert "splice_donor_variant" in donor.terms and donor.hgvs_p == "p.?"
    # no reference sequence: a frameshift is known from the length change, the amino acid is not
    fs = annotate_allele("7", 250 - 100, "A", "AG", ts, cache)
    assert fs and "frameshift_variant" in fs[0].terms
    sub = annotate_allele("7", 330, "A", "G", ts, cache)[0]
    assert sub.terms == ("coding_sequence_variant",) and any("amino-acid change unknown" in n for n in sub.notes)


def test_structure_without_accession_gives_no_model():
    t = Transcript("GENEY", "GRCh38", "7", "+", ((10, 20),))
    assert to_model(t, "test") is None
    assert len(TranscriptSet([])) == 0


# --- RS1: the expert panel's c. from the default models, through the real CLI --------------------
def _erepo_rs1():
    _need(EREPO)
    with gzip.open(EREPO, "rt", newline="") as fh:
        rows = [r for r in csv.DictReader(fh, delimiter="\t") if r["gene"] == "RS1"]
    out = []
    for r in rows:
        m = re.match(r"^NC_000023\.11:g\.(\d+)([ACGT])>([ACGT])$", r["hgvs_grch38"])
        c = re.match(r"^(NM_\d+\.\d+)\(RS1\):(c\.\S+)", r["variation"])
        assert m and c, r["variation"]
        out.append((int(m.group(1)), m.group(2), m.group(3), c.group(1), c.group(2)))
    assert len(out) == 8  # what the export holds
    return sorted(out)


def test_rs1_expert_panel_c_from_annotate_cli_without_transcripts(tmp_path):
    rows = _erepo_rs1()
    vcf = tmp_path / "rs1.vcf"
    vcf.write_text("##fileformat=VCFv4.2\n##reference=GRCh38\n##contig=<ID=chrX,length=156040895>\n"
                   '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">\n'
                   "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tP1\n"
                   + "".join(f"chrX\t{p}\t.\t{r}\t{a}\t60\tPASS\t.\tGT\t0/1\n" for p, r, a, _, _ in rows))
    out = tmp_path / "rs1.annotated.vcf.gz"
    proc = _cli("annotate", str(vcf), "--out", str(out))  # no --transcripts, no --reference
    assert proc.returncode == 0, proc.stderr
    with pysam.VariantFile(str(out)) as vf:
        header = str(vf.header)
        from urllib.parse import unquote

        said = unquote(next(h.value for h in vf.header.records if h.key == "irdtriage_annotation"))
        assert "panel transcript structure" in said and "GRCh38" in said  # the model source is named
        fields = re.search(r'ID=IRDT_TX,.*Format: ([^"]+)"', header).group(1).split("|")
        got = {}
        for rec in vf:
            for entry in rec.info["IRDT_TX"]:
                e = dict(zip(fields, entry.split("|")))
                if e["transcript"].startswith("NM_000330"):
                    got[rec.pos] = (e["transcript"], e["hgvs_c"].split(":")[-1])
    for pos, _, _, tx, c in rows:
        assert got[pos] == (tx, c), pos  # NM_000330.4 and the panel's c. exactly


# --- RS1 with the LRG sequence: p. and agreement with the record's own transcript ----------------
def test_rs1_panel_model_with_lrg_sequence_agrees_with_the_record():
    _need(LRG)
    from irdtriage.annotate.lrg import read_lrg

    rec = read_lrg(str(LRG), "GRCh38")
    seq, lrg_txs = rec.sequence, rec.transcripts
    panel = panel_transcripts("GRCh38", genes=["RS1"])
    ptx, ltx = panel.get("NM_000330"), lrg_txs.get("NM_000330.3")
    assert ptx.transcript_id == "NM_000330.4"
    # the same coding exons: the structures differ only at the outer UTR ends
    assert ptx.cds == ltx.cds and ptx.exons[1:-1] == ltx.exons[1:-1]
    pm, lm = TxMap(ptx), TxMap(ltx)
    alleles = []
    for c, ref, alt, c_text, p in RS1_LITERATURE:
        g = pm.c_to_g(c)
        assert lm.c_to_g(c) == g
        assert revcomp(seq.fetch("X", g, g)) == ref, "the published reference base is not the record's"
        alleles.append((g, revcomp(ref), revcomp(alt), c_text, p))
    for pos, ref, alt, _, c in _erepo_rs1() if EREPO.exists() else []:
        assert seq.fetch("X", pos, pos) == ref
        alleles.append((pos, ref, alt, c, None))
    cache = TxCache(seq)
    for pos, ref, alt, c_text, p in alleles:
        ours = [x for x in annotate_allele("X", pos, ref, alt, panel, cache) if x.gene == "RS1"]
        theirs = [x for x in annotate_allele("X", pos, ref, alt, lrg_txs, TxCache(seq))
                  if x.transcript == "NM_000330.3"]
        assert len(ours) == 1 and len(theirs) == 1
        a, b = ours[0], theirs[0]
        assert a.hgvs_c == c_text == b.hgvs_c
        assert (a.hgvs_p, a.terms, a.exon, a.intron) == (b.hgvs_p, b.terms, b.exon, b.intron)
        if p is not None:
            assert a.hgvs_p == p


# --- USH2A: the panel structure against NM_206933.2 of the RefSeqGene record ---------------------
@pytest.fixture(scope="module")
def ush2a():
    region, gff, _ = load_ush2a()
    return region, gff


def test_ush2a_panel_structure_is_nm_206933_2(ush2a):
    region, gff = ush2a
    ptx, gtx = panel_transcripts("GRCh38", genes=["USH2A"]).get("NM_206933"), gff.get("NM_206933.2")
    # the panel's GENCODE-derived structure is named by MANE Select NM_206933.4; its exons and CDS
    # are those of the RefSeqGene's NM_206933.2 (72 exons), so every field is comparable
    assert ptx.transcript_id == "NM_206933.4"
    assert ptx.exons == gtx.exons and ptx.cds == gtx.cds and len(ptx.exons) == 72


def test_ush2a_published_alleles_and_splice_sites_agree(ush2a):
    region, gff = ush2a
    panel = panel_transcripts("GRCh38", genes=["USH2A"])
    ptx = panel.get("NM_206933")
    m = TxMap(ptx)
    alleles = []
    for c, ref, alt, c_text, p in USH2A_LITERATURE:
        g = m.c_to_g(c)  # minus strand: c.N .. c.N+k-1 lie at g .. g-k+1
        lo = g - len(ref) + 1
        assert revcomp(region.fetch("1", lo, g)) == ref, "the published reference base is not the record's"
        if alt:
            alleles.append((lo, revcomp(ref), revcomp(alt), c_text, p))
        else:
            anchor = region.fetch("1", lo - 1, lo - 1)
            alleles.append((lo - 1, anchor + region.fetch("1", lo, g), anchor, c_text, p))
    # every exon boundary's outer +/-1 and +/-2 intronic bases and its first exonic base: splice
    # distances, intron numbers and p.? come from the structure alone
    for s, e in ptx.exons[1:-1]:
        for pos in (s - 2, s - 1, s, e, e + 1, e + 2):
            b = region.fetch("1", pos, pos)
            alleles.append((pos, b, "A" if b != "A" else "G", None, None))
    a_cache, b_cache = TxCache(region), TxCache(region)
    for pos, ref, alt, c_text, p in alleles:
        ours = [x for x in annotate_allele("1", pos, ref, alt, panel, a_cache) if x.gene == "USH2A"]
        theirs = [x for x in annotate_allele("1", pos, ref, alt, gff, b_cache) if x.transcript == "NM_206933.2"]
        assert len(ours) == 1 and len(theirs) == 1
        a, b = ours[0], theirs[0]
        assert (a.hgvs_c, a.hgvs_p, a.terms, a.exon, a.intron, a.splice_distance, a.nmd) == \
               (b.hgvs_c, b.hgvs_p, b.terms, b.exon, b.intron, b.splice_distance, b.nmd), pos
        if c_text is not None:
            assert (a.hgvs_c, a.hgvs_p) == (c_text, p)


def test_triage_default_models_with_reference_only(ush2a, tmp_path):
    """``irdtriage triage VCF --reference FASTA`` (real subprocess), no --transcripts: the
    unannotated USH2A alleles get the published c./p. on the panel's model of NM_206933.4."""
    region, _ = ush2a
    fa = tmp_path / "ush2a_region.fa"
    fa.write_text(f">chr1:{region.start}-{region.start + len(region.seq) - 1}\n"
                  + "\n".join(region.seq[i:i + 80] for i in range(0, len(region.seq), 80)) + "\n")
    pysam.faidx(str(fa))
    m = TxMap(panel_transcripts("GRCh38", genes=["USH2A"]).get("NM_206933"))
    stop_g, del_g = m.c_to_g("11864"), m.c_to_g("2299")
    anchor = region.fetch("1", del_g - 1, del_g - 1)
    assert region.fetch("1", stop_g, stop_g) == "C"  # c.11864G on the transcript
    recs = sorted([(del_g - 1, anchor + region.fetch("1", del_g, del_g), anchor), (stop_g, "C", "T")])
    vcf = tmp_path / "case.vcf"
    vcf.write_text("##fileformat=VCFv4.2\n##reference=GRCh38\n##contig=<ID=chr1,length=248956422>\n"
                   '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">\n'
                   "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tP1\n"
                   + "".join(f"chr1\t{p}\t.\t{r}\t{a}\t60\tPASS\t.\tGT\t0/1\n" for p, r, a in recs))
    out = tmp_path / "out"
    proc = _cli("triage", str(vcf), "--reference", str(fa), "--genes", "USH2A", "--formats", "json",
                "--out", str(out))
    assert proc.returncode == 0, proc.stderr
    res = json.loads((out / "result.json").read_text())
    found = {f["hgvs_c"]: f for f in res["findings"]}
    assert set(found) == {"c.2299del", "c.11864G>A"}
    assert found["c.2299del"]["hgvs_p"] == "p.(Glu767SerfsTer21)"
    assert found["c.11864G>A"]["hgvs_p"] == "p.(Trp3955Ter)"
    for f in found.values():
        assert f["annotation_source"] == "built-in" and f["transcript"] == "NM_206933.4" and f["is_mane"] is True
    b = res["built_in_annotation"]
    assert b["model_kind"] == "panel" and "panel transcript structure" in b["transcript_models"]
    assert b["alleles_annotated"] == 2 and b["reference"] == str(fa)


# --- safety: without a reference, a CDS substitution's effect stays unknown -----------------------
def test_default_models_without_reference_never_make_a_candidate(tmp_path):
    """The unannotated RPE65/RHO records of tests/test_unannotated_input.py, now with the default
    panel models: c. and exon numbers are computed, but a substitution's amino-acid change
    (missense, synonymous or stop) is not, and with no population frequency either the allele
    cannot support an explanation (ACMG/AMP 2015, Richards et al., Genet Med 2015;17:405-424:
    population data and predicted consequence come first), so it stays UNKNOWN_STATUS."""
    from test_unannotated_input import HEADER, RECORDS

    vcf = tmp_path / "p1.vcf"
    vcf.write_text("\n".join(HEADER + RECORDS) + "\n")
    out = tmp_path / "out"
    proc = _cli("triage", str(vcf), "--hpo", "HP:0000510", "--formats", "json", "--out", str(out))
    assert proc.returncode == 0, proc.stderr
    res = json.loads((out / "result.json").read_text())
    assert res["built_in_annotation"]["model_kind"] == "panel" and res["built_in_annotation"]["reference"] is None
    assert {f["gene"] for f in res["findings"]} == {"RPE65", "RHO"}
    for f in res["findings"]:
        assert f["annotation_source"] == "built-in" and f["hgvs_c"].startswith("c.") and f["hgvs_p"] == "p.?"
        assert f["consequence"] == ["coding_sequence_variant"]
        assert f["interpretation_status"] == "UNKNOWN_STATUS", f["id"]
    assert "Candidate explanation" not in res["case"]["summary"]
