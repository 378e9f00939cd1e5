"""PVS1 by the ClinGen SVI decision tree (Abou Tayoun et al., Hum Mutat 2018;39:1517-1524).

Branches implemented (strength names as applied):

* from the panel structure (exons + CDS in panels/transcripts.yaml; used when the gene has one on
  the finding's build, the allele lies on it and the annotation's exon count and residue agree):
  - nonsense: the stop codon's 3' base is measured to the last exon-exon junction (> 50 nt -> NMD);
  - frameshift: the new stop from HGVS p. fsTerN when given, else the frameshift's own position
    (inside the last 50 nt / last exon: no NMD, certain; earlier than the penultimate exon: NMD;
    penultimate exon: escape not excluded, conservative) -- the reason says which;
  - canonical +/-1,2 splice: the skipped exon from the site; in frame (coding nt a multiple of 3)
    -> removed-share test; out of frame -> NMD by where the new frame starts; an untranslated
    exon -> not met; an exon holding the start/stop codon -> Moderate (conservative);
  - initiation codon: the allele must touch c.1-3 on the structure -> default strength;
  - the reason names the structure ("from panel structure: exon 5 of 14, ..."), and the evidence
    keeps protein_length (for the protein sketch), hgvs_c_from_structure and the exon hit.
  Otherwise the branches below apply.

* nonsense / frameshift
  - NMD predicted (stop not in the last exon and not in the last 50 nt of the penultimate
    exon) and the transcript is the biologically relevant one (MANE Select) -> VeryStrong;
    not MANE -> Strong (relevance of the exon not established here);
  - NMD not predicted -> Strong when the truncated region holds a curated critical region or
    removes > 10 % of the protein, else Moderate.
  - exon unknown, or penultimate exon without the distance to its end: NMD cannot be
    predicted -> the NMD-escape branch is used (conservative) and the reason says so.
  - transcript model (irdtriage.transcripts, panels/transcripts.yaml; genomic exons of transcripts
    with the MANE Select boundaries): when the gene has one on the finding's build and the variant
    lies on it, the exon and the distance to the last exon-exon junction come from the model
    (50-nt rule measured, frameshift new-stop caveats in irdtriage.transcripts).  When the
    annotation gives an exon number/count that disagrees with the model, the model is not used.
    Protein length for the removed share comes from ``Protein_position`` "x/N" when annotated, else
    from the panel's coding structure (``coding:`` in panels/transcripts.yaml, a named record with a
    CDS) when the annotated transcript is MANE Select or that record's transcript; the reason and
    evidence name the source.  A gene with a coding record but no table transcript uses the
    record's exons as its transcript model on GRCh38.
* canonical +/-1,2 splice: without a transcript model the effect of exon skipping on frame
  and NMD is not assessable -> conservative branch (frame preserved, region not known to be
  critical, share of protein unknown) -> Moderate.
* initiation codon -> Moderate by default (no alternative start known), per-gene override.
* whole-transcript deletion -> VeryStrong; exon loss (frame unknown) -> Moderate.
Only for genes where loss of function is a mechanism of a retinal mode (``irdtriage.mechanism.pvs1_gate``);
a truncation escaping NMD in a gene whose dominant disease arises from such truncations is capped at
Moderate (``irdtriage.mechanism.pvs1_cap``).
"""
from __future__ import annotations

import re
from typing import Optional

from ..mechanism import pvs1_cap, pvs1_gate
from ..models import Annotation, CriterionResult, Gene, Variant
from ..transcripts import (Coding, Transcript, TranscriptModel, c_number, default_model, exon_coding_nt,
                           hgvs_c_position, junction_distance_at_c, locate_in, nmd_at_stop, nmd_predicted, splice_site)
from .common import ABLATION, EXON_LOSS, NONSENSE_FS, SPLICE_CANONICAL, START_LOST, fraction, protein_position, \
    result, terms
from .rules import Rules


def _mechanism_note(gene: Gene) -> str:
    other = [m for m in gene.mechanisms if m != "LOF"]
    if other:
        return (f"; note: {gene.symbol} also acts by {'/'.join(other)} - loss of function is the "
                f"{'recessive ' if gene.recessive else ''}mechanism PVS1 assesses")
    return ""


