"""Small helpers shared by the output writers (pure functions over the result dict)."""
from __future__ import annotations

import re
from typing import Any, Iterable, Optional

from irdtriage import CAUTION, models

STRENGTH_ABBR = {"Supporting": "Sup", "Moderate": "Mod", "Strong": "Str", "VeryStrong": "VStr", "StandAlone": "SA"}

# The strength each code carries when applied at its default level (Richards et al. 2015, Tables 3-4).
DEFAULT_STRENGTH = {
    "PVS1": "VeryStrong", "BA1": "StandAlone",
    **{c: "Strong" for c in ("PS1", "PS2", "PS3", "PS4", "BS1", "BS2", "BS3", "BS4")},
    **{c: "Moderate" for c in ("PM1", "PM2", "PM3", "PM4", "PM5", "PM6")},
    **{c: "Supporting" for c in ("PP1", "PP2", "PP3", "PP4", "PP5",
                                  "BP1", "BP2", "BP3", "BP4", "BP5", "BP6", "BP7")},
}

CLASS_SHORT = {
    "Pathogenic": "P", "Likely pathogenic": "LP", "Uncertain significance": "VUS",
    "Likely benign": "LB", "Benign": "B",
}


def cautions(result: dict) -> list[str]:
    """The result's cautions, always including irdtriage.CAUTION first."""
    out = [CAUTION]
    for c in result.get("cautions") or []:
        if c and c not in out:
            out.append(c)
    return out


def input_limits(result: dict) -> list[str]:
    """The input's limits (``result["input_limits"]``), one line each with its code, for the top of every output."""
    out = []
    for lim in result.get("input_limits") or []:
        if isinstance(lim, dict) and lim.get("message"):
            out.append(f"INPUT LIMIT ({lim.get('code', '?')}): {lim['message']}")
    return out


def phenotype_rank(pm: dict) -> Optional[str]:
    """The gene's place by phenotype match alone: "1–69 of 252" for a tie, "3 of 252" alone; None if absent.
    Reads ``rank_range`` (ties kept); results written before it existed give ``rank`` only."""
    rr = pm.get("rank_range")
    if isinstance(rr, dict) and isinstance(rr.get("from"), int):
        lo, hi, of = rr["from"], rr.get("to") or rr["from"], rr.get("of")
    elif isinstance(pm.get("rank"), int):
        lo = hi = pm["rank"]
        of = pm.get("genes_ranked")
    else:
        return None
    place = f"{lo}–{hi}" if hi > lo else f"{lo}"
    return f"{place} of {of}" if isinstance(of, int) else place


def met_criteria(finding: dict) -> list[dict]:
    return [c for c in finding.get("criteria") or [] if c.get("met") is True]


def criterion_label(c: dict) -> str:
    """Compact form: the code alone at its default strength, else code(Abbr): 'PM2(Sup)'."""
    code = c.get("code", "?")
    s = c.get("strength")
    if not s or s == DEFAULT_STRENGTH.get(code):
        return code
    return f"{code}({STRENGTH_ABBR.get(s, s)})"


def criteria_compact(finding: dict) -> str:
    return " ".join(criterion_label(c) for c in met_criteria(finding)) or "none met"


def findings_by_id(result: dict) -> dict[str, dict]:
    return {f.get("id"): f for f in result.get("findings") or []}


def gene_findings(result: dict, gene: dict) -> list[dict]:
    by_id = findings_by_id(result)
    return [by_id[i] for i in gene.get("findings") or [] if i in by_id]


def cascade_steps(result: dict, cascade_steps: Optional[Iterable[dict]] = None) -> list[dict]:
    """All known cascade steps: the given list, else result['cascade'], plus any step a gene carries."""
    steps: list[dict] = []
    seen: set[str] = set()
    sources: list[Iterable[dict]] = []
    if cascade_steps:
        sources.append(cascade_steps)
    if result.get("cascade"):
        sources.append(result["cascade"])
    sources.append([g.get("cascade_step") for g in result.get("genes") or [] if g.get("cascade_step")])
    for src in sources:
        for s in src:
            if s and s.get("id") and s["id"] not in seen:
                seen.add(s["id"])
                steps.append(dict(s))
    return steps


