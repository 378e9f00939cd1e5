"""Structural events as findings: one per (event, panel gene) the proband carries.

Each finding carries a :class:`irdtriage.models.Variant` with every sample's call (so genotype
fit, phase from parents and family criteria treat the event like any allele), an annotation whose
Sequence Ontology term says what the event does to the transcript, and ``Finding.structural``: a
plain dict with the event (type, start, end, length, copy number, ALT as written), the exon overlap
(:mod:`irdtriage.sv.overlap`) and the Riggs 2020 points (:mod:`irdtriage.sv.classify`).
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Iterable, Optional

from ..models import Annotation, CriterionResult, Finding, Panel, Variant
from . import classify, intake, overlap


@dataclass
class StructuralNote:
    """``Finding.structural`` for a structural event: ``info`` is JSON-ready (result.json's
    ``structural`` block); ``automated`` the event's own criteria (pass 1 of the pipeline)."""

    info: dict[str, Any]
    automated: dict[str, CriterionResult] = field(default_factory=dict)

    def __getitem__(self, key: str) -> Any:
        return self.info[key]

    def to_dict(self) -> dict[str, Any]:
        return dict(self.info)


# Sequence Ontology terms for what the event does to the panel transcript.
def consequence(svtype: str, o: overlap.GeneOverlap) -> str:
    if o.extent == "intronic only":
        return "intron_variant"
    if o.extent == "outside the transcript":
        return "intergenic_variant"
    if svtype == "DEL":
        if o.extent == "whole gene":
            return "transcript_ablation"
        if o.extent == "within one exon":
            return {"out of frame": "frameshift_variant", "in frame": "inframe_deletion"}.get(o.frame or "",
                                                                                              "exon_variant")
        return "exon_loss_variant"
    if svtype == "DUP":
        if o.extent == "whole gene":
            return "transcript_amplification"
        return {"out of frame": "frameshift_variant", "in frame": "inframe_insertion"}.get(o.frame or "",
                                                                                          "feature_elongation")
    if svtype == "INS" and o.extent == "within one exon":
        return {"out of frame": "frameshift_variant", "in frame": "inframe_insertion"}.get(o.frame or "", "exon_variant")
    if svtype == "INV":
        return "inversion"
    if svtype == "BND":
        return "feature_truncation" if o.in_cds else "structural_variant"
    return "structural_variant"


CONFIRM = ("confirm the event by an orthogonal method (MLPA, chromosomal microarray or long-read sequencing) "
           "and define its breakpoints; test the parents to place it relative to other alleles")


def carried(ev: intake.StructuralEvent, sample: str) -> bool:
    gt = (ev.samples.get(sample) or {}).get("gt") or ()
    return any(a == 1 for a in gt)


def describe_event(ev: intake.StructuralEvent) -> str:
    if ev.svtype == "BND":
        return f"BND {ev.chrom}:{ev.start} ({ev.alt})"
    size = f"{ev.length:,} bp" if ev.length else "size unknown"
    cn = f", copy number {ev.copy_number}" if ev.copy_number is not None else ""
    return f"{ev.svtype} {ev.where()} ({size}{cn})"


def _note(ev: intake.StructuralEvent, o: overlap.GeneOverlap, proband: str, riggs, extra=None) -> dict[str, Any]:
    info = {
        "type": ev.svtype, "alt": ev.alt, "chrom": ev.chrom, "start": ev.start, "end": ev.end,
        "length": ev.length, "svlen": ev.svlen, "copy_number": ev.copy_number, "tandem": ev.tandem,
        "source": ev.source, "line": ev.line, "genotype_from_copy_number": bool(
            (ev.samples.get(proband) or {}).get("from_cn")),
        "summary": f"{describe_event(ev)}: {o.words}",
        "overlap": o.to_dict(), "exons": list(o.exons), "extent": o.extent, "frame": o.frame,
        "nmd": o.nmd, "riggs": riggs, "next_step": CONFIRM if ev.svtype != "BND" else CONFIRM_BREAKPOINT,
    }
    info.update(extra or {})
    return info


CONFIRM_BREAKPOINT = ("confirm the rearrangement and its breakpoint by an orthogonal method (long-read sequencing, "
                      "breakpoint PCR or karyotype/FISH for a translocation) and test the parents")


def _finding(ev: intake.StructuralEvent, variant: Variant, symbol: str, o: overlap.GeneOverlap, build: str,
             auto: dict[str, CriterionResult], info: dict[str, Any]) -> Finding:
    ann = Annotation(gene=symbol, transcript=o.transcript, consequence=(consequence(ev.svtype, o),),
                     hgvs_c=o.hgvs_c, source="structure", is_mane=False,
                     extra={"exons": list(o.exons), "exon_count": o.exon_count})
    flags = []
    if ev.filters and tuple(ev.filters) != ("PASS",):
        flags.append("FILTER=" + ";".join(x for x in ev.filters if x != "PASS"))
    f = Finding(id="", variant=variant, gene=symbol, annotation=ann, quality_flags=tuple(flags),
                evidence={"build": build})
    f.structural = StructuralNote(info, auto)
    return f


