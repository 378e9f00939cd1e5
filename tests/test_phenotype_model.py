"""The precomputed phenotype model gives exactly what the full HPO in hpo3 gives.

Source for every expectation: the Human Phenotype Ontology release, its ``omim`` information
content and its gene annotations as shipped in the hpo3 library, read directly through pyhpo
(irdtriage.phenotype_hpo3, the reference implementation). Profiles: the GA4GH
phenopacket-store cases in ../shared/refdata/phenopackets (Monarch Initiative, BSD-3-Clause;
skipped when absent) and random term sets drawn from the ontology itself.
"""
from __future__ import annotations

import random
from pathlib import Path

import numpy as np
import pytest

from irdtriage.models import PhenotypeProfile
from irdtriage.panel import load_panel
from irdtriage.phenotype import (
    PhenotypeMatcher, get_ontology, phenotype_ranks, pp4, resolve_terms, retinal_fit, term_labels, term_names,
)
from irdtriage.phenotype_hpo3 import (
    Hpo3PhenotypeMatcher, resolve_terms_hpo3, retinal_fit_hpo3, term_names_hpo3,
)
from irdtriage.phenotype_model import SHIPPED, PhenotypeModel, build_shipped_arrays, get_model, hpo3_version

PHENOPACKETS = Path(__file__).resolve().parents[1].parent / "shared" / "refdata" / "phenopackets"
# Panel genes plus genes outside the retina and a symbol HPO does not annotate (so the null pool
# is computed, not read from the matrix stored for the bundled panel; both are compared below).
GENES = list(load_panel(None).genes) + ["PKD1", "COL2A1", "FBN1", "NOT_A_GENE"]


@pytest.fixture(scope="module")
def ont():
    return get_ontology()


@pytest.fixture(scope="module")
def pair():
    return PhenotypeMatcher(GENES), Hpo3PhenotypeMatcher(GENES)


def _same(model_m, ref_m, profile):
    got, want = model_m.match(profile), ref_m.match(profile)
    assert list(got) == list(want)
    for sym in want:
        g, w = got[sym], want[sym]
        assert g == w, sym  # score, calibrated, matched terms (MICA, IC, labels), conflicts, summary
        assert (g.z, g.gene_percentile) == (w.z, w.gene_percentile), sym
        assert pp4(g, sym, got) == pp4(w, sym, want), sym
    assert phenotype_ranks(got) == phenotype_ranks(want)
    assert retinal_fit(profile) == retinal_fit_hpo3(profile)
    return got


def test_shipped_model_is_what_the_installed_hpo3_builds():
    # Rebuilding from the installed hpo3 must give the shipped file byte for byte (array by array),
    # so the shipped model cannot go stale for the hpo3 release it names. With another hpo3 release
    # installed the tool builds its model on first use instead (tested below), so this check skips.
    shipped = PhenotypeModel.load(SHIPPED)
    if shipped.hpo3_version != hpo3_version():
        pytest.skip(f"shipped model is for hpo3 {shipped.hpo3_version}, installed is {hpo3_version()}: "
                    f"rebuild with scripts/build_phenotype_model.py")
    fresh = build_shipped_arrays()
    assert sorted(fresh) == sorted(shipped.arrays)
    for k, v in fresh.items():
        assert v.dtype == shipped.arrays[k].dtype and np.array_equal(v, shipped.arrays[k]), k


def test_terms_match_hpo3(ont):
    m = get_model()
    assert m.version == str(ont.version())
    terms = list(ont)
    assert len(m) == len(terms)
    for t in terms:
        i = m.index(t.id)
        assert m.term_id(i) == t.id and m.name(i) == t.name
        assert m.ic[i] == t.information_content.omim
        assert bool(m.obsolete[i]) == bool(t.is_obsolete)
        if t.is_obsolete:
            assert m.replaced_by(i) == (t.replaced_by or None)
        assert {m.term_id(a) for a in m.ancestors(i)} == {t.id} | {p.id for p in t.all_parents}


