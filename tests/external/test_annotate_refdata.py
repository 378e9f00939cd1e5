"""Built-in annotation checked against outside records (../shared/refdata, read-only; see its README).

Sources:

* LRG_702.xml (RS1; Locus Reference Genomic project): genomic sequence, transcript t1 =
  NM_000330.3 with its cDNA, coding region and translation (NP_000321.1), and the record's
  mappings to GRCh38 (chrX:18,629,524-18,682,449, minus strand) and GRCh37, with their
  differences from the assemblies. The providers are built from the record; the record's own
  cDNA, translation and per-exon protein coordinates are the expected values.
* NG_009497.1 FASTA + GFF3 (USH2A; NCBI RefSeqGene): sequence in gene orientation, transcript
  NM_206933.2 (CDS rows of NP_996816.2). GRCh38 chr1 position = 216,428,397 - NG position
  (refdata README). NP_996816.2 has 5,202 residues (from memory; also what
  tests/external/test_transcripts_refdata.py states).
* ClinGen Evidence Repository export (clingen_erepo/erepo_dev.tsv.gz): every USH2A and RS1 row
  with a GRCh38 NC_ g. HGVS; the row's own c. (and p. when the name gives one) is the expected
  value. The export has 8 RS1 rows and no USH2A row (the hearing-loss panel, which curates
  USH2A, is not among its panels).
* GA4GH phenopacket-store cases (phenopackets/*/*.json): the cases' HGVS expressions on
  NM_206933 or NM_000330 are counted; the stored genes hold none.
* Well-known published variants (from memory; each checked against the record's reference
  base, so a wrong recollection fails rather than passes): USH2A c.2299del p.(Glu767SerfsTer21)
  and c.2276G>T p.(Cys759Phe) (Eudy et al. 1998; Dreyer et al. 2000), c.4338_4339del
  p.(Cys1447GlnfsTer29), c.11864G>A p.(Trp3955Ter); RS1 c.214G>A p.(Glu72Lys), c.304C>T
  p.(Arg102Trp), c.305G>A p.(Arg102Gln), c.325G>C p.(Gly109Arg), c.608C>T p.(Pro203Leu)
  (the RS1 missense alleles most often reported in X-linked retinoschisis).
"""
from __future__ import annotations

import csv
import gzip
import json
import re
import sys
from pathlib import Path

import pytest

from irdtriage.annotate.annotate import TxCache, annotate_allele
from irdtriage.annotate.hgvs_c import TxMap
from irdtriage.annotate.hgvs_p import translate
from irdtriage.annotate.lrg import read_lrg
from irdtriage.annotate.providers import revcomp

pytestmark = pytest.mark.external

sys.path.insert(0, str(Path(__file__).resolve().parents[1]))
from refseqgene_data import LRG, NG_ANCHOR, NG_GFF, REFDATA, load_ush2a, need  # noqa: E402

EREPO = REFDATA / "clingen_erepo" / "erepo_dev.tsv.gz"
PHENOPACKETS = REFDATA / "phenopackets"

TRANSCRIPTS = {"USH2A": "NM_206933", "RS1": "NM_000330"}


_need = need


@pytest.fixture(scope="module")
def rs1():
    _need(LRG)
    return read_lrg(str(LRG), "GRCh38")


@pytest.fixture(scope="module")
def rs1_37():
    _need(LRG)
    return read_lrg(str(LRG), "GRCh37")


@pytest.fixture(scope="module")
def ush2a():
    return load_ush2a()


# --- g. HGVS -> VCF-style allele (the expert-panel rows' notation) -------------------------------
_G = re.compile(r"^(NC_\d+\.\d+):g\.(\d+)(?:_(\d+))?(.*)$")


def g_to_vcf(hgvs: str, fetch):
    """(chrom accession, pos, ref, alt) of a g. substitution, del, dup, ins or delins; the
    reference bases come from ``fetch(start, end)``."""
    m = _G.match(hgvs.strip())
    if not m:
        raise ValueError(hgvs)
    acc, a, b, edit = m.group(1), int(m.group(2)), int(m.group(3) or m.group(2)), m.group(4)
    sub = re.fullmatch(r"([ACGT])>([ACGT])", edit)
    if sub:
        return acc, a, sub.group(1), sub.group(2)
    if edit.startswith("delins"):
        return acc, a, fetch(a, b), edit[6:]
    if edit.startswith("del"):
        anchor = fetch(a - 1, a - 1)
        return acc, a - 1, anchor + fetch(a, b), anchor
    if edit.startswith("dup"):
        anchor = fetch(b, b)
        return acc, b, anchor, anchor + fetch(a, b)
    if edit.startswith("ins"):
        anchor = fetch(a, a)
        return acc, a, anchor, anchor + edit[3:]
    raise ValueError(hgvs)


