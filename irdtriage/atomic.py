"""Atomic output: write to a temporary file beside the target, then rename.

A crash or an error half-way leaves the previous file (or nothing), never a torso.
"""
from __future__ import annotations

import contextlib
import os
import tempfile
from pathlib import Path
from typing import IO, Iterator, Union


@contextlib.contextmanager
def atomic_path(target: Union[str, Path]) -> Iterator[Path]:
    """Yield a temporary path in the target's folder; rename it over the target on success."""
    target = Path(target)
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    os.close(fd)
    tmp_path = Path(tmp)
    # mkstemp creates 0600; give the finished file the permissions an ordinary open() would.
    umask = os.umask(0)
    os.umask(umask)
    os.chmod(tmp_path, 0o666 & ~umask)
    try:
        yield tmp_path
        os.replace(tmp_path, target)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            tmp_path.unlink()
        raise


@contextlib.contextmanager
def atomic_open(target: Union[str, Path], mode: str = "w", encoding: str = "utf-8") -> Iterator[IO]:
    """Open a file for writing that appears under its name only when fully written."""
    with atomic_path(target) as tmp:
        kwargs = {} if "b" in mode else {"encoding": encoding, "newline": ""}
        with open(tmp, mode, **kwargs) as fh:
            yield fh
            fh.flush()
            os.fsync(fh.fileno())


def write_text(target: Union[str, Path], text: str) -> None:
    with atomic_open(target, "w") as fh:
        fh.write(text)
