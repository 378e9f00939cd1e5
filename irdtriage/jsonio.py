"""Read a JSON object from a file with one-line errors naming the file and line."""
from __future__ import annotations

import json
from pathlib import Path
from typing import Any, Union

from .errors import InputError


def read_json_object(path: Union[str, Path], what: str) -> tuple[str, dict[str, Any]]:
    """(text, data) of a JSON file whose top level must be an object; ``what`` names it in errors."""
    p = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError(f"{what} file not found", p) from None
    except (OSError, UnicodeDecodeError) as e:
        raise InputError(f"cannot read {what}: {e}", p) from None
    try:
        data = json.loads(text)
    except json.JSONDecodeError as e:
        raise InputError(f"not valid JSON: {e.msg} (column {e.colno})", p, e.lineno) from None
    if not isinstance(data, dict):
        article = "an" if what[:1].lower() in "aeiou" else "a"
        raise InputError(f"not {article} {what}: the top level is not a JSON object", p, 1)
    return text, data
