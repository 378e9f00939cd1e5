"""Structural and copy-number records as events: validation and normalisation.

Input is what :mod:`irdtriage.vcf` collects for symbolic records over panel genes
(``VcfIntake.structural_events``: the record's position, ALT, INFO text and per-sample genotype and
copy number), and explicit-sequence deletions/insertions at least ``min_explicit_length_bp`` long
among the kept small variants.  Output is :class:`StructuralEvent`, one per allele, with the affected
interval in 1-based inclusive reference coordinates.

Conventions of the VCF 4.3 specification (section 3, "INFO keys used for structural variants", and
section 5, "Representing variation in VCF records"):

* a symbolic deletion, duplication, inversion or copy-number record's POS is the base *before* the
  event (the padding base) and INFO END its last base, so the affected bases are POS+1..END;
* SVLEN is the difference in length between REF and ALT: -(END - POS) for a deletion, END - POS for
  a duplication (the spec's examples: ``<DEL>`` POS 321682, END 321887, SVLEN -205; ``<DUP>`` POS
  12665100, END 12686200, SVLEN 21100); an insertion has END = POS and SVLEN the inserted length;
* SVTYPE is one of DEL, INS, DUP, INV, CNV, BND; a symbolic ALT's first field names the type
  (``<DUP:TANDEM>`` is a tandem duplication, ``<DEL:ME:ALU>`` a deletion);
* FORMAT CN is the segment's copy number.

A record that contradicts itself (END before POS, SVLEN disagreeing with END, an SVTYPE the
specification does not list or that disagrees with the ALT) is an :class:`InputError` naming the file
and line (or the record, for indexed reads).
"""
from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Any, Iterable, Optional

from ..errors import InputError
from ..models import Call, Variant
from .settings import load_settings

COPY_TYPES = ("DEL", "DUP", "CNV")


@dataclass(frozen=True)
class Breakend:
    """A VCF 4.3 section 5.4 breakend ALT: ``t[p[``, ``t]p]``, ``]p]t``, ``[p[t`` (joined to the
    mate at ``mate_chrom:mate_pos``) or a single breakend ``t.`` / ``.t`` (mate unknown)."""

    form: str  # "t[p[", "t]p]", "]p]t", "[p[t", "t." or ".t"
    mate_chrom: Optional[str]
    mate_pos: Optional[int]
    mate_id: Optional[str] = None

    @property
    def reverse_complement(self) -> bool:
        """The joined piece is read reverse-complemented (t]p] and [p[t): an inversion junction when
        the mate is on the same chromosome."""
        return self.form in ("t]p]", "[p[t")

    def junction(self, chrom_bare: str, pos: int) -> str:
        """Kind of rearrangement one junction implies (VCF 4.3 section 5.4 examples)."""
        if self.mate_chrom is None:
            return "single breakend (partner unknown)"
        mate = self.mate_chrom[3:] if self.mate_chrom.lower().startswith("chr") else self.mate_chrom
        if mate != chrom_bare:
            return f"translocation junction with {self.mate_chrom}:{self.mate_pos}"
        if self.reverse_complement:
            return f"inversion junction with {self.mate_chrom}:{self.mate_pos}"
        ahead = (self.mate_pos or 0) > pos
        kind = "deletion" if ahead == (self.form == "t[p[") else "duplication"
        return f"{kind}-type junction with {self.mate_chrom}:{self.mate_pos} (same chromosome)"


@dataclass
class StructuralEvent:
    chrom: str  # as written in the VCF
    start: int  # first affected reference base (1-based inclusive); for an insertion the base after POS
    end: int  # last affected reference base (for an insertion: = start - 1 + 0, see ``length``)
    svtype: str  # "DEL", "DUP", "INV", "INS" (a <CNV> becomes DEL or DUP from its copy number)
    alt: str  # as written (<DEL>, <DUP:TANDEM> ...) or "sequence"
    record_pos: int  # POS as written
    line: Optional[int] = None
    tandem: Optional[bool] = None  # duplications: True for <DUP:TANDEM>, None when not stated
    svlen: Optional[int] = None
    length: int = 0  # affected reference bases (deletion, duplication, inversion) or inserted bases
    copy_number: Optional[int] = None  # the proband's FORMAT CN when given
    genes: tuple[str, ...] = ()
    source: str = "symbolic"  # "symbolic" or "sequence" (explicit-sequence allele >= the minimum length)
    vcf_id: Optional[str] = None
    qual: Optional[float] = None
    filters: tuple[str, ...] = ()
    samples: dict[str, dict[str, Any]] = field(default_factory=dict)  # gt, phased, phase_set, dp, gq, cn
    original_ref: str = ""
    breakend: Optional[Breakend] = None  # BND records: the parsed ALT

    @property
    def chrom_bare(self) -> str:
        c = self.chrom[3:] if self.chrom.lower().startswith("chr") else self.chrom
        return "MT" if c in ("M", "MT") else c

    @property
    def key(self) -> str:
        return f"{self.chrom_bare}-{self.start}-{self.end}-{self.svtype}"

    def where(self) -> str:
        return f"{self.chrom}:{self.start}-{self.end}"


