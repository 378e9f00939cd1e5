"""Concordance of a VCF's own consequence annotation (CSQ/ANN) with the built-in one.

When the VCF carries CSQ or ANN and the built-in annotator can run (``--transcripts``, with or
without ``--reference``), every allele that becomes a finding is annotated both ways and each
VCF entry whose transcript the built-in models hold (compared without the version) is compared
field by field:

* ``consequence``: the most severe Sequence Ontology term of each side (the full term lists
  are kept in a difference). Without a reference sequence a coding change inside exons is only
  ``coding_sequence_variant`` (frameshift and in-frame changes are still told apart): such a
  built-in term is not compared.
* ``hgvs_c``: after dropping the transcript prefix and URL escapes, and the bases HGVS allows
  after ``del``/``dup`` (``c.2299delG`` = ``c.2299del``; HGVS recommendations, den Dunnen et
  al. 2016). A built-in c. left empty (indel without reference sequence) is not compared.
* ``hgvs_p``: after dropping the protein prefix and the prediction parentheses and writing
  amino acids in one-letter code with ``*`` for a stop (``p.(Glu767SerfsTer21)`` =
  ``p.Glu767Serfs*21`` = ``p.E767Sfs*21``; ``p.(Leu54=)`` = ``p.L54=``). A built-in ``p.?``
  written only because the sequence was missing is not compared; a field empty on the VCF side
  is not compared either.

``Concordance.to_dict()`` is ``result["annotation_concordance"]`` (docs/result-contract.md).
"""
from __future__ import annotations

import re
from typing import Any, Iterable, Optional
from urllib.parse import unquote

from ..consequence.annotations import most_severe
from ..models import Annotation, Variant
from .annotate import BAD_ORF, NO_SEQUENCE, TxConsequence
from .hgvs_p import AA3
from .providers import versionless

FIELDS = ("consequence", "hgvs_c", "hgvs_p")
_AA1 = {v: k for k, v in AA3.items() if k not in ("X",)}
_AA3_RE = re.compile("|".join(sorted(_AA1, key=len, reverse=True)))
_DELDUP_BASES = re.compile(r"(del|dup)[ACGTNacgtn]+$")
_STOP_X = re.compile(r"(?<=fs)X|(?<=ext)X|^X(?=\d)|(?<=\d)X$")
MAX_DIFFERENCES = 500  # listed in result.json; counts cover all


def _strip_prefix(h: str) -> str:
    h = unquote(h or "").strip()
    return h.split(":", 1)[1] if ":" in h else h


def norm_c(h: str) -> str:
    """HGVS c./n. for comparison (see module doc)."""
    h = _strip_prefix(h)
    if "delins" in h:
        return h
    return _DELDUP_BASES.sub(r"\1", h)


def one_letter(h: str) -> str:
    """HGVS p. in one-letter code without the prediction parentheses: ``p.(Trp24Ter)`` -> ``p.W24*``."""
    h = _strip_prefix(h)
    if not h.startswith("p."):
        return h
    body = h[2:].replace("(", "").replace(")", "")
    body = _AA3_RE.sub(lambda m: _AA1[m.group(0)], body)
    body = _STOP_X.sub("*", body)  # older one-letter writing: X for a stop (p.W24X, fsX21)
    return "p." + body


def norm_p(h: str) -> str:
    return one_letter(h)


def _entry_key(variant: Variant) -> dict[str, Any]:
    return {"chrom": variant.chrom, "pos": variant.pos, "ref": variant.ref, "alt": variant.alt}