def test_resolve_terms_and_labels_match_hpo3(ont):
    # obsolete (with and without replacement), unknown, short-form and duplicate IDs
    obsolete = [t.id for t in ont if t.is_obsolete]
    ids = obsolete + ["HP:9999999", "HP:0000000", "HP:510", "HP:0000510", "HP:0000510", "HP:00005100"]
    ids += [t.id for t in random.Random(7).sample(list(ont), 300)]
    assert resolve_terms(ids) == resolve_terms_hpo3(ids)
    assert term_names(ids) == term_names_hpo3(ids)
    assert term_labels(ids) == {k: v.removeprefix("obsolete ") if v.lower().startswith("obsolete ") else v
                                for k, v in term_names_hpo3(ids).items()}


def test_random_eye_and_whole_ontology_profiles(pair, ont):
    model_m, ref_m = pair
    assert model_m.unannotated == ref_m.unannotated and "NOT_A_GENE" in ref_m.unannotated
    rng = random.Random(20250101)
    assert np.array_equal(model_m._pool(), ref_m._pool())  # the null pool: genes x eye terms, best IC
    panel_only = PhenotypeMatcher(load_panel(None).genes)  # the bundled panel's genes: the stored matrix
    assert model_m.model.stored_pool_best(panel_only.genes) is not None
    assert np.array_equal(panel_only._pool(), ref_m._pool()[[ref_m.genes.index(g) for g in panel_only.genes]])
    eye = model_m.pool_terms
    assert eye == ref_m.pool_terms
    live = [t.id for t in ont if not t.is_obsolete]
    for n in range(40):
        size = 1 + n % 9
        src = eye if n % 2 else live
        present = tuple(rng.sample(src, size))
        excluded = tuple(rng.sample(eye, n % 3))
        _same(model_m, ref_m, PhenotypeProfile(present=present, excluded=excluded))


@pytest.mark.skipif(not PHENOPACKETS.is_dir(),
                    reason="../shared/refdata/phenopackets (phenopacket-store cases) not present")
def test_phenopacket_store_cases(pair):
    from irdtriage.phenopacket_in import read_phenopacket

    model_m, ref_m = pair
    files = sorted(PHENOPACKETS.glob("*/*.json"))
    assert files
    compared = 0
    for f in files:
        p = read_phenopacket(f, validate_terms=False)
        present, ch1 = resolve_terms(p.present)
        excluded, ch2 = resolve_terms(p.excluded)
        assert (present, ch1) == resolve_terms_hpo3(p.present), f.name
        assert (excluded, ch2) == resolve_terms_hpo3(p.excluded), f.name
        if not present:
            continue
        prof = PhenotypeProfile(present=tuple(present), excluded=tuple(excluded), labels=p.labels)
        _same(model_m, ref_m, prof)
        compared += 1
    assert compared > 100


def test_built_on_first_use_into_the_user_cache(tmp_path, monkeypatch):
    # Without a usable shipped file the model is built from the installed hpo3 into
    # $IRDTRIAGE_CACHE (written atomically: no partial file left) and read from there next time.
    import irdtriage.phenotype_model as pm

    monkeypatch.setattr(pm, "SHIPPED", tmp_path / "absent.npz")
    monkeypatch.setenv("IRDTRIAGE_CACHE", str(tmp_path / "cache"))
    built = pm._locate()
    files = sorted(p.name for p in (tmp_path / "cache").iterdir() if p.is_file())  # (yaml/: parsed panel files)
    assert files == [f"phenotype_model-hpo3-{hpo3_version()}-f{pm.FORMAT}.npz"]
    again = pm._locate()
    shipped = PhenotypeModel.load(SHIPPED)
    for k in shipped.arrays:
        assert np.array_equal(built.arrays[k], shipped.arrays[k]) and np.array_equal(again.arrays[k], built.arrays[k])
