"""Open a local, indexed evidence VCF (population frequency, clinical assertions)."""
from __future__ import annotations

import pysam

from ..errors import InputError


def open_indexed_vcf(path: str, what: str) -> pysam.VariantFile:
    """pysam.VariantFile for a bgzipped VCF/BCF with a tabix or CSI index, else one InputError line."""
    try:
        vf = pysam.VariantFile(path)
    except (OSError, ValueError) as e:
        raise InputError(f"cannot open {what}: {e}", path) from None
    if not vf.index:
        vf.close()
        raise InputError(f"{what} needs a tabix (.tbi) or CSI index", path)
    return vf
