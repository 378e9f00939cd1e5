import sys
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

# Outside reference data for checks (read-only; see ../shared/refdata/README.md).
REFDATA = ROOT.parent / "shared" / "refdata"
