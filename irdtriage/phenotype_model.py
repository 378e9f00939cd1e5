"""The phenotype model: the part of the HPO the phenotype match needs, precomputed.

Loading the whole ontology through ``hpo3`` costs about 1.5 s and 200 MB per process. The
matcher, term resolution, labels and the retinal-fit check only need, for every HPO term, its
ID, name, information content (``omim``, as used by :mod:`irdtriage.phenotype`), its
ancestors-or-self, whether it is obsolete and its replacement; for every gene its annotated
terms (directly, and propagated to ancestors as ``hpo3`` does); and the pool of eye terms the
null calibration draws from, with its random draws for small queries and, for the bundled
panel's genes, the pool's best-IC matrix (the null's one expensive step). :func:`build`
extracts exactly that from the installed ``hpo3`` into one NumPy ``.npz`` file (plain arrays,
uncompressed so it loads in milliseconds, read with ``allow_pickle=False``; about 4.8 MB).

Where the model comes from (:func:`get_model`):

1. the file shipped in the package (``irdtriage/data/phenotype_model.npz``, made by
   ``scripts/build_phenotype_model.py``; a test rebuilds it from the installed ``hpo3`` and
   requires an identical result, so it cannot go stale unnoticed), when it was built from the
   installed ``hpo3`` version;
2. otherwise a model built on first use from the installed ``hpo3`` and kept in the per-user
   cache (``$IRDTRIAGE_CACHE``, else ``$XDG_CACHE_HOME/irdtriage``, else
   ``~/.cache/irdtriage``), named by the ``hpo3`` version and written atomically.

The model holds every gene ``hpo3`` annotates, not only one panel's genes, so any panel or
``--genes`` subset uses the same file; the per-panel work (gene x term matrix, the null) is
done in memory by :class:`irdtriage.phenotype.PhenotypeMatcher`.

``hpo3`` exposes no alternative IDs or "consider" terms: an ID it does not know is reported as
unknown by :func:`irdtriage.phenotype.resolve_terms`, and the model behaves the same way.
"""
from __future__ import annotations

import json
import os
import re
from functools import cached_property
from importlib import metadata
from pathlib import Path
from typing import Optional, Union

import numpy as np

from .cache import cache_dir  # noqa: F401  (re-exported: the model is cached there)

FORMAT = 3
EYE_ROOT = "HP:0000478"  # Abnormality of the eye: the null pool (see irdtriage.phenotype)
SHIPPED = Path(__file__).with_name("data") / "phenotype_model.npz"
_ID = re.compile(r"^HP:(\d+)$")

# array names in the file (all plain numeric or byte arrays)
_ARRAYS = ("meta", "term_num", "name_blob", "name_off", "ic", "anc_ptr", "anc_idx", "obsolete", "replaced_by",
           "gene_blob", "gene_off", "direct_ptr", "direct_idx", "prop_ptr", "prop_idx", "pool", "null_draws",
           "panel_blob", "panel_off", "pool_best_ic", "pool_best_code")
# The null's random draws for query sizes 1..NULL_DRAW_SIZES are stored (they depend only on the
# pool size and the fixed seed); larger queries draw them at run time.
NULL_DRAW_SIZES = 12


def hpo3_version() -> str:
    """Version of the installed ``hpo3`` (read from package metadata; pyhpo is not imported)."""
    try:
        return metadata.version("hpo3")
    except metadata.PackageNotFoundError:
        return ""


def _blob(strings: list[str]) -> tuple[np.ndarray, np.ndarray]:
    enc = [s.encode("utf-8") for s in strings]
    off = np.zeros(len(enc) + 1, dtype=np.int32)
    off[1:] = np.cumsum([len(b) for b in enc])
    return np.frombuffer(b"".join(enc), dtype=np.uint8).copy(), off


def _unblob(blob: np.ndarray, off: np.ndarray) -> list[str]:
    raw = blob.tobytes()
    o = off.tolist()
    return [raw[o[i]:o[i + 1]].decode("utf-8") for i in range(len(o) - 1)]