def _fs_ter(hgvs_p: str) -> Optional[int]:
    """N from p.(Gly34AlafsTer5) / p.G34Afs*5; None for fsTer? or no frameshift notation."""
    m = re.search(r"fs(?:Ter|\*)(\d+)", hgvs_p or "")
    return int(m.group(1)) if m else None


def _load(model: Optional[TranscriptModel]) -> tuple[Optional[TranscriptModel], str]:
    try:
        return (model if model is not None else default_model()), ""
    except Exception as e:  # a broken packaged file must not stop classification; say so
        return None, f"transcript model not loaded ({e})"


def _coding(gene: Gene, model: Optional[TranscriptModel]) -> Optional[Coding]:
    m, _ = _load(model)
    return m.coding_for(gene.symbol) if m is not None else None


def _base(acc: str) -> str:
    return (acc or "").split(".")[0]


def _structure(variant: Optional[Variant], build: Optional[str], gene: Gene,
               model: Optional[TranscriptModel]) -> tuple[Optional[Transcript], str]:
    """The gene's curated structure on the finding's build (transcripts:, else a coding record on
    GRCh38), or (None, why not)."""
    if variant is None:
        return None, "no variant position"
    if not build:
        return None, "genome build not known to the criterion engine"
    m, why = _load(model)
    if m is None:
        return None, why
    tx = m.get(gene.symbol, build)
    coding = m.coding_for(gene.symbol)
    if tx is None and coding is not None and build == "GRCh38":
        tx = coding.transcript_model()
    if tx is None:
        return None, f"no curated transcript model for {gene.symbol} on {build}"
    if tx.chrom != variant.chrom_bare:
        return None, f"variant on chromosome {variant.chrom_bare}, transcript model on {tx.chrom}"
    return tx, ""


def _model_hit(variant: Optional[Variant], build: Optional[str], gene: Gene,
               model: Optional[TranscriptModel]) -> tuple[Optional[object], str]:
    """Exon hit of the variant's 3'-most base on the curated transcript model, or (None, why not)."""
    tx, why = _structure(variant, build, gene, model)
    if tx is None:
        return None, why
    end = variant.pos + max(len(variant.ref), 1) - 1
    pos3 = end if tx.strand == "+" else variant.pos
    hit = locate_in(tx, pos3)
    if hit is None:
        return None, f"position {pos3} outside the {gene.symbol} transcript model"
    return hit, ""


def evaluate_pvs1(ann: Annotation, gene: Gene, rules: Rules, variant: Optional[Variant] = None,
                  build: Optional[str] = None, model: Optional[TranscriptModel] = None) -> CriterionResult:
    t = terms(ann)
    null = t & (NONSENSE_FS | SPLICE_CANONICAL | START_LOST | ABLATION | EXON_LOSS)
    if not null:
        return result("PVS1", False, None, f"not a predicted null variant ({', '.join(sorted(t)) or 'no consequence'})",
                      consequence=sorted(t))
    not_lof = pvs1_gate(gene)  # loss of function must be a mechanism of a retinal mode (irdtriage.mechanism)
    if not_lof:
        return result("PVS1", False, None, not_lof, mechanisms=list(gene.mechanisms))
    note = _mechanism_note(gene)
    cfg = rules.pvs1
    g = rules.gene(gene.symbol)
    ev = {"consequence": sorted(null), "exon": ann.exon, "intron": ann.intron, "transcript": ann.transcript,
          "mane": ann.is_mane}
    if t & ABLATION:
        return result("PVS1", True, "VeryStrong", "whole-transcript deletion" + note, **ev)
    tx, tx_why = _structure(variant, build, gene, model)
    if tx is not None and tx.has_cds and tx.protein_length:
        ev["structure"] = tx.describe()
        done = None
        if t & NONSENSE_FS:
            done = _structure_truncating(ann, gene, g, cfg, ev, note, tx, variant,
                                         "frameshift" if "frameshift_variant" in t else "stop")
            done = pvs1_cap(gene, done) if done is not None else None
        elif t & SPLICE_CANONICAL:
            done = _structure_splice(ann, gene, g, cfg, ev, note, tx, variant)
        elif t & START_LOST:
            done = _structure_start(ann, gene, g, cfg, ev, note, tx, variant)
        if done is not None:
            return done
    elif tx_why:
        ev["structure_note"] = tx_why
    if t & NONSENSE_FS:
        hit, why_not = _model_hit(variant, build, gene, model)
        if "residue" in ev.get("structure_note", ""):  # the annotation describes another transcript
            hit, why_not = None, ev["structure_note"]
        return pvs1_cap(gene, _truncating(ann, gene, g, cfg, ev, note, hit, why_not, "frameshift"
                                          if "frameshift_variant" in t else "stop", _coding(gene, model)))
    if t & SPLICE_CANONICAL:
        return result("PVS1", True, "Moderate",
                      f"canonical splice site ({ann.hgvs_c or 'position from consequence'}): no transcript model "
                      "for the exon-skipping frame/NMD outcome, conservative branch -> Moderate" + note, **ev)
    if t & START_LOST:
        s = g.get("start_lost_strength", cfg["start_lost_strength"])
        return result("PVS1", True, s, f"initiation codon variant ({ann.hgvs_p or ann.hgvs_c}): no curated "
                      f"alternative start for {gene.symbol} -> {s}" + note, **ev)
    return result("PVS1", True, "Moderate", "exon loss with unknown effect on reading frame: conservative -> Moderate"
                  + note, **ev)


