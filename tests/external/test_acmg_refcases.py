"""ACMG/AMP classification checked case by case against outside reference data.

Part 1 - ClinGen expert-panel classifications (../shared/refdata/clingen_erepo/erepo_dev.tsv.gz,
ClinGen Evidence Repository export, see the refdata README). Each row lists the criteria the
panel met, with the strength it applied, and the class it asserted. The criteria are handed to
``combine`` exactly as the panel applied them and the expected class is the panel's own
assertion, typed from the row. Rows used: every RS1 row (the one retinal gene in the export)
and every Phenylketonuria VCEP row (a panel whose specification keeps the Richards et al. 2015
Table 5 combining rules: ClinGen Phenylketonuria Expert Panel Specifications for PAH version 2.0.0,
read in a secondary transcription of the specification, not in the registry itself), combined with
the rule set that is that table (``acmg-2015-svi``, named; the default rule set is the general
ClinGen reading). Rows whose listed criteria cannot reach the panel's
class under Table 5 are listed in ``PANEL_DEPARTS`` with the reason (checked there against the
Tavtigian et al. 2020 point class when that is what the panel followed).

Part 2 - causal variants of published cases (GA4GH phenopacket-store,
../shared/refdata/phenopackets): each distinct variant, annotated from its published HGVS,
with the exon position and transcript structure taken from the GENCODE-derived GRCh38 table
(../shared/refdata/gene_spans, spliceai 1.3.1) and the protein length typed below. The
expected PVS1 outcome is worked out here, from those outside facts, by the Abou Tayoun et al.
2018 decision tree (Hum Mutat 2018;39:1517-1524, Figure 1): stop or frameshift whose stop lies
more than 50 nt upstream of the last exon-exon junction -> NMD predicted -> Very Strong on the
MANE Select transcript; otherwise Strong when more than 10 % of the protein is removed, else
Moderate; not a null variant -> PVS1 not met.
"""
from __future__ import annotations

import csv
import gzip
import re
import sys
from collections import Counter
from pathlib import Path

import pytest

from irdtriage.acmg.combine import combine
from irdtriage.acmg.engine import evaluate
from irdtriage.acmg.rules import load_rules
from irdtriage.acmg.rulesets import load_combining
from irdtriage.models import Annotation, CriterionResult, Finding, Gene, Span, Variant

sys.path.insert(0, str(Path(__file__).resolve().parent))
from phenopacket_cases import PHENOPACKETS, REFDATA, consequence_from_hgvs, load_cases  # noqa: E402

EREPO = REFDATA / "clingen_erepo" / "erepo_dev.tsv.gz"
GRCH38_TABLE = REFDATA / "gene_spans" / "gencode_canonical_grch38.txt.gz"

pytestmark = pytest.mark.external
TABLE5 = load_combining().get("acmg-2015-svi")

# --------------------------------------------------------------------------------------------
# Part 1: ClinGen expert-panel rows
# --------------------------------------------------------------------------------------------
# Strength a criterion carries when the panel wrote no suffix (Richards et al. 2015, Table 3/4).
DEFAULT_STRENGTH = {"PVS": "VeryStrong", "PS": "Strong", "PM": "Moderate", "PP": "Supporting",
                    "BA": "StandAlone", "BS": "Strong", "BP": "Supporting"}
SUFFIX = {"Supporting": "Supporting", "Moderate": "Moderate", "Strong": "Strong",
          "Very Strong": "VeryStrong", "Stand Alone": "StandAlone"}
PANEL_CLASS = {"Pathogenic": "Pathogenic", "Likely Pathogenic": "Likely pathogenic",
               "Uncertain Significance": "Uncertain significance", "Likely Benign": "Likely benign",
               "Benign": "Benign"}