def chain(steps: list[dict]) -> list[dict]:
    ch = [s for s in steps if s.get("kind") == "chain"]
    return sorted(ch, key=lambda s: (s.get("order") is None, s.get("order") or 0))


def affected_steps(result: dict, top: int = 3) -> dict[str, list[str]]:
    """Step id -> gene symbols, for the top-ranked genes with a qualifying finding."""
    out: dict[str, list[str]] = {}
    for g in (result.get("genes") or [])[:top]:
        st = g.get("cascade_step") or {}
        if st.get("id") and g.get("genotype_fit") != "no qualifying finding":
            out.setdefault(st["id"], []).append(g.get("symbol", "?"))
    return out


_PROT_POS = re.compile(r"p\.\(?[A-Za-z*]{1,3}(\d+)")


def protein_position(finding: dict) -> Optional[int]:
    """First amino-acid position in hgvs_p ('p.(Arg34Ter)', 'p.R34*', 'p.Thr84fs'), else evidence['protein_position']."""
    p = finding.get("hgvs_p") or ""
    m = _PROT_POS.search(p)
    if m:
        return int(m.group(1))
    ev = finding.get("evidence") or {}
    for v in (finding.get("protein_position"), ev.get("protein_position"), ev.get("protein_pos")):
        if isinstance(v, int):
            return v
        if isinstance(v, str) and v.split("-")[0].split("/")[0].isdigit():
            return int(v.split("-")[0].split("/")[0])
    return None


def fmt(v: Any, none: str = "—") -> str:
    if v is None or v == "" or v == []:
        return none
    if isinstance(v, float):
        return f"{v:.3g}"
    if isinstance(v, (list, tuple)):
        return ", ".join(str(x) for x in v)
    return str(v)


# ---------------------------------------------------------------------------
# Display wording shared by the writers (the result keeps the keys; readers see these)
# ---------------------------------------------------------------------------
# Genotype-fit keys (irdtriage.models.GENOTYPE_FITS, the schema enum) -> plain words for readers.
GENOTYPE_FIT_LABELS = models.GENOTYPE_FIT_LABELS


def genotype_fit_label(key: Optional[str]) -> str:
    """Reader-facing label of a genotype-fit key; an unknown key is shown as it is."""
    if not key:
        return "—"
    return GENOTYPE_FIT_LABELS.get(key, str(key))


# Allelic states (irdtriage.models.ZYGOSITIES): full words for prose, short ones for narrow columns.
ZYGOSITY_LABELS = {
    "heterozygous": "heterozygous", "homozygous": "homozygous", "hemizygous": "hemizygous",
    "homoplasmic": "homoplasmic (mtDNA)", "heteroplasmic": "heteroplasmic (mtDNA)",
    "haploid call": "one-allele call where two copies are expected (review)",
    "reference": "reference", "no call": "no call",
}
ZYGOSITY_SHORT = {
    "heterozygous": "het", "homozygous": "hom", "hemizygous": "hemi",
    "homoplasmic": "homoplasmic", "heteroplasmic": "heteroplasmic", "haploid call": "haploid (review)",
    "reference": "ref", "no call": "no call",
}


def zygosity_label(z: Optional[str], short: bool = False, fraction: Optional[float] = None) -> str:
    """Label of an allelic state; a mitochondrial state carries its heteroplasmy level (share of
    reads with the allele) when ``fraction`` is given."""
    if not z:
        return "—"
    label = (ZYGOSITY_SHORT if short else ZYGOSITY_LABELS).get(z, str(z))
    if z in ("homoplasmic", "heteroplasmic") and isinstance(fraction, (int, float)):
        label += f" {100 * fraction:.0f} %" if short else f", {100 * fraction:.0f} % of reads"
    return label


# Provenance markers kept in the curated data (and shown by `irdtriage panel show`) but not in
# report prose: "(from memory)", "(both from memory)", "...; from memory)", "(common practice)".
_PROV_WORDS = r"(?:(?:both|all|each)\s+)?(?:from\s+memory|common\s+practice)"
_PROV_ALONE = re.compile(r"\s*\(\s*" + _PROV_WORDS + r"\s*\)")
_PROV_TAIL = re.compile(r"\s*[;,]\s*" + _PROV_WORDS + r"\s*(?=\))")
_PROV_HEAD = re.compile(r"(?<=\()\s*" + _PROV_WORDS + r"\s*[;:,]\s*")
_PROV_CLAUSE = re.compile(r",\s*" + _PROV_WORDS + r"(?=\s*[.;)]|\s*$)")
# Curation notes about how coordinates were derived: useful to curators, not to a report reader.
_CURATION_NOTE = re.compile(r"^\s*GRCh3[78] span\b")


