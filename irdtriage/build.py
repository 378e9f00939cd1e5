"""Genome build of a VCF, from its header: ``##contig`` lengths, ``##reference`` / ``##assembly``.

Contig lengths are the assembled chromosome lengths of GRCh37 (GCF_000001405.13) and GRCh38
(GCF_000001405.26) as published by the Genome Reference Consortium. chr1 (GRCh37 249,250,621,
GRCh38 248,956,422) is from the project's standards notes; the other chromosomes are the UCSC
hg19/hg38 chrom.sizes values, which equal the GRC primary-assembly lengths, as copied into
public VCF headers (the GATK b37 sequence dictionary, ``assembly=b37``, and a GRCh38
``##contig`` block) found with the code-search tool. chrM is left out: hg19's chrM (16,571 bp,
NC_001807) and GRCh37/GRCh38's MT (16,569 bp, rCRS) do not follow the nuclear build.

When the header's lengths and its named reference disagree, the build is not guessed: the
run stops (unless ``--build`` names the build the lengths show). T2T-CHM13 is refused.
"""
from __future__ import annotations

import re
from typing import Optional

import pysam

from .errors import InputError

BUILDS = ("GRCh37", "GRCh38")

# bare chromosome name -> {build: length} (sources in the module docstring)
CONTIG_LENGTHS: dict[str, dict[str, int]] = {
    "1": {"GRCh37": 249_250_621, "GRCh38": 248_956_422},
    "2": {"GRCh37": 243_199_373, "GRCh38": 242_193_529},
    "3": {"GRCh37": 198_022_430, "GRCh38": 198_295_559},
    "4": {"GRCh37": 191_154_276, "GRCh38": 190_214_555},
    "5": {"GRCh37": 180_915_260, "GRCh38": 181_538_259},
    "6": {"GRCh37": 171_115_067, "GRCh38": 170_805_979},
    "7": {"GRCh37": 159_138_663, "GRCh38": 159_345_973},
    "8": {"GRCh37": 146_364_022, "GRCh38": 145_138_636},
    "9": {"GRCh37": 141_213_431, "GRCh38": 138_394_717},
    "10": {"GRCh37": 135_534_747, "GRCh38": 133_797_422},
    "11": {"GRCh37": 135_006_516, "GRCh38": 135_086_622},
    "12": {"GRCh37": 133_851_895, "GRCh38": 133_275_309},
    "13": {"GRCh37": 115_169_878, "GRCh38": 114_364_328},
    "14": {"GRCh37": 107_349_540, "GRCh38": 107_043_718},
    "15": {"GRCh37": 102_531_392, "GRCh38": 101_991_189},
    "16": {"GRCh37": 90_354_753, "GRCh38": 90_338_345},
    "17": {"GRCh37": 81_195_210, "GRCh38": 83_257_441},
    "18": {"GRCh37": 78_077_248, "GRCh38": 80_373_285},
    "19": {"GRCh37": 59_128_983, "GRCh38": 58_617_616},
    "20": {"GRCh37": 63_025_520, "GRCh38": 64_444_167},
    "21": {"GRCh37": 48_129_895, "GRCh38": 46_709_983},
    "22": {"GRCh37": 51_304_566, "GRCh38": 50_818_468},
    "X": {"GRCh37": 155_270_560, "GRCh38": 156_040_895},
    "Y": {"GRCh37": 59_373_566, "GRCh38": 57_227_415},
}

# Assemblies this version does not support, recognised so they are refused by name rather than
# read with the wrong coordinates. T2T-CHM13v2.0 chr1 length 248,387,328 (from memory).
UNSUPPORTED_LENGTHS: dict[str, dict[int, str]] = {"1": {248_387_328: "T2T-CHM13"}}
_UNSUPPORTED_NAMES = (
    ("T2T-CHM13", re.compile(r"(?<![a-z0-9])(chm13|t2t)|(?<![a-z0-9])hs1(?![a-z0-9])", re.I)),
)

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


def _name_votes(header: pysam.VariantHeader) -> list[tuple[str, str]]:
    """(build, evidence) for every ##reference / ##assembly line and contig assembly= naming a build."""
    out: list[tuple[str, str]] = []
    for rec in header.records:
        if rec.key in ("reference", "assembly") and rec.value:
            build = build_from_name(rec.value)
            if build:
                out.append((build, f"##{rec.key}={rec.value}"))
    # GATK-style headers put the reference on the contig lines: ##contig=<ID=1,...,assembly=b37>
    for name in header.contigs:
        contig = header.contigs[name]
        value = contig.header_record.get("assembly") if contig.header_record is not None else None
        if value:
            build = build_from_name(value)
            if build:
                out.append((build, f"contig {name} assembly={value}"))
                break  # one contig line is enough evidence (they all repeat the same value)
    return out