# Rows whose met criteria do not reach the panel's class by Table 5 (worked by hand from
# Richards et al. 2015 Table 5 and Tavtigian et al. 2020 Table 3), keyed by ClinGen UUID.
# value: (class Table 5 gives, point class the panel's criteria give or None, reason)
PANEL_DEPARTS = {
    # RS1, BS2 alone: Table 5 needs 1 strong + 1 supporting for Likely benign; -4 points is
    # Likely benign in Tavtigian 2020, which the panel's class follows.
    "RS1 BS2": ("Uncertain significance", "Likely benign",
                "one strong benign criterion alone reaches no Table 5 benign rule"),
    # PAH, PM2 + PP4 + PP3 asserted Pathogenic: 1 moderate + 2 supporting reaches no Table 5
    # pathogenic rule (4 points); the panel's PP4/PM3 specification is not expressed in the row.
    "PAH PM2, PP4, PP3": ("Uncertain significance", None, "panel-specific weighting not in the listed criteria"),
    # PAH, 2 moderate + 3 supporting asserted Pathogenic: Table 5 Likely pathogenic (v), 7 points.
    "PAH PS3_Supporting, PM3, PM2, PP3, PP4": ("Likely pathogenic", None,
                                               "panel-specific weighting not in the listed criteria"),
}


def _strength(item: str) -> tuple[str, str]:
    code, _, suffix = item.partition("_")
    if code == "BA1":
        return code, "StandAlone"
    return code, SUFFIX[suffix] if suffix else DEFAULT_STRENGTH[code[:3] if code.startswith("PVS") else code[:2]]


def erepo_rows() -> list[dict]:
    if not EREPO.is_file():
        return []
    with gzip.open(EREPO, "rt", encoding="utf-8") as fh:
        rows = [r for r in csv.DictReader(fh, delimiter="\t")
                if r["gene"] == "RS1" or r["expert_panel"] == "Phenylketonuria VCEP"]
    return rows


def _depart_key(row: dict) -> str:
    return f"{row['gene']} {row['criteria_met']}"


EREPO_ROWS = erepo_rows()
need_erepo = pytest.mark.skipif(not EREPO.is_file(),
                                reason="../shared/refdata/clingen_erepo/erepo_dev.tsv.gz (ClinGen) not present")


def _criteria(row: dict) -> list[CriterionResult]:
    out = []
    for item in (x.strip() for x in row["criteria_met"].split(",")):
        if item:
            code, strength = _strength(item)
            out.append(CriterionResult(code, True, strength, f"met by {row['expert_panel']}"))
    return out


def _param(row):
    return pytest.param(row, id=row["clingen_uuid"][:8])


@need_erepo
@pytest.mark.parametrize("row", [_param(r) for r in EREPO_ROWS])
def test_expert_panel_criteria_give_the_panel_class(row):
    want = PANEL_CLASS[row["assertion"]]  # the panel's assertion (ClinGen Evidence Repository)
    cls = combine(_criteria(row), TABLE5)
    depart = PANEL_DEPARTS.get(_depart_key(row))
    if depart is not None:
        table5, point_class, _why = depart
        assert cls.rule_class == table5, (row["variation"], cls)
        if point_class is not None:
            assert point_class == want and cls.point_class == want, (row["variation"], cls)
        return
    assert cls.classification == want, (row["variation"], row["criteria_met"], cls)


@need_erepo
def test_expert_panel_rows_cover_every_class():
    classes = Counter(r["assertion"] for r in EREPO_ROWS)
    assert set(classes) == set(PANEL_CLASS), classes
    assert sum(1 for r in EREPO_ROWS if r["gene"] == "RS1") == 8  # refdata export: 8 RS1 rows
    # every departure listed above is a row of the export (none is stale)
    assert set(PANEL_DEPARTS) <= {_depart_key(r) for r in EREPO_ROWS}


@need_erepo
def test_pvs1_with_a_second_very_strong_criterion_is_pathogenic():
    # Richards 2015 Table 5 Pathogenic (i)(a): 1 Very Strong and >= 1 Strong. PM3 applied at Very
    # Strong is at least Strong, so the PAH panel's PVS1 + PM3_Very Strong + PP4_Moderate row is
    # Pathogenic, as the panel asserted.
    rows = [r for r in EREPO_ROWS if _depart_key(r) == "PAH PP4_Moderate, PVS1, PM3_Very Strong"]
    assert rows and all(r["assertion"] == "Pathogenic" for r in rows)
    for r in rows:
        cls = combine(_criteria(r), TABLE5)
        assert (cls.classification, cls.rule[:18]) == ("Pathogenic", "Pathogenic (i)(a):"), cls