def strip_provenance(text: Optional[str]) -> str:
    """``text`` without provenance markers ("from memory", "common practice"), spacing tidied."""
    if not text:
        return ""
    t = _PROV_ALONE.sub("", str(text))
    t = _PROV_TAIL.sub("", t)
    t = _PROV_HEAD.sub("", t)
    t = _PROV_CLAUSE.sub("", t)
    t = re.sub(r"\s+([.,;:)])", r"\1", t)
    return " ".join(t.split())


def prose_notes(notes: Optional[Iterable[str]]) -> list[str]:
    """Curated gene notes as report prose: provenance markers stripped, curation-only notes dropped.

    The one place every writer (HTML, terminal) turns ``genes[].notes`` into reader text; the
    notes in result.json and ``irdtriage panel show`` keep their provenance."""
    out = []
    for n in notes or []:
        if not n or _CURATION_NOTE.match(str(n)):
            continue
        t = strip_provenance(n)
        if t:
            out.append(t)
    return out


def _same_family(transcript: str, protein: str) -> bool:
    return ((transcript.startswith(("NM_", "XM_")) and protein.startswith(("NP_", "XP_")))
            or (transcript.startswith("ENST") and protein.startswith("ENSP")))


def hgvs_pair(finding: dict, gene: Optional[dict] = None) -> tuple[Optional[str], Optional[str]]:
    """HGVS c. and p. expressions written on one transcript/protein pair, or None for either.

    - The finding's transcript with the protein the annotation paired with it
      (``protein_accession``: RefSeq NM_ with NP_, Ensembl ENST with ENSP).
    - The gene's MANE Select Ensembl transcript (same version) without an ENSP: written on the
      gene's MANE Select RefSeq pair instead (NM_/NP_), since a MANE Select Ensembl and RefSeq
      transcript pair have the same sequence (MANE project definition; from memory).
    - The gene's MANE Select RefSeq transcript (same version): its MANE RefSeq protein.
    - Otherwise c. on the finding's transcript and no p. (never a p. on an unrelated protein).
    A value that already carries an accession (``NM_x:c.1A>G``) is kept as it is."""
    g = gene or {}
    c, p = finding.get("hgvs_c") or None, finding.get("hgvs_p") or None
    tx = finding.get("transcript") or ""
    prot = finding.get("protein_accession") or ""
    mane_nm, mane_np, mane_enst = g.get("transcript") or "", g.get("refseq_protein") or "", g.get("ensembl_transcript") or ""
    if c and ":" in c:
        return c, (p if p and ":" in p else None)
    if not (tx and prot and _same_family(tx, prot)):
        if tx and tx == mane_enst and mane_nm and mane_np:
            tx, prot = mane_nm, mane_np
        elif tx and tx == mane_nm and mane_np:
            prot = mane_np
        else:
            prot = ""
    c_expr = f"{tx}:{c}" if c and tx else None
    p_expr = f"{prot}:{p}" if p and prot and (c_expr or not c) else None
    return c_expr, p_expr


def structural_facts(finding: dict) -> list[tuple[str, str]]:
    """(label, text) lines for a copy-number/structural finding (``finding["structural"]``); [] for
    a small variant.  Every writer shows the event, the Riggs 2020 points and the confirmation step."""
    s = finding.get("structural") or {}
    if not s:
        return []
    out = [("Structural event", s.get("summary") or f"{s.get('type')} {s.get('start')}-{s.get('end')}")]
    if s.get("copy_number") is not None:
        out.append(("Copy number", str(s["copy_number"])))
    r = s.get("riggs") or {}
    if r:
        secs = "; ".join(f"{x['section']} {x['points']:+.2f}" for x in r.get("sections") or [] if x.get("points"))
        out.append(("CNV points (Riggs 2020, second opinion)",
                    f"{r.get('total', 0):+.2f} ({r.get('classification')})" + (f": {secs}" if secs else "")))
    if s.get("next_step"):
        out.append(("Next step", s["next_step"]))
    return out