_BND_FORMS = (
    (re.compile(r"([ACGTN]+)\[([^\[\]:]+):(\d+)\[", re.I), "t[p["),
    (re.compile(r"([ACGTN]+)\]([^\[\]:]+):(\d+)\]", re.I), "t]p]"),
    (re.compile(r"\]([^\[\]:]+):(\d+)\]([ACGTN]+)", re.I), "]p]t"),
    (re.compile(r"\[([^\[\]:]+):(\d+)\[([ACGTN]+)", re.I), "[p[t"),
)


def parse_breakend(alt: str) -> Optional[Breakend]:
    """The breakend an ALT string describes, or None when it is not a well-formed breakend."""
    a = alt.strip()
    if re.fullmatch(r"[ACGTN]+\.", a, re.I):
        return Breakend("t.", None, None)
    if re.fullmatch(r"\.[ACGTN]+", a, re.I):
        return Breakend(".t", None, None)
    for rx, form in _BND_FORMS:
        m = rx.fullmatch(a)
        if m is not None:
            g = m.groups()
            chrom, pos = (g[1], g[2]) if form.startswith("t") else (g[0], g[1])
            if int(pos) < 1:
                return None
            return Breakend(form, chrom, int(pos))
    return None


def _info_fields(text: str) -> dict[str, str]:
    out = {}
    for part in (text or "").split(";"):
        if not part or part == ".":
            continue
        k, _, v = part.partition("=")
        out[k] = v
    return out


def _int_list(value: str, what: str, fail) -> list[int]:
    try:
        return [int(x) for x in value.split(",") if x not in ("", ".")]
    except ValueError:
        fail(f"INFO {what}={value[:30]!r} is not an integer")
        return []


def normalise_record(ev: dict[str, Any], path: str) -> StructuralEvent:
    """One symbolic record (a ``VcfIntake.structural_events`` dict) as an event; a breakend
    (``BND``) becomes a one-base event at POS carrying its parsed ALT (:class:`Breakend`)."""
    line = ev.get("line")
    named = "" if line else f"record {ev['chrom']}:{ev['pos']} {ev['alt']}: "

    def fail(problem: str):
        raise InputError(named + problem, path, line)

    settings = load_settings()
    known = tuple(settings["intake"]["svtypes"])
    alt = str(ev["alt"])
    info = _info_fields(ev.get("info_text", ""))
    pos = int(ev["pos"])
    alt_type = alt[1:-1].split(":")[0].upper() if alt.startswith("<") and alt.endswith(">") else "BND"
    svtype = info.get("SVTYPE", "").split(",")[0].strip().upper() or None
    if svtype is not None and svtype not in known:
        fail(f"unknown SVTYPE {svtype!r} (VCF 4.3 lists {', '.join(known)})")
    if svtype is None:
        if alt_type not in known:
            fail(f"unknown structural type: ALT {alt} and no SVTYPE (VCF 4.3 lists {', '.join(known)})")
        svtype = alt_type
    if alt_type == "BND" or svtype == "BND":
        return _breakend_event(ev, alt, alt_type, pos, info, fail)
    if alt_type not in known:
        fail(f"unknown symbolic ALT {alt} (VCF 4.3 lists {', '.join('<' + k + '>' for k in known if k != 'BND')})")
    if alt_type != svtype and not (alt_type == "CNV" and svtype in ("DEL", "DUP")) \
            and not (svtype == "CNV" and alt_type in ("DEL", "DUP")):
        fail(f"SVTYPE {svtype} disagrees with ALT {alt}")
    svlens = _int_list(info["SVLEN"], "SVLEN", fail) if "SVLEN" in info else []
    k = int(ev.get("alt_index") or 1)
    svlen = svlens[k - 1] if len(svlens) >= k else (svlens[0] if len(svlens) == 1 else None)
    end_vals = _int_list(info["END"], "END", fail) if "END" in info else []
    end = end_vals[0] if end_vals else None
    if end is not None and end < pos:
        fail(f"END {end} is before POS {pos}")
    if svtype == "INS":
        if svlen is not None and svlen < 0:
            fail(f"SVLEN {svlen} is negative for an insertion (SVLEN is the inserted length)")
        start, stop, length = pos + 1, pos, abs(svlen) if svlen is not None else 0
    else:
        if end is None:
            if svlen is None:
                fail(f"{alt} has neither END nor SVLEN: the event's extent is unknown")
            end = pos + abs(svlen)
        elif svlen is not None and abs(svlen) != end - pos and not (svtype == "INV" and svlen == 0):
            fail(f"SVLEN {svlen} disagrees with END {end} (END - POS = {end - pos}; VCF 4.3: "
                 f"|SVLEN| = END - POS for {svtype})")
        if end == pos:
            fail(f"END {end} equals POS: a {svtype} record covers POS+1..END, so it affects no base")
        start, stop, length = pos + 1, end, end - pos
    samples = dict(ev.get("samples") or {})
    proband_cn = None
    return StructuralEvent(
        chrom=str(ev["chrom"]), start=start, end=stop, svtype=svtype if svtype != "CNV" else alt_type,
        alt=alt, record_pos=pos, line=line,
        tandem=(True if alt.upper().startswith("<DUP:TANDEM") else None) if svtype == "DUP" else None,
        svlen=svlen, length=length, copy_number=proband_cn, genes=tuple(ev.get("genes") or ()),
        vcf_id=ev.get("id"), qual=ev.get("qual"), filters=tuple(ev.get("filters") or ()), samples=samples,
        original_ref=str(ev.get("ref") or ""))


