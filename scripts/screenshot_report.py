"""Run the real demo (``python -m irdtriage demo``, the invented ARDEN family shipped in
irdtriage/demo_vcfs) and take a screenshot of the top of its report.html with headless
Chromium: docs/screenshot-report.png.

Usage: python scripts/screenshot_report.py [--out PNG] [--size 1200,1700] [--result FILE]
With --result, a saved result.json is re-rendered instead of running the demo.
Prints the PNG path and its size; the PNG is written atomically.
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

from irdtriage.atomic import atomic_path  # noqa: E402

CHROMIUM_FLAGS = ["--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
                  "--disable-background-networking", "--disable-component-update", "--disable-sync",
                  "--hide-scrollbars"]


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--out", default=str(ROOT / "docs" / "screenshot-report.png"))
    ap.add_argument("--size", default="1200,1700", help="window WIDTH,HEIGHT in CSS pixels (the top of the report)")
    ap.add_argument("--result", help="re-render this result.json instead of running the demo")
    args = ap.parse_args(argv)
    chromium = shutil.which("chromium") or "/usr/bin/chromium"
    if not Path(chromium).exists():
        print("chromium not found (Debian package `chromium`)", file=sys.stderr)
        return 1
    with tempfile.TemporaryDirectory() as tmp:
        run_dir = Path(tmp) / "run"
        if args.result:
            from irdtriage.report.html import render_html

            result = json.loads(Path(args.result).read_text(encoding="utf-8"))
            run_dir.mkdir()
            (run_dir / "report.html").write_text(render_html(result, result.get("cascade")), encoding="utf-8")
        else:
            subprocess.run([sys.executable, "-m", "irdtriage", "demo", "--out", str(run_dir), "--formats", "html",
                            "--quiet"], cwd=ROOT, check=True, capture_output=True, timeout=600)
        page = run_dir / "report.html"
        out = Path(args.out).resolve()
        with atomic_path(out) as part:
            shot = Path(tmp) / "shot.png"
            subprocess.run([chromium, *CHROMIUM_FLAGS, f"--user-data-dir={Path(tmp) / 'profile'}",
                            f"--screenshot={shot}", f"--window-size={args.size}", page.as_uri()],
                           check=True, capture_output=True, timeout=120)
            shutil.copyfile(shot, part)
    print(f"{out} ({out.stat().st_size // 1024} KB)")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