def _csr(rows: list[list[int]], dtype) -> tuple[np.ndarray, np.ndarray]:
    ptr = np.zeros(len(rows) + 1, dtype=np.int32)
    ptr[1:] = np.cumsum([len(r) for r in rows])
    flat = np.fromiter((x for r in rows for x in r), dtype=dtype, count=int(ptr[-1]))
    return ptr, flat


def build_arrays() -> dict[str, np.ndarray]:
    """Extract the model from the installed ``hpo3`` (the reference; imports pyhpo, a few seconds)."""
    import pyhpo
    from pyhpo import Ontology

    Ontology()
    terms = sorted(Ontology, key=lambda t: int(t.id[3:]))
    index = {t.id: i for i, t in enumerate(terms)}
    anc_rows = [sorted({index[t.id]} | {index[p.id] for p in t.all_parents}) for t in terms]
    repl = []
    for t in terms:
        r = t.replaced_by if t.is_obsolete else None
        repl.append(int(r[3:]) if r else -1)
    # Genes by symbol, as the matcher looks them up: direct annotations of every gene with the
    # symbol (hpo3 has a few genes without a symbol, all named "-"; their order in hpo3 is not
    # fixed, so the union keeps the model deterministic), propagated annotations from every
    # term's gene set (term.genes).
    by_name: dict[str, set[int]] = {}
    for g in Ontology.genes:
        by_name.setdefault(g.name, set()).update(int(h) for h in g.hpo)
    names = sorted(by_name)
    gidx = {s: i for i, s in enumerate(names)}
    prop: list[set[int]] = [set() for _ in names]
    for i, t in enumerate(terms):
        for g in t.genes:
            prop[gidx[g.name]].add(i)
    direct = [sorted(index[f"HP:{h:07d}"] for h in by_name[s]) for s in names]
    eye = Ontology.get_hpo_object(EYE_ROOT)
    pool = sorted(t.id for t in terms if (not t.is_obsolete) and t.omim_diseases and (t == eye or t.child_of(eye)))
    from .phenotype import NULL_SAMPLES, NULL_SEED, null_draws

    draws = [null_draws(len(pool), k).astype(np.int16) for k in range(1, NULL_DRAW_SIZES + 1)]
    meta = {"format": FORMAT, "hpo_release": str(Ontology.version()),
            "null_samples": NULL_SAMPLES, "null_seed": NULL_SEED, "null_draw_sizes": NULL_DRAW_SIZES,
            "hpo3_version": hpo3_version() or getattr(pyhpo, "__version__", ""),
            "source": "HPO ontology, information content (omim) and gene annotations as shipped in hpo3"}
    name_blob, name_off = _blob([t.name for t in terms])
    gene_blob, gene_off = _blob(names)
    if len(terms) >= 2**15:
        raise ValueError(f"{len(terms)} HPO terms: more than the model's 16-bit term rows hold")
    anc_ptr, anc_idx = _csr(anc_rows, np.int16)
    direct_ptr, direct_idx = _csr(direct, np.int16)
    prop_ptr, prop_idx = _csr([sorted(p) for p in prop], np.int16)
    return {
        "meta": np.frombuffer(json.dumps(meta, sort_keys=True).encode(), dtype=np.uint8).copy(),
        "term_num": np.array([int(t.id[3:]) for t in terms], dtype=np.int32),
        "name_blob": name_blob, "name_off": name_off,
        "ic": np.array([float(t.information_content.omim) for t in terms], dtype=np.float64),
        "anc_ptr": anc_ptr, "anc_idx": anc_idx,
        "obsolete": np.array([bool(t.is_obsolete) for t in terms], dtype=bool),
        "replaced_by": np.array(repl, dtype=np.int32),
        "gene_blob": gene_blob, "gene_off": gene_off,
        "direct_ptr": direct_ptr, "direct_idx": direct_idx,
        "prop_ptr": prop_ptr, "prop_idx": prop_idx,
        "pool": np.array([index[p] for p in pool], dtype=np.int32),
        "null_draws": np.concatenate([d.ravel() for d in draws]),
        **_empty_panel_pool(),
    }