def erepo_rows():
    _need(EREPO)
    with gzip.open(EREPO, "rt", newline="") as fh:
        return [r for r in csv.DictReader(fh, delimiter="\t") if r["gene"] in TRANSCRIPTS]


def _expected(variation: str):
    """(transcript, c., p. or None) from a row's variation name, e.g.
    NM_000330.4(RS1):c.184+3143G>T or ...:c.214G>A (p.Glu72Lys)."""
    m = re.match(r"^(N[MR]_\d+\.\d+)\([^)]*\):(c\.\S+)(?:\s+\((p\.[^)]+)\))?", variation)
    assert m, variation
    return m.group(1), m.group(2), m.group(3)


def _p_plain(p: str) -> str:
    """Compare p. with and without the prediction parentheses."""
    return p.replace("(", "").replace(")", "") if p else p


# --------------------------------------------------------------------------------------------
def test_erepo_rows_ush2a_and_rs1(rs1, rs1_37, ush2a):
    rows = erepo_rows()
    by_gene = {g: [r for r in rows if r["gene"] == g] for g in TRANSCRIPTS}
    assert len(by_gene["RS1"]) == 8 and len(by_gene["USH2A"]) == 0  # what this export holds
    region, ush_txs, _ = ush2a
    checked = exact = 0
    mismatches = []
    for r in rows:
        tx_expected, c_expected, p_expected = _expected(r["variation"])
        for hg, rec in ((r["hgvs_grch38"], rs1), (r["hgvs_grch37"], rs1_37)):
            if not hg.startswith("NC_"):
                continue
            if r["gene"] == "RS1":
                seq, txs, chrom = rec.sequence, rec.transcripts, "X"
            else:
                seq, txs, chrom = region, ush_txs, "1"
                if rec is rs1_37:
                    continue  # the NG record's placement is given for GRCh38 only
            acc, pos, ref, alt = g_to_vcf(hg, lambda a, b: seq.fetch(chrom, a, b))
            assert seq.fetch(chrom, pos, pos + len(ref) - 1) == ref, (hg, "reference base differs")
            got = [x for x in annotate_allele(chrom, pos, ref, alt, txs, TxCache(seq))
                   if x.transcript.split(".")[0] == TRANSCRIPTS[r["gene"]]]
            assert len(got) == 1
            checked += 1
            ok = got[0].hgvs_c == c_expected and (p_expected is None or _p_plain(got[0].hgvs_p) == p_expected)
            exact += ok
            if not ok:
                mismatches.append((r["variation"], hg, got[0].hgvs_c, got[0].hgvs_p))
    # 8 RS1 rows, each on GRCh38 and GRCh37: the expert panel named them on NM_000330.4, the
    # record's transcript is NM_000330.3 -- the same coding exons and protein NP_000321.1
    # (MANE v1.5; the .4 differs in its 5' UTR end), so the c. must agree exactly.
    assert checked == 16
    assert mismatches == []
    assert exact == checked


def test_phenopacket_cases_on_these_transcripts():
    _need(PHENOPACKETS)
    hits = []
    for path in sorted(PHENOPACKETS.glob("*/*.json")):
        text = path.read_text(encoding="utf-8")
        if any(t in text for t in TRANSCRIPTS.values()):
            hits.append(path.name)
        json.loads(text)  # every case file is read whole
    # phenopacket-store genes stored here: RPGRIP1, CLN3, BBS1, PRPF31, NRL, RGS9BP, IFT140
    assert hits == []


def test_lrg_cdna_and_translation(rs1):
    """The spliced GRCh38 sequence (record bases with the assembly's differences applied) is the
    record's own cDNA, and its CDS translates to the record's protein."""
    tx = rs1.transcripts.get("NM_000330.3")
    assert tx is not None and tx.protein_id == "NP_000321.1"
    cache = TxCache(rs1.sequence)
    m = cache.map(tx)
    cdna = cache.tx_seq(m)
    assert cdna == rs1.cdna["t1"]
    protein = translate(cdna[m.cds_start - 1:m.cds_end])
    assert protein == rs1.proteins["NM_000330.3"] + "*"
    assert len(protein) - 1 == 224  # NP_000321.1


