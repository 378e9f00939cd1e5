"""`irdtriage classify` (the real CLI in a subprocess), criteria parsing and combining.yaml validation.

Expected classes are worked from the published rules named beside each check:
Richards et al., Genet Med 2015;17:405-424, Table 5; ClinGen SVI PM2 recommendation v1.0 (2020):
PVS1 + PM2_Supporting -> Likely pathogenic; Tavtigian et al., Hum Mutat 2020;41:1734-1737 (points);
Tavtigian et al., Genet Med 2018;20:1054-1060 (posterior = OP * 0.1 / ((OP - 1) * 0.1 + 1),
OP = 350 ** (sum of exponents)).
"""
from __future__ import annotations

import csv
import hashlib
import io
import subprocess
import sys
from pathlib import Path

import pytest
import yaml

from irdtriage import CAUTION
from irdtriage.acmg.rulesets import load_combining, parse_combining
from irdtriage.classify import parse_criteria
from irdtriage.errors import InputError

ROOT = Path(__file__).resolve().parents[1]


def run(*args, stdin=None):
    return subprocess.run([sys.executable, "-m", "irdtriage", "classify", *args], capture_output=True, text=True,
                          cwd=ROOT, input=stdin)


def field(out: str, name: str) -> str:
    return next(ln.split(":", 1)[1].strip() for ln in out.splitlines() if ln.startswith(name + ":"))


def test_svi_example_text_output():
    p = run("PVS1, PM2_Supporting")
    assert p.returncode == 0, p.stderr
    assert field(p.stdout, "Class") == "Likely pathogenic"  # SVI PM2 v1.0 amendment
    assert "PVS1 and PM2_Supporting" in field(p.stdout, "Rule")
    # 8 + 1 = 9 points (Tavtigian 2020: LP 6..9); 350 ** (9/8) -> posterior 0.988 (Tavtigian 2018)
    assert field(p.stdout, "Points").startswith("9 -> Likely pathogenic")
    assert field(p.stdout, "Posterior").startswith("0.98")
    assert CAUTION in p.stdout
    assert p.stderr == ""


def test_methods_disagree_is_explained():
    # Table 5 LP (i): PVS1 + 1 Moderate; 10 points is Pathogenic (Tavtigian 2018 abstract: this LP rule
    # is mathematically Pathogenic).
    p = run("PVS1, PM3")
    assert p.returncode == 0, p.stderr
    assert field(p.stdout, "Class") == "Likely pathogenic"
    assert field(p.stdout, "Points").startswith("10 -> Pathogenic")
    assert "Why the methods differ:" in p.stdout


@pytest.mark.parametrize("text,want", [
    ("PVS1, PM3_Very Strong, PP4_Moderate", "Pathogenic"),  # Table 5 P (i)(a): a Very Strong PM3 is >= Strong
    ("PVS1, PS2_Very Strong, PM2_Supporting", "Pathogenic"),  # same rule
    ("BS1_Stand Alone", "Benign"),  # stand-alone benign (as BA1, Table 5 Benign (i))
    ("PP1_Strong, PM2", "Likely pathogenic"),  # Table 5 LP (ii): 1 Strong and 1-2 Moderate
    ("PP1_Strong, PM2_Supporting", "Uncertain significance"),  # 1 Strong + 1 Supporting: no Table 5 rule
])
def test_expert_written_strengths(text, want):
    p = run(text)
    assert p.returncode == 0, p.stderr
    assert field(p.stdout, "Class") == want


