"""Plain data passed between the stages of irdtriage.

Every stage is a function over these dataclasses; nothing here does I/O or formatting.
Coordinates are 1-based and inclusive (VCF convention) unless a field says otherwise.
"""
from __future__ import annotations

from dataclasses import dataclass, field
from typing import Any, Optional

# ---------------------------------------------------------------------------
# Vocabulary (see DEVELOPERS.md)
# ---------------------------------------------------------------------------
CLASSES = (
    "Pathogenic",
    "Likely pathogenic",
    "Uncertain significance",
    "Likely benign",
    "Benign",
)
STRENGTHS = ("Supporting", "Moderate", "Strong", "VeryStrong", "StandAlone")

# The 28 ACMG/AMP 2015 criteria (Richards et al., Genet Med 2015;17:405-424, Tables 3-4).
PATHOGENIC_CODES = (
    "PVS1",
    "PS1", "PS2", "PS3", "PS4",
    "PM1", "PM2", "PM3", "PM4", "PM5", "PM6",
    "PP1", "PP2", "PP3", "PP4", "PP5",
)
BENIGN_CODES = (
    "BA1",
    "BS1", "BS2", "BS3", "BS4",
    "BP1", "BP2", "BP3", "BP4", "BP5", "BP6", "BP7",
)
ALL_CODES = PATHOGENIC_CODES + BENIGN_CODES

GENOTYPE_FITS = (
    "biallelic in trans",
    "biallelic phase unknown",
    "homozygous",
    "hemizygous",
    "heterozygous in a dominant gene",
    "de novo",
    "single heterozygous in a recessive gene",
    "mitochondrial homoplasmic",
    "mitochondrial heteroplasmic",
    "mitochondrial heteroplasmy below disease level",
    "no qualifying finding",
)
# Reader-facing wording of each genotype fit (keys stay as above in result.json).
GENOTYPE_FIT_LABELS = {
    "biallelic in trans": "two alleles, on different copies (in trans)",
    "biallelic phase unknown": "two alleles, phase not determined",
    "homozygous": "homozygous",
    "hemizygous": "hemizygous",
    "heterozygous in a dominant gene": "one allele in a dominant gene",
    "de novo": "de novo (absent in both parents)",
    "single heterozygous in a recessive gene": "one allele only in a recessive gene",
    "mitochondrial homoplasmic": "mitochondrial (maternal), homoplasmic",
    "mitochondrial heteroplasmic": "mitochondrial (maternal), heteroplasmic at a disease level",
    "mitochondrial heteroplasmy below disease level": "mitochondrial (maternal), heteroplasmy below the usual disease level",
    "no qualifying finding": "no qualifying finding",
}

CASE_STATUSES = ("SOLVED", "IN_PROGRESS", "UNSOLVED")
INTERPRETATION_STATUSES = ("CAUSATIVE", "CANDIDATE", "CONTRIBUTORY", "REJECTED", "UNKNOWN_STATUS")

# Allelic state of one call. "hemizygous": one copy of the locus (chrX outside the pseudoautosomal
# regions or chrY in a male); "homoplasmic" / "heteroplasmic": mitochondrial calls (all or part of
# the mtDNA copies carry the allele); "haploid call": a one-allele GT where two copies are expected
# (an autosome, or chrX in a female) -- a caller or copy-number problem to review, never read as
# homozygous.
ZYGOSITIES = ("heterozygous", "homozygous", "hemizygous", "homoplasmic", "heteroplasmic", "haploid call",
              "reference", "no call")


# ---------------------------------------------------------------------------
# Panel (curated knowledge, loaded from panels/*.yaml by irdtriage.panel)
# ---------------------------------------------------------------------------
@dataclass(frozen=True)
class Span:
    chrom: str  # without "chr": "1".."22", "X", "Y", "MT"
    start: int  # 1-based inclusive
    end: int  # 1-based inclusive


@dataclass(frozen=True)
class AlleleRule:
    """One allele class a mode's disease arises from (``irdtriage.mechanism.ALLELE_CLASSES``),
    optionally only in the listed exon or intron numbers of the annotated transcript."""

    cls: str
    exons: tuple[int, ...] = ()
    introns: tuple[int, ...] = ()


@dataclass(frozen=True)
class ModeSpec:
    """Disease mechanism of one inheritance mode of a gene (see irdtriage.mechanism)."""

    mode: str  # "AR", "AD", "XLR", "XLD", "MT"
    mechanisms: tuple[str, ...]  # subset of ("LOF", "GOF", "DN"); empty = not established
    alleles: tuple[AlleleRule, ...]
    conditions: tuple[str, ...]
    retinal: bool = True  # False: the mode's disease is not retinal/visual and makes no retinal fit
    source: str = ""


