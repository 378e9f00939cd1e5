"""The phenotype match computed directly on the full HPO loaded through ``hpo3``.

This is the reference implementation: :mod:`irdtriage.phenotype` reads the precomputed
:mod:`irdtriage.phenotype_model` instead, and tests/test_phenotype_model.py requires both to
give identical scores, ranks, PP4 results, term changes, labels and retinal fit. It loads the
whole ontology (about 1.5 s and 200 MB), so triage never uses it.
"""
from __future__ import annotations

from typing import Any, Iterable

import numpy as np

from irdtriage.models import PhenotypeProfile
from irdtriage.phenotype import (
    EYE_ROOT, RETINA_ROOT, VISION_ROOT, PhenotypeMatcher, _plain_name, _TermInfo, get_ontology, retinal_fit_from,
)


def _term(tid: str):
    return get_ontology().get_hpo_object(tid)


class Hpo3PhenotypeMatcher(PhenotypeMatcher):
    """:class:`~irdtriage.phenotype.PhenotypeMatcher` with its ontology look-ups done in hpo3."""

    def __init__(self, panel_genes: Iterable[str]):
        ont = get_ontology()
        wanted = list(dict.fromkeys(panel_genes))
        by_name: dict[str, set[int]] = {}
        for g in ont.genes:  # direct annotations of every gene with the symbol (as the model)
            by_name.setdefault(g.name, set()).update(int(h) for h in g.hpo)
        self.model = None
        self.genes = wanted
        self.unannotated = [s for s in wanted if s not in by_name]
        self._gene_terms = [frozenset(by_name.get(s, ())) for s in wanted]
        self._init_caches()

    def term_info(self, tid: str) -> _TermInfo:
        info = self._info.get(tid)
        if info is None:
            t = _term(tid)
            lineage = [(t.information_content.omim, t.id, t.name)]
            lineage += [(p.information_content.omim, p.id, p.name) for p in t.all_parents]
            lineage.sort(key=lambda x: (-x[0], x[1]))
            info = _TermInfo(t.id, t.name, t.information_content.omim, tuple(lineage))
            self._info[tid] = info
        return info

    def _genes_with(self, tid: str) -> np.ndarray:
        v = self._has.get(tid)
        if v is None:
            v = np.zeros(len(self.genes), dtype=bool)
            for g in _term(tid).genes:
                i = self._index.get(g.name)
                if i is not None:
                    v[i] = True
            self._has[tid] = v
        return v

    def _best(self, tid: str) -> tuple[np.ndarray, np.ndarray]:
        info = self.term_info(tid)
        n = len(self.genes)
        best = np.zeros(n)
        which = np.full(n, -1)
        open_ = np.ones(n, dtype=bool)
        for k, (ic, aid, _name) in enumerate(info.lineage):
            hit = open_ & self._genes_with(aid)
            if hit.any():
                best[hit] = ic
                which[hit] = k
                open_ &= ~hit
                if not open_.any():
                    break
        return best, which

    def _pool(self) -> np.ndarray:
        if self._pool_best is None:
            ont = get_ontology()
            eye = _term(EYE_ROOT)
            pool = sorted(
                t.id for t in ont if (not t.is_obsolete) and t.omim_diseases and (t == eye or t.child_of(eye))
            )
            self.pool_terms = pool
            self._pool_best = np.column_stack([self._best(t)[0] for t in pool])
        return self._pool_best

    def retinal_fit(self, profile: PhenotypeProfile) -> tuple[bool, float, str]:
        return retinal_fit_hpo3(profile)


def resolve_terms_hpo3(ids: Iterable[str]) -> tuple[list[str], list[dict[str, Any]]]:
    """:func:`irdtriage.phenotype.resolve_terms` on hpo3."""
    ont = get_ontology()
    version = ont.version()
    kept: list[str] = []
    changes: list[dict[str, Any]] = []
    for tid in ids:
        try:
            term = ont.get_hpo_object(tid)
        except (RuntimeError, KeyError, ValueError):
            changes.append({"id": tid, "label": "", "action": "dropped", "replaced_by": None,
                            "replaced_by_label": None,
                            "reason": f"not in the bundled HPO release {version} (newer than the release, or mistyped)"})
            continue
        new = term.id
        if term.is_obsolete:
            repl = term.replaced_by
            if not repl:
                changes.append({"id": tid, "label": _plain_name(term.name), "action": "dropped",
                                "replaced_by": None, "replaced_by_label": None,
                                "reason": f"obsolete in HPO {version} with no replacement term"})
                continue
            new = repl
            changes.append({"id": tid, "label": _plain_name(term.name), "action": "replaced", "replaced_by": repl,
                            "replaced_by_label": ont.get_hpo_object(repl).name,
                            "reason": f"obsolete in HPO {version}"})
        if new not in kept:
            kept.append(new)
    return kept, changes


def term_names_hpo3(ids: Iterable[str]) -> dict[str, str]:
    """:func:`irdtriage.phenotype.term_names` on hpo3."""
    ont = get_ontology()
    out: dict[str, str] = {}
    for tid in ids:
        try:
            out[tid] = ont.get_hpo_object(tid).name
        except (RuntimeError, KeyError, ValueError):
            continue
    return out


def _under(tid: str, root: str) -> bool:
    t = _term(tid)
    r = _term(root)
    return t == r or t.child_of(r)


def retinal_fit_hpo3(profile: PhenotypeProfile) -> tuple[bool, float, str]:
    """:func:`irdtriage.phenotype.retinal_fit` on hpo3."""
    def facts(tid: str):
        t = _term(tid)
        return (t.information_content.omim, t.name, _under(tid, EYE_ROOT) or _under(tid, VISION_ROOT),
                _under(tid, RETINA_ROOT) or _under(tid, VISION_ROOT))

    return retinal_fit_from(profile, facts)