def test_gene_picks_its_rule_set_and_rule_set_overrides():
    p = run("PM2, BS1", "--gene", "USH2A")
    assert p.returncode == 0, p.stderr
    assert field(p.stdout, "Rule set").startswith("clingen-hearing-loss-v2")
    assert field(p.stdout, "Class") == "Uncertain significance"  # Table 5 VUS (ii): contradictory
    p = run("PM2, BS1", "--gene", "RPE65")
    assert field(p.stdout, "Rule set").startswith("clingen-lca-eord-rpe65-v1")
    p = run("PM2, BS1", "--rule-set", "acmg-2015-svi")
    assert field(p.stdout, "Class") == "Uncertain significance"
    p = run("PM2, BS1", "--rule-set", "clingen-svi-general")
    # netted on the point scale: 2 - 4 = -2 points, Likely benign (Tavtigian 2020 Table 3)
    assert field(p.stdout, "Class") == "Likely benign"
    p = run("PM2, BS1", "--rule-set", "tavtigian-2020-points")
    assert field(p.stdout, "Class") == "Likely benign"
    p = run("PS3, PS4", "--rule-set", "tavtigian-2018-bayes")
    # two Strong: OP = 350 ** 1 = 350, posterior 0.975 -> Likely pathogenic (Tavtigian 2018)
    assert field(p.stdout, "Class") == "Likely pathogenic"


@pytest.mark.parametrize("args,msg", [
    (["PM9"], "unknown ACMG/AMP criterion code 'PM9'"),
    (["PM2_Weak"], "unknown strength 'Weak'"),
    (["PS3_Stand Alone"], "only benign criteria can be applied stand-alone"),
    (["PM2, PM2_Supporting"], "listed twice"),
    (["PVS1", "--rule-set", "no-such-set"], "unknown rule set 'no-such-set'"),
    ([], "give either criteria text or --tsv FILE"),
])
def test_bad_input_is_one_line_exit_2(args, msg):
    p = run(*args)
    assert p.returncode == 2
    assert p.stdout == ""
    lines = p.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("irdtriage: error:") and msg in lines[0], p.stderr


def test_tsv_rows(tmp_path):
    src = tmp_path / "rows.tsv"
    src.write_text("id\tgene\tcriteria_met\n"
                   "a\tRPE65\tPVS1, PM2_Supporting\n"
                   "b\tPAH\tBS1\n"
                   "c\t\t\n", encoding="utf-8")
    p = run("--tsv", str(src))
    assert p.returncode == 0, p.stderr
    rows = list(csv.DictReader(io.StringIO(p.stdout), delimiter="\t"))
    assert list(rows[0]) == ["id", "gene", "criteria_met", "class", "rule_set", "rule", "points", "posterior",
                             "rule_set_sha256", "caution"]
    sets = load_combining().rule_sets
    assert [r["rule_set_sha256"] for r in rows] == [sets[r["rule_set"]].sha256 for r in rows]
    assert all(len(r["rule_set_sha256"]) == 64 for r in rows)
    assert [r["id"] for r in rows] == ["a", "b", "c"]
    # BS1 alone: -4 points, Likely benign in the general rule set (one Strong benign criterion)
    assert [r["class"] for r in rows] == ["Likely pathogenic", "Likely benign", "Uncertain significance"]
    assert [r["rule_set"] for r in rows] == ["clingen-lca-eord-rpe65-v1", "clingen-svi-general", "clingen-svi-general"]
    assert [r["points"] for r in rows] == ["9", "-4", "0"]
    assert rows[2]["posterior"] == "0.100000"  # the prior (Tavtigian 2018)
    assert all(r["caution"] == CAUTION for r in rows)


def test_tsv_errors_name_file_and_line(tmp_path):
    src = tmp_path / "bad.tsv"
    src.write_text("gene\tcriteria_met\nPAH\tPVS1\nPAH\tPVS1, XX1\n", encoding="utf-8")
    p = run("--tsv", str(src))
    assert p.returncode == 2
    assert p.stderr.strip() == f"irdtriage: error: {src}:3: unknown ACMG/AMP criterion code 'XX1' in 'XX1'"
    nocol = tmp_path / "nocol.tsv"
    nocol.write_text("gene\tcodes\nPAH\tPVS1\n", encoding="utf-8")
    p = run("--tsv", str(nocol))
    assert p.returncode == 2 and f"{nocol}:1: header has no criteria_met column" in p.stderr


