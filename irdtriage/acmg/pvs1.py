"""PVS1 by the ClinGen SVI decision tree (Abou Tayoun et al., Hum Mutat 2018;39:1517-1524).

Branches implemented (strength names as applied):

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
from ..transcripts import Coding, TranscriptModel, default_model, locate_in, nmd_predicted
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


def _model_hit(variant: Optional[Variant], build: Optional[str], gene: Gene,
               model: Optional[TranscriptModel]) -> tuple[Optional[object], str]:
    """Exon hit of the variant's 3'-most base on the curated transcript model, or (None, why not)."""
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
    if t & NONSENSE_FS:
        hit, why_not = _model_hit(variant, build, gene, model)
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
