"""Atomic output: one file at a time, or the whole output folder of a run as one transaction.

One file: :func:`atomic_path` / :func:`atomic_open` write to a temporary file beside the target
and rename it over the target, so a crash half-way leaves the previous file (or nothing).

One folder: :func:`output_transaction` writes a run's whole output set into a fresh staging
folder beside the output folder (same file system) and then swaps it in at once, so a reader
sees the previous set or the new set, never a mix:

- an exclusive lock (``fcntl.flock`` on ``.<name>.lock`` beside the folder) refuses a second
  run into the same folder while one is running; the lock file is removed when the run ends;
- the swap is ``renameat2(RENAME_EXCHANGE)`` where the kernel and file system offer it (one
  atomic step). Elsewhere it is two renames: the old folder aside, the new one into place; in
  the moment between them the folder is absent (never mixed). A run killed in that moment
  leaves ``.<name>.old-*``; the next run into the folder puts it back before it starts;
- the staging folder is removed on every exit path (errors, KeyboardInterrupt, SystemExit);
  SIGINT, SIGTERM and SIGHUP are held back while the swap and the clean-up run;
- the folder may only hold files the caller recognises as its own outputs (``owned``); a
  folder holding anything else is refused rather than replaced, and so is a folder that holds
  (or is) one of the run's input files;
- disk full, file-size limit, read-only or forbidden folder become one-line
  :class:`~irdtriage.errors.InputError` messages naming the folder.
"""
from __future__ import annotations

import contextlib
import ctypes
import errno
import fcntl
import os
import shutil
import signal
import sys
import tempfile
from pathlib import Path
from typing import IO, Callable, Iterable, Iterator, Optional, Union

from .errors import InputError

PathLike = Union[str, Path]


def _umask() -> int:
    umask = os.umask(0)
    os.umask(umask)
    return umask


@contextlib.contextmanager
def atomic_path(target: PathLike) -> Iterator[Path]:
    """Yield a temporary path in the target's folder; rename it over the target on success."""
    target = Path(target)
    target.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".part", dir=target.parent)
    os.close(fd)
    tmp_path = Path(tmp)
    # mkstemp creates 0600; give the finished file the permissions an ordinary open() would.
    os.chmod(tmp_path, 0o666 & ~_umask())
    try:
        yield tmp_path
        os.replace(tmp_path, target)
    except BaseException:
        with contextlib.suppress(FileNotFoundError):
            tmp_path.unlink()
        raise


@contextlib.contextmanager
def atomic_open(target: PathLike, mode: str = "w", encoding: str = "utf-8") -> Iterator[IO]:
    """Open a file for writing that appears under its name only when fully written."""
    with atomic_path(target) as tmp:
        kwargs = {} if "b" in mode else {"encoding": encoding, "newline": ""}
        with open(tmp, mode, **kwargs) as fh:
            yield fh
            fh.flush()
            os.fsync(fh.fileno())


def write_text(target: PathLike, text: str) -> None:
    with atomic_open(target, "w") as fh:
        fh.write(text)


# ---------------------------------------------------------------------------------------
# The output folder as one transaction

#: errno -> what the user is told (disk and permission problems are the user's to fix).
WRITE_PROBLEMS = {
    errno.ENOSPC: "the disk is full",
    errno.EDQUOT: "the disk quota is exhausted",
    errno.EFBIG: "a file would exceed the file-size limit (ulimit -f) or the file system's maximum",
    errno.EROFS: "the file system is read-only",
    errno.EACCES: "permission denied",
    errno.EPERM: "operation not permitted",
    errno.EXDEV: "the folder is on another file system than its parent (a mount point?)",
    errno.EBUSY: "the folder is busy (a mount point?)",
}

_HELD_SIGNALS = {s for s in (getattr(signal, n, None) for n in ("SIGINT", "SIGTERM", "SIGHUP")) if s}


@contextlib.contextmanager
def signals_held() -> Iterator[None]:
    """Hold back SIGINT/SIGTERM/SIGHUP (delivered when the block ends); a no-op off the main thread."""
    import threading

    if threading.current_thread() is not threading.main_thread() or not hasattr(signal, "pthread_sigmask"):
        yield
        return
    old = signal.pthread_sigmask(signal.SIG_BLOCK, _HELD_SIGNALS)
    try:
        yield
    finally:
        signal.pthread_sigmask(signal.SIG_SETMASK, old)


