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
