"""Done-when of built-in annotation: an unannotated VCF with a reference FASTA and transcript
models gets the same findings, consequences and HGVS as the same records annotated (CSQ).

Both VCFs are run through the real ``irdtriage triage`` (subprocess). The sequence and the
transcript come from outside records (../shared/refdata/refseqgene; the test skips without them):

* NCBI RefSeqGene NG_009497.1 (USH2A) FASTA and GFF3 with transcript NM_206933.2, placed on
  GRCh38 chr1 as a region: GRCh38 position = 216,428,397 - NG position, minus strand (refdata
  README). The region FASTA is named ``chr1:START-END`` and the GFF3 rows are moved by the same
  arithmetic here, not by the project's code. Exon numbers in the CSQ are the GFF3 exon IDs'
  numbers (``exon-NM_206933.2-13``) out of the transcript's 72 exon rows.
* The CSQ carries the published HGVS of well-known USH2A alleles (from memory, each checked
  against the record's reference bases, so a wrong recollection fails): c.2299del
  p.(Glu767SerfsTer21) and c.2276G>T p.(Cys759Phe) (Eudy et al. 1998; Dreyer et al. 2000),
  c.4338_4339del p.(Cys1447GlnfsTer29), c.11864G>A p.(Trp3955Ter), and the deep-intronic
  c.7595-2144A>G (pseudo-exon 40; Vaché et al. 2012). NP_996816.2 has 5,202 residues (from
  memory; as tests/external/test_transcripts_refdata.py states).
"""
from __future__ import annotations

import gzip
import json
import re
import sys
from pathlib import Path

import pytest

from irdtriage.annotate.hgvs_c import TxMap
from irdtriage.annotate.providers import Placement, RegionSequence, read_gff, revcomp

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT / "tests"))
from test_annotation_concordance import CSQ_FORMAT, cli, need, write_region_fasta  # noqa: E402
from vcf_builder import write_csq_vcf  # noqa: E402

RSG = ROOT.parent / "shared" / "refdata" / "refseqgene"
NG_FASTA, NG_GFF = RSG / "NG_009497.1.fasta.gz", RSG / "NG_009497.1.gff3"
ANCHOR = 216428397  # GRCh38 chr1 = 216,428,397 - NG position (refdata README)
TX, PROTEIN_LENGTH = "NM_206933.2", 5202
CSQ_FORMAT_P = CSQ_FORMAT + "|Protein_position"

# (c. position(s), published c., published p., consequence)
PUBLISHED = [
    (("2299", "2299"), "c.2299del", "p.(Glu767SerfsTer21)", "frameshift_variant"),
    (("2276", "2276"), "c.2276G>T", "p.(Cys759Phe)", "missense_variant"),
    (("4338", "4339"), "c.4338_4339del", "p.(Cys1447GlnfsTer29)", "frameshift_variant"),
    (("11864", "11864"), "c.11864G>A", "p.(Trp3955Ter)", "stop_gained"),
    (("7595-2144", "7595-2144"), "c.7595-2144A>G", "", "intron_variant"),
]


@pytest.fixture(scope="module")
def ush2a(tmp_path_factory):
    need(NG_FASTA, NG_GFF)
    tmp = tmp_path_factory.mktemp("ush2a_eq")
    with gzip.open(NG_FASTA, "rt") as fh:
        ng = "".join(line.strip() for line in fh if not line.startswith(">")).upper()
    start = ANCHOR - len(ng)  # NG position len(ng) lies at ANCHOR - len(ng)
    fa = write_region_fasta(tmp / "ush2a.fa", "chr1", start, revcomp(ng))
    region = RegionSequence("1", start, revcomp(ng))
    rows, exons = ["##gff-version 3"], []
    for line in NG_GFF.read_text().splitlines():
        f = line.split("\t")
        if len(f) != 9 or not (("ID=rna-" + TX + ";" in f[8] and f[2] == "mRNA") or "Parent=rna-" + TX in f[8]):
            continue
        a, b = ANCHOR - int(f[4]), ANCHOR - int(f[3])
        rows.append("\t".join(["chr1", f[1], f[2], str(a), str(b), f[5], "-", f[7], f[8]]))
        m = re.search(r"ID=exon-" + re.escape(TX) + r"-(\d+);", f[8])
        if f[2] == "exon" and m:
            exons.append((a, b, int(m.group(1))))
    gff = tmp / "ush2a.gff3"
    gff.write_text("\n".join(rows) + "\n")
    assert len(exons) == 72
    tx = read_gff(str(NG_GFF), {"NG_009497.1": Placement("1", ANCHOR, "-")}, keep=[TX]).get(TX)
    return tmp, region, fa, gff, exons, TxMap(tx)


def _records(region, exons, m):
    """(chrom, pos, ref, alt, csq, calls) for each published allele, from its c. positions."""
    out = []
    for (c1, c2), hgvs_c, hgvs_p, term in PUBLISHED:
        g_hi, g_lo = m.c_to_g(c1), m.c_to_g(c2)  # minus strand: the later c. position is the lower g.
        if hgvs_c.endswith("del"):
            lo = min(g_hi, g_lo)
            pos, ref = lo - 1, region.fetch("1", lo - 1, max(g_hi, g_lo))
            alt = ref[0]
        else:
            ref_tx, alt_tx = re.search(r"([ACGT])>([ACGT])$", hgvs_c).groups()
            pos, ref, alt = g_hi, revcomp(ref_tx), revcomp(alt_tx)
            assert region.fetch("1", pos, pos) == ref, (hgvs_c, "reference base differs")
        exon = next((f"{n}/72" for a, b, n in exons if a <= pos + 1 and pos <= b), "")
        intron = "" if exon or not hgvs_c.startswith("c.7595-") else "39/71"
        aa = re.search(r"(\d+)", hgvs_p)
        csq_allele = alt if len(ref) == len(alt) else "-"
        csq = (f"{csq_allele}|{term}|HIGH|USH2A|ENSG|Transcript|{TX}|protein_coding|{'' if intron else exon}|{intron}|"
               f"{TX}:{hgvs_c}|{('NP_996816.2:' + hgvs_p) if hgvs_p else ''}|"
               f"{aa.group(1) + '/' + str(PROTEIN_LENGTH) if aa else ''}")
        out.append(("chr1", pos, ref, alt, csq, ["0/1:18,17:35:99"]))
    return sorted(out, key=lambda r: r[1])