def _breakend_event(ev: dict[str, Any], alt: str, alt_type: str, pos: int, info: dict[str, str],
                    fail) -> StructuralEvent:
    if alt_type != "BND":
        fail(f"SVTYPE BND needs a breakend ALT (t[p[, t]p], ]p]t, [p[t, t. or .t), not {alt}")
    bnd = parse_breakend(alt)
    if bnd is None:
        fail(f"malformed breakend ALT {alt[:40]!r}: VCF 4.3 section 5.4 writes t[p[, t]p], ]p]t or [p[t with p "
             "as chrom:pos (or t. / .t for a single breakend), t the REF base(s)")
    ref = str(ev.get("ref") or "")
    t = alt.split("[")[0].split("]")[0] if bnd.form in ("t[p[", "t]p]") else (
        alt.rsplit("[", 1)[-1].rsplit("]", 1)[-1] if bnd.form in ("]p]t", "[p[t") else alt.strip("."))
    if ref and t and t[:1].upper() != ref[:1].upper() and t[-1:].upper() != ref[-1:].upper():
        fail(f"breakend ALT {alt[:40]!r} does not carry the REF base {ref[:1]} (VCF 4.3 section 5.4)")
    if bnd.mate_chrom and bnd.mate_chrom.startswith("CHR"):
        # the VCF reader upper-cases non-symbolic ALTs; UCSC-style contig names are written "chr..."
        mate = "chr" + bnd.mate_chrom[3:]
        alt = alt.replace(bnd.mate_chrom + ":", mate + ":", 1)
        bnd = Breakend(bnd.form, mate, bnd.mate_pos)
    bnd = Breakend(bnd.form, bnd.mate_chrom, bnd.mate_pos, info.get("MATEID") or None)
    return StructuralEvent(
        chrom=str(ev["chrom"]), start=pos, end=pos, svtype="BND", alt=alt, record_pos=pos, line=ev.get("line"),
        genes=tuple(ev.get("genes") or ()), vcf_id=ev.get("id"), qual=ev.get("qual"),
        filters=tuple(ev.get("filters") or ()), samples=dict(ev.get("samples") or {}),
        original_ref=str(ev.get("ref") or ""), breakend=bnd)


def from_sequence(v: Variant, genes: Iterable[str]) -> Optional[StructuralEvent]:
    """An explicit-sequence deletion or insertion of at least the minimum length as an event
    (None when shorter).  ``v`` is a trimmed allele (irdtriage.vcf.trim_alleles)."""
    minimum = int(load_settings()["intake"]["min_explicit_length_bp"])
    d = len(v.ref) - len(v.alt)
    anchor = 1 if v.ref[:1] == v.alt[:1] else 0
    if d >= minimum:
        start, end, kind, length = v.pos + anchor, v.pos + len(v.ref) - 1, "DEL", len(v.ref) - anchor
    elif -d >= minimum:
        start, end, kind, length = v.pos + 1, v.pos, "INS", len(v.alt) - anchor
    else:
        return None
    samples = {s: {"gt": c.gt, "phased": c.phased, "phase_set": c.phase_set, "dp": c.dp, "gq": c.gq, "cn": None}
               for s, c in v.calls.items()}
    return StructuralEvent(chrom=v.chrom, start=start, end=end, svtype=kind, alt="sequence",
                           record_pos=v.original_pos or v.pos, line=v.line, svlen=-d, length=length,
                           genes=tuple(genes), source="sequence", vcf_id=v.vcf_id, qual=v.qual,
                           filters=tuple(v.filters), samples=samples, original_ref=v.original_ref)