class Concordance:
    """Counts and differences over a run (see module doc)."""

    def __init__(self, describe: str, with_reference: bool):
        self.describe = describe
        self.with_reference = with_reference
        self.counts = {f: {"compared": 0, "agreeing": 0, "differing": 0} for f in FIELDS}
        self.alleles_compared = 0
        self.alleles_differing = 0
        self.pairs = 0
        self.sources: set[str] = set()
        self.differences: list[dict[str, Any]] = []
        self.not_in_models = 0  # VCF entries on a transcript the built-in models lack

    def add(self, variant: Variant, vcf_entries: Iterable[Annotation], built: Iterable[TxConsequence],
            gene: str = "") -> None:
        by_tx = {versionless(c.transcript): c for c in built}
        compared_here = differing_here = False
        for a in vcf_entries:
            if a.source not in ("CSQ", "ANN") or not a.transcript:
                continue
            c = by_tx.get(versionless(a.transcript))
            if c is None:
                self.not_in_models += 1
                continue
            diffs = self._compare(a, c)
            if diffs is None:
                continue
            compared_here = True
            self.pairs += 1
            self.sources.add(a.source)
            if diffs:
                differing_here = True
                if len(self.differences) < MAX_DIFFERENCES:
                    self.differences.append({**_entry_key(variant), "gene": c.gene or gene, "source": a.source,
                                             "transcript_vcf": a.transcript, "transcript_built_in": c.transcript,
                                             "fields": diffs})
        self.alleles_compared += compared_here
        self.alleles_differing += differing_here

    def _compare(self, a: Annotation, c: TxConsequence) -> Optional[dict[str, dict[str, Any]]]:
        no_seq = NO_SEQUENCE in c.notes or BAD_ORF in c.notes
        diffs: dict[str, dict[str, Any]] = {}
        any_field = False
        # consequence: the most severe term of each side
        vcf_terms = [t for t in a.consequence if t != "not annotated"]
        built_top = most_severe(c.terms)
        if vcf_terms and built_top and not (no_seq and built_top == "coding_sequence_variant"):
            any_field = True
            self._count("consequence", most_severe(vcf_terms) == built_top, diffs,
                        {"vcf": list(vcf_terms), "built_in": list(c.terms)})
        if a.hgvs_c and c.hgvs_c:
            any_field = True
            self._count("hgvs_c", norm_c(a.hgvs_c) == norm_c(c.hgvs_c), diffs,
                        {"vcf": _strip_prefix(a.hgvs_c), "built_in": c.hgvs_c})
        if a.hgvs_p and c.hgvs_p and not (no_seq and c.hgvs_p == "p.?"):
            any_field = True
            self._count("hgvs_p", norm_p(a.hgvs_p) == norm_p(c.hgvs_p), diffs,
                        {"vcf": _strip_prefix(a.hgvs_p), "built_in": c.hgvs_p})
        return diffs if any_field else None

    def _count(self, field: str, same: bool, diffs: dict, values: dict) -> None:
        n = self.counts[field]
        n["compared"] += 1
        n["agreeing" if same else "differing"] += 1
        if not same:
            diffs[field] = values

    def to_dict(self) -> dict[str, Any]:
        return {
            "annotator": self.describe,
            "reference_sequence": self.with_reference,
            "vcf_sources": sorted(self.sources),
            "alleles_compared": self.alleles_compared,
            "alleles_differing": self.alleles_differing,
            "transcript_pairs": self.pairs,
            "vcf_entries_not_in_models": self.not_in_models,
            "fields": {f: dict(v) for f, v in self.counts.items()},
            "differences": list(self.differences),
            "differences_listed_max": MAX_DIFFERENCES,
        }


def summary_line(block: Optional[dict]) -> Optional[str]:
    """One line for the terminal (``--verbose``): counts per field."""
    if not block:
        return None
    names = {"consequence": "consequence", "hgvs_c": "HGVS c.", "hgvs_p": "HGVS p."}
    parts = [f"{names[f]} {v['agreeing']}/{v['compared']} agree" for f, v in block["fields"].items()]
    src = "/".join(block.get("vcf_sources") or []) or "CSQ/ANN"
    return (f"annotation concordance, VCF {src} vs built-in ({block['alleles_compared']} alleles, "
            f"{block['transcript_pairs']} transcript pairs): " + "; ".join(parts)
            + f"; {block['alleles_differing']} allele(s) differ")


def difference_lines(block: Optional[dict], limit: int = 20) -> list[str]:
    out = []
    for d in (block or {}).get("differences", [])[:limit]:
        fields = "; ".join(f"{k} VCF {_show(v['vcf'])} vs built-in {_show(v['built_in'])}"
                           for k, v in d["fields"].items())
        out.append(f"{d['chrom']}:{d['pos']} {d['ref']}>{d['alt']} {d['transcript_vcf']}: {fields}")
    return out


def _show(v: Any) -> str:
    return "&".join(v) if isinstance(v, list) else str(v)