@dataclass(frozen=True)
class Gene:
    symbol: str
    hgnc_id: str  # "HGNC:10294"
    name: str
    refseq_transcript: str  # MANE Select RefSeq, versioned: "NM_000329.3"
    ensembl_transcript: str  # MANE Select Ensembl, versioned
    refseq_protein: str
    strand: str  # "+" or "-"
    grch38: Span
    grch37: Optional[Span]
    inheritance: tuple[str, ...]  # subset of ("AR", "AD", "XLR", "XLD", "MT")
    mechanisms: tuple[str, ...]  # subset of ("LOF", "GOF", "DN")
    conditions: tuple[str, ...]  # plain names of associated conditions
    cascade_step: str  # id of a step or module in panels/cascade.yaml
    syndromic: bool = False
    notes: tuple[str, ...] = ()
    hpo_justification: str = ""  # why the gene is on the panel if HPO lacks a retinal link
    evidence_level: str = ""  # "established" | "moderate" | "limited" | "disputed"; "" = not graded
    evidence_source: tuple[str, ...] = ()  # disease ids / papers behind the evidence level
    evidence_date: str = ""  # "YYYY-MM-DD" of the evidence call
    modes: tuple[ModeSpec, ...] = ()  # per-mode mechanism; () = derived by irdtriage.mechanism.default_modes
    plus_clinical: tuple[tuple[str, str], ...] = ()  # MANE Plus Clinical (RefSeq, Ensembl), versioned

    def span(self, build: str) -> Optional[Span]:
        return self.grch38 if build == "GRCh38" else self.grch37

    @property
    def recessive(self) -> bool:
        return "AR" in self.inheritance or "XLR" in self.inheritance

    @property
    def dominant(self) -> bool:
        return "AD" in self.inheritance or "XLD" in self.inheritance

    @property
    def x_linked(self) -> bool:
        return "XLR" in self.inheritance or "XLD" in self.inheritance


@dataclass(frozen=True)
class CascadeStep:
    id: str
    title: str  # short: "effector: PDE6 hydrolyses cGMP"
    kind: str  # "chain" (ordered light response), "recovery", "visual_cycle", "module"
    order: Optional[int]  # position along the chain for kind == "chain"
    text: str  # plain-language explanation a clinician can read
    breaks: str = ""  # what a defect at this step does to vision


@dataclass(frozen=True)
class Panel:
    name: str
    version: str
    sha256: str  # hash of the panel file contents (genes + cascade)
    genes: dict[str, Gene]  # by symbol, in file order
    cascade: dict[str, CascadeStep]  # by id, in file order
    source: str = ""  # path the panel was read from
    excluded: dict[str, str] = field(default_factory=dict)  # HPO retinal-dystrophy genes left out -> reason


# ---------------------------------------------------------------------------
# Variants, calls and annotation
# ---------------------------------------------------------------------------
@dataclass
class Call:
    """One sample's genotype at one (split, normalised) alternate allele."""

    sample: str
    gt: tuple[Optional[int], ...]  # allele indexes relative to the split record: 0 ref, 1 this alt, 2 another alt
    phased: bool = False
    phase_set: Optional[int] = None
    dp: Optional[int] = None
    gq: Optional[int] = None
    ad_ref: Optional[int] = None
    ad_alt: Optional[int] = None
    zygosity: str = "no call"  # one of ZYGOSITIES

    @property
    def allele_balance(self) -> Optional[float]:
        if self.ad_ref is None or self.ad_alt is None or (self.ad_ref + self.ad_alt) == 0:
            return None
        return self.ad_alt / (self.ad_ref + self.ad_alt)

    @property
    def alt_copies(self) -> int:
        return sum(1 for a in self.gt if a == 1)


@dataclass
class Variant:
    """One alternate allele after splitting multi-allelic records and trimming shared bases."""

    chrom: str  # as written in the VCF ("chr1" or "1")
    pos: int
    ref: str
    alt: str
    vcf_id: Optional[str] = None
    qual: Optional[float] = None
    filters: tuple[str, ...] = ()  # VCF FILTER values; () or ("PASS",) means passed
    original_pos: int = 0  # representation as written in the input
    original_ref: str = ""
    original_alts: tuple[str, ...] = ()
    allele_index: int = 1  # which ALT of the original record this is (1-based)
    line: Optional[int] = None  # line number in a plain-text VCF when known
    info: dict[str, Any] = field(default_factory=dict)  # raw INFO values for this allele
    calls: dict[str, Call] = field(default_factory=dict)  # by sample id
    intake_flags: tuple[str, ...] = ()  # intake problems that make the call need review (disagreeing duplicates)

    @property
    def chrom_bare(self) -> str:
        c = self.chrom[3:] if self.chrom.lower().startswith("chr") else self.chrom
        return "MT" if c in ("M", "MT") else c

    @property
    def key(self) -> str:
        return f"{self.chrom_bare}-{self.pos}-{self.ref}-{self.alt}"