def expected_copies(chrom_bare: str, pos: int, sex: Optional[str], build: Optional[str]) -> Optional[int]:
    """Copies of the locus a person carries: 2 on autosomes and the PARs, 1 on chrX outside the
    PARs in a male and on chrY, None when the sex is unknown there."""
    from ..genotype import in_par

    if chrom_bare == "Y":
        return 1 if sex == "MALE" else None
    if chrom_bare == "X" and not in_par("X", pos, build):
        return 1 if sex == "MALE" else (2 if sex == "FEMALE" else None)
    return 2


def _gt_from_cn(cn: Optional[int], expected: Optional[int], svtype: str) -> Optional[tuple]:
    """A genotype (0 ref, 1 the event) from the copy number where GT is missing."""
    if cn is None or expected is None:
        return None
    if svtype == "DEL":
        lost = expected - cn
        if lost <= 0:
            return (0,) * expected
        return (1,) * lost + (0,) * (expected - lost) if expected == 2 else (1,)
    if svtype == "DUP":
        gained = cn - expected
        if gained <= 0:
            return (0,) * expected
        # extra copies: at least one allele carries the gain; how they are shared between the two
        # alleles is not known from the copy number, so only one allele is claimed
        return (0, 1) if expected == 2 else (1,)
    return None


def settle_copy_type(ev: StructuralEvent, proband: str, sex: Optional[str], build: Optional[str]) -> None:
    """A <CNV> (or a DEL/DUP without GT) takes its type and genotype from FORMAT CN; the proband's
    copy number is kept on the event."""
    expected = expected_copies(ev.chrom_bare, ev.start, sex, build)
    p = ev.samples.get(proband) or {}
    ev.copy_number = _int_or_none(p.get("cn"))
    if ev.svtype == "CNV" or ev.alt.upper().startswith("<CNV"):
        if ev.copy_number is not None and expected is not None:
            ev.svtype = "DEL" if ev.copy_number < expected else ("DUP" if ev.copy_number > expected else "CNV")
    for s, d in ev.samples.items():
        gt = tuple(d.get("gt") or ())
        if not gt or all(a is None for a in gt) or ev.alt.upper().startswith("<CNV"):
            exp_s = expected if s == proband else 2 if ev.chrom_bare not in ("X", "Y") else None
            derived = _gt_from_cn(_int_or_none(d.get("cn")), exp_s, ev.svtype)
            if derived is not None:
                d["gt"], d["from_cn"] = derived, True


def _int_or_none(x: Any) -> Optional[int]:
    if isinstance(x, (tuple, list)):
        x = x[0] if x else None
    try:
        return None if x is None else int(x)
    except (TypeError, ValueError):
        return None


def to_variant(ev: StructuralEvent) -> Variant:
    """The event as a :class:`Variant` carrying every sample's call, so genotype and family
    reasoning treat it like any allele (zygosity from the GT, or from CN when GT is missing)."""
    from ..vcf import _zygosity

    calls = {}
    for s, d in ev.samples.items():
        gt = tuple(d.get("gt") or (None,))
        calls[s] = Call(sample=s, gt=gt, phased=bool(d.get("phased")) and len(gt) > 1,
                        phase_set=d.get("phase_set"), dp=_int_or_none(d.get("dp")), gq=_int_or_none(d.get("gq")),
                        zygosity=_zygosity(gt, ev.chrom_bare))
    alt = ev.alt if ev.alt != "sequence" else f"<{ev.svtype}>"
    return Variant(chrom=ev.chrom, pos=ev.start, ref=(ev.original_ref[:1] or "N"), alt=alt, vcf_id=ev.vcf_id,
                   qual=ev.qual, filters=ev.filters, original_pos=ev.record_pos, original_ref=ev.original_ref,
                   original_alts=(alt,), line=ev.line, info={"END": ev.end, "SVTYPE": ev.svtype, "SVLEN": ev.svlen},
                   calls=calls)

