"""The ``annotate`` command: a VCF in, the same VCF with a per-transcript ``IRDT_TX`` INFO field out.

The field is the project's own: pipe-delimited, one entry per allele and transcript, with its
layout declared in the header (``Format: ...``) and read back by
:mod:`irdtriage.consequence.annotations`, so ``irdtriage triage`` takes the
written file as an annotated VCF. The allele of each entry is written in the minimal form that
reader expects (:func:`irdtriage.consequence.annotations.csq_allele`). Values are
percent-encoded where they would break the field (``,`` ``|`` ``;`` ``=`` and spaces).

The output appears only when complete (written beside the target, then renamed); a
bgzipped output (``.vcf.gz``) gets a tabix index.
"""
from __future__ import annotations

import os
import tempfile
from pathlib import Path
from typing import Optional

from .. import CAUTION
from ..consequence.annotations import csq_allele
from ..errors import InputError
from .annotate import Annotator, TxConsequence

FIELDS = ("allele", "consequence", "gene", "transcript", "protein", "exon", "intron", "hgvs_c", "hgvs_p",
          "protein_position", "splice_distance", "splice_side", "nmd_50nt", "stop_to_last_junction_nt",
          "notes")
KEY = "IRDT_TX"


def _enc(value: object) -> str:
    text = "" if value is None else str(value)
    for ch, code in (("%", "%25"), (",", "%2C"), ("|", "%7C"), (";", "%3B"), ("=", "%3D"), (" ", "%20")):
        text = text.replace(ch, code)
    return text


def entry(allele: str, c: TxConsequence) -> str:
    pp = ""
    if c.protein_position is not None:
        pp = f"{c.protein_position}/{c.protein_length}" if c.protein_length else str(c.protein_position)
    values = (allele, "&".join(c.terms), c.gene, c.transcript, c.protein, c.exon, c.intron,
              f"{c.transcript}:{c.hgvs_c}" if c.hgvs_c else "",
              f"{c.protein or c.transcript}:{c.hgvs_p}" if c.hgvs_p else "",
              pp, c.splice_distance, c.splice_side,
              "" if c.nmd is None else ("yes" if c.nmd else "no"), c.nmd_distance, "; ".join(c.notes))
    return "|".join(_enc(v) for v in values)


def _mode(out: str) -> str:
    if out.endswith(".bcf"):
        return "wb"
    if out.endswith((".gz", ".bgz")):
        return "wz"
    return "w"


def annotate_vcf(vcf_path: str, out: str, annotator: Annotator, command: str = "") -> dict[str, int]:
    """Annotate every record of ``vcf_path`` into ``out``; returns counts."""
    import pysam

    try:
        vin = pysam.VariantFile(vcf_path)
    except (OSError, ValueError) as e:
        raise InputError(f"cannot read the VCF ({e})", vcf_path) from None
    counts = {"records": 0, "alleles": 0, "annotated_alleles": 0, "entries": 0}
    with vin:
        header = vin.header.copy()
        present = [k for k in (KEY, "CSQ", "ANN") if k in header.info]
        if present:
            raise InputError(f"the VCF already carries {present[0]} annotation; "
                             "annotate an unannotated VCF", vcf_path)
        header.add_meta("INFO", items=[("ID", KEY), ("Number", "."), ("Type", "String"),
                                       ("Description", "Consequence per transcript from irdtriage built-in "
                                        "annotation. Format: " + "|".join(FIELDS))])
        header.add_line("##irdtriage_annotation=" + _enc(annotator.describe()))
        if command:
            header.add_line("##irdtriage_annotateCommand=" + command.replace("\n", " "))
        header.add_line("##irdtriage_caution=" + CAUTION)
        header_lines = _header_lines(vcf_path)
        target = Path(out)
        if target.is_dir():
            raise InputError("the output is a folder; name a file such as annotated.vcf.gz", out)
        target.parent.mkdir(parents=True, exist_ok=True)
        suffix = "".join(target.suffixes[-2:]) or ".vcf"
        fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=suffix, dir=target.parent)
        os.close(fd)
        tmp_index: Optional[str] = None
        try:
            with pysam.VariantFile(tmp, _mode(out), header=header) as vout:
                for i, rec in enumerate(vin, 1):
                    counts["records"] += 1
                    line = header_lines + i if header_lines is not None else None
                    entries = _annotate_record(rec, annotator, counts, vcf_path, line)
                    rec.translate(vout.header)
                    if entries:
                        rec.info[KEY] = tuple(entries)
                    vout.write(rec)
            if _mode(out) == "wz":
                try:
                    pysam.tabix_index(tmp, preset="vcf", force=True)
                except OSError:
                    raise InputError("records are not sorted by chromosome and position, so the bgzipped output "
                                     "cannot be indexed; sort the VCF or write plain .vcf", vcf_path) from None
                tmp_index = tmp + ".tbi"
            os.replace(tmp, target)
            if tmp_index:
                os.replace(tmp_index, str(target) + ".tbi")
        except BaseException:
            for p in (tmp, tmp_index):
                if p and os.path.exists(p):
                    os.unlink(p)
            raise
    return counts


def _header_lines(path: str) -> Optional[int]:
    """Header line count of a plain or bgzipped text VCF (None for BCF): record i is on line count + i."""
    import gzip

    with open(path, "rb") as fh:
        magic = fh.read(4)
    if magic[:3] == b"BCF":
        return None
    opener = gzip.open if magic[:2] == b"\x1f\x8b" else open
    with opener(path, "rb") as fh:
        if magic[:2] == b"\x1f\x8b":
            with gzip.open(path, "rb") as probe:
                if probe.read(3) == b"BCF":
                    return None
        n = 0
        for raw in fh:
            if not raw.startswith(b"#"):
                break
            n += 1
    return n


def _annotate_record(rec, annotator: Annotator, counts: dict[str, int], path: str, line: int) -> list[str]:
    ref = (rec.ref or "").upper()
    alts = tuple(a.upper() for a in (rec.alts or ()))
    mismatch = annotator.check_ref(rec.contig, rec.pos, ref)
    if mismatch is not None:
        raise InputError(f"REF {ref} at {rec.contig}:{rec.pos} does not match the reference FASTA ({mismatch}); "
                         "is the FASTA the VCF's build?", path, line)
    entries = []
    for k, alt in enumerate(alts, 1):
        if alt == "*" or alt.startswith("<") or "[" in alt or "]" in alt or set(alt) - set("ACGTN"):
            continue
        counts["alleles"] += 1
        found = annotator.consequences(rec.contig, rec.pos, ref, alt)
        if found:
            counts["annotated_alleles"] += 1
        allele = csq_allele(ref, alts, k)
        entries.extend(entry(allele, c) for c in found)
    counts["entries"] += len(entries)
    return entries
