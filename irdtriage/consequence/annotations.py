"""Consequence from annotation already in the VCF's INFO column.

Two header-declared, pipe-delimited per-transcript layouts are read:

* ``CSQ``: ``Description="... Format: Allele|Consequence|IMPACT|SYMBOL|..."`` — the allele is
  written in minimal form (a base shared by REF and every ALT is dropped; '-' for nothing);
* ``ANN``: the functional-annotation field specification, ``'Allele | Annotation |
  Annotation_Impact | Gene_Name | Gene_ID | Feature_Type | Feature_ID | Transcript_BioType |
  Rank | HGVS.c | HGVS.p | cDNA.pos / cDNA.length | CDS.pos / CDS.length | AA.pos / AA.length |
  Distance | ERRORS / WARNINGS / INFO'`` — the allele is the ALT as written.

One transcript entry is picked per allele: the panel gene's MANE Select transcript, else
the most severe consequence among panel-gene transcripts, else the most severe overall. A MANE
Plus Clinical transcript of the gene (``Gene.plus_clinical``, from the MANE v1.5 summary) is
taken instead when the MANE Select transcript has no consequence for the allele (no entry, or
only intronic/flanking/non-coding terms) and the Plus Clinical one has (e.g. the REEP6 retinal
isoform's extra exon); ``extra["transcript_role"]`` says so.
"""
from __future__ import annotations

import re
from typing import Any, Iterable, Optional
from urllib.parse import unquote

import pysam

from ..models import Annotation, Panel, Variant

ANNOTATION_KEYS = ("CSQ", "ANN", "IRDT_TX")  # IRDT_TX: written by `irdtriage annotate`

# Sequence Ontology consequence terms, most severe first.  The order is common practice
# among annotators (loss of the transcript / splice sites / stop codon first, then
# in-frame and missense changes, splice region, synonymous, UTR, intronic, non-coding,
# flanking, regulatory, intergenic).  Older or annotator-specific SO terms are slotted
# next to their closest modern term.  Unknown terms rank after every known one.
_ORDER = (
    "transcript_ablation",
    "exon_loss_variant",
    "splice_acceptor_variant",
    "splice_donor_variant",
    "stop_gained",
    "frameshift_variant",
    "stop_lost",
    "start_lost",
    "initiator_codon_variant",
    "transcript_amplification",
    "feature_elongation",
    "feature_truncation",
    "gene_fusion",
    "bidirectional_gene_fusion",
    "inframe_insertion",
    "disruptive_inframe_insertion",
    "conservative_inframe_insertion",
    "inframe_deletion",
    "disruptive_inframe_deletion",
    "conservative_inframe_deletion",
    "missense_variant",
    "rare_amino_acid_variant",
    "protein_altering_variant",
    "splice_donor_5th_base_variant",
    "splice_region_variant",
    "splice_donor_region_variant",
    "splice_polypyrimidine_tract_variant",
    "incomplete_terminal_codon_variant",
    "start_retained_variant",
    "stop_retained_variant",
    "synonymous_variant",
    "coding_sequence_variant",
    "mature_miRNA_variant",
    "5_prime_UTR_premature_start_codon_gain_variant",
    "5_prime_UTR_variant",
    "3_prime_UTR_variant",
    "non_coding_transcript_exon_variant",
    "non_coding_exon_variant",
    "exon_variant",
    "intron_variant",
    "NMD_transcript_variant",
    "non_coding_transcript_variant",
    "coding_transcript_variant",
    "upstream_gene_variant",
    "downstream_gene_variant",
    "TFBS_ablation",
    "TFBS_amplification",
    "TF_binding_site_variant",
    "regulatory_region_ablation",
    "regulatory_region_amplification",
    "regulatory_region_variant",
    "intragenic_variant",
    "intergenic_region",
    "intergenic_variant",
    "sequence_variant",
)
SEVERITY: dict[str, int] = {term: rank for rank, term in enumerate(_ORDER)}
_UNKNOWN_RANK = len(_ORDER)


def severity(term: str) -> int:
    """Lower is more severe."""
    return SEVERITY.get(term, _UNKNOWN_RANK)


def split_terms(text: str) -> list[str]:
    return [t for t in re.split(r"[&,]", text or "") if t and t != "."]


def most_severe(terms: Iterable[str]) -> Optional[str]:
    """The most severe SO term of the given ones (None for none); '&'-joined terms are split."""
    flat = [t for term in terms for t in split_terms(term)]
    return min(flat, key=severity) if flat else None