def write_problem(err: OSError, folder: PathLike) -> Optional[InputError]:
    """The one-line InputError for a disk/permission OSError while writing ``folder``; None otherwise."""
    what = WRITE_PROBLEMS.get(err.errno) if isinstance(err, OSError) else None
    if what is None:
        return None
    return InputError(f"cannot write the output folder: {what} [{errno.errorcode.get(err.errno, err.errno)}]; "
                      f"the previous outputs there, if any, are unchanged", str(folder))


_RENAME_EXCHANGE = 2
_AT_FDCWD = -100


def _renameat2_exchange(a: Path, b: Path) -> bool:
    """Atomically exchange two paths (Linux renameat2 RENAME_EXCHANGE); False when not available."""
    if not sys.platform.startswith("linux"):
        return False
    try:
        libc = ctypes.CDLL(None, use_errno=True)
        fn = libc.renameat2
    except (OSError, AttributeError):  # no such symbol in this C library (glibc < 2.28, musl ...)
        return False
    fn.argtypes = [ctypes.c_int, ctypes.c_char_p, ctypes.c_int, ctypes.c_char_p, ctypes.c_uint]
    fn.restype = ctypes.c_int
    if fn(_AT_FDCWD, os.fsencode(str(a)), _AT_FDCWD, os.fsencode(str(b)), _RENAME_EXCHANGE) == 0:
        return True
    err = ctypes.get_errno()
    if err in (errno.ENOSYS, errno.EINVAL, errno.ENOTSUP, errno.EOPNOTSUPP):
        return False  # kernel or file system without the flag: the caller uses two renames
    raise OSError(err, os.strerror(err), str(b))


def swap_in(staging: Path, target: Path, exchange: bool = True) -> None:
    """Put the folder ``staging`` in place of the folder ``target`` (which may not exist).

    Afterwards ``staging`` no longer exists and the previous ``target`` is gone.
    """
    if not target.exists():
        os.rename(staging, target)
        return
    if exchange and _renameat2_exchange(staging, target):
        shutil.rmtree(staging)  # now holds the previous set
        return
    # Two renames. Between them the folder is absent for an instant (never mixed); a run
    # killed there leaves .<name>.old-*, which the next run puts back (see _recover).
    aside = Path(tempfile.mkdtemp(prefix=f".{target.name}.old-", dir=target.parent))
    os.rename(target, aside)  # a folder may be renamed onto an empty folder (POSIX rename)
    try:
        os.rename(staging, target)
    except BaseException:
        os.rename(aside, target)
        raise
    shutil.rmtree(aside)


def _fsync_tree(folder: Path) -> None:
    for p in folder.iterdir():
        if p.is_file() and not p.is_symlink():
            fd = os.open(p, os.O_RDONLY)
            try:
                os.fsync(fd)
            finally:
                os.close(fd)
    _fsync_dir(folder)


def _fsync_dir(folder: Path) -> None:
    with contextlib.suppress(OSError):
        fd = os.open(folder, os.O_RDONLY)
        try:
            os.fsync(fd)
        finally:
            os.close(fd)


def _inside(path: Path, folder: Path) -> bool:
    return path == folder or folder in path.parents


class OutputTransaction:
    """State of one output-folder transaction (see :func:`output_transaction`)."""

    def __init__(self, out: Path, staging: Path, given: Optional[PathLike] = None):
        self.out = out            #: the output folder (symbolic links resolved)
        self.given = Path(given) if given is not None else out  #: the folder as the caller named it
        self.staging = staging    #: where the run writes its files
        self.committed = False    #: True once the new set is in place

    def final_path(self, staged: PathLike) -> Path:
        """Where a file written into ``staging`` appears after the swap (under the name the caller gave)."""
        return self.given / Path(staged).relative_to(self.staging)

    def carry_over(self, names: Iterable[str]) -> list[str]:
        """Keep these files of the previous set in the new one (hard link, else copy); returns those kept."""
        kept = []
        for name in names:
            src, dst = self.out / name, self.staging / name
            if not src.is_file() or dst.exists():
                continue
            try:
                os.link(src, dst)
            except OSError:
                shutil.copy2(src, dst)
            kept.append(name)
        return kept


class _Lock:
    """An exclusive, non-blocking flock on ``path``; the file is removed again on release."""

    def __init__(self, path: Path, folder: Path):
        self.path, self.folder, self.fd = path, folder, None

    def acquire(self) -> None:
        while True:
            fd = os.open(self.path, os.O_RDWR | os.O_CREAT | os.O_CLOEXEC, 0o644)
            try:
                fcntl.flock(fd, fcntl.LOCK_EX | fcntl.LOCK_NB)
            except BlockingIOError:
                os.close(fd)
                raise InputError(f"another irdtriage run is writing this output folder (lock {self.path.name} "
                                 f"is held); wait for it to finish or choose another --out", str(self.folder))
            except BaseException:
                os.close(fd)
                raise
            # The holder before us may have removed the file after we opened it: then our lock is
            # on a file nobody else can find, and we start again on the current one.
            try:
                same = os.stat(self.path).st_ino == os.fstat(fd).st_ino
            except FileNotFoundError:
                same = False
            if same:
                self.fd = fd
                return
            os.close(fd)

    def release(self) -> None:
        if self.fd is None:
            return
        with contextlib.suppress(OSError):
            os.unlink(self.path)  # while still locked, so a waiting run re-opens a fresh file
        os.close(self.fd)
        self.fd = None