def _panel_length(ann: Annotation, coding: Optional[Coding]) -> tuple[Optional[int], str]:
    """Protein length from the panel's coding record when it describes the annotated transcript."""
    if coding is None:
        return None, "no coding record for this gene in the panel"
    if ann.is_mane or _base(ann.transcript) in (_base(coding.transcript), _base(coding.mane_refseq)):
        return coding.protein_length, f"panel coding record {coding.describe()}"
    return None, (f"annotated transcript {ann.transcript or '?'} is neither MANE Select nor the panel's coding "
                  f"record {coding.transcript}")


def _truncating(ann: Annotation, gene: Gene, g: dict, cfg: dict, ev: dict, note: str, hit=None,
                why_not: str = "", kind: str = "stop", coding: Optional[Coding] = None) -> CriterionResult:
    n, total = fraction(ann.exon)
    pos, length, pos_key = protein_position(ann)
    length_from = pos_key if length else ""
    if pos is not None and not length:
        length, length_from = _panel_length(ann, coding)
        if not length:
            ev["protein_length_note"] = length_from
            length_from = ""
    ev.update(protein_position=pos, protein_length=length, protein_position_field=pos_key,
              protein_length_source=length_from or None)
    if hit is not None and ((total is not None and total != hit.exon_count)
                            or (n is not None and n != hit.exon_number)):
        why_not = (f"annotated exon {ann.exon} disagrees with the transcript model "
                   f"(exon {hit.exon_number or '-'}/{hit.exon_count}): model not used")
        hit = None
    ev["transcript_model"] = hit.to_dict() if hit is not None else None
    if hit is None and why_not:
        ev["transcript_model_note"] = why_not
    if hit is not None and not (n is not None and total is not None and n == total):
        fs = _fs_ter(ann.hgvs_p) if kind == "frameshift" else None
        nmd, why = nmd_predicted(hit, kind, fs, int(cfg["nmd_penultimate_nt"]))
        if nmd is None and n is None:
            why += "; NMD cannot be predicted"
    elif n is not None and total is not None:
        if n == total:
            nmd, why = False, f"stop in the last exon ({n}/{total}): NMD not predicted"
        elif n == total - 1:
            nmd, why = None, (f"stop in the penultimate exon ({n}/{total}); distance to its 3' end unknown, "
                              f"so escape from NMD (last {cfg['nmd_penultimate_nt']} nt) cannot be excluded")
        else:
            nmd, why = True, f"exon {n}/{total}: NMD predicted"
    else:
        nmd, why = None, ("exon number not annotated: NMD cannot be predicted"
                          + (f" ({why_not})" if why_not else ""))
    ev["nmd_predicted"] = nmd
    if nmd:
        if ann.is_mane:
            return result("PVS1", True, "VeryStrong", f"{ann.hgvs_p or ann.hgvs_c}: {why} in MANE Select "
                          f"{ann.transcript}" + note, **ev)
        return result("PVS1", True, "Strong", f"{ann.hgvs_p or ann.hgvs_c}: {why}, but {ann.transcript or 'the transcript'} "
                      "is not MANE Select (exon relevance not established) -> Strong" + note, **ev)
    # NMD not predicted (or not predictable): truncated region critical or > 10 % of protein?
    critical = [r for r in g.get("critical_residues", []) or [] if pos is not None and r["end"] >= pos]
    if critical:
        return result("PVS1", True, "Strong", f"{why}; truncated region contains curated critical region "
                      f"{critical[0]['label']} -> Strong" + note, **ev)
    if pos is not None and length:
        removed = (length - pos + 1) / length
        ev["removed_fraction"] = round(removed, 4)
        limit = cfg["removed_fraction_strong"]
        if removed > limit:
            return result("PVS1", True, "Strong", f"{why}; removes {removed:.0%} of the protein "
                          f"(residue {pos} of {length}, length from {length_from}) > {limit:.0%} -> Strong" + note,
                          **ev)
        return result("PVS1", True, "Moderate", f"{why}; removes {removed:.0%} of the protein "
                      f"(residue {pos} of {length}, length from {length_from}) <= {limit:.0%} -> Moderate" + note,
                      **ev)
    return result("PVS1", True, "Moderate", f"{why}; protein length unknown so the removed share cannot be "
                  "measured: conservative -> Moderate" + note, **ev)


