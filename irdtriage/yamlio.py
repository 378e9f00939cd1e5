"""Reading the curated YAML files under panels/ with line numbers for error messages.

* :func:`package_data_path` -- a bundled ``panels/`` file (installed package data, else the
  repository's ``panels/`` folder).
* :func:`parse_yaml` -- text -> (node, data): the composed YAML node (lines for messages) and the
  plain data; a syntax error is an ``InputError`` naming file and line.
* :func:`read_yaml` -- file -> (raw bytes, node, data); an unreadable file is an ``InputError``.
* :func:`read_yaml_fast` -- the same for large generated files, with the parsed data kept as JSON in
  the user cache under the file's SHA-256 (``node`` is then None: callers re-read with
  :func:`read_yaml` for line numbers when validation fails). Building Python objects from a
  15,000-line YAML file costs about a second; reading the JSON costs a few milliseconds.
"""
from __future__ import annotations

import hashlib
import json
from pathlib import Path
from typing import Any

import yaml

from .errors import InputError

_Loader = getattr(yaml, "CSafeLoader", yaml.SafeLoader)  # libyaml when available


def package_data_path(name: str) -> Path:
    """The bundled ``panels/<name>`` (installed package data, else the repository's panels/)."""
    try:
        from importlib.resources import files

        candidate = files("irdtriage.panels") / name
        if candidate.is_file():
            return Path(str(candidate))
    except (ImportError, TypeError, FileNotFoundError):
        pass
    return Path(__file__).resolve().parents[1] / "panels" / name


def parse_yaml(text: str, path: str) -> tuple[Any, Any]:
    """(node, data) of YAML text; ``node`` is None for an empty document."""
    try:
        # One pass through libyaml (when PyYAML has it): compose the node tree, then build the
        # plain data from that same tree. Parsing twice with the pure-Python reader made the
        # 15,000-line transcripts.yaml cost seconds at every start.
        loader = _Loader(text)
        try:
            node = loader.get_single_node()
            data = loader.construct_document(node) if node is not None else None
        finally:
            loader.dispose()
    except yaml.YAMLError as e:
        mark = getattr(e, "problem_mark", None)
        raise InputError(f"not valid YAML: {getattr(e, 'problem', e)}", path,
                         mark.line + 1 if mark else None) from None
    return node, data


def read_yaml(path: Path, what: str) -> tuple[bytes, Any, Any]:
    """(raw bytes, node, data) of a YAML file; ``what`` names the file in the read error
    ("cannot read <what>: <reason>").  Bytes that are not UTF-8 are replaced, not refused."""
    try:
        raw = path.read_bytes()
    except OSError as e:
        raise InputError(f"cannot read {what}: {e.strerror or e}", str(path)) from None
    node, data = parse_yaml(raw.decode("utf-8", errors="replace"), str(path))
    return raw, node, data


def read_yaml_fast(path: Path, what: str) -> tuple[bytes, Any, Any]:
    """(raw bytes, node or None, data): :func:`read_yaml` with the data cached as JSON by content
    hash. A cache that cannot be read or written is ignored (the file is parsed as usual); data
    that does not survive a JSON round trip unchanged (dates, non-string keys) is never cached."""
    try:
        raw = path.read_bytes()
    except OSError as e:
        raise InputError(f"cannot read {what}: {e.strerror or e}", str(path)) from None
    from .cache import cache_dir

    cached = cache_dir() / "yaml" / f"{hashlib.sha256(raw).hexdigest()}.json"
    try:
        return raw, None, json.loads(cached.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        pass
    node, data = parse_yaml(raw.decode("utf-8", errors="replace"), str(path))
    try:
        text = json.dumps(data, separators=(",", ":"))
        if json.loads(text) == data:
            from .atomic import write_text

            cached.parent.mkdir(parents=True, exist_ok=True)
            write_text(cached, text)
    except (OSError, TypeError, ValueError):
        pass
    return raw, node, data
