"""Consequence of each variant allele on its panel gene's transcripts.

For now read from the annotation already in the VCF (``CSQ`` / ``ANN`` INFO fields).
"""
from .annotations import (  # noqa: F401
    SEVERITY,
    all_annotations,
    annotation_layouts,
    most_severe,
    pick_annotation,
    severity,
    sort_terms,
)
