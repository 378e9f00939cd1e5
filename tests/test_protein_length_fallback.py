"""The protein sketch and PVS1 never depend on the annotation supplying a protein length.

Regression: a truncation annotated with ``Protein_position`` ``2313`` (the usual form, without
"/length") drew a 75-residue protein. USH2A's MANE Select protein NP_996816 is 5,202 amino
acids (NCBI RefSeqGene NG_009497.1, transcript NM_206933.2, CDS 15,609 nt including the stop
codon; ../shared/refdata/refseqgene); the panel's transcript structure carries that length.
"""
from __future__ import annotations

import gzip
from pathlib import Path

import pysam

from irdtriage.pipeline import triage

ROOT = Path(__file__).resolve().parents[1]
USH2A_PROTEIN_AA = 5202  # NG_009497.1 / NM_206933.2 (RefSeqGene record; see module docstring)


def _ush2a_vcf(tmp_path: Path, protein_position: str) -> Path:
    # raw material: the header and the USH2A stop-gain record of the bundled (invented) demo file;
    # only the Protein_position field is changed, nothing of the demo's outcome is checked
    with gzip.open(ROOT / "demo_vcfs" / "arden_trio.vcf.gz", "rt") as fh:
        lines = fh.read().splitlines()
    header = [ln for ln in lines if ln.startswith("#")]
    fmt = next(ln for ln in header if ln.startswith("##INFO=<ID=CSQ")).split("Format: ")[1].rstrip('">').split("|")
    rec = next(ln for ln in lines if ln.startswith("chr1\t215900100\t"))
    cols = rec.split("\t")
    info = []
    for item in cols[7].split(";"):
        if item.startswith("CSQ="):
            parts = item[4:].split("|")
            parts[fmt.index("Protein_position")] = protein_position
            item = "CSQ=" + "|".join(parts)
        info.append(item)
    cols[7] = ";".join(info)
    plain = tmp_path / "ush2a.vcf"
    plain.write_text("\n".join(header + ["\t".join(cols)]) + "\n")
    out = tmp_path / "ush2a.vcf.gz"
    pysam.tabix_compress(str(plain), str(out), force=True)
    pysam.tabix_index(str(out), preset="vcf", force=True)
    return out


def test_protein_length_from_panel_structure_when_annotation_gives_none(tmp_path):
    res = triage(_ush2a_vcf(tmp_path, "2313"), sample="ARDEN-P1")
    gene = next(g for g in res["genes"] if g["symbol"] == "USH2A")
    assert gene["protein"]["length"] == USH2A_PROTEIN_AA
    assert gene["protein"]["length_source"] != "annotation"
    finding = next(f for f in res["findings"] if f["gene"] == "USH2A")
    pvs1 = next(c for c in finding["criteria"] if c["code"] == "PVS1")
    assert pvs1["evidence"]["protein_length"] == USH2A_PROTEIN_AA


def test_annotation_length_is_used_when_given(tmp_path):
    res = triage(_ush2a_vcf(tmp_path, f"2313/{USH2A_PROTEIN_AA}"), sample="ARDEN-P1")
    gene = next(g for g in res["genes"] if g["symbol"] == "USH2A")
    assert gene["protein"] == {"length": USH2A_PROTEIN_AA, "domains": [], "length_source": "annotation"}