# ---------------------------------------------------------------------------------------------
# Decision tree from genomic position and the panel structure (exons + CDS), used whenever the
# gene has one on the finding's build and the annotation does not contradict it.

def _ref_span(variant: Variant) -> list[int]:
    return list(range(variant.pos, variant.pos + max(len(variant.ref), 1)))


def _first_changed(variant: Variant) -> int:
    """First reference base an allele changes: VCF alleles share their first base for indels."""
    if len(variant.ref) != len(variant.alt) and variant.ref[:1] == variant.alt[:1]:
        return variant.pos + 1
    return variant.pos


def _exon_of(tx: Transcript, pos: int) -> Optional[int]:
    for k, (a, b) in enumerate(tx.ordered(), 1):
        if a <= pos <= b:
            return k
    return None


def _agrees(ann: Annotation, tx: Transcript, exon: Optional[int], residue: Optional[int]) -> str:
    """Empty when the annotation's exon number/count and protein position agree with the structure."""
    n, total = fraction(ann.exon)
    if total is not None and total != tx.exon_count:
        return f"annotated exon count {total} differs from the structure's {tx.exon_count}"
    if n is not None and exon is not None and n != exon:
        return f"annotated exon {n} differs from the structure's exon {exon}"
    pos, _length, _key = protein_position(ann)
    if pos is not None and residue is not None and abs(pos - residue) > 1:
        return f"annotated residue {pos} differs from the structure's residue {residue}"
    return ""


def _removed_branch(why: str, pos: int, length: int, length_from: str, g: dict, cfg: dict, ev: dict,
                    note: str, removed_residues: Optional[int] = None) -> CriterionResult:
    """NMD not predicted: critical region or > 10 % of the protein -> Strong, else Moderate."""
    end = pos + removed_residues - 1 if removed_residues is not None else length
    critical = [r for r in g.get("critical_residues", []) or [] if r["end"] >= pos and r.get("start", 1) <= end]
    if critical:
        return result("PVS1", True, "Strong", f"{why}; the lost region holds curated critical region "
                      f"{critical[0]['label']} -> Strong" + note, **ev)
    lost = (removed_residues if removed_residues is not None else length - pos + 1)
    removed = lost / length
    ev["removed_fraction"] = round(removed, 4)
    limit = cfg["removed_fraction_strong"]
    strength = "Strong" if removed > limit else "Moderate"
    return result("PVS1", True, strength, f"{why}; removes {removed:.0%} of the protein ({lost} of {length} "
                  f"residues, length from {length_from}) {'>' if removed > limit else '<='} {limit:.0%} -> {strength}"
                  + note, **ev)