def sort_terms(terms: Iterable[str]) -> tuple[str, ...]:
    flat = []
    for term in terms:
        for t in split_terms(term):
            if t not in flat:
                flat.append(t)
    return tuple(sorted(flat, key=severity))


# ---------------------------------------------------------------------------
# Header layouts
# ---------------------------------------------------------------------------
def parse_layout(description: str) -> list[str]:
    """Field names from an annotation INFO Description."""
    m = re.search(r"Format:\s*(.+)$", description or "")
    text = None
    if m:
        text = m.group(1)
    else:
        m = re.search(r"'([^']*\|[^']*)'", description or "")
        if m:
            text = m.group(1)
    if text is None:
        return []
    text = text.strip().strip("'\" ")
    return [f.strip() for f in text.split("|")]


def annotation_layouts(header: pysam.VariantHeader) -> dict[str, list[str]]:
    """{"CSQ": [...field names...], "ANN": [...]} for the annotation fields the header declares."""
    out = {}
    for key in ANNOTATION_KEYS:
        if key in header.info:
            fields = parse_layout(header.info[key].description or "")
            if len(fields) >= 2:
                out[key] = fields
    return out


# ---------------------------------------------------------------------------
# Entries
# ---------------------------------------------------------------------------
# layout field name -> our role
_ROLES = {
    "CSQ": {
        "Allele": "allele", "Consequence": "consequence", "IMPACT": "impact", "SYMBOL": "gene",
        "Feature": "transcript", "EXON": "exon", "INTRON": "intron", "HGVSc": "hgvs_c", "HGVSp": "hgvs_p",
    },
    "IRDT_TX": {
        "allele": "allele", "consequence": "consequence", "gene": "gene", "transcript": "transcript",
        "exon": "exon", "intron": "intron", "hgvs_c": "hgvs_c", "hgvs_p": "hgvs_p",
    },
    "ANN": {
        "Allele": "allele", "Annotation": "consequence", "Annotation_Impact": "impact",
        "Gene_Name": "gene", "Feature_ID": "transcript", "Rank": "rank", "HGVS.c": "hgvs_c",
        "HGVS.p": "hgvs_p",
    },
}


def _versionless(accession: str) -> str:
    return accession.split(".")[0] if accession else ""


def _strip_prefix(hgvs: str) -> str:
    hgvs = unquote(hgvs or "")
    if ":" in hgvs:
        hgvs = hgvs.split(":", 1)[1]
    return hgvs


def csq_allele(ref: str, alts: tuple[str, ...], index: int) -> str:
    """The minimal allele a CSQ entry uses for ALT number ``index`` (1-based) of a record."""
    alt = alts[index - 1]
    alleles = [ref] + [a for a in alts if a not in ("*",) and not a.startswith("<")]
    if len(set(len(a) for a in alleles)) > 1 and all(a and a[0] == ref[0] for a in alleles):
        alt = alt[1:]
    return alt or "-"


def _entries(variant: Variant, layouts: dict[str, list[str]]) -> list[tuple[str, dict[str, str]]]:
    """All (source, fields) entries for this variant's allele."""
    out = []
    for key, fields in layouts.items():
        raw = variant.info.get(key)
        if raw is None:
            continue
        if isinstance(raw, (tuple, list)):
            raw = ",".join(str(x) for x in raw)
        entries = []
        for chunk in str(raw).split(","):
            values = chunk.split("|")
            entries.append(dict(zip(fields, (v.strip() for v in values))))
        if len(variant.original_alts) <= 1:
            out.extend((key, e) for e in entries)
            continue
        # alleles are case-insensitive (VCF 4.3 section 1.6.1): compare them uppercased
        if key in ("CSQ", "IRDT_TX"):
            wanted = {csq_allele(variant.original_ref.upper(), tuple(a.upper() for a in variant.original_alts),
                                 variant.allele_index)}
        else:
            wanted = {variant.original_alts[variant.allele_index - 1].upper()}
        mine = [e for e in entries if (e.get("Allele") or e.get("allele") or "").upper() in wanted]
        if not mine:  # annotator wrote alleles differently: accept any reasonable spelling
            alt = variant.original_alts[variant.allele_index - 1].upper()
            valt = variant.alt.upper()
            loose = {alt, valt, alt[1:] or "-", valt[1:] or "-"}
            mine = [e for e in entries if (e.get("Allele") or e.get("allele") or "").upper() in loose]
        out.extend((key, e) for e in mine)
    return out