# --------------------------------------------------------------------------------------------
# Part 2: published causal variants, PVS1
# --------------------------------------------------------------------------------------------
# Disease mechanism per gene (from memory of each gene's disease literature; not read from the
# panel): loss of function for all seven.
MECHANISMS = {
    "RPGRIP1": ("AR",), "CLN3": ("AR",), "BBS1": ("AR",), "RGS9BP": ("AR",), "IFT140": ("AR",),
    "PRPF31": ("AD",), "NRL": ("AR", "AD"),
}
# Protein length in amino acids of the MANE Select protein (UniProt canonical; from memory).
PROTEIN_LENGTH = {"RPGRIP1": 1286, "CLN3": 438, "BBS1": 593, "RGS9BP": 235, "IFT140": 1462, "PRPF31": 499}
# NRL is left out of the exon model: the GENCODE-derived row's 3' end lies 1.4 kb from the MANE
# Select 3' end (MANE v1.5 chr14:24,078,662 vs table 24,080,106), so its last junction is not
# known to be MANE's.
NULL = {"stop_gained", "frameshift_variant", "splice_donor_variant", "splice_acceptor_variant",
        "exon_loss_variant", "start_lost"}
NMD_NT = 50  # Abou Tayoun et al. 2018: stop > 50 nt upstream of the last exon-exon junction
MARGIN = 6   # positions this close to the 50-nt line depend on codon phase: left out


def _table() -> dict[str, list[str]]:
    out: dict[str, list[str]] = {}
    if GRCH38_TABLE.is_file():
        with gzip.open(GRCH38_TABLE, "rt") as fh:
            for line in fh:
                f = line.rstrip("\n").split("\t")
                out.setdefault(f[0], f)
    return out


def _exons(row: list[str]) -> list[tuple[int, int]]:
    """1-based inclusive exons in transcript order (table: EXON_START 0-based, EXON_END inclusive)."""
    starts = [int(x) + 1 for x in row[5].strip(",").split(",")]
    ends = [int(x) for x in row[6].strip(",").split(",")]
    ex = sorted(zip(starts, ends))
    return ex if row[2] == "+" else ex[::-1]


def _place(exons, strand, pos):
    """(exon number, transcript nt from pos to the last exon-exon junction) or None if intronic."""
    for i, (b, e) in enumerate(exons):
        if b <= pos <= e:
            if i == len(exons) - 1:
                return i + 1, -1
            rest = (e - pos + 1) if strand == "+" else (pos - b + 1)
            rest += sum(ee - bb + 1 for bb, ee in exons[i + 1:-1])
            return i + 1, rest
    return None


def expected_pvs1(gene: str, term: str, hgvs_p: str, pos3: int, table) -> tuple[object, str]:
    """(expected PVS1 strength, False for not met, or None when not determinable here; exon text)."""
    if term not in NULL:
        return False, ""
    if term not in ("stop_gained", "frameshift_variant") or gene not in PROTEIN_LENGTH or gene not in table:
        return None, ""
    row = table[gene]
    exons = _exons(row)
    hit = _place(exons, row[2], pos3)
    if hit is None:
        return None, ""
    n, to_junction = hit
    p = hgvs_p.split(":", 1)[-1]
    m = re.search(r"p\.\(?[A-Z][a-z]{2}(\d+)", p)
    if not m:
        return None, ""
    aa = int(m.group(1))
    shift = 0
    if term == "frameshift_variant":
        fs = re.search(r"fs(?:Ter|\*)(\d+)", p)
        if not fs:
            return None, ""
        shift = 3 * (int(fs.group(1)) - 1)  # the new stop lies this many nt further 3'
    exon_text = f"{n}/{len(exons)}"
    if to_junction >= 0:
        stop_to_junction = to_junction - shift
        if abs(stop_to_junction - NMD_NT) <= MARGIN or (shift and stop_to_junction < NMD_NT + MARGIN):
            return None, ""  # near the line, or a frameshift whose new stop may escape: not decided here
        if n < len(exons) - 1 or stop_to_junction > NMD_NT:
            return "VeryStrong", exon_text
    removed = (PROTEIN_LENGTH[gene] - aa + 1) / PROTEIN_LENGTH[gene]
    return ("Strong" if removed > 0.10 else "Moderate"), exon_text


