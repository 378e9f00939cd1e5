"""Evidence for ACMG/AMP criteria: population frequency, clinical assertions, in-silico scores."""
from .collect import EvidenceSources, collect_evidence
from .config import EvidenceConfig
from .faf import filtering_af

__all__ = ["EvidenceConfig", "EvidenceSources", "collect_evidence", "filtering_af"]