def _to_annotation(source: str, entry: dict[str, str], gene_fallback: str, mane_ids: set[str]) -> Annotation:
    roles = _ROLES[source]
    got: dict[str, str] = {}
    extra: dict[str, Any] = {}
    for name, value in entry.items():
        role = roles.get(name)
        if role:
            got[role] = value
        elif value not in ("", "."):
            extra[name] = value
    terms = sort_terms([got.get("consequence", "")]) or ("not annotated",)
    exon = got.get("exon", "")
    intron = got.get("intron", "")
    if source == "ANN" and got.get("rank"):
        if any("intron" in t for t in terms) and not any(severity(t) < severity("intron_variant") for t in terms if "intron" not in t):
            intron = got["rank"]
        else:
            exon = got["rank"]
    transcript = got.get("transcript", "")
    tx = _versionless(transcript)
    is_mane = bool(tx) and tx in mane_ids
    if not is_mane and entry.get("MANE_SELECT"):
        is_mane = bool(entry.get("MANE_SELECT")) and bool(mane_ids) and (
            _versionless(entry["MANE_SELECT"]) in mane_ids
        )
    return Annotation(
        gene=got.get("gene") or gene_fallback,
        transcript=transcript,
        consequence=terms,
        hgvs_c=_strip_prefix(got.get("hgvs_c", "")),
        hgvs_p=_strip_prefix(got.get("hgvs_p", "")),
        exon=exon,
        intron=intron,
        impact=got.get("impact", ""),
        source=source,
        is_mane=is_mane,
        extra=extra,
    )


def all_annotations(variant: Variant, layouts: dict[str, list[str]], panel: Optional[Panel] = None) -> list[Annotation]:
    """Every transcript entry for this allele, as Annotations (is_mane set from the panel)."""
    mane = _mane_ids(panel, None)
    return [_to_annotation(src, e, "", mane) for src, e in _entries(variant, layouts)]


def _mane_ids(panel: Optional[Panel], genes: Optional[Iterable[str]]) -> set[str]:
    ids: set[str] = set()
    if panel is None:
        return ids
    for sym in (genes if genes is not None else panel.genes):
        g = panel.genes.get(sym)
        if g is None:
            continue
        for acc in (g.refseq_transcript, g.ensembl_transcript):
            if acc:
                ids.add(_versionless(acc))
    return ids


def _plus_clinical_ids(panel: Optional[Panel], genes: Iterable[str]) -> set[str]:
    ids: set[str] = set()
    for sym in genes if panel is not None else ():
        g = panel.genes.get(sym)
        for pair in (g.plus_clinical if g is not None else ()):
            ids.update(_versionless(acc) for acc in pair if acc)
    return ids


# Terms that leave the transcript's sequence untouched: a transcript with only these has "no consequence".
_NO_EFFECT = frozenset({"intron_variant", "upstream_gene_variant", "downstream_gene_variant", "intergenic_variant",
                        "non_coding_transcript_variant", "NMD_transcript_variant", "not annotated"})


def _has_effect(a: Annotation) -> bool:
    return any(t not in _NO_EFFECT for t in a.consequence)


def _rank(a: Annotation) -> tuple:
    return (severity(a.consequence[0]) if a.consequence else _UNKNOWN_RANK,)


def pick_annotation(
    variant: Variant,
    layouts: dict[str, list[str]],
    panel: Optional[Panel],
    candidate_genes: list[str],
) -> Annotation:
    """The one transcript consequence to report for this allele (see module doc)."""
    gene0 = candidate_genes[0] if candidate_genes else ""
    entries = _entries(variant, layouts)
    if not entries:
        return Annotation(gene=gene0, consequence=("not annotated",), source="none")
    mane = _mane_ids(panel, candidate_genes)
    anns = [_to_annotation(src, e, gene0, mane) for src, e in entries]
    cands = set(candidate_genes)
    mane_hits = [a for a in anns if a.is_mane]
    plus = _plus_clinical_ids(panel, candidate_genes)
    plus_hits = [a for a in anns if plus and _versionless(a.transcript) in plus and _has_effect(a)]
    if plus_hits and not any(_has_effect(a) for a in mane_hits):
        chosen = min(plus_hits, key=_rank)
        chosen.extra["transcript_role"] = ("MANE Plus Clinical (the MANE Select transcript has no consequence "
                                           "for this allele)")
    elif mane_hits:
        chosen = min(mane_hits, key=_rank)
    else:
        in_panel = [a for a in anns if a.gene in cands]
        if in_panel:
            chosen = min(in_panel, key=_rank)
        else:
            chosen = min(anns, key=_rank)
            if cands and chosen.gene not in cands:
                chosen.extra.setdefault("annotated_gene", chosen.gene)
                chosen.gene = gene0
    chosen.extra.setdefault("entries_for_allele", str(len(anns)))
    return chosen