def _length(ann: Annotation, tx: Transcript) -> tuple[int, str]:
    _pos, length, key = protein_position(ann)
    if length:
        return length, key
    return int(tx.protein_length or 0), "panel structure"


def _structure_truncating(ann: Annotation, gene: Gene, g: dict, cfg: dict, ev: dict, note: str, tx: Transcript,
                          variant: Variant, kind: str) -> Optional[CriterionResult]:
    base = _first_changed(variant)
    c = c_number(tx, base)
    if c is None:
        ev["structure_note"] = f"position {base} is not in the coding sequence of the {tx.describe()}: not used"
        return None
    residue = (c + 2) // 3
    exon = _exon_of(tx, base)
    clash = _agrees(ann, tx, exon, residue)
    if clash:
        ev["structure_note"] = clash + ": structure not used"
        return None
    length, length_from = _length(ann, tx)
    ann_pos, _l, _k = protein_position(ann)
    pos = ann_pos or residue
    hit = locate_in(tx, base)
    ev.update(protein_position=pos, protein_length=length, protein_length_source=length_from,
              hgvs_c_from_structure=f"c.{c}", exon_from_structure=f"{exon}/{tx.exon_count}",
              transcript_model=hit.to_dict() if hit is not None else None)
    where = f"from panel structure: exon {exon} of {tx.exon_count}"
    nmd_nt = int(cfg["nmd_penultimate_nt"])
    if kind == "stop":
        nmd, why = nmd_at_stop(tx, 3 * residue, f"{where}, stop codon (residue {residue})", nmd_nt)
    else:
        fs = _fs_ter(ann.hgvs_p)
        if fs is not None:
            nmd, why = nmd_at_stop(tx, 3 * (pos + fs - 1), f"{where}, new stop of fsTer{fs} (about residue "
                                   f"{pos + fs - 1})", nmd_nt)
        else:
            d = junction_distance_at_c(tx, c) if tx.exon_count > 1 else 0
            assert d is not None
            if d <= nmd_nt:
                nmd, why = False, (f"{where}, frameshift at c.{c} {'in the last exon' if d <= 0 else f'{d} nt before the last junction'}; "
                                   "its new stop lies further downstream: NMD not predicted")
            elif exon is not None and exon <= tx.exon_count - 2:
                nmd, why = True, (f"{where}, frameshift at c.{c}, {d} nt before the last junction; new stop position "
                                  "unknown without sequence (no fsTer in the annotation), NMD predicted from the "
                                  "frameshift's own position")
            else:
                nmd, why = None, (f"{where} (penultimate), frameshift at c.{c}, {d} nt before the last junction; new "
                                  "stop position unknown without sequence, so escape from NMD cannot be excluded "
                                  "(conservative)")
    ev["nmd_predicted"] = nmd
    label = ann.hgvs_p or ann.hgvs_c or f"c.{c}"
    if nmd:
        if ann.is_mane:
            return result("PVS1", True, "VeryStrong", f"{label}: {why} in MANE Select {ann.transcript}" + note, **ev)
        return result("PVS1", True, "Strong", f"{label}: {why}, but {ann.transcript or 'the annotated transcript'} "
                      "is not MANE Select (exon relevance not established) -> Strong" + note, **ev)
    return _removed_branch(f"{label}: {why}", pos, length, length_from, g, cfg, ev, note)


