"""The list of recurrent pathogenic non-coding IRD alleles (``panels/noncoding_alleles.yaml``).

* :func:`load_noncoding_alleles` -- read and validate the list (``InputError`` naming file and
  line for every problem); optionally check genes and transcripts against the panel.
* :func:`match` -- the listed allele an annotated finding names, or None.

An allele is recognised by the HGVS c. description the VCF's annotation gives on the gene's
MANE Select transcript; the list never changes a classification (see the file's header).
"""
from __future__ import annotations

import hashlib
import re
from dataclasses import dataclass
from pathlib import Path
from typing import Any, Optional

from .errors import InputError
from .models import Annotation, Gene, Panel
from .yamlio import package_data_path, read_yaml

FILE_NAME = "noncoding_alleles.yaml"
FIELDS = ("gene", "transcript", "hgvs_c", "effect", "source")
TOP_KEYS = {"version", "alleles"}
# c. descriptions of intronic (c.N+/-M, c.-N+/-M, c.*N+/-M) and UTR (c.-N, c.*N) substitutions,
# deletions, duplications and delins (HGVS, den Dunnen et al. 2016)
_POS = r"(?:[-*]?\d+(?:[+-]\d+)?)"
HGVS_NONCODING = re.compile(rf"^c\.{_POS}(?:_{_POS})?(?:[ACGT]>[ACGT]|del[ACGT]*|dup[ACGT]*|delins[ACGT]+|ins[ACGT]+)$")
NONCODING_POSITION = re.compile(r"\d[+-]\d|c\.[-*]|_[-*]")  # an intronic offset or a UTR position
REFSEQ_TX = re.compile(r"^NM_\d+\.\d+$")


@dataclass(frozen=True)
class ListedAllele:
    gene: str
    transcript: str  # MANE Select RefSeq, versioned
    hgvs_c: str
    effect: str
    source: str
    line: int  # line in the list file, for messages

    def to_dict(self) -> dict[str, Any]:
        return {"gene": self.gene, "transcript": self.transcript, "hgvs_c": self.hgvs_c,
                "effect": self.effect, "source": self.source}


@dataclass(frozen=True)
class NoncodingList:
    version: str
    sha256: str
    alleles: dict[tuple[str, str], ListedAllele]  # (gene, hgvs_c) -> allele
    source: str = ""

    def __len__(self) -> int:
        return len(self.alleles)


def _unversioned(acc: str) -> str:
    return (acc or "").split(".")[0]


def load_noncoding_alleles(path: Optional[str | Path] = None, panel: Optional[Panel] = None) -> NoncodingList:
    """Read the list (the bundled one when ``path`` is None). With ``panel``, every gene must be a
    panel gene and every transcript the gene's MANE Select RefSeq transcript."""
    p = Path(path) if path is not None else package_data_path(FILE_NAME)
    where = str(p)
    raw, node, data = read_yaml(p, "the non-coding allele list")
    if not isinstance(data, dict):
        raise InputError("the non-coding allele list must be a mapping with 'version' and 'alleles'", where, 1)
    unknown = set(map(str, data)) - TOP_KEYS
    if unknown:
        raise InputError(f"unknown key(s) {', '.join(sorted(unknown))}; allowed: version, alleles", where, 1)
    version = str(data.get("version") or "").strip()
    if not version:
        raise InputError("missing version", where, 1)
    items = data.get("alleles")
    if not isinstance(items, list) or not items:
        raise InputError("'alleles' must be a non-empty list", where, 1)
    item_nodes = next(v for k, v in node.value if k.value == "alleles").value
    out: dict[tuple[str, str], ListedAllele] = {}
    for item, inode in zip(items, item_nodes):
        line = inode.start_mark.line + 1
        if not isinstance(item, dict):
            raise InputError("each allele must be a mapping with " + ", ".join(FIELDS), where, line)
        extra = set(map(str, item)) - set(FIELDS)
        if extra:
            raise InputError(f"unknown field(s) {', '.join(sorted(extra))}; allowed: {', '.join(FIELDS)}", where, line)
        vals = {}
        for k in FIELDS:
            v = " ".join(str(item.get(k) or "").split())
            if not v:
                raise InputError(f"missing {k}", where, line)
            vals[k] = v
        if not HGVS_NONCODING.match(vals["hgvs_c"]) or not NONCODING_POSITION.search(vals["hgvs_c"]):
            raise InputError(f"hgvs_c {vals['hgvs_c']!r} is not an intronic or UTR c. description "
                             f"(e.g. c.2991+1655A>G)", where, line)
        if not REFSEQ_TX.match(vals["transcript"]):
            raise InputError(f"transcript {vals['transcript']!r} must be a versioned RefSeq NM_ accession", where, line)
        if panel is not None:
            gene = panel.genes.get(vals["gene"])
            if gene is None:
                raise InputError(f"gene {vals['gene']} is not on panel {panel.name} {panel.version}", where, line)
            if gene.refseq_transcript != vals["transcript"]:
                raise InputError(f"{vals['gene']} transcript {vals['transcript']} is not the gene's MANE Select "
                                 f"transcript {gene.refseq_transcript}", where, line)
        key = (vals["gene"], vals["hgvs_c"])
        if key in out:
            raise InputError(f"{vals['gene']} {vals['hgvs_c']} is already listed at line {out[key].line}", where, line)
        out[key] = ListedAllele(line=line, **vals)
    return NoncodingList(version=version, sha256=hashlib.sha256(raw).hexdigest(), alleles=out, source=where)


def on_mane(annotation: Annotation, gene: Optional[Gene], listed: ListedAllele) -> bool:
    """The annotation's HGVS c. is written on the gene's MANE Select transcript."""
    tx = _unversioned(annotation.transcript)
    if annotation.is_mane or (tx and tx == _unversioned(listed.transcript)):
        return True
    return bool(gene is not None and tx and tx == _unversioned(gene.ensembl_transcript))


def match(annotation: Annotation, gene: Optional[Gene], table: Optional[NoncodingList]) -> Optional[ListedAllele]:
    """The listed allele named by this annotation (same gene, same c. on the MANE transcript), or None."""
    if table is None or not annotation.hgvs_c:
        return None
    hit = table.alleles.get((annotation.gene, annotation.hgvs_c.strip()))
    if hit is None or not on_mane(annotation, gene, hit):
        return None
    return hit
