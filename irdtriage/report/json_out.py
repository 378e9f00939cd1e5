"""result.json: write (atomic, contract key order, indent 2) and load (validated against the JSON Schema).

Layout: indent 2 throughout, keys in contract (insertion) order, UTF-8, final newline. When
there are more than ``COMPACT_FINDINGS`` findings (an exome without annotation gives tens of
thousands), each element of ``findings`` is written on one line of its own in compact form
(the C encoder of the standard library; the indenting encoder is pure Python and took ~20 s
and ~2.6 GB for 60,000 findings, see benchmarks/bench_reports.py). Either way the file is the
same JSON value; only whitespace differs.
"""
from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path
from typing import Iterator, Union

from irdtriage.atomic import atomic_open
from irdtriage.errors import InputError
from irdtriage.jsonio import read_json_object

SCHEMA_PATH = Path(__file__).resolve().parent.parent / "schema" / "result.schema.json"


@lru_cache(maxsize=1)
def schema() -> dict:
    return json.loads(SCHEMA_PATH.read_text(encoding="utf-8"))


def _json_path(parts) -> str:
    out = "$"
    for p in parts:
        out += f"[{p}]" if isinstance(p, int) else f".{p}"
    return out


def validation_errors(result: dict) -> list[str]:
    """All schema problems as 'JSON-path: message', first by position in the document."""
    import jsonschema

    v = jsonschema.Draft202012Validator(schema())
    errs = sorted(v.iter_errors(result), key=lambda e: [str(p) for p in e.absolute_path])
    return [f"{_json_path(e.absolute_path)}: {e.message}" for e in errs]


COMPACT_FINDINGS = 1000

_compact = json.JSONEncoder(ensure_ascii=False, allow_nan=False, separators=(",", ":")).encode


def _indented(value, level: int) -> str:
    text = json.dumps(value, indent=2, ensure_ascii=False, allow_nan=False)
    # JSON strings never hold a raw newline, so splitting on it only touches layout.
    return text.replace("\n", "\n" + " " * level) if level else text


def iter_result_json(result: dict) -> Iterator[str]:
    """The text of result.json in pieces (see the module docstring for the layout)."""
    findings = result.get("findings")
    if not isinstance(findings, list) or len(findings) <= COMPACT_FINDINGS:
        yield json.dumps(result, indent=2, ensure_ascii=False, allow_nan=False) + "\n"
        return
    yield "{"
    for i, (key, value) in enumerate(result.items()):
        yield ("," if i else "") + "\n  " + json.dumps(key, ensure_ascii=False) + ": "
        if key == "findings":
            yield "[\n    "
            batch: list[str] = []
            for j, f in enumerate(value):
                batch.append(_compact(f))
                if len(batch) == 500:
                    yield ",\n    ".join(batch) + (",\n    " if j + 1 < len(value) else "")
                    batch = []
            if batch:
                yield ",\n    ".join(batch)
            yield "\n  ]"
        else:
            yield _indented(value, 2)
    yield "\n}\n"


def render_result_json(result: dict) -> str:
    """The text of result.json: keys in contract (insertion) order, indent 2, UTF-8, final newline."""
    return "".join(iter_result_json(result))


def write_result_json(result: dict, path: Union[str, Path]) -> Path:
    with atomic_open(path) as fh:
        for chunk in iter_result_json(result):
            fh.write(chunk)
    return Path(path)


def load_result(path: Union[str, Path]) -> dict:
    """Read a result.json; raise InputError naming the file (and line / JSON path) when it is not one."""
    path = Path(path)
    _text, data = read_json_object(path, "irdtriage result")
    errors = validation_errors(data)
    if errors:
        more = f" (and {len(errors) - 1} more problem(s))" if len(errors) > 1 else ""
        raise InputError(f"not a valid irdtriage result: {errors[0]}{more}", path)
    return data