def test_parse_forms():
    got = [(c.code, c.strength) for c in parse_criteria("PVS1; pm2_supporting, PS2_Very Strong, BS1_Stand Alone, "
                                                          "PP1-Strong, PS3_Moderate")]
    assert got == [("PVS1", "VeryStrong"), ("PM2", "Supporting"), ("PS2", "VeryStrong"), ("BS1", "StandAlone"),
                   ("PP1", "Strong"), ("PS3", "Moderate")]
    # plain codes carry their Richards 2015 strength
    assert [(c.code, c.strength) for c in parse_criteria("PS4, PM1, PP3, BA1, BS2, BP4")] == [
        ("PS4", "Strong"), ("PM1", "Moderate"), ("PP3", "Supporting"), ("BA1", "StandAlone"), ("BS2", "Strong"),
        ("BP4", "Supporting")]
    assert parse_criteria("  ") == []


def test_parse_white_space_lists_and_abbreviated_strengths():
    # white space before a code starts a new criterion; "Very Strong" stays one strength
    got = [(c.code, c.strength) for c in parse_criteria("PS2_Very Strong PM2_Supporting  BP4")]
    assert got == [("PS2", "VeryStrong"), ("PM2", "Supporting"), ("BP4", "Supporting")]
    # unambiguous abbreviations of three letters or more (common practice in curation notes)
    got = [(c.code, c.strength) for c in parse_criteria("PM2_Sup, PP3_Mod, PVS1_Str, PS3_VeryStr, BS1_Stand")]
    assert got == [("PM2", "Supporting"), ("PP3", "Moderate"), ("PVS1", "Strong"), ("PS3", "VeryStrong"),
                   ("BS1", "StandAlone")]
    for bad, msg in (("PM2_St", "unknown strength 'St'"), ("PM2_S", "unknown strength 'S'"),
                     ("PM2_Supp PM2", "listed twice"), ("PS1 XX9", "unknown strength 'XX9'")):
        with pytest.raises(InputError, match=msg):
            parse_criteria(bad)


def test_lca_eord_specifications_combine_on_points():
    # LCA/eoRD VCEP RPE65 v1.0.0 (GN120): "The point system of Tavtigian et al. 2020 ... is used for all
    # classifications" (secondary transcription of the specification); bands Tavtigian 2020 Table 3
    p = run("PVS1", "--gene", "RPE65")  # 8 points: Likely pathogenic (Table 5 alone: no line fits)
    assert field(p.stdout, "Class") == "Likely pathogenic"
    p = run("BP4", "--gene", "RPE65")  # -1 point: Likely benign
    assert field(p.stdout, "Class") == "Likely benign"
    p = run("BA1, PVS1", "--gene", "CEP290")  # BA1 stays stand-alone Benign (GN226)
    assert field(p.stdout, "Class") == "Benign"
    p = run("PVS1", "--gene", "GUCY2D")  # GN167 keeps the table where the evidence does not conflict
    assert field(p.stdout, "Class") == "Uncertain significance"
    p = run("PM2_Supporting, PP3, BS1", "--gene", "GUCY2D")  # conflicting: 1 + 1 - 4 = -2 points, LB
    assert field(p.stdout, "Class") == "Likely benign"


def test_general_rule_set_very_strong_and_supporting():
    # 1 Very Strong + 1 Supporting: Likely pathogenic in the general reading (several ClinGen
    # specifications' combining sections, secondary transcriptions; 9 points, Tavtigian 2020 Table 3);
    # the plain 2015 table keeps PS2_Very Strong + PM2_Supporting uncertain (no Table 5 line fits)
    p = run("PS2_Very Strong, PP4")
    assert field(p.stdout, "Class") == "Likely pathogenic"
    assert field(p.stdout, "Rule") == "Likely pathogenic (VCEP amendment): 1 Very Strong and 1 Supporting"
    p = run("PS2_Very Strong, PP4", "--rule-set", "acmg-2015-svi")
    assert field(p.stdout, "Class") == "Uncertain significance"
    p = run("PS2_Very Strong, PP4", "--gene", "USH2A")  # not stated in the Hearing Loss text read
    assert field(p.stdout, "Class") == "Uncertain significance"