def _view(res):
    return {(f["pos"], f["ref"], f["alt"]): (f["gene"], f["consequence"][0] if f["consequence"] else None,
                                              f["hgvs_c"], f["hgvs_p"], f["classification"],
                                              sorted(f["met_criteria"]))
            for f in res["findings"]}


def test_unannotated_with_reference_equals_annotated(ush2a):
    tmp, region, fa, gff, exons, m = ush2a
    # the deletion's deleted base: c.2299 is a G on the transcript (C on the forward strand)
    assert revcomp(region.fetch("1", m.c_to_g("2299"), m.c_to_g("2299"))) == "G"
    recs = _records(region, exons, m)
    annotated = write_csq_vcf(tmp / "annotated.vcf", ["P1"], recs, CSQ_FORMAT_P)
    raw = write_csq_vcf(tmp / "raw.vcf", ["P1"], [r[:4] + ("",) + r[5:] for r in recs], CSQ_FORMAT_P)
    # the raw file must carry no annotation at all: rewrite its header without the CSQ line
    raw_plain = tmp / "raw_noinfo.vcf"
    with gzip.open(raw, "rt") as fh:
        raw_plain.write_text("".join(line for line in fh if not line.startswith("##INFO=<ID=CSQ")))
    common = ["--build", "GRCh38", "--genes", "USH2A", "--formats", "json"]
    r1 = cli("triage", annotated, "--out", str(tmp / "o_ann"), *common)
    r2 = cli("triage", str(raw_plain), "--out", str(tmp / "o_raw"), "--reference", str(fa), "--transcripts", str(gff),
             *common)
    assert r1.returncode == 0, r1.stderr
    assert r2.returncode == 0, r2.stderr
    a = json.loads((tmp / "o_ann" / "result.json").read_text())
    b = json.loads((tmp / "o_raw" / "result.json").read_text())
    assert {f["annotation_source"] for f in b["findings"]} == {"built-in"}
    assert {f["annotation_source"] for f in a["findings"]} == {"CSQ"}
    va, vb = _view(a), _view(b)
    # all five reported in both runs: the deep-intronic allele as a listed recurrent non-coding
    # allele (panels/noncoding_alleles.yaml), which the raw run reaches because built-in
    # annotation reads whole gene spans rather than exons +/- 20 bp
    assert len(va) == 5
    assert va == vb
    assert a["counts"]["noncoding_listed_reported"] == b["counts"]["noncoding_listed_reported"] == 1
    # the null alleles far from the last exon-exon junction meet PVS1 in both runs (NMD predicted)
    assert sum("PVS1_VeryStrong" in v[5] for v in vb.values()) == 3
    published = {hc: (hp, t) for _, hc, hp, t in PUBLISHED}
    for gene, term, hc, hp, cls, met in vb.values():
        assert gene == "USH2A" and (hp, term) == published[hc]
    # the same annotated VCF with the built-in annotator beside it: every compared field agrees
    r3 = cli("triage", annotated, "--out", str(tmp / "o_both"), "--reference", str(fa), "--transcripts", str(gff),
             *common)
    assert r3.returncode == 0, r3.stderr
    conc = json.loads((tmp / "o_both" / "result.json").read_text())["annotation_concordance"]
    assert conc["alleles_compared"] == 5 and conc["alleles_differing"] == 0, conc["differences"]
    assert conc["fields"]["hgvs_c"] == {"compared": 5, "agreeing": 5, "differing": 0}
    assert conc["fields"]["hgvs_p"] == {"compared": 4, "agreeing": 4, "differing": 0}


def test_ref_differing_from_the_fasta_is_not_annotated(ush2a):
    """A record whose REF is not the reference FASTA's base (wrong build or FASTA) gets no built-in
    annotation and the run says so (c.2276G>T written with the wrong REF)."""
    tmp, region, fa, gff, exons, m = ush2a
    pos = m.c_to_g("2276")
    assert region.fetch("1", pos, pos) == "C"  # G on the minus-strand transcript (see PUBLISHED)
    vcf = tmp / "wrong_ref.vcf"
    vcf.write_text("##fileformat=VCFv4.2\n##reference=GRCh38\n##contig=<ID=chr1,length=248956422>\n"
                   '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">\n'
                   "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tP1\n"
                   f"chr1\t{pos}\t.\tG\tA\t60\tPASS\t.\tGT\t0/1\n")
    out = tmp / "o_wrong"
    r = cli("triage", str(vcf), "--out", str(out), "--reference", str(fa), "--transcripts", str(gff),
            "--build", "GRCh38", "--genes", "USH2A", "--formats", "json", "--all-variants")
    assert r.returncode == 0, r.stderr
    res = json.loads((out / "result.json").read_text())
    assert [f["annotation_source"] for f in res["findings"]] == ["none"]
    assert any(w.startswith("1 allele(s) whose REF differs from the reference FASTA") and f"REF G, FASTA C" in w
               for w in res["warnings"])
