"""The bundled demonstration case: an invented family, for showing the tool only.

Nothing here is a real person or a check value; see demo_vcfs/README.md for the scenario.
"""
from __future__ import annotations

from importlib import resources
from pathlib import Path

DEMO_SAMPLE = "ARDEN-P1"


def demo_dir() -> Path:
    try:
        p = Path(str(resources.files("irdtriage.demo_vcfs")))
        if (p / "arden_trio.vcf.gz").exists():
            return p
    except (ModuleNotFoundError, TypeError):
        pass
    return Path(__file__).resolve().parents[1] / "demo_vcfs"


def demo_inputs() -> dict[str, str]:
    d = demo_dir()
    return {
        "vcf": str(d / "arden_trio.vcf.gz"),
        "ped": str(d / "arden_trio.ped"),
        "phenopacket": str(d / "arden_p1.phenopacket.json"),
        "sample": DEMO_SAMPLE,
    }