# --- combining.yaml validation ---------------------------------------------------------------
GOOD = (ROOT / "panels" / "combining.yaml").read_text(encoding="utf-8")


def test_bundled_file_loads_and_hashes():
    comb = load_combining()
    assert comb.sha256 == hashlib.sha256((ROOT / "panels" / "combining.yaml").read_bytes()).hexdigest()
    assert comb.for_gene("RPE65").name == "clingen-lca-eord-rpe65-v1"
    assert comb.for_gene("USH2A").name == comb.for_gene("myo7a").name == "clingen-hearing-loss-v2"
    assert comb.for_gene("RHO").name == comb.default == "clingen-svi-general"
    # the nine genes of the Hearing Loss specification (GN005 title) use its rule set
    assert {comb.for_gene(g).name for g in ("CDH23", "COCH", "GJB2", "KCNQ4", "MYO6", "MYO7A", "SLC26A4", "TECTA",
                                            "USH2A")} == {"clingen-hearing-loss-v2"}
    rs = comb.rule_sets
    # each rule set has its own hash over its resolved content (name, version, source, table, rules):
    # two rule sets with the same rules still differ, and editing one rule set changes only its hash
    # the LCA/eoRD panel's RPE65, AIPL1 and CEP290 specifications all combine on points: same content but
    # the name, version and source, so each has its own hash
    assert {rs[n].method for n in ("clingen-lca-eord-rpe65-v1", "clingen-lca-eord-aipl1-v1",
                                   "clingen-lca-eord-cep290-v1")} == {"points"}
    assert rs["clingen-lca-eord-rpe65-v1"].sha256 != rs["clingen-lca-eord-aipl1-v1"].sha256
    assert {comb.for_gene(g).name for g in ("OTOF", "MYO15A")} == {"clingen-hearing-loss-v2"}  # GN023
    assert len({r.sha256 for r in rs.values()}) == len(rs) and comb.sha256 not in {r.sha256 for r in rs.values()}
    text = (ROOT / "panels" / "combining.yaml").read_text()
    edited = parse_combining(text.replace("conflict: points", "conflict: uncertain", 1).encode(), None,
                             yaml.safe_load(text.replace("conflict: points", "conflict: uncertain", 1)), "x.yaml")
    assert edited.rule_sets["clingen-svi-general"].sha256 != rs["clingen-svi-general"].sha256
    assert edited.rule_sets["acmg-2015-svi"].sha256 == rs["acmg-2015-svi"].sha256


@pytest.mark.parametrize("old,new,msg", [
    ("need: {VeryStrong: 1, Strong: 1}}", "need: {VeryStrong: 1, Strongest: 1}}", "strength must be one of"),
    ("need: {Strong: 2}}", "need: {Strong: 0}}", "whole number >= 1"),
    ("codes: {PVS1: VeryStrong, PM2: Supporting}}", "codes: {PVS9: VeryStrong}}", "unknown ACMG/AMP criterion code"),
    ("method: points", "method: votes", "method must be one of"),
    ("conflict: points", "conflict: maybe", "conflict must be one of"),
    ("default: clingen-svi-general", "default: nothing-here", "default must name a rule set"),
    ("RPE65: clingen-lca-eord-rpe65-v1", "RPE65: clingen-lca-v9", "unknown rule set"),
    ("{class: Benign, label: \"Benign (ii)", "{class: Uncertain significance, label: \"Benign (ii)", "class must be"),
])
def test_bad_combining_file_names_line(tmp_path, old, new, msg):
    assert old in GOOD
    text = GOOD.replace(old, new, 1)
    p = tmp_path / "combining.yaml"
    p.write_text(text, encoding="utf-8")
    line = text[: text.index(new)].count("\n") + 1
    with pytest.raises(InputError) as e:
        load_combining(p)
    assert msg in e.value.problem
    assert e.value.path == str(p) and e.value.line is not None and abs(e.value.line - line) <= 1, (e.value.line, line)