def test_lrg_exon_protein_coordinates(rs1):
    """Codon numbers of each exon's first and last coding base, from our genome -> c. mapping,
    equal the record's LRG_702p1 exon coordinates."""
    import xml.etree.ElementTree as ET

    root = ET.parse(LRG).getroot()
    tx_el = root.find("fixed_annotation/transcript")
    m = TxMap(rs1.transcripts.get("NM_000330.3"))
    record, ours = [], []
    for (s, e), ex in zip(m.exons, tx_el.findall("exon")):
        p = next((c for c in ex.findall("coordinates") if c.get("coord_system") == "LRG_702p1"), None)
        if p is None:
            continue
        record.append((int(p.get("start")), int(p.get("end"))))
        first, last = (e, s) if m.minus else (s, e)
        n1, n2 = m.g_to_tx(first).n, m.g_to_tx(last).n
        n1, n2 = max(n1, m.cds_start), min(n2, m.cds_end - 3)  # the stop codon is no residue
        ours.append(((n1 - m.cds_start) // 3 + 1, (n2 - m.cds_start) // 3 + 1))
    assert len(record) == 6
    assert ours == record


def test_ush2a_protein_length(ush2a):
    region, txs, _ = ush2a
    tx = txs.get("NM_206933.2")
    assert tx is not None and tx.protein_id == "NP_996816.2" and len(tx.exons) == 72
    # CDS length straight from the GFF3's CDS rows of NM_206933.2
    cds_rows = [line.split("\t") for line in NG_GFF.read_text().splitlines()
                if "\tCDS\t" in line and "Parent=rna-NM_206933.2" in line]
    cds_nt = sum(int(f[4]) - int(f[3]) + 1 for f in cds_rows)
    assert cds_nt == 3 * (5202 + 1)
    cache = TxCache(region)
    m = cache.map(tx)
    protein = translate(cache.tx_seq(m)[m.cds_start - 1:m.cds_end])
    assert protein[0] == "M" and protein[-1] == "*" and protein.count("*") == 1
    assert len(protein) - 1 == 5202


# (gene, c. without the prefix, ref bases in c. orientation, alt, expected p.) -- from memory, see doc
LITERATURE = [
    ("USH2A", "2299", "G", "", "p.(Glu767SerfsTer21)", "c.2299del"),
    ("USH2A", "2276", "G", "T", "p.(Cys759Phe)", "c.2276G>T"),
    ("USH2A", "4338", "CT", "", "p.(Cys1447GlnfsTer29)", "c.4338_4339del"),
    ("USH2A", "11864", "G", "A", "p.(Trp3955Ter)", "c.11864G>A"),
    ("RS1", "214", "G", "A", "p.(Glu72Lys)", "c.214G>A"),
    ("RS1", "304", "C", "T", "p.(Arg102Trp)", "c.304C>T"),
    ("RS1", "305", "G", "A", "p.(Arg102Gln)", "c.305G>A"),
    ("RS1", "325", "G", "C", "p.(Gly109Arg)", "c.325G>C"),
    ("RS1", "608", "C", "T", "p.(Pro203Leu)", "c.608C>T"),
]


@pytest.mark.parametrize("gene,c,ref,alt,p,c_text", LITERATURE, ids=[f"{x[0]}-{x[5]}" for x in LITERATURE])
def test_published_variants(rs1, ush2a, gene, c, ref, alt, p, c_text):
    if gene == "RS1":
        seq, txs, chrom = rs1.sequence, rs1.transcripts, "X"
    else:
        seq, txs, chrom = ush2a[0], ush2a[1], "1"
    tx = txs.get(TRANSCRIPTS[gene])
    m = TxMap(tx)
    g = m.c_to_g(c)  # minus strand for both genes: c.N .. c.N+k-1 lie at g .. g-k+1
    lo = g - len(ref) + 1
    assert revcomp(seq.fetch(chrom, lo, g)) == ref, "the published reference base is not the record's"
    if alt:
        pos, vref, valt = lo, revcomp(ref), revcomp(alt)
    else:
        anchor = seq.fetch(chrom, lo - 1, lo - 1)
        pos, vref, valt = lo - 1, anchor + seq.fetch(chrom, lo, g), anchor
    got = [x for x in annotate_allele(chrom, pos, vref, valt, txs, TxCache(seq)) if x.transcript == tx.transcript_id]
    assert (got[0].hgvs_c, got[0].hgvs_p) == (c_text, p)
    if gene == "USH2A" and "Ter" in p:
        assert got[0].nmd is True  # exons 13, 20 and 61 of 72: far upstream of the last junction


# --- the whole pipeline: triage --reference --transcripts on a VCF without CSQ/ANN --------------
def test_triage_uses_builtin_annotation(ush2a, tmp_path):
    """``irdtriage triage`` (real subprocess) with the USH2A record as a region FASTA
    (``chr1:START-END``, GRCh38 = 216,428,397 - NG position) and NM_206933.2 as a GFF3 on chr1:
    the unannotated VCF's USH2A alleles get the published c./p. (see the module doc)."""
    import os
    import subprocess
    import sys

    import pysam

    region, txs, ng_seq = ush2a
    start = NG_ANCHOR - len(ng_seq)
    fa = tmp_path / "ush2a_region.fa"
    fa.write_text(f">chr1:{start}-{NG_ANCHOR - 1}\n" + "\n".join(
        region.seq[i:i + 80] for i in range(0, len(region.seq), 80)) + "\n")
    pysam.faidx(str(fa))
    gff = tmp_path / "ush2a.gff3"
    rows = ["##gff-version 3"]
    for line in NG_GFF.read_text().splitlines():
        f = line.split("\t")
        if len(f) == 9 and (("ID=rna-NM_206933.2;" in f[8] and f[2] == "mRNA") or "Parent=rna-NM_206933.2" in f[8]):
            a, b = NG_ANCHOR - int(f[4]), NG_ANCHOR - int(f[3])
            rows.append("\t".join(["chr1", f[1], f[2], str(a), str(b), f[5], "-", f[7], f[8]]))
    gff.write_text("\n".join(rows) + "\n")
    m = TxMap(txs.get("NM_206933.2"))
    stop_g = m.c_to_g("11864")  # c.11864G>A: G on the transcript, C on the forward strand
    del_g = m.c_to_g("2299")  # c.2299del: one G, deleted with its forward-strand neighbour as anchor
    anchor = region.fetch("1", del_g - 1, del_g - 1)
    recs = sorted([(del_g - 1, anchor + region.fetch("1", del_g, del_g), anchor),
                   (stop_g, region.fetch("1", stop_g, stop_g), "T")])
    assert region.fetch("1", stop_g, stop_g) == "C"
    vcf = tmp_path / "case.vcf"
    vcf.write_text("##fileformat=VCFv4.2\n##reference=GRCh38\n##contig=<ID=chr1,length=248956422>\n"
                   '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">\n'
                   "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tP1\n"
                   + "".join(f"chr1\t{p}\t.\t{r}\t{a}\t60\tPASS\t.\tGT\t0/1\n" for p, r, a in recs))
    out = tmp_path / "out"
    env = dict(os.environ, NO_COLOR="1", PYTHONPATH=str(Path(__file__).resolve().parents[2]))
    r = subprocess.run([sys.executable, "-m", "irdtriage", "triage", str(vcf), "--reference", str(fa),
                        "--transcripts", str(gff), "--genes", "USH2A", "--formats", "json", "--out", str(out)],
                       capture_output=True, text=True, env=env, timeout=600)
    assert r.returncode == 0, r.stderr
    res = json.loads((out / "result.json").read_text())
    found = {f["hgvs_c"]: f for f in res["findings"]}
    assert set(found) == {"c.2299del", "c.11864G>A"}
    assert found["c.2299del"]["hgvs_p"] == "p.(Glu767SerfsTer21)"
    assert found["c.11864G>A"]["hgvs_p"] == "p.(Trp3955Ter)"
    for f in found.values():
        assert f["annotation_source"] == "built-in" and f["transcript"] == "NM_206933.2"
        # MANE Select is NM_206933.4 (MANE v1.5): the accession decides, as for CSQ/ANN; the version is named
        assert f["gene"] == "USH2A" and f["is_mane"] is True
        pvs1 = next(c for c in f["criteria"] if c["code"] == "PVS1")
        assert pvs1["met"] is True  # null variants far from the last exon-exon junction
    assert not any(lim["code"] == "no_consequence_annotation" for lim in res["input_limits"])
    assert res["cautions"]
