"""The batch manifest: a tab-separated table with a header, one case per line.

Columns (only ``case`` and ``vcf`` are required; any order):

- ``case``: the case name, also the name of its output folder under ``--out``;
- ``vcf``: the case's VCF/BCF;
- ``sample``, ``phenopacket``, ``hpo``, ``ped``, ``sex``: as the ``triage`` options of the same name
  (``hpo`` is comma-separated terms or ``@file``);
- ``previous``: an earlier result.json of the case, compared with the new one.

Relative paths resolve from the manifest's folder. Empty lines and lines starting with ``#``
are skipped. Structural problems (an unknown column, a missing required value, a wrong number
of fields, a repeated or unusable case name) stop the batch with one line naming the manifest
line; a missing input file is the case's own failure, recorded when the case runs.
"""
from __future__ import annotations

import os
import re
from dataclasses import asdict, dataclass
from pathlib import Path
from typing import Optional

from ..errors import InputError

COLUMNS = ("case", "vcf", "sample", "phenopacket", "hpo", "ped", "sex", "previous")
REQUIRED = ("case", "vcf")
PATH_COLUMNS = ("vcf", "phenopacket", "ped", "previous")
#: names the batch itself writes into --out; a case may not take them
RESERVED = frozenset({"batch.json", "cohort.tsv", "cohort_genes.tsv", "cohort_alleles.tsv", "cohort.html"})
_CASE_NAME = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._+-]{0,127}$")


@dataclass(frozen=True)
class CaseSpec:
    """One manifest line, paths already resolved from the manifest's folder."""

    case: str
    vcf: str
    line: int
    sample: Optional[str] = None
    phenopacket: Optional[str] = None
    hpo: Optional[str] = None
    ped: Optional[str] = None
    sex: Optional[str] = None
    previous: Optional[str] = None

    def as_dict(self) -> dict:
        return asdict(self)

    def input_files(self) -> list[tuple[str, str]]:
        """(role, path) of every file the case reads (the previous result is not an input of triage)."""
        out = [(role, getattr(self, role)) for role in ("vcf", "ped", "phenopacket") if getattr(self, role)]
        if self.hpo and self.hpo.startswith("@"):
            out.append(("hpo", self.hpo[1:]))
        return out


def _resolve(value: str, base: Path) -> str:
    p = Path(os.path.expanduser(value))
    return str(p if p.is_absolute() else base / p)


def read_manifest(path: str | os.PathLike) -> list[CaseSpec]:
    path = str(path)
    if not os.path.isfile(path):
        raise InputError("manifest file not found", path)
    base = Path(os.path.abspath(path)).parent
    try:
        with open(path, encoding="utf-8") as fh:
            lines = fh.read().splitlines()
    except UnicodeDecodeError:
        raise InputError("the manifest is not UTF-8 text (expected a tab-separated table)", path)
    header: Optional[list[str]] = None
    cases: list[CaseSpec] = []
    seen: dict[str, int] = {}
    for number, raw in enumerate(lines, 1):
        if not raw.strip() or raw.lstrip().startswith("#"):
            continue
        fields = [f.strip() for f in raw.split("\t")]
        if header is None:
            header = [f.lower() for f in fields]
            unknown = [f for f in header if f not in COLUMNS]
            if unknown:
                raise InputError(f"unknown column(s) {', '.join(repr(u) for u in unknown)}; the columns are "
                                 f"{', '.join(COLUMNS)} (tab-separated)", path, number)
            repeated = sorted({f for f in header if header.count(f) > 1})
            if repeated:
                raise InputError(f"column(s) named twice: {', '.join(repeated)}", path, number)
            missing = [c for c in REQUIRED if c not in header]
            if missing:
                raise InputError(f"the header lacks the required column(s) {', '.join(missing)}", path, number)
            continue
        if len(fields) != len(header):
            raise InputError(f"{len(fields)} tab-separated fields where the header has {len(header)}", path, number)
        row = dict(zip(header, fields))
        for col in REQUIRED:
            if not row.get(col):
                raise InputError(f"the required value '{col}' is empty", path, number)
        name = row["case"]
        if not _CASE_NAME.match(name) or name in RESERVED:
            raise InputError(f"case name {name!r} cannot be a folder name: use letters, digits and . _ + - "
                             f"(not starting with . or -), and none of {', '.join(sorted(RESERVED))}", path, number)
        if name in seen:
            raise InputError(f"case {name!r} is already on line {seen[name]}", path, number)
        seen[name] = number
        values = {k: (v or None) for k, v in row.items()}
        for col in PATH_COLUMNS:
            if values.get(col):
                values[col] = _resolve(values[col], base)
        if values.get("hpo", None) and values["hpo"].startswith("@"):
            values["hpo"] = "@" + _resolve(values["hpo"][1:], base)
        cases.append(CaseSpec(line=number, **values))
    if header is None:
        raise InputError("the manifest is empty (expected a header line: case, vcf, ...)", path)
    if not cases:
        raise InputError("the manifest names no case (only a header)", path)
    return cases
