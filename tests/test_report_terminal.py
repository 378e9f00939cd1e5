"""Terminal writer: rendered through a real rich Console into a pipe-like buffer."""
import io
import json
import re
from pathlib import Path

from irdtriage import CAUTION
from irdtriage.report.terminal import make_console, render_terminal

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"
ANSI = re.compile(r"\x1b\[")  # ECMA-48 CSI introducer


def _render(monkeypatch, color=False, **kw):
    monkeypatch.delenv("NO_COLOR", raising=False)
    if not color:
        monkeypatch.setenv("NO_COLOR", "1")
    buf = io.StringIO()
    console = make_console(buf, width=80)
    if color:
        console = type(console)(file=buf, width=80, force_terminal=True, color_system="standard")
    render_terminal(json.loads(FIXTURE.read_text()), console, **kw)
    return buf.getvalue()


def test_plain_80_columns(monkeypatch):
    for kw in ({}, {"verbose": True}, {"quiet": True}):
        out = _render(monkeypatch, **kw)
        assert not ANSI.search(out), kw
        assert max(len(line) for line in out.splitlines()) <= 80, kw
        assert " ".join(CAUTION.split()) in " ".join(out.split()), kw


def test_order_and_content(monkeypatch):
    out = _render(monkeypatch)
    flat = " ".join(out.split())
    assert out.lstrip().startswith("IN_PROGRESS")
    assert flat.index("GENEA") < flat.index("GENEB") < flat.index("Light-response cascade") < flat.index("CAUTION")
    assert "PVS1 PM2(Sup)" in flat and "PM2(Sup) PM3 PP3(Mod)" in flat
    assert "[3 PDE6 hydrolyses cGMP ◆GENEB]" in flat
    assert "[visual cycle: isomerase ◆GENEA]" in flat


def test_quiet_is_short(monkeypatch):
    out = _render(monkeypatch, quiet=True)
    assert "GENEA" in out and "GENEB" not in out and "F1" not in out


def test_piped_console_has_no_colour(monkeypatch):
    monkeypatch.delenv("NO_COLOR", raising=False)
    buf = io.StringIO()  # not a TTY
    render_terminal(json.loads(FIXTURE.read_text()), make_console(buf))
    assert not ANSI.search(buf.getvalue())


def test_colour_on_terminal_and_markup_not_interpreted(monkeypatch):
    r = json.loads(FIXTURE.read_text())
    r["sample"]["id"] = "[bold red]X[/]"
    monkeypatch.delenv("NO_COLOR", raising=False)
    buf = io.StringIO()
    from rich.console import Console

    render_terminal(r, Console(file=buf, width=80, force_terminal=True, color_system="standard"))
    out = buf.getvalue()
    assert ANSI.search(out)
    assert "[bold red]X[/]" in out


def test_disputed_class_names_the_method_that_gave_it(monkeypatch):
    # PM2 at Supporting with BP4 at Moderate: Richards et al. 2015 Table 5 gives Uncertain
    # significance (ii) (pathogenic and benign criteria contradictory); Tavtigian et al. 2020
    # points 1 - 2 = -1 -> Likely benign (Table 3: -1..-6); Tavtigian et al. 2018 posterior
    # 350**(1/8 - 2/8) = 0.481, at prior 0.10 -> 0.0507 -> Likely benign (0.001-0.10).
    from irdtriage.acmg.combine import combine
    from irdtriage.acmg.rulesets import load_combining
    from irdtriage.models import CriterionResult

    c = combine([CriterionResult("PM2", True, "Supporting", "absent"),
                 CriterionResult("BP4", True, "Moderate", "benign interval")], load_combining().get("acmg-2015-svi"))
    r = json.loads(FIXTURE.read_text())
    f = r["findings"][0]
    f.update(classification=c.classification, rule_class=c.rule_class, points=c.points, point_class=c.point_class,
             posterior=c.posterior, bayes_class=c.bayes_class, classification_note=c.note)
    monkeypatch.setenv("NO_COLOR", "1")
    buf = io.StringIO()
    render_terminal(r, make_console(buf, width=80))
    flat = " ".join(buf.getvalue().split())
    assert "VUS -1pt" in flat
    assert ("class from the ACMG/AMP 2015 table; points (Tavtigian 2020) give LB at -1, "
            "posterior (Tavtigian 2018) gives LB at 0.051") in flat
    # a finding where the three methods agree carries no such note
    assert flat.count("class from the ACMG/AMP 2015 table") == 1


def test_input_limits_and_tied_phenotype_rank_come_out(monkeypatch):
    r = json.loads(FIXTURE.read_text())
    r["input_limits"] = [{"code": "no_consequence_annotation", "message": "The VCF has no consequence annotation."}]
    r["genes"][0]["phenotype_match"].update(rank=1, genes_ranked=252, rank_range={"from": 1, "to": 69, "of": 252})
    monkeypatch.setenv("NO_COLOR", "1")
    for quiet in (False, True):
        buf = io.StringIO()
        render_terminal(r, make_console(buf, width=80), quiet=quiet)
        out = buf.getvalue()
        assert out.lstrip().startswith("! INPUT LIMIT (no_consequence_annotation)")
        assert "(rank 1–69 of 252)" in " ".join(out.split())
