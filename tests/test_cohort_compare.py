"""`irdtriage compare` and the batch's `changed` column, checked with planted changes: a copy of
a real result.json (a synthetic case run through the pipeline) is edited on purpose, and each
edit must be reported, the clinically relevant ones first. No clinical expectation is tested."""
from __future__ import annotations

import copy
import json
import subprocess
import sys

import pytest

from cohort_cases import HPO, KINDS, write_vcf
from irdtriage.cohort.compare import compare, load_result
from irdtriage.errors import InputError
from irdtriage.pipeline import triage

CLI = [sys.executable, "-m", "irdtriage"]


@pytest.fixture(scope="module")
def real(tmp_path_factory):
    folder = tmp_path_factory.mktemp("cmp")
    records, sex = KINDS[1]  # two RPE65 alleles
    vcf = write_vcf(folder / "case.vcf", "S1", records)
    result = triage(vcf, sample="S1", hpo=HPO, sex=sex)
    path = folder / "old.json"
    path.write_text(json.dumps(result))
    return folder, result, path


def planted(result: dict) -> dict:
    new = copy.deepcopy(result)
    f0 = new["findings"][0]
    new["_planted_class_key"] = (f0["chrom"], f0["pos"])
    f0["classification"] = "Pathogenic" if f0["classification"] != "Pathogenic" else "Uncertain significance"
    extra = copy.deepcopy(new["findings"][-1])
    extra.update(id="F99", chrom="chr19", pos=54120001, ref="G", alt="A", gene="PRPF31", hgvs_c="c.601G>A",
                 hgvs_p="p.(Gly201Arg)", classification="Likely pathogenic", interpretation_status="CANDIDATE")
    new["findings"].append(extra)
    new["case"]["status"] = "SOLVED" if result["case"]["status"] != "SOLVED" else "UNSOLVED"
    return new


def test_no_change_against_itself(real):
    folder, result, path = real
    d = compare(result, copy.deepcopy(result))
    assert d["clinical"] == [] and d["other"] == []


def test_each_planted_change_is_reported_clinical_first(real, tmp_path):
    folder, result, path = real
    new = planted(result)
    d = compare(result, new)
    kinds = [c["kind"] for c in d["clinical"]]
    assert kinds[0] == "case_status"
    assert d["status"] == {"old": result["case"]["status"], "new": new["case"]["status"]}
    chrom, pos = new["_planted_class_key"]
    cls = [c for c in d["clinical"] + d["other"] if c["kind"] == "class"]
    assert len(cls) == 1 and cls[0]["key"] == f"{chrom.removeprefix('chr')}-{pos}-{new['findings'][0]['ref']}-" \
                                              f"{new['findings'][0]['alt']}"
    assert cls[0]["old"] == result["findings"][0]["classification"]
    assert cls[0]["new"] == new["findings"][0]["classification"]
    old_plp = result["findings"][0]["classification"] in ("Pathogenic", "Likely pathogenic")
    new_plp = new["findings"][0]["classification"] in ("Pathogenic", "Likely pathogenic")
    assert (cls[0] in d["clinical"]) == (old_plp != new_plp)
    added = [c for c in d["clinical"] if c["kind"] == "new_finding"]
    assert [c["key"] for c in added] == ["19-54120001-G-A"]
    assert [c["gene"] for c in d["clinical"] if c["kind"] == "new_candidate_gene"] == ["PRPF31"]
    # a lost finding: drop one finding from the new side
    lost = copy.deepcopy(result)
    gone = lost["findings"].pop()
    d2 = compare(result, lost)
    assert [c["kind"] for c in d2["clinical"] + d2["other"] if c["kind"] == "lost_finding"] == ["lost_finding"]
    assert any(c["key"].endswith(f"{gone['pos']}-{gone['ref']}-{gone['alt']}") for c in d2["clinical"] + d2["other"])


def test_rank_and_fit_changes_and_versions(real):
    folder, result, path = real
    new = copy.deepcopy(result)
    g = new["genes"][0]
    g["genotype_fit"] = "homozygous"
    g["rank"] = 7
    new["panel"]["version"] = "9999.1"
    d = compare(result, new)
    other = {c["kind"]: c for c in d["other"]}
    assert other["genotype_fit"]["gene"] == g["symbol"] and other["genotype_fit"]["new"] == "homozygous"
    assert other["gene_rank"]["new"] == 7
    assert d["versions"]["old"]["panel"]["version"] == result["panel"]["version"]
    assert d["versions"]["new"]["panel"]["version"] == "9999.1"


def test_cli_text_and_json(real, tmp_path):
    folder, result, path = real
    new_path = tmp_path / "new.json"
    new_path.write_text(json.dumps(planted(result)))
    p = subprocess.run(CLI + ["compare", str(path), str(new_path)], capture_output=True, text=True)
    assert p.returncode == 0, p.stderr
    text = p.stdout
    assert text.index("Changes that matter clinically") < text.index("case status") < text.index("Other changes")
    assert "new finding PRPF31 c.601G>A" in text and "new candidate gene PRPF31" in text
    assert "Versions behind each side" in text and "Decision support only" in text
    p = subprocess.run(CLI + ["compare", str(path), str(new_path), "--json"], capture_output=True, text=True)
    data = json.loads(p.stdout)
    assert data["clinical"][0]["kind"] == "case_status" and data["cautions"]


def test_bad_result_file_is_one_line(tmp_path, real):
    bad = tmp_path / "bad.json"
    bad.write_text('{"case": {},\n  oops}')
    with pytest.raises(InputError) as e:
        load_result(str(bad))
    assert e.value.line == 2
    p = subprocess.run(CLI + ["compare", str(bad), str(real[2])], capture_output=True, text=True)
    assert p.returncode == 2 and p.stderr.count("\n") == 1 and str(bad) in p.stderr


def test_batch_changed_column(real, tmp_path):
    """A manifest's `previous` column: the planted status change appears in batch.json and cohort.tsv."""
    folder, result, path = real
    records, sex = KINDS[1]
    write_vcf(tmp_path / "case.vcf", "S1", records)
    prev = copy.deepcopy(result)
    prev["case"]["status"] = "UNSOLVED" if result["case"]["status"] != "UNSOLVED" else "SOLVED"
    (tmp_path / "prev.json").write_text(json.dumps(prev))
    (tmp_path / "same.json").write_text(json.dumps(result))
    m = tmp_path / "m.tsv"
    m.write_text(f"case\tvcf\tsample\thpo\tsex\tprevious\nA\tcase.vcf.gz\tS1\t{HPO}\t{sex}\tprev.json\n"
                 f"B\tcase.vcf.gz\tS1\t{HPO}\t{sex}\tsame.json\n")
    out = tmp_path / "out"
    p = subprocess.run(CLI + ["batch", str(m), "--out", str(out), "--jobs", "1"], capture_output=True, text=True)
    assert p.returncode == 0, p.stderr
    rec = {r["case"]: r for r in json.loads((out / "batch.json").read_text())["cases"]}
    assert f"case status {prev['case']['status']} → {result['case']['status']}" in rec["A"]["changed"]
    assert rec["B"]["changed"] == "no change"
    rows = [ln.split("\t") for ln in (out / "cohort.tsv").read_text().splitlines()]
    col = rows[0].index("changed")
    assert "case status" in rows[1][col] and rows[2][col] == "no change"
