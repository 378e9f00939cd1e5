"""The panel's own transcript structure as the default transcript models of built-in annotation.

``panels/transcripts.yaml`` (:func:`irdtriage.transcripts.load_transcripts`) holds, for most panel
genes, the exons and CDS ends of one GENCODE-derived canonical transcript on GRCh38 and (where
the exon lengths agree) GRCh37, compared with MANE Select. :func:`panel_transcripts` turns the
entries of one build into a :class:`~irdtriage.annotate.providers.TranscriptSet`, so a VCF
without CSQ/ANN gets consequence and HGVS on those genes with no transcript file named.

Each model is named by the MANE Select RefSeq accession the file gives for the gene (so the
pipeline treats it as MANE Select, as it does a CSQ/ANN entry on that accession), and its
``source`` says what it is: the panel's GENCODE-derived structure, and whether its outer ends
equal MANE Select's or by how many nt they differ (``mane_end_offsets_nt``; the coding exons
are what c. numbering uses). Genes without a verified structure (the file's ``skipped`` list)
get no model.
"""
from __future__ import annotations

import re
from typing import Iterable, Optional

from ..transcripts import Transcript, TranscriptModel
from .providers import TranscriptSet, TxModel, bare_chrom

_MANE_VERSION = re.compile(r"^- name: MANE\s*\n\s+version:\s*'?([^'\n]+)'?", re.M)


def mane_version(model: TranscriptModel) -> str:
    """MANE release the structure was compared with, from the file's ``sources`` (header lines)."""
    try:
        with open(model.path, encoding="utf-8") as fh:
            head = fh.read(8000)
    except OSError:
        return ""
    m = _MANE_VERSION.search(head)
    return m.group(1).strip() if m else ""


def relation(t: Transcript, mane: str = "") -> str:
    """How the structure relates to MANE Select, in words."""
    rel = f"MANE{' v' + mane if mane else ''} Select {t.refseq}"
    if t.mane_boundaries_match:
        return f"outer ends equal {rel}"
    a, b = t.mane_end_offsets_nt
    return f"outer ends differ from {rel} by {a}/{b} nt (5'/3')"


def to_model(t: Transcript, origin: str, mane: str = "") -> Optional[TxModel]:
    """One panel structure as a transcript model; None without an accession to name it by."""
    tid = t.refseq or t.ensembl
    if not tid or not t.exons:
        return None
    cds = (t.cds_start, t.cds_end) if t.has_cds else None
    return TxModel(tid, t.symbol, bare_chrom(t.chrom), t.strand, tuple(t.exons), cds, "",
                   source=f"{origin}: panel's GENCODE-derived structure of {t.symbol} ({t.build}), "
                          f"{relation(t, mane)}")


def panel_transcripts(build: str, model: Optional[TranscriptModel] = None,
                      genes: Optional[Iterable[str]] = None) -> TranscriptSet:
    """Transcript models of the panel structure on ``build`` (GRCh38 or GRCh37); ``genes`` limits
    them to these symbols. ``model`` defaults to the packaged ``panels/transcripts.yaml``."""
    from ..transcripts import default_model

    m = model if model is not None else default_model()
    wanted = set(genes) if genes is not None else None
    mane = mane_version(m)
    origin = f"{m.name} {m.version}"
    models = []
    for (sym, b), t in sorted(m.transcripts.items()):
        if b != build or (wanted is not None and sym not in wanted):
            continue
        tx = to_model(t, origin, mane)
        if tx is not None:
            models.append(tx)
    label = (f"panel transcript structure {origin} ({build}; GENCODE-derived exons and CDS"
             f"{', compared with MANE v' + mane + ' Select' if mane else ''})")
    return TranscriptSet(models, source=label)