def add_panel_pool(arrays: dict[str, np.ndarray], genes: list[str]) -> dict[str, np.ndarray]:
    """Store the null pool's best-IC matrix (genes x pool terms) for ``genes`` (the bundled
    panel's): as int16 codes into the sorted distinct IC values, so it stays small and exact."""
    from .phenotype import PhenotypeMatcher

    base = {k: v for k, v in arrays.items() if not k.startswith(("panel_", "pool_best_"))}
    base.update(_empty_panel_pool())
    best = PhenotypeMatcher(genes, model=PhenotypeModel(base))._pool()
    values = np.unique(best)
    codes = np.searchsorted(values, best).astype(np.int16)
    blob, off = _blob(list(genes))
    return {**base, "panel_blob": blob, "panel_off": off, "pool_best_ic": values, "pool_best_code": codes}


def _empty_panel_pool() -> dict[str, np.ndarray]:
    return {"panel_blob": np.zeros(0, dtype=np.uint8), "panel_off": np.zeros(1, dtype=np.int32),
            "pool_best_ic": np.zeros(0), "pool_best_code": np.zeros((0, 0), dtype=np.int16)}


def build_shipped_arrays() -> dict[str, np.ndarray]:
    """The shipped model: :func:`build_arrays` plus the null pool for the bundled panel's genes."""
    from .panel import load_panel

    return add_panel_pool(build_arrays(), list(load_panel(None).genes))


def write(arrays: dict[str, np.ndarray], target: Union[str, Path]) -> None:
    """Write the arrays as a compressed .npz atomically (temporary file renamed over the target)."""
    from .atomic import atomic_path

    with atomic_path(target) as tmp:
        with open(tmp, "wb") as fh:
            np.savez(fh, **arrays)


def build(target: Union[str, Path]) -> "PhenotypeModel":
    """Build the shipped model from the installed hpo3 into ``target`` and return it."""
    arrays = build_shipped_arrays()
    write(arrays, target)
    return PhenotypeModel(arrays)


def read_arrays(path: Union[str, Path]) -> dict[str, np.ndarray]:
    with np.load(path, allow_pickle=False) as z:
        return {k: z[k] for k in _ARRAYS}


