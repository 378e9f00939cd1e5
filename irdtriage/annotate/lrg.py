"""Sequence and transcript models from a Locus Reference Genomic (LRG) XML record.

An LRG record (schema 1.9) holds the genomic sequence in gene orientation
(``fixed_annotation/sequence``), its transcripts with exons and coding region in the
record's own coordinates, the translation, and in ``updatable_annotation`` the mapping of the
record onto genome assemblies (``mapping``/``mapping_span`` with ``diff`` elements where the
record and the assembly differ). :func:`read_lrg` places the record on one assembly: the
sequence it returns is the assembly's (the record's bases with the assembly's differences
applied), on the forward strand, as a :class:`RegionSequence`.
"""
from __future__ import annotations

import xml.etree.ElementTree as ET
from dataclasses import dataclass

from ..errors import InputError
from .providers import RegionSequence, TranscriptSet, TxModel, bare_chrom, revcomp


@dataclass(frozen=True)
class LrgRecord:
    lrg_id: str
    gene: str
    assembly: str
    chrom: str
    sequence: RegionSequence  # the assembly's forward-strand bases over the mapped span
    transcripts: TranscriptSet
    cdna: dict[str, str]  # LRG transcript name -> cDNA sequence as the record writes it
    proteins: dict[str, str]  # transcript accession -> translation as the record writes it
    names: dict[str, str]  # LRG transcript name ("t1") -> RefSeq accession from its comment


def _span_map(span: ET.Element):
    """A function from record position to assembly position for one mapping_span, and the
    assembly's sequence builder."""
    lrg_start, lrg_end = int(span.get("lrg_start")), int(span.get("lrg_end"))
    other_start, other_end = int(span.get("other_start")), int(span.get("other_end"))
    strand = span.get("strand")
    diffs = sorted(span.findall("diff"), key=lambda d: int(d.get("lrg_start")))
    return lrg_start, lrg_end, other_start, other_end, strand, diffs


def read_lrg(path: str, assembly: str = "GRCh38") -> LrgRecord:
    try:
        root = ET.parse(path).getroot()
    except (OSError, ET.ParseError) as e:
        raise InputError(f"cannot read the LRG record ({e})", path) from None
    fixed = root.find("fixed_annotation")
    if fixed is None or fixed.find("sequence") is None:
        raise InputError("not an LRG record: no fixed_annotation/sequence", path)
    lrg_id = (fixed.findtext("id") or "").strip()
    seq = "".join((fixed.findtext("sequence") or "").split()).upper()
    gene = ""
    mapping = None
    for aset in root.iter("annotation_set"):
        gene = gene or (aset.findtext("lrg_locus") or "").strip()
        for m in aset.findall("mapping"):
            cs = m.get("coord_system", "")
            if mapping is None and (cs == assembly or cs.startswith(assembly + ".")):
                mapping = m
    if mapping is None:
        raise InputError(f"the LRG record has no mapping to {assembly}", path)
    spans = mapping.findall("mapping_span")
    if len(spans) != 1:
        raise InputError(f"{assembly} mapping has {len(spans)} spans; one is supported", path)
    lrg_start, lrg_end, other_start, other_end, strand, diffs = _span_map(spans[0])
    chrom = bare_chrom(mapping.get("other_name") or mapping.get("other_id") or "")

    # The assembly's bases over the span, in gene orientation, with the record -> assembly map.
    pieces: list[str] = []
    pos_map: dict[int, int] = {}  # record position -> index (0-based) in the gene-orientation string
    cursor = lrg_start
    out_len = 0
    for d in diffs:
        a, b = int(d.get("lrg_start")), int(d.get("lrg_end"))
        kind = d.get("type", "")
        other = (d.get("other_sequence") or "").replace("-", "")
        mine = (d.get("lrg_sequence") or "").replace("-", "")
        if kind.endswith("_ins") and kind.startswith("other"):
            # bases present in the assembly only, between record positions a and b
            upto = a
        else:
            upto = a - 1
        for p in range(cursor, upto + 1):
            pos_map[p] = out_len
            pieces.append(seq[p - 1])
            out_len += 1
        cursor = upto + 1
        if kind == "mismatch":
            if seq[a - 1:b] != mine:
                raise InputError(f"mapping diff at {a}: record base {seq[a - 1:b]} is not {mine}", path)
            for i, p in enumerate(range(a, b + 1)):
                pos_map[p] = out_len
                pieces.append(other[i] if strand != "-1" else revcomp(other)[i])
                out_len += 1
            cursor = b + 1
        elif kind.endswith("_ins") and kind.startswith("other"):
            ins = other if strand != "-1" else revcomp(other)
            pieces.append(ins)
            out_len += len(ins)
        elif kind.endswith("_ins"):  # bases in the record only: dropped from the assembly sequence
            for p in range(a, b + 1):
                pos_map[p] = None  # type: ignore[assignment]
            cursor = b + 1
        else:
            raise InputError(f"mapping diff type {kind!r} is not supported", path)
    for p in range(cursor, lrg_end + 1):
        pos_map[p] = out_len
        pieces.append(seq[p - 1])
        out_len += 1
    gene_seq = "".join(pieces)
    if out_len != other_end - other_start + 1:
        raise InputError(f"{assembly} mapping: {out_len} bases after the diffs, span is "
                         f"{other_end - other_start + 1}", path)
    if strand == "-1":
        region = RegionSequence(chrom, other_start, revcomp(gene_seq))

        def to_genome(p: int) -> int:
            return other_end - pos_map[p]
        tx_strand = "-"
    else:
        region = RegionSequence(chrom, other_start, gene_seq)

        def to_genome(p: int) -> int:
            return other_start + pos_map[p]
        tx_strand = "+"

    # accessions of the fixed transcripts, from the updatable annotation (transcript fixed_id="t1")
    accession: dict[str, tuple[str, str]] = {}
    for t in root.iter("transcript"):
        fid = t.get("fixed_id")
        if fid and t.get("accession"):
            prot = next((p.get("accession", "") for p in t.iter("protein_product") if p.get("accession")), "")
            accession.setdefault(fid, (t.get("accession", ""), prot))
    models, cdna, proteins, names = [], {}, {}, {}
    for tx in fixed.findall("transcript"):
        name = tx.get("name", "")
        tid, protein_id = accession.get(name, (f"{lrg_id}{name}", ""))
        names[name] = tid
        cdna[name] = "".join((tx.findtext("cdna/sequence") or "").split()).upper()
        exons = []
        for ex in tx.findall("exon"):
            c = next((c for c in ex.findall("coordinates") if c.get("coord_system") == lrg_id), None)
            if c is None:
                continue
            exons.append(tuple(sorted((to_genome(int(c.get("start"))), to_genome(int(c.get("end")))))))
        cds_span = None
        cr = tx.find("coding_region")
        if cr is not None:
            c = cr.find("coordinates")
            cds_span = tuple(sorted((to_genome(int(c.get("start"))), to_genome(int(c.get("end"))))))
            tr = cr.find("translation")
            if tr is not None:
                proteins[tid] = "".join((tr.findtext("sequence") or "").split()).upper()
        models.append(TxModel(tid, gene, chrom, tx_strand, tuple(sorted(exons)), cds_span, protein_id,
                              source=f"{path} ({assembly} mapping)"))
    return LrgRecord(lrg_id, gene, assembly, chrom, region, TranscriptSet(models, source=str(path)),
                     cdna, proteins, names)

