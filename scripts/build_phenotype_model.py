"""Rebuild the shipped phenotype model (irdtriage/data/phenotype_model.npz) from the installed hpo3.

Run after upgrading hpo3:  python scripts/build_phenotype_model.py
tests/test_phenotype_model.py rebuilds it in a temporary folder and requires an identical model.
"""
from __future__ import annotations

import os
import sys
import time

from irdtriage.phenotype_model import SHIPPED, build


def main(argv: list[str]) -> int:
    target = argv[1] if len(argv) > 1 else str(SHIPPED)
    t0 = time.monotonic()
    model = build(target)
    size = os.path.getsize(target)
    print(f"wrote {target}: HPO {model.version} (hpo3 {model.hpo3_version}), {len(model)} terms, "
          f"{len(model._genes)} genes, {model.pool.size} null-pool terms, {size / 1e6:.2f} MB "
          f"in {time.monotonic() - t0:.1f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
