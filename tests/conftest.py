import os
import sys
import tempfile
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

# Outside reference data for checks (read-only; see ../shared/refdata/README.md).
REFDATA = ROOT.parent / "shared" / "refdata"

EXTERNAL_DIR = ROOT / "tests" / "external"

# The tool keeps derived files (parsed YAML, a phenotype model for another hpo3 release) in a
# per-user cache; the tests and the commands they start use a fresh one of their own instead of
# the user's (inherited by subprocesses through the environment).
os.environ["IRDTRIAGE_CACHE"] = tempfile.mkdtemp(prefix="irdtriage-test-cache-")


def pytest_sessionfinish(session, exitstatus):
    """Remove the tests' cache folder (made above) when the session ends."""
    import shutil

    shutil.rmtree(os.environ["IRDTRIAGE_CACHE"], ignore_errors=True)


def pytest_collection_modifyitems(config, items):
    """Every check under tests/external reads outside reference data: mark it ``external``
    (each module also skips, with the reason, when its ../shared/refdata files are absent)."""
    import pytest

    for item in items:
        if EXTERNAL_DIR in Path(str(item.fspath)).resolve().parents:
            item.add_marker(pytest.mark.external)
