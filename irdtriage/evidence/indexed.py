"""Open a local, indexed evidence VCF (population frequency, clinical assertions), and check
that an index belongs to its data file.

htslib only *warns* that an index is older than its data ("index file is older than the data
file"), and the project silences htslib (``pysam.set_verbosity(0)``); a stale or foreign index
makes region queries skip records without a word.  Two checks, both cheap:

* age: the index file's modification time must not be earlier than the data file's (the same
  comparison htslib makes);
* probe: the first records of the file, read in order, must be found again through the index
  (the first record of each contig seen, and the last record read).  This catches an index made
  for another file of the same kind; it cannot prove that the index covers records beyond the
  probed ones (a file that gained records later is caught by the age check only).
"""
from __future__ import annotations

import os
from typing import Optional

import pysam

from ..errors import InputError

PROBE_RECORDS = 1000  # records read in order for the probe
PROBE_CONTIGS = 8  # at most this many contigs' first records are looked up again

REINDEX_HINT = ("re-index it, e.g. python -c \"import pysam; pysam.tabix_index('{path}', preset='vcf', "
                "force=True)\" (BCF: pysam.bcftools.index('-f', '{path}'))")


def index_file(path: str) -> Optional[str]:
    """The index htslib would use for ``path`` (``.tbi``/``.csi`` beside it), or None."""
    stem = os.path.splitext(path)[0]
    for cand in (path + ".csi", path + ".tbi", stem + ".csi", stem + ".tbi"):
        if cand != path and os.path.isfile(cand):
            return cand
    return None


def stale_index(path: str) -> Optional[str]:
    """The index file when it is older than the data file, else None."""
    idx = index_file(path)
    if idx is None:
        return None
    try:
        if os.stat(idx).st_mtime_ns < os.stat(path).st_mtime_ns:
            return idx
    except OSError:
        return None
    return None


def probe_index(vf: pysam.VariantFile) -> Optional[str]:
    """Why the loaded index does not match the records at the start of the file, or None.

    Reads up to PROBE_RECORDS records in order from the current position (call it on a freshly
    opened file) and looks the probe records up again through the index.
    """
    probes: list[tuple[str, int, str]] = []
    seen: set[str] = set()
    last = None
    try:
        for n, rec in enumerate(vf):
            item = (rec.chrom, rec.pos, rec.ref)
            if rec.chrom not in seen and len(seen) < PROBE_CONTIGS:
                seen.add(rec.chrom)
                probes.append(item)
            last = item
            if n + 1 >= PROBE_RECORDS:
                break
    except (ValueError, OSError):
        return None  # unreadable records are reported by the reader itself, with their line
    if last is not None and last not in probes:
        probes.append(last)
    for chrom, pos, ref in probes:
        try:
            found = any(r.pos == pos and r.ref == ref for r in vf.fetch(chrom, max(0, pos - 1), pos + 1))
        except (ValueError, OSError, KeyError):
            found = False
        if not found:
            return f"the index does not find {chrom}:{pos} that the file holds (index made for another file?)"
    return None


def index_problem(path: str, vf: pysam.VariantFile) -> Optional[str]:
    """One phrase naming what is wrong with the index of an opened, indexed file, or None."""
    idx = stale_index(path)
    if idx is not None:
        return f"index {os.path.basename(idx)} is older than the data"
    return probe_index(vf)


def open_indexed_vcf(path: str, what: str) -> pysam.VariantFile:
    """pysam.VariantFile for a bgzipped VCF/BCF with a matching tabix or CSI index, else one InputError line."""
    try:
        vf = pysam.VariantFile(path)
    except (OSError, ValueError) as e:
        raise InputError(f"cannot open {what}: {e}", path) from None
    if not vf.index:
        vf.close()
        raise InputError(f"{what} needs a tabix (.tbi) or CSI index", path)
    problem = index_problem(path, vf)
    if problem is not None:
        vf.close()
        # a frequency or assertion silently missing would change classifications: stop
        raise InputError(f"{what}: {problem}; {REINDEX_HINT.format(path=os.path.basename(path))}", path)
    return vf