def _recover(out: Path) -> None:
    """Tidy what a killed run left beside ``out`` (we hold the lock, so nobody else is writing)."""
    parent = out.parent
    leftovers_old = sorted(parent.glob(f".{out.name}.old-*"))
    if not out.exists() and leftovers_old:
        os.rename(leftovers_old[0], out)  # killed between the two renames: the previous set returns
        leftovers_old = leftovers_old[1:]
    for p in leftovers_old + sorted(parent.glob(f".{out.name}.new-*")):
        if p.is_dir() and not p.is_symlink():
            shutil.rmtree(p, ignore_errors=True)


@contextlib.contextmanager
def output_transaction(
    out: PathLike,
    *,
    inputs: Iterable[Optional[PathLike]] = (),
    owned: Callable[[Path], bool] = lambda p: False,
    allowed_inputs: Iterable[PathLike] = (),
    exchange: bool = True,
) -> Iterator[OutputTransaction]:
    """Write a whole output set as one transaction; yields an :class:`OutputTransaction`.

    The caller writes into ``tx.staging``; leaving the block without an exception swaps the
    staging folder in place of ``out`` (every file of the previous set is replaced or removed);
    an exception removes the staging folder and leaves ``out`` as it was.

    ``inputs``: the run's input files; an ``out`` that is one of them or holds one is refused.
    ``allowed_inputs``: inputs that may lie inside ``out`` (the caller keeps them via ``carry_over``).
    ``owned(path)``: True when an entry of an existing ``out`` is one of our outputs; an ``out``
    holding anything else is refused, never emptied.
    """
    given = str(out)
    out = Path(os.path.realpath(os.path.abspath(os.path.expanduser(given))))
    if not out.name or out.parent == out:
        raise InputError("cannot use the file system root as the output folder", given)
    if out.exists() and not out.is_dir():
        raise InputError("--out names an existing file, not a folder; choose a folder name", given)
    allowed = {Path(os.path.realpath(p)) for p in allowed_inputs}
    for p in inputs:
        if not p:
            continue
        rp = Path(os.path.realpath(p))
        if rp in allowed:
            continue
        if _inside(rp, out):
            raise InputError(f"the output folder holds the input file {p}; the run would replace it, "
                             f"so choose another --out", given)
    if _inside(Path(os.path.realpath(os.getcwd())), out):
        raise InputError("the output folder is (or holds) the current working folder; the run replaces the "
                         "whole folder, so name a subfolder or run from elsewhere", given)
    try:
        out.parent.mkdir(parents=True, exist_ok=True)
    except OSError as e:
        raise write_problem(e, given) or e
    lock = _Lock(out.parent / f".{out.name}.lock", Path(given))
    try:
        lock.acquire()
    except OSError as e:
        raise write_problem(e, given) or e
    staging: Optional[Path] = None
    try:
        _recover(out)
        if out.exists():
            foreign = sorted(p.name for p in out.iterdir() if not owned(p))
            if foreign:
                shown = ", ".join(foreign[:3]) + (f" and {len(foreign) - 3} more" if len(foreign) > 3 else "")
                raise InputError(f"the output folder holds files irdtriage did not write ({shown}); the run "
                                 f"replaces the whole folder, so choose a new or empty folder, or one holding "
                                 f"only irdtriage outputs", given)
        staging = Path(tempfile.mkdtemp(prefix=f".{out.name}.new-", dir=out.parent))
        os.chmod(staging, (out.stat().st_mode & 0o7777) if out.exists() else (0o777 & ~_umask()))
        tx = OutputTransaction(out, staging, given)
        yield tx
        with signals_held():
            _fsync_tree(staging)
            swap_in(staging, out, exchange=exchange)
            tx.committed = True
            staging = None
            _fsync_dir(out.parent)
    except OSError as e:
        problem = write_problem(e, given)
        if problem is None:
            raise
        raise problem from e
    finally:
        with signals_held():
            if staging is not None:
                shutil.rmtree(staging, ignore_errors=True)
            lock.release()
