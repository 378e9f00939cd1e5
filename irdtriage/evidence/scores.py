"""Tabix-indexed score tables: columns chrom, pos, ref, alt, score (bgzipped TSV, 1-based pos).

A table's name is its file name without extensions (``revel.tsv.gz`` -> ``revel``) or is
given explicitly as ``NAME=PATH``; names are matched case-insensitively to the calibrated
scores in the criteria rules file.
"""
from __future__ import annotations

import os
from typing import Optional

import pysam

from ..errors import InputError
from .alleles import contig_for, trim
from .values import max_number


def table_name(spec: str) -> tuple[str, str]:
    if "=" in spec and not os.path.exists(spec):
        name, path = spec.split("=", 1)
        return name.strip().lower(), path
    base = os.path.basename(spec)
    return base.split(".")[0].lower(), spec


class ScoreTable:
    def __init__(self, spec: str):
        self.name, self.path = table_name(spec)
        try:
            self.tbx = pysam.TabixFile(self.path)
        except (OSError, ValueError) as e:
            raise InputError(f"cannot open score table (needs bgzip + tabix index): {e}", self.path) from None
        self.contigs = set(self.tbx.contigs)

    def close(self) -> None:
        self.tbx.close()

    def lookup(self, chrom: str, pos: int, ref: str, alt: str) -> Optional[float]:
        contig = contig_for(chrom, self.contigs)
        if contig is None:
            return None
        want = trim(pos, ref, alt)
        best = None
        for n, line in enumerate(self.tbx.fetch(contig, max(0, pos - 1), pos + len(ref)), 1):
            cols = line.split("\t")
            if len(cols) < 5:
                raise InputError(f"score table row has {len(cols)} columns; need chrom, pos, ref, alt, score",
                                 self.path)
            try:
                rpos = int(cols[1])
            except ValueError:
                raise InputError(f"score table position is not a number: {cols[1]!r}", self.path) from None
            if trim(rpos, cols[2], cols[3]) != want:
                continue
            v = max_number(cols[4])
            if v is not None and (best is None or v > best):
                best = v
        return best
