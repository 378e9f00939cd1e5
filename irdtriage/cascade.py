"""The cascade map: which step of seeing each panel gene serves, in plain language.

Data live in panels/cascade.yaml (loaded with the panel by :func:`irdtriage.panel.load_panel`).

- :func:`chain` -- the light-response chain, in order (photon capture ... optic nerve).
- :func:`steps_of_kind` -- recovery, visual-cycle or module steps in file order.
- :func:`step_for` -- the step a gene serves.
- :func:`explain` -- a plain-language paragraph about a gene's step and what breaking it does.
- :func:`genes_by_step` -- step id -> panel genes, every step present, in cascade order.
"""
from __future__ import annotations

from .models import CascadeStep, Panel

KIND_WORDS = {
    "chain": "the light response",
    "recovery": "switching the light response off",
    "visual_cycle": "the visual cycle that regenerates 11-cis-retinal",
    "module": "photoreceptor and retinal upkeep",
}

_INHERITANCE_WORDS = {
    "AR": "autosomal recessive (both copies altered)",
    "AD": "autosomal dominant (one altered copy is enough)",
    "XLR": "X-linked recessive (mainly affects males)",
    "XLD": "X-linked dominant",
    "MT": "mitochondrial (maternal)",
}


def _symbol(panel: Panel, symbol: str) -> str:
    if symbol in panel.genes:
        return symbol
    upper = {s.upper(): s for s in panel.genes}
    try:
        return upper[str(symbol).upper()]
    except KeyError:
        raise KeyError(f"gene {symbol!r} is not on panel {panel.name} {panel.version}") from None


def chain(panel: Panel) -> list[CascadeStep]:
    """Chain steps sorted by their order (1 = photon capture)."""
    steps = [s for s in panel.cascade.values() if s.kind == "chain"]
    return sorted(steps, key=lambda s: (s.order if s.order is not None else 10**6, s.id))


def steps_of_kind(panel: Panel, kind: str) -> list[CascadeStep]:
    """Steps of one kind ("chain", "recovery", "visual_cycle", "module"); chain in order."""
    if kind == "chain":
        return chain(panel)
    return [s for s in panel.cascade.values() if s.kind == kind]


def step_for(panel: Panel, symbol: str) -> CascadeStep:
    """The cascade step or module a panel gene serves (KeyError for unknown genes/steps)."""
    gene = panel.genes[_symbol(panel, symbol)]
    try:
        return panel.cascade[gene.cascade_step]
    except KeyError:
        raise KeyError(f"gene {gene.symbol}: cascade step {gene.cascade_step!r} is not in the cascade map") from None


def genes_by_step(panel: Panel) -> dict[str, list[str]]:
    """Step id -> panel gene symbols (panel order); every step appears, chain first in order."""
    ordered = chain(panel) + [s for s in panel.cascade.values() if s.kind != "chain"]
    out: dict[str, list[str]] = {s.id: [] for s in ordered}
    for sym, g in panel.genes.items():
        out.setdefault(g.cascade_step, []).append(sym)
    return out


def position(panel: Panel, symbol: str) -> str:
    """Where the gene's step sits, e.g. "step 3 of 9 of the light response"."""
    step = step_for(panel, symbol)
    if step.kind == "chain" and step.order is not None:
        return f"step {step.order} of {len(chain(panel))} of {KIND_WORDS['chain']}"
    return f"part of {KIND_WORDS.get(step.kind, step.kind)}"


def explain(panel: Panel, symbol: str) -> str:
    """Plain-language paragraph: what the gene's step does in seeing and what breaking it does."""
    sym = _symbol(panel, symbol)
    gene = panel.genes[sym]
    step = step_for(panel, sym)
    parts = [f"{gene.symbol} ({gene.name}) works at \"{step.title}\", {position(panel, sym)}.", step.text]
    if step.breaks:
        parts.append(f"When this step fails: {step.breaks}")
    if gene.conditions:
        conds = "; ".join(gene.conditions[:3]) + ("; and others" if len(gene.conditions) > 3 else "")
        parts.append(f"{gene.symbol} is linked to {conds}.")
    if gene.inheritance:
        modes = ", ".join(_INHERITANCE_WORDS.get(m, m) for m in gene.inheritance)
        parts.append(f"Inheritance: {modes}.")
    return " ".join(p.strip() for p in parts if p and p.strip())