def _structure_splice(ann: Annotation, gene: Gene, g: dict, cfg: dict, ev: dict, note: str, tx: Transcript,
                      variant: Variant) -> Optional[CriterionResult]:
    site = next((x for x in (splice_site(tx, p) for p in _ref_span(variant)) if x is not None), None)
    if site is None:
        ev["structure_note"] = f"the {tx.describe()} places no base of the allele at a +/-1,2 splice site: not used"
        return None
    n, total = fraction(ann.exon)
    if total is not None and total != tx.exon_count:
        ev["structure_note"] = f"annotated exon count {total} differs from the structure's {tx.exon_count}: not used"
        return None
    k = site.skipped_exon
    cod, has_start, has_stop = exon_coding_nt(tx, k)
    length, length_from = _length(ann, tx)
    sign = "+" if site.kind == "donor" else "-"
    where = (f"from panel structure: {site.kind} {sign}{site.offset} of intron {site.intron_number}, exon {k} of "
             f"{tx.exon_count} skipped")
    ev.update(protein_length=length, protein_length_source=length_from, skipped_exon=k,
              skipped_exon_coding_nt=cod, splice_site=f"{site.kind} {sign}{site.offset}",
              hgvs_c_from_structure="c." + str(hgvs_c_position(tx, variant.pos)))
    label = ann.hgvs_c or ev["hgvs_c_from_structure"]
    if cod == 0:
        return result("PVS1", False, None, f"{label}: {where}; the exon is untranslated in the structure, so its "
                      "skipping leaves the protein intact: PVS1 not applicable" + note, **ev)
    if has_start or has_stop:
        return result("PVS1", True, "Moderate", f"{label}: {where}; the exon holds the "
                      f"{'start' if has_start else 'stop'} codon, so the outcome is not predictable from structure: "
                      "conservative -> Moderate" + note, **ev)
    order = tx.ordered()
    a, b = order[k - 1]
    first_c = c_number(tx, a if tx.strand == "+" else b)
    assert first_c is not None
    first_res = (first_c + 2) // 3
    ev["protein_position"] = first_res
    if cod % 3 == 0:
        ev["nmd_predicted"] = False
        return _removed_branch(f"{label}: {where}, {cod} coding nt (a multiple of 3): in-frame skipping",
                               first_res, length, length_from, g, cfg, ev, note, removed_residues=cod // 3)
    # out of frame: the new reading frame starts at the junction into exon k + 1
    nxt = k + 1
    if nxt > tx.exon_count - 1:
        nmd, why = False, "the frameshift starts in the last exon: NMD not predicted"
    else:
        na, nb = order[nxt - 1]
        c_next = c_number(tx, na if tx.strand == "+" else nb)
        d = junction_distance_at_c(tx, c_next) if c_next is not None else None
        if d is not None and d <= int(cfg["nmd_penultimate_nt"]):
            nmd, why = False, f"the frameshift starts {d} nt before the last junction: NMD not predicted"
        elif nxt <= tx.exon_count - 2:
            nmd, why = True, (f"the frameshift starts in exon {nxt} of {tx.exon_count}; new stop position unknown "
                              "without sequence, NMD predicted from the frameshift's start")
        else:
            nmd, why = None, ("the frameshift starts in the penultimate exon; new stop position unknown, escape from "
                              "NMD cannot be excluded (conservative)")
    ev["nmd_predicted"] = nmd
    why = f"{where}, {cod} coding nt (not a multiple of 3): out-of-frame skipping; {why}"
    if nmd:
        if ann.is_mane:
            return result("PVS1", True, "VeryStrong", f"{label}: {why} in MANE Select {ann.transcript}" + note, **ev)
        return result("PVS1", True, "Strong", f"{label}: {why}, but {ann.transcript or 'the annotated transcript'} is "
                      "not MANE Select (exon relevance not established) -> Strong" + note, **ev)
    return _removed_branch(f"{label}: {why}", first_res, length, length_from, g, cfg, ev, note)


def _structure_start(ann: Annotation, gene: Gene, g: dict, cfg: dict, ev: dict, note: str, tx: Transcript,
                     variant: Variant) -> Optional[CriterionResult]:
    cs = [c for c in (c_number(tx, p) for p in _ref_span(variant)) if c is not None and c <= 3]
    length, length_from = _length(ann, tx)
    ev.update(protein_length=length, protein_length_source=length_from, protein_position=1)
    if not cs:
        ev["structure_note"] = f"the {tx.describe()} places no base of the allele in the start codon: not used"
        return None
    s = g.get("start_lost_strength", cfg["start_lost_strength"])
    ev["hgvs_c_from_structure"] = f"c.{min(cs)}"
    return result("PVS1", True, s, f"{ann.hgvs_p or ann.hgvs_c or f'c.{min(cs)}'}: from panel structure: c.{min(cs)} "
                  f"lies in the start codon (exon {_exon_of(tx, variant.pos)} of {tx.exon_count}); no curated "
                  f"alternative start for {gene.symbol} -> {s}" + note, **ev)
