"""How a batch shows its progress: a rich progress bar on a terminal, one plain line per case
when the output is piped or redirected (so logs stay readable)."""
from __future__ import annotations

import sys
from typing import Optional


def describe(rec: dict) -> str:
    status = rec.get("status")
    secs = rec.get("seconds")
    took = f" ({secs:.1f} s)" if isinstance(secs, (int, float)) else ""
    if status == "failed":
        return f"{rec['case']}: FAILED: {rec.get('error')}"
    if status == "unchanged":
        return f"{rec['case']}: unchanged since the last run (skipped), {rec.get('case_status') or ''}".rstrip(", ")
    changed = f"; changed: {rec['changed']}" if rec.get("changed") else ""
    return f"{rec['case']}: {rec.get('case_status')}{took}{changed}"


class Progress:
    def __init__(self, total: int, stream=None, terminal: Optional[bool] = None):
        self.total, self.done = total, 0
        self.stream = stream or sys.stdout
        self.terminal = self.stream.isatty() if terminal is None else terminal
        self._bar = None
        if self.terminal:
            from rich.console import Console
            from rich.progress import BarColumn, MofNCompleteColumn, Progress as Bar, TextColumn, TimeElapsedColumn

            self._bar = Bar(TextColumn("cases"), BarColumn(), MofNCompleteColumn(), TimeElapsedColumn(),
                            console=Console(file=self.stream), transient=False)
            self._task = self._bar.add_task("cases", total=total)
            self._bar.start()

    def update(self, rec: dict) -> None:
        self.done += 1
        line = f"[{self.done}/{self.total}] {describe(rec)}"
        if self._bar is not None:
            if rec.get("status") == "failed":
                self._bar.console.print(line, markup=False, highlight=False)
            self._bar.advance(self._task)
        else:
            print(line, file=self.stream, flush=True)

    def close(self) -> None:
        if self._bar is not None:
            self._bar.stop()
            self._bar = None
