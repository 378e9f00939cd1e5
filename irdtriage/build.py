"""Genome build of a VCF, from its header: contig lengths first, then ``##reference`` / ``##assembly``.

Contig lengths are the assembled chromosome lengths published by the Genome Reference
Consortium for GRCh37 (GCF_000001405.13) and GRCh38 (GCF_000001405.26); the chr1 figures
are in the project's standards notes, the rest were checked against public chromosome-size
tables (1000 Genomes GRCh38 reference index; UCSC chrom.sizes for hg19/hg38).
"""
from __future__ import annotations

import re
from typing import Optional

import pysam

from .errors import InputError

BUILDS = ("GRCh37", "GRCh38")

# bare chromosome name -> {build: length}
CONTIG_LENGTHS: dict[str, dict[str, int]] = {
    "1": {"GRCh37": 249_250_621, "GRCh38": 248_956_422},
    "2": {"GRCh37": 243_199_373, "GRCh38": 242_193_529},
    "3": {"GRCh37": 198_022_430, "GRCh38": 198_295_559},
    "7": {"GRCh37": 159_138_663, "GRCh38": 159_345_973},
    "X": {"GRCh37": 155_270_560, "GRCh38": 156_040_895},
    "Y": {"GRCh37": 59_373_566, "GRCh38": 57_227_415},
}

# Names found in ##reference / ##assembly lines (file names or assembly names), matched
# case-insensitively as whole tokens.  Common practice naming of the two builds.
_NAME_PATTERNS = (
    ("GRCh38", re.compile(r"(?<![a-z0-9])(grch38|hg38|b38|homo_sapiens_assembly38|hs38(dh)?|gca_000001405\.(1[5-9]|2\d)|gcf_000001405\.(2[6-9]|3\d|4\d))(?![0-9])", re.I)),
    ("GRCh37", re.compile(r"(?<![a-z0-9])(grch37|hg19|b37|homo_sapiens_assembly19|hs37d5|hs37|human_g1k_v37|gca_000001405\.([1-9]|1[0-4])|gcf_000001405\.(1\d|2[0-5]))(?![0-9])", re.I)),
)


def bare(chrom: str) -> str:
    """'chr1' -> '1', 'chrM'/'M' -> 'MT'."""
    c = chrom[3:] if chrom.lower().startswith("chr") else chrom
    return "MT" if c in ("M", "MT") else c


def chrom_style(header: pysam.VariantHeader) -> str:
    """"chr" if the header's contigs are named chr1.., "" if 1.., "" when there are none."""
    names = list(header.contigs)
    if not names:
        return ""
    with_chr = sum(1 for n in names if n.lower().startswith("chr"))
    return "chr" if with_chr * 2 >= len(names) else ""


def build_from_name(text: str) -> Optional[str]:
    for build, pattern in _NAME_PATTERNS:
        if pattern.search(text):
            return build
    return None


def _length_votes(header: pysam.VariantHeader) -> dict[str, list[str]]:
    votes: dict[str, list[str]] = {}
    for name in header.contigs:
        known = CONTIG_LENGTHS.get(bare(name))
        length = header.contigs[name].length
        if not known or length is None:
            continue
        for build, expected in known.items():
            if length == expected:
                votes.setdefault(build, []).append(f"{name} length {length}")
    return votes


def detect_build(header: pysam.VariantHeader, path=None) -> Optional[str]:
    """Return "GRCh37", "GRCh38" or None when the header does not say.

    Raises InputError when contig lengths from both builds appear in one header.
    """
    build, _ = explain_build(header, path)
    return build


def explain_build(header: pysam.VariantHeader, path=None) -> tuple[Optional[str], str]:
    """Detected build and the evidence behind it ("chr1 length 249250621", "##reference=hg19...")."""
    votes = _length_votes(header)
    if len(votes) > 1:
        raise InputError(
            "contig lengths from two genome builds in one header ("
            + "; ".join(f"{b}: {', '.join(v)}" for b, v in sorted(votes.items()))
            + ")",
            path,
        )
    if votes:
        build, evidence = next(iter(votes.items()))
        return build, evidence[0]
    for rec in header.records:
        if rec.key in ("reference", "assembly") and rec.value:
            build = build_from_name(rec.value)
            if build:
                return build, f"##{rec.key}={rec.value}"
    # GATK-style headers put the reference on the contig lines: ##contig=<ID=1,...,assembly=b37>
    for name in header.contigs:
        contig = header.contigs[name]
        value = contig.header_record.get("assembly") if contig.header_record is not None else None
        if value:
            build = build_from_name(value)
            if build:
                return build, f"contig assembly={value}"
    return None, ""


def normalise_build(name: str, path=None) -> str:
    """Accept GRCh37/hg19/b37 and GRCh38/hg38 spellings; InputError otherwise."""
    build = build_from_name(name) if name not in BUILDS else name
    if build is None:
        raise InputError(f"unknown genome build {name!r} (use GRCh37 or GRCh38)", path)
    return build


def check_build(detected: Optional[str], wanted: Optional[str], path=None, evidence: str = "") -> Optional[str]:
    """Return the build to use; InputError when the VCF's build differs from the one asked for."""
    if wanted is None:
        return detected
    wanted = normalise_build(wanted, path)
    if detected is not None and detected != wanted:
        why = f" ({evidence})" if evidence else ""
        raise InputError(
            f"VCF looks like {detected}{why} but --build {wanted} was requested; "
            "use a panel/build matching the file or lift the VCF over",
            path,
        )
    return wanted
