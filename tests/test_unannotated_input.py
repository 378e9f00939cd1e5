"""A VCF without consequence annotation, run through the real command line.

What is checked, and against what:

* An allele whose consequence (no CSQ/ANN in INFO) and population frequency (no gnomAD field,
  no --population-vcf) are both unknown could be a common benign allele as easily as a null
  one; calling it a candidate or causative would be a claim the input cannot support
  (ACMG/AMP 2015, Richards et al., Genet Med 2015;17:405-424: population data and the
  predicted consequence are the first evidence weighed). So the run must say so first in
  every output, call the case IN_PROGRESS at best, keep the alleles at UNKNOWN_STATUS
  (GA4GH Phenopacket status words) and ask for annotation first.
* Phenotype-only ranks keep ties: genes with the same phenotype match share the places
  "from–to of N" (standard competition ranking, common practice). With the single term
  HP:0000510 (Rod-cone dystrophy) every panel gene annotated with it or a descendant scores
  the same Resnik similarity (Resnik 1995), so the expected tie is read from hpo3's gene
  annotations here, not from the tool.
* HPO IDs are fitted to the bundled ontology: HP:0000547 (Tapetoretinal degeneration) is
  obsolete and replaced by HP:0000510 in the HPO (hp.obo "replaced_by"; the same pair is
  used in tests/test_phenopacket_in.py); HP:9999999 is not an HPO term (HPO IDs are
  assigned sequentially and none is this high - from memory), so it is dropped with a
  warning instead of stopping the run. A malformed ID stays an input error.

Variant positions are inputs only: they lie in exons of RPE65 (chr1:68,438,187-68,438,316) and
RHO (chr3:129,530,876-129,531,044) of the GENCODE canonical transcripts (GRCh38), so the
unannotated reader keeps them.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

ROOT = Path(__file__).resolve().parents[1]

HEADER = [
    "##fileformat=VCFv4.2",
    "##reference=GRCh38",
    "##contig=<ID=chr1,length=248956422>",
    "##contig=<ID=chr3,length=198295559>",
    '##FILTER=<ID=PASS,Description="All filters passed">',
    '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
    '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
    '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
    '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
    "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tP1",
]
RECORDS = [
    "chr1\t68438200\t.\tG\tA\t500\tPASS\t.\tGT:AD:DP:GQ\t1/1:0,40:40:99",  # RPE65 (AR), homozygous
    "chr3\t129530900\t.\tC\tT\t500\tPASS\t.\tGT:AD:DP:GQ\t0/1:20,21:41:99",  # RHO (AD), heterozygous
]
TIED_TERM = "HP:0000510"  # Rod-cone dystrophy


def _write_vcf(path: Path) -> Path:
    path.write_text("\n".join(HEADER + RECORDS) + "\n")
    pysam.tabix_index(str(path), preset="vcf", force=True)
    return Path(str(path) + ".gz")


def _cli(*args: str) -> subprocess.CompletedProcess:
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], cwd=ROOT, capture_output=True, text=True,
                          env={**os.environ, "NO_COLOR": "1", "COLUMNS": "100"}, timeout=600)


@pytest.fixture(scope="module")
def run(tmp_path_factory):
    tmp = tmp_path_factory.mktemp("unannotated")
    vcf = _write_vcf(tmp / "p1.vcf")
    with pysam.VariantFile(str(vcf)) as vf:  # the file really has no consequence annotation
        assert "CSQ" not in vf.header.info and "ANN" not in vf.header.info
    out = tmp / "out"
    # --transcripts none: no built-in annotation either (by default the panel's own transcript
    # structure annotates these alleles; tests/test_annotate_panel_models.py covers that run)
    proc = _cli("triage", str(vcf), "--hpo", f"{TIED_TERM},HP:0000547,HP:9999999", "--transcripts", "none",
                "--out", str(out))
    assert proc.returncode == 0, proc.stderr
    return {
        "stdout": proc.stdout,
        "result": json.loads((out / "result.json").read_text()),
        "html": (out / "report.html").read_text(),
        "tsv": (out / "findings.tsv").read_text().splitlines(),
    }


# ---------------------------------------------------------------------------------------
def test_unannotated_run_is_flagged_first_in_every_output(run):
    r = run["result"]
    assert [lim["code"] for lim in r["input_limits"]] == ["no_consequence_annotation"]
    first = next(line for line in run["stdout"].splitlines() if line.strip())
    assert first.startswith("! INPUT LIMIT (no_consequence_annotation)")
    html = run["html"]
    assert 0 <= html.index("INPUT LIMIT (no_consequence_annotation)") < html.index("<header>")
    # the TSV opens as a table (header on line 1); the limit rides on every row, in its own column
    header = run["tsv"][0].split("\t")
    assert header[0] == "finding_id"
    col = header.index("input_limits")
    assert all(line.split("\t")[col].startswith("INPUT LIMIT (no_consequence_annotation)") for line in run["tsv"][1:])


def test_unannotated_alleles_are_never_an_explanation(run):
    r = run["result"]
    assert {g["symbol"] for g in r["genes"]} == {"RPE65", "RHO"}
    assert r["case"]["status"] == "IN_PROGRESS"
    assert "Candidate explanation" not in r["case"]["summary"]
    assert r["case"]["next_steps"][0].startswith("Annotate the VCF")
    for f in r["findings"]:
        assert f["hgvs_c"] in ("", None)  # really unannotated
        assert f["interpretation_status"] == "UNKNOWN_STATUS", f["id"]
    tsv_status = [line.split("\t")[run["tsv"][0].split("\t").index("interpretation_status")] for line in run["tsv"][1:]]
    assert tsv_status == ["UNKNOWN_STATUS"] * len(r["findings"])


def test_phenotype_rank_ties_are_shown_as_ties(run):
    from irdtriage.panel import load_panel
    from irdtriage.phenotype import get_ontology

    ont = get_ontology()
    from irdtriage.panel import genes_at_tier

    # the genes ranked (input, not an expected value): the default tier leaves out disputed genes
    panel_genes = genes_at_tier(load_panel(None))
    annotated = {g.name: g for g in ont.genes}

    def closure(sym):
        out = set()
        for i in annotated[sym].hpo:
            t = ont.get_hpo_object(i)
            out.add(t.id)
            out.update(p.id for p in t.all_parents)
        return out

    tied = [s for s in panel_genes if s in annotated and TIED_TERM in closure(s)]
    assert {"RPE65", "RHO"} <= set(tied) and len(tied) >= 2
    want = {"from": 1, "to": len(tied), "of": len(panel_genes)}
    text = f"1–{len(tied)} of {len(panel_genes)}"
    genes = {g["symbol"]: g for g in run["result"]["genes"]}
    for sym in ("RPE65", "RHO"):
        assert genes[sym]["phenotype_match"]["rank_range"] == want, sym
    flat = " ".join(run["stdout"].split())
    assert flat.count(f"(rank {text})") == 2
    assert run["html"].count(f"rank {text} panel genes") >= 2
    col = run["tsv"][0].split("\t").index("phenotype_rank")
    assert [line.split("\t")[col] for line in run["tsv"][1:]] == [text, text]


def test_obsolete_and_unknown_hpo_ids_are_reported_in_the_result(run):
    r = run["result"]
    ph = r["phenotype"]
    assert [t["id"] for t in ph["present"]] == [TIED_TERM]
    changes = {c["id"]: c for c in ph["term_changes"]}
    assert changes["HP:0000547"]["action"] == "replaced" and changes["HP:0000547"]["replaced_by"] == "HP:0000510"
    assert changes["HP:9999999"]["action"] == "dropped"
    for old in ("HP:0000547", "HP:9999999"):
        assert any(old in w for w in r["warnings"]), old
        assert old in run["stdout"] and old in run["html"]


def test_malformed_hpo_id_is_still_an_input_error(tmp_path):
    vcf = _write_vcf(tmp_path / "p1.vcf")
    proc = _cli("triage", str(vcf), "--hpo", "HP:0000510,HP:12", "--out", str(tmp_path / "out"))
    assert proc.returncode == 2
    assert "HP:12" in proc.stderr and "Traceback" not in proc.stderr
    assert len(proc.stderr.strip().splitlines()) == 1
