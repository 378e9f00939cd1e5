"""The phenopacket's description of a structural finding (GA4GH Phenopacket v2 VariationDescriptor).

What the schema of the installed ``phenopackets`` package (2.0.2) accepts, used as follows:

* ``variation.copyNumber`` (GA4GH VRS 1.x ``CopyNumber``): for a deletion or duplication, the copies
  of the interval the person carries, on a ``DerivedSequenceExpression`` whose ``SequenceLocation``
  names the chromosome by its RefSeq accession (``refseq:NC_...``) and the interval in VRS interbase
  coordinates (start = first affected base - 1, end = last affected base).  The count is the
  caller's FORMAT CN when given, else what the genotype implies (heterozygous loss of two copies:
  1; homozygous or hemizygous loss: 0); a gain without CN is a lower bound (``indefiniteRange``
  ``>=``).  Other events (inversion, insertion, breakend) have no VRS 1.x class in this schema
  and are described by ``structuralType`` only.
* ``structuralType``: a Sequence Ontology class (``panels/structural.yaml`` ``so_terms``), as the
  GA4GH phenopacket-store case records do for structural variants.
* ``vcfRecord``: the record as a symbolic allele (POS the padding base, ALT ``<DEL>`` ..., INFO
  SVTYPE/END/SVLEN), or the breakend ALT as written.
* ``expressions``: ``hgvs.g`` on the chromosome accession for deletions, duplications and
  inversions (HGVS: ``NC_000001.10:g.94527001_94566000del``).
* ``label``/``description``/``extensions``: the exons covered, extent, reading frame, NMD and the
  Riggs 2020 total, in words.
"""
from __future__ import annotations

from typing import Any, Optional

from .settings import load_settings


def _bare(chrom: str) -> str:
    c = chrom[3:] if chrom.lower().startswith("chr") else chrom
    return "MT" if c in ("M", "MT") else c


def accession(chrom: str, build: Optional[str]) -> Optional[str]:
    table = load_settings().get("chromosome_accessions") or {}
    return (table.get(build or "") or {}).get(_bare(str(chrom)))


def so_term(s: dict[str, Any]) -> dict[str, str]:
    terms = load_settings()["so_terms"]
    kind = s.get("type")
    if kind == "DEL":
        name = "deletion" if s.get("source") == "sequence" else "copy_number_loss"
    elif kind == "DUP":
        name = "tandem_duplication" if s.get("tandem") else "copy_number_gain"
    elif kind == "INV":
        name = "inversion"
    elif kind == "INS":
        name = "insertion"
    elif kind == "BND":
        junction = ((s.get("breakend") or {}).get("junction") or "")
        name = ("translocation" if junction.startswith("translocation") else
                "inversion" if junction.startswith("inversion") else "chromosome_structure_variation")
    else:
        name = "chromosome_structure_variation"
    return {"id": terms[name], "label": name}


def copies(s: dict[str, Any], zygosity: Optional[str]) -> Optional[dict[str, Any]]:
    """VRS copies (``number`` or ``indefiniteRange``) of the interval, or None when not known."""
    cn = s.get("copy_number")
    if cn is not None:
        return {"number": {"value": int(cn)}}
    if s.get("type") == "DEL":
        n = {"heterozygous": 1, "homozygous": 0, "hemizygous": 0}.get(zygosity or "")
        return None if n is None else {"number": {"value": n}}
    if s.get("type") == "DUP":
        n = {"heterozygous": 3, "homozygous": 4, "hemizygous": 2}.get(zygosity or "")
        return None if n is None else {"indefiniteRange": {"value": n, "comparator": ">="}}
    return None


def descriptor(f: dict[str, Any], build: Optional[str]) -> dict[str, Any]:
    """VariationDescriptor fields for a structural finding of result.json (merged over the
    small-variant fields by :mod:`irdtriage.report.phenopacket_out`)."""
    s = f.get("structural") or {}
    kind = s.get("type")
    acc = accession(s.get("chrom") or f.get("chrom") or "", build)
    out: dict[str, Any] = {"structuralType": so_term(s)}
    if kind in ("DEL", "DUP") and acc:
        n = copies(s, f.get("zygosity"))
        if n is not None:
            loc = {"sequenceId": f"refseq:{acc}",
                   "sequenceInterval": {"startNumber": {"value": int(s["start"]) - 1},
                                        "endNumber": {"value": int(s["end"])}}}
            out["variation"] = {"copyNumber": {"derivedSequenceExpression": {"location": loc,
                                                                              "reverseComplement": False}, **n}}
    if build:
        if kind == "BND":
            pos, alt, info = int(s["start"]), str(s.get("alt")), "SVTYPE=BND"
            mate = (s.get("breakend") or {}).get("mate_id")
            if mate:
                info += f";MATEID={mate}"
        else:
            pos, alt = int(s["start"]) - 1, (s.get("alt") if str(s.get("alt", "")).startswith("<") else f"<{kind}>")
            info = f"SVTYPE={kind};END={int(s['end'])}"
            if s.get("svlen") is not None:
                info += f";SVLEN={int(s['svlen'])}"
        rec = {"genomeAssembly": build, "chrom": str(s.get("chrom") or f.get("chrom")), "pos": pos,
               "ref": (str(f.get("ref") or "N")[:1] or "N"), "alt": alt, "info": info}
        if f.get("vcf_id"):
            rec["id"] = str(f["vcf_id"])
        if f.get("filters"):
            rec["filter"] = ";".join(f["filters"])
        out["vcfRecord"] = rec
    if acc and kind in ("DEL", "DUP", "INV"):
        a, b = int(s["start"]), int(s["end"])
        out["hgvsG"] = {"syntax": "hgvs.g", "value": f"{acc}:g.{a}_{b}{kind.lower()}" if a != b
                        else f"{acc}:g.{a}{kind.lower()}"}
    o = s.get("overlap") or {}
    exons = o.get("exons") or []
    ext = [{"name": "extent", "value": str(s.get("extent") or "")}]
    if exons:
        from .overlap import exon_ranges

        ext.append({"name": "exons", "value": f"{exon_ranges(exons)} of {o.get('exon_count')} "
                                              f"({o.get('transcript')})"})
    if o.get("introns"):
        from .overlap import exon_ranges

        ext.append({"name": "introns", "value": f"{exon_ranges(o['introns'])} ({o.get('transcript')})"})
    if s.get("frame"):
        ext.append({"name": "reading_frame", "value": str(s["frame"])})
    if s.get("nmd") is not None:
        ext.append({"name": "nmd_expected", "value": "yes" if s["nmd"] else "no"})
    riggs = s.get("riggs")
    if riggs:
        parts = "; ".join(f"{x['section']} {x['points']:+.2f}" for x in riggs.get("sections") or [])
        ext.append({"name": "riggs_2020", "value": f"{riggs.get('total'):+.2f} {riggs.get('classification')} "
                                                   f"({parts})"})
    if s.get("next_step"):
        ext.append({"name": "next_step", "value": str(s["next_step"])})
    out["extensions"] = [e for e in ext if e["value"]]
    out["label"] = f"{f.get('gene')}: {o.get('words') or s.get('summary') or kind}"[:200]
    out["description"] = str(s.get("summary") or "")
    return out
