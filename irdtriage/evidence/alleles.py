"""Allele normalisation for matching one variant against another file's records."""
from __future__ import annotations


def trim(pos: int, ref: str, alt: str) -> tuple[int, str, str]:
    """Remove shared trailing then leading bases (no left-alignment: that needs the reference).

    Both sides of a comparison go through the same trim, so VCF-style anchored indels and
    multi-allelic padding match.
    """
    ref, alt = ref.upper(), alt.upper()
    while ref and alt and ref[-1] == alt[-1]:
        ref, alt = ref[:-1], alt[:-1]
    while ref and alt and ref[0] == alt[0]:
        ref, alt, pos = ref[1:], alt[1:], pos + 1
    return pos, ref, alt


def bare(chrom: str) -> str:
    c = chrom[3:] if chrom.lower().startswith("chr") else chrom
    return "MT" if c in ("M", "MT") else c


def contig_for(chrom: str, available) -> str | None:
    b = bare(chrom)
    for name in (chrom, b, "chr" + b, "chrM" if b == "MT" else None, "M" if b == "MT" else None):
        if name and name in available:
            return name
    return None