def pvs1_cases():
    if not (PHENOPACKETS.is_dir() and GRCH38_TABLE.is_file()):
        return []
    table = _table()
    out, seen = [], set()
    for c in load_cases():
        for v in c.variants:
            key = (v.chrom, v.pos, v.ref, v.alt)
            if key in seen or v.gene not in MECHANISMS:
                continue
            seen.add(key)
            term = consequence_from_hgvs(v.hgvs_c, v.hgvs_p)
            strand = table.get(v.gene, [None, None, "+"])[2]
            pos3 = v.pos + len(v.ref) - 1 if strand == "+" else v.pos
            if len(v.ref) != len(v.alt) and v.ref[:1] == v.alt[:1]:
                pos3 = v.pos + len(v.ref) - 1 if strand == "+" else v.pos + 1  # after the padding base
            want, exon = expected_pvs1(v.gene, term, v.hgvs_p, pos3, table)
            out.append((c.path.name, v, term, want, exon))
    return out


PVS1_CASES = pvs1_cases()
need_cases = pytest.mark.skipif(not (PHENOPACKETS.is_dir() and GRCH38_TABLE.is_file()),
                                reason="../shared/refdata phenopackets or GENCODE-derived GRCh38 table not present")
RULES = load_rules()


def _run(v, term, exon):
    g = Gene(v.gene, "HGNC:0", v.gene, v.hgvs_c.split(":")[0], "", "", "+", Span("1", 1, 2), None,
             MECHANISMS[v.gene], ("LOF",), (), "x")
    p = v.hgvs_p.split(":", 1)[-1]
    m = re.search(r"p\.\(?[A-Z][a-z]{2}(\d+)", p)
    extra = {"Protein_position": f"{m.group(1)}/{PROTEIN_LENGTH[v.gene]}"} if m and v.gene in PROTEIN_LENGTH else {}
    a = Annotation(v.gene, v.hgvs_c.split(":")[0], (term,), v.hgvs_c.split(":", 1)[-1], p, exon=exon,
                   is_mane=True, extra=extra)
    f = Finding("F", Variant(v.chrom, v.pos, v.ref, v.alt), v.gene, a, evidence={"population": None, "build": "GRCh38"})
    return {c.code: c for c in evaluate(f, g, RULES)}


DECIDED = [c for c in PVS1_CASES if c[3] is not None]
UNDECIDED_NULL = [c for c in PVS1_CASES if c[3] is None]


@need_cases
@pytest.mark.parametrize("name,v,term,want,exon", DECIDED,
                         ids=[f"{c[1].gene}:{c[1].hgvs_c.split(':')[-1]}" for c in DECIDED])
def test_pvs1_strength_by_decision_tree(name, v, term, want, exon):
    crit = _run(v, term, exon)
    where = f"{name} {v.hgvs_c} {v.hgvs_p} ({term}, exon {exon or '-'})"
    if want is False:
        assert crit["PVS1"].met is False, (where, crit["PVS1"].reason)
    else:
        assert (crit["PVS1"].met, crit["PVS1"].strength) == (True, want), (where, crit["PVS1"].reason)


@need_cases
@pytest.mark.parametrize("name,v,term,want,exon", UNDECIDED_NULL,
                         ids=[f"{c[1].gene}:{c[1].hgvs_c.split(':')[-1]}" for c in UNDECIDED_NULL])
def test_other_null_variants_meet_pvs1_at_moderate_or_above(name, v, term, want, exon):
    # canonical splice, exon loss and stops near the 50-nt line: every null branch of the
    # Abou Tayoun 2018 tree for a loss-of-function gene ends at Moderate or above (never Supporting
    # for these consequences; initiation codon is the only branch with Supporting).
    crit = _run(v, term, exon)
    assert crit["PVS1"].met is True, (name, v.hgvs_c, crit["PVS1"].reason)
    assert crit["PVS1"].strength in ("VeryStrong", "Strong", "Moderate"), (name, v.hgvs_c, crit["PVS1"].strength)


@need_cases
def test_reference_cases_have_different_expected_outcomes():
    outcomes = Counter(str(c[3]) for c in DECIDED)
    # not-met, Very Strong and at least one NMD-escape strength are all represented
    assert {"False", "VeryStrong"} <= set(outcomes) and ({"Strong", "Moderate"} & set(outcomes)), outcomes
    assert len(DECIDED) >= 60 and UNDECIDED_NULL, (len(DECIDED), len(UNDECIDED_NULL))