def _unsupported(header: pysam.VariantHeader, by_name: bool = True) -> Optional[str]:
    """An unsupported assembly named by a contig length, or (``by_name``) by a reference name."""
    for name in header.contigs:
        length = header.contigs[name].length
        asm = UNSUPPORTED_LENGTHS.get(bare(name), {}).get(length) if length is not None else None
        if asm:
            return f"{asm} ({name} length {length})"
    if not by_name:
        return None
    texts = [f"##{r.key}={r.value}" for r in header.records if r.key in ("reference", "assembly") and r.value]
    for name in header.contigs:
        rec = header.contigs[name].header_record
        value = rec.get("assembly") if rec is not None else None
        if value:
            texts.append(f"contig {name} assembly={value}")
    for asm, pattern in _UNSUPPORTED_NAMES:
        for text in texts:
            if pattern.search(text):
                return f"{asm} ({text})"
    return None


def detect_build(header: pysam.VariantHeader, path=None) -> Optional[str]:
    """Return "GRCh37", "GRCh38" or None when the header does not say.

    Raises InputError when the header's evidence conflicts or names an unsupported assembly.
    """
    build, _ = explain_build(header, path)
    return build


def explain_build(header: pysam.VariantHeader, path=None) -> tuple[Optional[str], str]:
    """Detected build and the evidence behind it ("chr1 length 249250621", "##reference=hg19...")."""
    build, evidence, _ = resolve_build(header, None, path)
    return build, evidence


def resolve_build(header: pysam.VariantHeader, wanted: Optional[str], path=None) -> tuple[Optional[str], str, list[str]]:
    """The build to use, its evidence and warnings; one InputError line when the evidence conflicts.

    * contig lengths of two builds in one header: error;
    * lengths of one build, a ##reference/##assembly naming the other: error, unless ``wanted``
      (``--build``) names the build the lengths show (then a warning says the name was overruled);
    * ``wanted`` contradicting the lengths (or, without lengths, the named reference): error;
    * T2T-CHM13 (by chr1 length or name): error, not supported.
    """
    votes = _length_votes(header)
    names = _name_votes(header)
    # a name alone ("t2t" in a file name) is trusted only when nothing points at GRCh37/38
    unsupported = _unsupported(header, by_name=not votes and not names)
    if unsupported:
        raise InputError(f"genome assembly {unsupported} is not supported; use a GRCh38 or GRCh37 VCF "
                         "(lift the file over)", path)
    want = normalise_build(wanted, path) if wanted is not None else None
    if len(votes) > 1:
        raise InputError(
            "contig lengths from two genome builds in one header ("
            + "; ".join(f"{b}: {', '.join(v)}" for b, v in sorted(votes.items()))
            + ")",
            path,
        )
    named = {b for b, _ in names}
    warnings: list[str] = []
    if votes:
        build, ev = next(iter(votes.items()))
        evidence = ev[0]
        others = [(b, e) for b, e in names if b != build]
        named_unsupported = _unsupported(header, by_name=True)
        if named_unsupported:  # e.g. ##reference=chm13v2.0.fa over GRCh38 contig lengths
            others = [(named_unsupported.split(" (")[0], named_unsupported.split(" (", 1)[1].rstrip(")"))] + others
        if want is not None and want != build:
            raise InputError(
                f"VCF looks like {build} ({evidence}) but --build {want} was requested; "
                "use a panel/build matching the file or lift the VCF over",
                path,
            )
        if others:
            if want is None:
                raise InputError(
                    f"genome build evidence disagrees: contig lengths say {build} ({evidence}) but "
                    f"{others[0][1]} names {others[0][0]}; fix the header or pass --build {build} "
                    "if the lengths are right",
                    path,
                )
            warnings.append(f"header names {others[0][0]} ({others[0][1]}) but its contig lengths are "
                            f"{build} ({evidence}); read as {build} as --build says")
        return build, evidence, warnings
    if len(named) > 1:
        a = next(e for b, e in names if b == "GRCh37")
        b_ = next(e for b, e in names if b == "GRCh38")
        if want is None:
            raise InputError(f"genome build evidence disagrees: {a} names GRCh37 but {b_} names GRCh38; "
                             "fix the header or pass --build", path)
        warnings.append(f"header names both builds ({a}; {b_}); read as {want} as --build says")
        return want, f"--build {want}", warnings
    if names:
        build, evidence = names[0]
        if want is not None and want != build:
            raise InputError(
                f"VCF looks like {build} ({evidence}) but --build {want} was requested; "
                "use a panel/build matching the file or lift the VCF over",
                path,
            )
        return build, evidence, warnings
    return want, (f"--build {want}" if want else ""), warnings


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
