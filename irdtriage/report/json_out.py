"""result.json: write (atomic, contract key order, indent 2) and load (validated against the JSON Schema)."""
from __future__ import annotations

import json
from functools import lru_cache
from pathlib import Path
from typing import Union

from irdtriage.atomic import write_text
from irdtriage.errors import InputError

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


def render_result_json(result: dict) -> str:
    """The text of result.json: keys in contract (insertion) order, indent 2, UTF-8, final newline."""
    return json.dumps(result, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def write_result_json(result: dict, path: Union[str, Path]) -> Path:
    text = render_result_json(result)
    write_text(path, text)
    return Path(path)


def load_result(path: Union[str, Path]) -> dict:
    """Read a result.json; raise InputError naming the file (and line / JSON path) when it is not one."""
    path = Path(path)
    try:
        text = path.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("file not found", path) from None
    except (OSError, UnicodeDecodeError) as e:
        raise InputError(f"cannot read result file: {e}", path) from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as e:
        raise InputError(f"not valid JSON: {e.msg} (column {e.colno})", path, e.lineno) from None
    if not isinstance(data, dict):
        raise InputError("not an irdtriage result: the top level is not a JSON object", path, 1)
    errors = validation_errors(data)
    if errors:
        more = f" (and {len(errors) - 1} more problem(s))" if len(errors) > 1 else ""
        raise InputError(f"not a valid irdtriage result: {errors[0]}{more}", path)
    return data