def _breakend_findings(ev: intake.StructuralEvent, variant: Variant, panel: Panel, build: str, proband: str,
                       warnings: list[str]) -> list[Finding]:
    """A breakend inside a panel gene: the gene disrupted at that breakpoint (translocation,
    inversion or other junction, from the ALT's form and mate)."""
    bnd = ev.breakend
    junction = bnd.junction(ev.chrom_bare, ev.start) if bnd is not None else "breakend"
    out = []
    for symbol in ev.genes:
        gene = panel.genes.get(symbol)
        if gene is None:
            continue
        o = overlap.breakend_overlap(ev.start, gene, build, junction)
        if o.extent == "outside the transcript":
            warnings.append(f"{describe_event(ev)} {o.words}: not assessed as a {symbol} allele")
            continue
        auto = classify.criteria("BND", None, o, gene)
        extra = {"breakend": {"form": bnd.form if bnd else None, "mate_chrom": bnd.mate_chrom if bnd else None,
                              "mate_pos": bnd.mate_pos if bnd else None, "mate_id": bnd.mate_id if bnd else None,
                              "junction": junction}}
        out.append(_finding(ev, variant, symbol, o, build, auto, _note(ev, o, proband, None, extra)))
    return out


def make_findings(raw_events: Iterable[dict[str, Any]], variants: Iterable[Variant], panel: Panel, build: str,
                  proband: str, sexes: dict[str, Optional[str]], path: str,
                  genes_at) -> tuple[list[Finding], list[str], set[int]]:
    """(structural findings, warnings, ids of small variants turned into structural events).

    ``raw_events``: ``VcfIntake.structural_events``; ``variants``: the kept small variants (explicit
    deletions/insertions of at least the minimum length become events); ``genes_at(chrom, start,
    end)``: panel genes over an interval (``irdtriage.panel.GeneLocator.genes_at``).
    """
    from ..genotype import settle_zygosity
    events: list[intake.StructuralEvent] = []
    warnings: list[str] = []
    for raw in raw_events:
        events.append(intake.normalise_record(raw, path))
    consumed: set[int] = set()
    for v in variants:
        c = v.calls.get(proband)
        if c is None or c.alt_copies == 0:
            continue
        if abs(len(v.ref) - len(v.alt)) < int(intake.load_settings()["intake"]["min_explicit_length_bp"]):
            continue
        ev = intake.from_sequence(v, genes_at(v.chrom, v.pos, v.pos + len(v.ref) - 1))
        if ev is not None and ev.genes:
            events.append(ev)
            consumed.add(id(v))
    out: list[Finding] = []
    for ev in events:
        intake.settle_copy_type(ev, proband, sexes.get(proband), build)
        if not carried(ev, proband):
            continue
        variant = intake.to_variant(ev)
        settle_zygosity([variant], sexes, build)  # male chrX outside the PARs: one copy (hemizygous)
        if ev.svtype == "BND":
            out.extend(_breakend_findings(ev, variant, panel, build, proband, warnings))
            continue
        overlaps = {}
        for symbol in ev.genes:
            gene = panel.genes.get(symbol)
            if gene is not None:
                overlaps[symbol] = overlap.gene_overlap(ev.svtype, ev.start, ev.end, gene, build, length=ev.length)
        reached = sum(1 for o in overlaps.values() if o.extent != "outside the transcript")
        for symbol, o in overlaps.items():
            gene = panel.genes[symbol]
            if o.extent == "outside the transcript":
                warnings.append(f"{describe_event(ev)} {o.words}: not assessed as a {symbol} allele; review it "
                                "if a regulatory element may be involved")
                continue
            auto = classify.criteria(ev.svtype, ev.tandem, o, gene)
            riggs = classify.riggs_points(ev.svtype, o, gene, auto["PVS1"], gene_count=max(reached, 1))
            out.append(_finding(ev, variant, symbol, o, build, auto, _note(ev, o, proband, riggs)))
    return out, warnings, consumed


def from_second_vcf(path: str, panel: Panel, build: str, proband: str, sexes: dict[str, Optional[str]],
                    padding: int, genes_at) -> tuple[list[Finding], list[str]]:
    """Structural findings from a second VCF (``triage --sv-vcf``) read by the same intake.

    Its sample is the proband when the file has one sample, else the sample named like the proband
    (relatives are matched by name).  Its short alleles are not read: they belong to the main VCF."""
    import pysam

    from ..errors import InputError
    from ..vcf import read_vcf

    try:
        with pysam.VariantFile(path) as vf:
            names = list(vf.header.samples)
    except (OSError, ValueError) as e:
        raise InputError(f"cannot read the structural-variant VCF ({e})", path)
    if proband in names:
        sample = proband
    elif len(names) == 1:
        sample = names[0]
    else:
        raise InputError(f"the structural-variant VCF has no sample {proband!r} (samples: {', '.join(names) or 'none'})",
                         path)
    intake = read_vcf(path, panel, sample=sample, build=build, padding=padding)
    warnings = [f"{path}: {w}" for w in intake.warnings]
    if intake.build and intake.build != build:
        raise InputError(f"the structural-variant VCF is on {intake.build}, the main VCF on {build}", path)
    events = intake.structural_events
    if sample != proband:  # one-sample file: its sample is the proband
        for raw in events:
            raw["samples"] = {proband if s == sample else s: d for s, d in (raw.get("samples") or {}).items()}
        for v in intake.variants:
            if sample in v.calls:
                v.calls[proband] = v.calls.pop(sample)
        warnings.append(f"{path}: its only sample {sample} is read as {proband}")
    found, more, _ = make_findings(events, intake.variants, panel, build, proband, sexes, path, genes_at)
    return found, warnings + more
