"""One exception type for every user-facing input problem.

The CLI turns an :class:`InputError` into a single line on stderr
(``irdtriage: error: FILE:LINE: problem``) and exit status 2.
"""
from __future__ import annotations

from typing import Optional


class InputError(Exception):
    """Bad or unusable input: names the file, the line when known, and the problem."""

    def __init__(self, problem: str, path: Optional[str] = None, line: Optional[int] = None):
        self.problem = problem
        self.path = str(path) if path is not None else None
        self.line = line
        super().__init__(self.one_line())

    def one_line(self) -> str:
        where = ""
        if self.path:
            where = self.path + (f":{self.line}" if self.line else "") + ": "
        return where + " ".join(self.problem.split())
