"""Cascade map: chain order, gene-to-step mapping, plain-language explanations.

The expected order and step assignments are textbook physiology of vertebrate
phototransduction and the retinoid cycle (common practice / textbook; e.g. the sequence
in docs/standards: opsin + 11-cis-retinal -> transducin -> PDE6 -> CNG channels close ->
hyperpolarisation -> less glutamate -> ON-bipolar -> ganglion cells -> optic nerve).
"""
from __future__ import annotations

import re

import pytest

from irdtriage.cascade import chain, explain, genes_by_step, position, step_for, steps_of_kind
from irdtriage.panel import load_panel


@pytest.fixture(scope="module")
def panel():
    return load_panel()


def test_chain_order_is_textbook_order(panel):
    # common practice / textbook: the order of the rod light response
    assert [s.id for s in chain(panel)] == [
        "photon_capture",
        "transducin",
        "pde6_effector",
        "cng_channels",
        "hyperpolarisation",
        "ribbon_synapse",
        "on_bipolar",
        "ganglion_cells",
        "optic_nerve",
    ]
    assert [s.order for s in chain(panel)] == list(range(1, 10))
    assert "PDE6 hydrolyses cGMP" in panel.cascade["pde6_effector"].title


def test_hyperpolarisation_step_quotes_textbook_voltages(panel):
    # textbook: about -40 mV in the dark to about -70 mV in bright light
    text = panel.cascade["hyperpolarisation"].text
    assert "-40 mV" in text and "-70 mV" in text


def test_all_kinds_present_and_non_chain_unordered(panel):
    kinds = {s.kind for s in panel.cascade.values()}
    assert kinds == {"chain", "recovery", "visual_cycle", "module"}
    for s in panel.cascade.values():
        assert (s.order is not None) == (s.kind == "chain")
    assert {s.id for s in steps_of_kind(panel, "recovery")} == {"shutoff", "rgs9_gap", "cgmp_restore"}
    assert [s.id for s in steps_of_kind(panel, "chain")] == [s.id for s in chain(panel)]


@pytest.mark.parametrize(
    "gene,step",
    [  # common practice / textbook roles
        ("RHO", "photon_capture"), ("OPN1LW", "photon_capture"),
        ("GNAT1", "transducin"), ("GNAT2", "transducin"),
        ("PDE6A", "pde6_effector"), ("PDE6B", "pde6_effector"), ("PDE6C", "pde6_effector"),
        ("CNGA1", "cng_channels"), ("CNGB3", "cng_channels"),
        ("KCNV2", "hyperpolarisation"),
        ("CACNA1F", "ribbon_synapse"), ("CABP4", "ribbon_synapse"),
        ("NYX", "on_bipolar"), ("GRM6", "on_bipolar"), ("TRPM1", "on_bipolar"), ("GPR179", "on_bipolar"),
        ("OPA1", "ganglion_cells"),
        ("GRK1", "shutoff"), ("SAG", "shutoff"),
        ("RGS9", "rgs9_gap"), ("RGS9BP", "rgs9_gap"),
        ("GUCY2D", "cgmp_restore"), ("GUCA1A", "cgmp_restore"),
        ("ABCA4", "vc_retinal_clearance"), ("RDH12", "vc_retinal_clearance"),
        ("RBP3", "vc_transport"), ("RLBP1", "vc_transport"),
        ("LRAT", "vc_esterification"), ("RPE65", "vc_isomerase"), ("RDH5", "vc_oxidation"),
        ("PRPH2", "outer_segment"), ("CEP290", "cilium_transport"), ("RPGR", "cilium_transport"),
        ("USH2A", "usher"), ("BBS1", "syndromic_ciliopathy"), ("CRX", "transcription"),
        ("PRPF31", "splicing"), ("BEST1", "rpe_support"), ("IMPDH1", "metabolism"),
    ],
)
def test_gene_step_assignments(panel, gene, step):
    assert step_for(panel, gene).id == step
    assert step_for(panel, gene.lower()).id == step


def test_every_gene_maps_to_exactly_one_step(panel):
    by_step = genes_by_step(panel)
    assert set(by_step) == set(panel.cascade)
    flat = [g for genes in by_step.values() for g in genes]
    assert sorted(flat) == sorted(panel.genes)  # a partition: each gene once
    assert list(by_step)[:9] == [s.id for s in chain(panel)]
    for step_id, genes in by_step.items():
        if panel.cascade[step_id].kind != "chain":
            assert genes, step_id


def test_step_texts_are_short_plain_paragraphs(panel):
    for s in panel.cascade.values():
        sentences = [x for x in re.split(r"(?<=[.!?])\s+", s.text) if x]
        assert 1 <= len(sentences) <= 4, s.id
        assert s.breaks, s.id
        assert len(s.title) <= 80, s.id


def test_explain_paragraph(panel):
    text = explain(panel, "pde6b")
    step = panel.cascade["pde6_effector"]
    assert text.startswith("PDE6B (")
    assert step.title in text and step.text in text and step.breaks in text
    assert "step 3 of 9 of the light response" in text
    assert "autosomal recessive" in text and "autosomal dominant" in text
    assert "\n" not in text
    assert "visual cycle" in position(panel, "RPE65")
    with pytest.raises(KeyError):
        explain(panel, "NOTAGENE")
    with pytest.raises(KeyError):
        step_for(panel, "NOTAGENE")