class PhenotypeModel:
    """Read-only view of the model arrays (see the module doc)."""

    def __init__(self, arrays: dict[str, np.ndarray]):
        self.arrays = arrays
        self.meta = json.loads(arrays["meta"].tobytes().decode())
        self.ic: np.ndarray = arrays["ic"]
        self.obsolete: np.ndarray = arrays["obsolete"]
        self._num = self.term_nums = arrays["term_num"]
        self._anc_ptr = arrays["anc_ptr"]
        self._anc_idx = arrays["anc_idx"]
        self._index = dict(zip(self._num.tolist(), range(len(self._num))))
        self.pool: np.ndarray = arrays["pool"]

    @classmethod
    def load(cls, path: Union[str, Path]) -> "PhenotypeModel":
        return cls(read_arrays(path))

    @property
    def version(self) -> str:
        """The HPO release the model was built from."""
        return self.meta["hpo_release"]

    @property
    def hpo3_version(self) -> str:
        return self.meta["hpo3_version"]

    def __len__(self) -> int:
        return len(self._num)

    # ---- terms ------------------------------------------------------------------------
    def index(self, tid) -> Optional[int]:
        """Row of an HPO ID (``HP:`` followed by digits, as hpo3 accepts it) or None."""
        if isinstance(tid, (int, np.integer)):
            return self._index.get(int(tid))
        m = _ID.match(str(tid))
        return self._index.get(int(m.group(1))) if m else None

    def term_id(self, i: int) -> str:
        return f"HP:{int(self._num[i]):07d}"

    @cached_property
    def _name_raw(self) -> tuple[bytes, list[int]]:
        return self.arrays["name_blob"].tobytes(), self.arrays["name_off"].tolist()

    def name(self, i: int) -> str:
        raw, off = self._name_raw  # decoded one name at a time: a case needs few of them
        return raw[off[i]:off[i + 1]].decode("utf-8")

    def ancestors(self, i: int) -> np.ndarray:
        """Rows of the term's ancestors and the term itself (sorted)."""
        return self._anc_idx[self._anc_ptr[i]:self._anc_ptr[i + 1]]

    def is_under(self, i: int, root: int) -> bool:
        a = self.ancestors(i)
        k = np.searchsorted(a, root)
        return bool(k < a.size and a[k] == root)

    def replaced_by(self, i: int) -> Optional[str]:
        r = int(self.arrays["replaced_by"][i])
        return None if r < 0 else f"HP:{r:07d}"

    def null_draws(self, size: int) -> Optional[np.ndarray]:
        """Stored null draws for a query of ``size`` terms (see irdtriage.phenotype.null_draws),
        or None when not stored or drawn with other settings than the matcher's."""
        from .phenotype import NULL_SAMPLES, NULL_SEED

        meta = self.meta
        n = meta.get("null_draw_sizes", 0)
        if not 1 <= size <= n or meta.get("null_samples") != NULL_SAMPLES or meta.get("null_seed") != NULL_SEED:
            return None
        k = min(size, self.pool.size)
        start = NULL_SAMPLES * sum(min(j, self.pool.size) for j in range(1, size))
        flat = self.arrays["null_draws"][start:start + NULL_SAMPLES * k]
        return flat.reshape(NULL_SAMPLES, k).astype(np.int64)

    def stored_pool_best(self, symbols: list[str]) -> Optional[np.ndarray]:
        """The null pool's best-IC matrix for these genes when every one of them is stored
        (the bundled panel's genes; see :func:`add_panel_pool`), else None."""
        a = self.arrays
        if a["pool_best_code"].size == 0:
            return None
        rows = self._panel_rows
        if any(s not in rows for s in symbols):
            return None
        return a["pool_best_ic"][a["pool_best_code"][[rows[s] for s in symbols]]]

    @cached_property
    def _panel_rows(self) -> dict[str, int]:
        return {s: i for i, s in enumerate(_unblob(self.arrays["panel_blob"], self.arrays["panel_off"]))}

    # ---- genes ------------------------------------------------------------------------
    @cached_property
    def _genes(self) -> dict[str, int]:
        return {s: i for i, s in enumerate(_unblob(self.arrays["gene_blob"], self.arrays["gene_off"]))}

    def has_gene(self, symbol: str) -> bool:
        return symbol in self._genes

    def direct_terms(self, symbol: str) -> frozenset[int]:
        """Numeric HPO IDs annotated directly to the gene (empty when unannotated)."""
        g = self._genes.get(symbol)
        if g is None:
            return frozenset()
        p = self.arrays["direct_ptr"]
        return frozenset(self._num[self.arrays["direct_idx"][p[g]:p[g + 1]]].tolist())

    def term_gene_matrix(self, symbols: list[str]) -> np.ndarray:
        """Boolean terms x genes: gene annotated with the term or a descendant (hpo3 ``term.genes``)."""
        m = np.zeros((len(self), len(symbols)), dtype=bool)
        p = self.arrays["prop_ptr"]
        idx = self.arrays["prop_idx"]
        for c, s in enumerate(symbols):
            g = self._genes.get(s)
            if g is not None:
                m[idx[p[g]:p[g + 1]], c] = True
        return m


_MODEL: Optional[PhenotypeModel] = None


def get_model() -> PhenotypeModel:
    """The phenotype model of this process, loaded once (shipped file, else per-user cache, else built)."""
    global _MODEL
    if _MODEL is None:
        _MODEL = _locate()
    return _MODEL


def _locate() -> PhenotypeModel:
    installed = hpo3_version()
    if SHIPPED.is_file():
        model = PhenotypeModel.load(SHIPPED)
        if model.hpo3_version == installed and model.meta.get("format") == FORMAT:
            return model
    cached = cache_dir() / f"phenotype_model-hpo3-{installed or 'unknown'}-f{FORMAT}.npz"
    if cached.is_file():
        try:
            model = PhenotypeModel.load(cached)
            if model.hpo3_version == installed and model.meta.get("format") == FORMAT:
                return model
        except (OSError, ValueError, KeyError):
            pass  # unreadable or partial: rebuilt below
    arrays = build_shipped_arrays()
    try:
        write(arrays, cached)
    except OSError:
        pass  # no writable cache: use the model built in memory for this process
    return PhenotypeModel(arrays)