def test_demo_result_records_the_rule_sets(tmp_path):
    p = subprocess.run([sys.executable, "-m", "irdtriage", "demo", "--out", str(tmp_path), "--formats", "json", "-q"],
                       capture_output=True, text=True, cwd=ROOT)
    assert p.returncode == 0, p.stderr
    import json

    res = json.loads((tmp_path / "result.json").read_text(encoding="utf-8"))
    comb = res["rules"]["combining"]
    assert comb["sha256"] == hashlib.sha256((ROOT / "panels" / "combining.yaml").read_bytes()).hexdigest()
    assert comb["default"]["name"] == "clingen-svi-general"
    used = {f["rule_set"] for f in res["findings"]}
    assert used and used == {r["name"] for r in comb["rule_sets"]}


def test_tsv_row_names_its_rule_set(tmp_path):
    # a non-empty rule_set cell decides that row; an empty one falls back to the gene's rule set
    src = tmp_path / "rows.tsv"
    src.write_text("gene\tcriteria_met\trule_set\n"
                   "PAH\tPM2, BS1\tacmg-2015-svi\n"
                   "USH2A\tPM2, BS1\t\n", encoding="utf-8")
    p = run("--tsv", str(src))
    assert p.returncode == 0, p.stderr
    rows = list(csv.DictReader(io.StringIO(p.stdout), delimiter="\t"))
    assert list(rows[0]) == ["gene", "criteria_met", "rule_set", "class", "rule", "points", "posterior",
                             "rule_set_sha256", "caution"]
    assert [r["rule_set"] for r in rows] == ["acmg-2015-svi", "clingen-hearing-loss-v2"]
    # Table 5 "Uncertain significance (ii)" (contradictory) in both: the plain table named in the row, and the
    # Hearing Loss specification for USH2A (BS1 reaches Likely benign only "provided there is no conflicting
    # evidence"); the default general rule set would net 2 - 4 = -2 points to Likely benign
    assert [r["class"] for r in rows] == ["Uncertain significance", "Uncertain significance"]
    bad = tmp_path / "bad.tsv"
    bad.write_text("gene\tcriteria_met\trule_set\nPAH\tPVS1\tno-such-set\n", encoding="utf-8")
    p = run("--tsv", str(bad))
    assert p.returncode == 2 and f"{bad}:2: unknown rule set 'no-such-set'" in p.stderr


def test_hearing_loss_bs1_alone_is_likely_benign():
    # ClinGen Hearing Loss ACMG Specifications v1 (2018), BS1: "Likely benign, provided there is no
    # conflicting evidence" (as shown on the ClinGen Evidence Repository guideline page).
    p = run("BS1", "--gene", "USH2A")
    assert field(p.stdout, "Class") == "Likely benign"
    assert "BS1 with no conflicting evidence" in field(p.stdout, "Rule")
    p = run("BS1, PM2_Supporting", "--gene", "USH2A")  # conflicting evidence: Table 5 VUS (ii)
    assert field(p.stdout, "Class") == "Uncertain significance"
    p = run("BS1", "--rule-set", "acmg-2015-svi")  # Table 5: one Strong benign alone reaches no rule
    assert field(p.stdout, "Class") == "Uncertain significance"
    p = run("PVS1, PS2_Very Strong", "--gene", "MYO7A")  # PS2_VeryStrong graded in the HL specification v1
    assert field(p.stdout, "Class") == "Pathogenic"