@dataclass
class Annotation:
    """Consequence of a variant on one transcript."""

    gene: str
    transcript: str = ""
    consequence: tuple[str, ...] = ("not annotated",)  # Sequence Ontology terms, most severe first
    hgvs_c: str = ""
    hgvs_p: str = ""
    exon: str = ""  # "5/12" as annotators write it
    intron: str = ""  # "4/11"
    impact: str = ""
    source: str = "none"  # "CSQ", "ANN" or "none"
    is_mane: bool = False
    extra: dict[str, Any] = field(default_factory=dict)  # cDNA/CDS/protein positions, amino acids, ...


@dataclass
class CriterionResult:
    """One ACMG/AMP criterion evaluated for one finding."""

    code: str  # e.g. "PVS1"
    met: Optional[bool]  # True met, False not met, None not evaluable
    strength: Optional[str] = None  # applied strength when met (one of STRENGTHS)
    reason: str = ""  # one line naming the evidence and its value
    evidence: dict[str, Any] = field(default_factory=dict)
    source: str = "automated"  # "automated", "family", "phenotype", "curated" (user evidence)

    def to_dict(self) -> dict[str, Any]:
        return {
            "code": self.code,
            "met": self.met,
            "strength": self.strength,
            "reason": self.reason,
            "evidence": self.evidence,
            "source": self.source,
        }


@dataclass
class Classification:
    classification: str  # final class (one of CLASSES)
    rule_class: str  # Richards et al. 2015 Table 5 result
    points: int  # Tavtigian et al. 2020 point sum
    point_class: str
    posterior: float  # Tavtigian et al. 2018 posterior probability
    bayes_class: str
    note: str = ""  # explanation when the methods disagree
    rule: str = ""  # which Table 5 rule fired
    rule_set: str = ""  # name of the combining rule set used (panels/combining.yaml)


@dataclass
class Finding:
    id: str
    variant: Variant
    gene: str
    annotation: Annotation
    quality_flags: tuple[str, ...] = ()  # why the call failed quality thresholds, if it did
    evidence: dict[str, Any] = field(default_factory=dict)  # frequencies, scores, assertions
    criteria: list[CriterionResult] = field(default_factory=list)
    classification: Optional[Classification] = None
    interpretation_status: str = "UNKNOWN_STATUS"
    # why a non-coding allele is reported (listed recurrent allele, or candidate non-coding allele
    # completing a genotype): irdtriage.noncoding.NoncodingNote, None for every other finding
    noncoding: Any = None
    # a copy-number or structural event (irdtriage.sv.findings.StructuralNote), None for small variants
    structural: Any = None

    @property
    def noncoding_candidate(self) -> bool:
        return self.noncoding is not None and self.noncoding.kind == "candidate"

    @property
    def passes_quality(self) -> bool:
        return not self.quality_flags


@dataclass
class PhenotypeProfile:
    present: tuple[str, ...] = ()  # HPO IDs observed
    excluded: tuple[str, ...] = ()  # HPO IDs explicitly excluded
    sex: Optional[str] = None  # "MALE", "FEMALE" or None (Phenopacket words)
    subject_id: Optional[str] = None
    source: str = ""  # "--hpo", phenopacket path, ...
    labels: dict[str, str] = field(default_factory=dict)


@dataclass
class PhenotypeMatch:
    gene: str
    score: float  # raw similarity
    calibrated: float  # comparable across genes: 0..1 (see irdtriage.phenotype)
    matched_terms: list[dict[str, Any]] = field(default_factory=list)  # [{patient, gene_term, ic}]
    conflicting_terms: list[str] = field(default_factory=list)  # excluded terms that are hallmarks
    summary: str = ""
    z: float = 0.0  # per-gene z-score against the gene's own null (used for PP4)
    gene_percentile: float = 0.0  # per-gene percentile against the gene's own null (used for PP4)


@dataclass
class GeneHypothesis:
    symbol: str
    findings: list[Finding]
    genotype_fit: str = "no qualifying finding"  # one of GENOTYPE_FITS
    phase: str = ""  # "in trans (parents)", "in cis (phased GT)", "unknown", ...
    phenotype_match: Optional[PhenotypeMatch] = None
    score: float = 0.0
    rank: int = 0
    reason: str = ""
    next_steps: list[str] = field(default_factory=list)
    assessment: Any = None  # irdtriage.genotype.GenotypeAssessment behind genotype_fit
    evidence_level: str = ""  # the gene's evidence level (panel), set by rank.rank_hypotheses
