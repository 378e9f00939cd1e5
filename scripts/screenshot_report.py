"""Render the example result (tests/fixtures/result_example.json, an invented case) to HTML and
take a screenshot with headless Chromium: docs/screenshot-report.png.

Usage: python scripts/screenshot_report.py [--result FILE] [--out PNG] [--cascade panels/cascade.yaml]
With --cascade the whole chain of that cascade file is drawn (the example's genes keep their steps).
"""
from __future__ import annotations

import argparse
import json
import shutil
import subprocess
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
sys.path.insert(0, str(ROOT))

from irdtriage.report.html import render_html  # noqa: E402


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--result", default=str(ROOT / "tests" / "fixtures" / "result_example.json"))
    ap.add_argument("--out", default=str(ROOT / "docs" / "screenshot-report.png"))
    ap.add_argument("--cascade", help="cascade YAML whose steps are drawn")
    ap.add_argument("--size", default="1200,2000")
    args = ap.parse_args(argv)
    chromium = shutil.which("chromium") or "/usr/bin/chromium"
    if not Path(chromium).exists():
        print("chromium not found", file=sys.stderr)
        return 1
    result = json.loads(Path(args.result).read_text(encoding="utf-8"))
    steps = None
    if args.cascade:
        import yaml

        steps = [{k: s.get(k) for k in ("id", "title", "kind", "order")}
                 for s in yaml.safe_load(Path(args.cascade).read_text(encoding="utf-8"))["steps"]]
        result["cascade"] = steps
    with tempfile.TemporaryDirectory() as tmp:
        page = Path(tmp) / "report.html"
        page.write_text(render_html(result, steps), encoding="utf-8")
        out = Path(args.out).resolve()
        out.parent.mkdir(parents=True, exist_ok=True)
        part = out.with_name(out.name + ".part.png")
        subprocess.run([chromium, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                        "--disable-background-networking", "--disable-component-update", "--disable-sync",
                        f"--user-data-dir={Path(tmp) / 'profile'}", "--hide-scrollbars",
                        f"--screenshot={part}", f"--window-size={args.size}", page.as_uri()],
                       check=True, capture_output=True, timeout=120)
        part.replace(out)
    print(out)
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
