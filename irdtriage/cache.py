"""The per-user cache folder (``$IRDTRIAGE_CACHE``, else ``$XDG_CACHE_HOME/irdtriage``, else
``~/.cache/irdtriage``): derived files the tool can always rebuild (the phenotype model for another
hpo3 release, the parsed form of large bundled YAML files). Nothing in it is patient data."""
from __future__ import annotations

import os
from pathlib import Path


def cache_dir() -> Path:
    """Per-user cache folder: $IRDTRIAGE_CACHE, else $XDG_CACHE_HOME/irdtriage, else ~/.cache/irdtriage."""
    if os.environ.get("IRDTRIAGE_CACHE"):
        return Path(os.environ["IRDTRIAGE_CACHE"])
    base = os.environ.get("XDG_CACHE_HOME") or os.path.join(os.path.expanduser("~"), ".cache")
    return Path(base) / "irdtriage"
