"""``panels/structural.yaml``: intake, PVS1 and Riggs 2020 point settings for structural events."""
from __future__ import annotations

from functools import lru_cache
from typing import Any

from ..errors import InputError
from ..yamlio import package_data_path, read_yaml

REQUIRED = ("intake", "pvs1", "riggs")


@lru_cache(maxsize=1)
def load_settings() -> dict[str, Any]:
    path = package_data_path("structural.yaml")
    _raw, _node, data = read_yaml(path, "structural variant settings")
    if not isinstance(data, dict) or any(k not in data for k in REQUIRED):
        raise InputError(f"structural variant settings need the sections {', '.join(REQUIRED)}", str(path))
    return data
