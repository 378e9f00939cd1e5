"""irdtriage: triage of variants in inherited retinal disease genes (decision support only)."""
__version__ = "0.1.0"

CAUTION = (
    "Decision support only. Every classification must be reviewed by a qualified clinical "
    "scientist, and findings must be confirmed in an accredited laboratory before any clinical "
    "use; local guidelines and licensed clinical practice prevail."
)
