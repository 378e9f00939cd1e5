"""Intake of symbolic structural records (irdtriage.sv.intake) through the real reader (pysam).

Source: the VCF 4.3 specification (samtools/hts-specs, VCFv4.3), section 5.3 "Structural variants",
example records (from memory of the specification's example block; their INFO relations are what is
checked): ``<DEL>`` POS 321682, END 321887, SVLEN -205, CIPOS -56,20, GT 0/1; ``<INS:ME:L1>`` POS
9425916, END 9425916, SVLEN 6027, GT 1/1; ``<DUP>`` POS 12665100, END 12686200, SVLEN 21100, GT ./.
with CN 3; ``<DUP:TANDEM>`` POS 18665128, END 18665204, SVLEN 76, GT ./. with CN 5.  The records are
moved into ABCA4 (GRCh37 chr1:94,458,393-94,586,688, GENCODE canonical table) keeping END - POS,
SVLEN, genotypes and copy numbers as written.  Section 3 of the specification: the affected bases of
a symbolic deletion or duplication run from POS + 1 (POS is the padding base) to END, and SVTYPE is
one of DEL, INS, DUP, INV, CNV, BND.
"""
from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest
from sv_vcf import sv_record, write_vcf

from irdtriage.panel import load_panel
from irdtriage.sv.intake import normalise_record, settle_copy_type
from irdtriage.vcf import read_vcf

ROOT = Path(__file__).resolve().parents[1]
BASE = 94470000  # inside ABCA4 (GRCh37)
FMT = "GT:GQ:CN"


def _events(tmp_path, records):
    path = write_vcf(tmp_path / "spec.vcf", ["NA00001"], records)
    intake = read_vcf(path, load_panel(), build="GRCh37")
    return path, [normalise_record(e, path) for e in intake.structural_events]


def test_spec_deletion_covers_pos_plus_one_to_end(tmp_path):
    pos = BASE
    _, (ev,) = _events(tmp_path, [sv_record("chr1", pos, "<DEL>", f"SVTYPE=DEL;END={pos + 205};SVLEN=-205;"
                                            "CIPOS=-56,20;CIEND=-10,62", ["0/1:12:."], fmt=FMT)])
    assert (ev.svtype, ev.start, ev.end, ev.length, ev.svlen) == ("DEL", pos + 1, pos + 205, 205, -205)
    assert ev.samples["NA00001"]["gt"] == (0, 1)


def test_spec_insertion_has_the_inserted_length(tmp_path):
    pos = BASE + 1000
    _, (ev,) = _events(tmp_path, [sv_record("chr1", pos, "<INS:ME:L1>", f"SVTYPE=INS;END={pos};SVLEN=6027;"
                                            "CIPOS=-16,22", ["1/1:15:."], fmt=FMT)])
    assert (ev.svtype, ev.length) == ("INS", 6027)


def test_spec_duplications_take_genotype_from_copy_number(tmp_path):
    p1, p2 = BASE + 2000, BASE + 40000
    _, evs = _events(tmp_path, [
        sv_record("chr1", p1, "<DUP>", f"SVTYPE=DUP;END={p1 + 21100};SVLEN=21100;CIPOS=-500,500;CIEND=-500,500",
                  ["./.:0:3"], fmt=FMT),
        sv_record("chr1", p2, "<DUP:TANDEM>", f"SVTYPE=DUP;END={p2 + 76};SVLEN=76;CIPOS=-10,10;CIEND=-10,10",
                  ["./.:0:5"], fmt=FMT),
    ])
    dup, tandem = evs
    for ev in evs:
        settle_copy_type(ev, "NA00001", "FEMALE", "GRCh37")
    assert (dup.svtype, dup.length, dup.copy_number, dup.tandem) == ("DUP", 21100, 3, None)
    assert (tandem.svtype, tandem.length, tandem.copy_number, tandem.tandem) == ("DUP", 76, 5, True)
    # CN 3 (one extra copy of two) is a heterozygous gain; CN 5 claims at least one allele carries the gain
    assert dup.samples["NA00001"]["gt"] == (0, 1) and tandem.samples["NA00001"]["gt"] == (0, 1)


def test_cnv_with_copy_number_zero_is_a_homozygous_loss(tmp_path):
    _, (ev,) = _events(tmp_path, [sv_record("chr1", BASE, "<CNV>", f"SVTYPE=CNV;END={BASE + 5000}",
                                            ["./.:30:0"], fmt=FMT)])
    settle_copy_type(ev, "NA00001", None, "GRCh37")
    assert ev.svtype == "DEL" and ev.samples["NA00001"]["gt"] == (1, 1)


def _cli(*args):
    env = dict(os.environ, NO_COLOR="1", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True, cwd=ROOT,
                          env=env, timeout=600)


# (INFO, ALT, what the one-line message must say); line 30 is the record (29 header lines above it)
BAD = [
    ("SVTYPE=DEL;END=94469000;SVLEN=-1000", "<DEL>", "END 94469000 is before POS 94470000"),
    ("SVTYPE=DEL;END=94471000;SVLEN=-999", "<DEL>", "SVLEN -999 disagrees with END 94471000"),
    ("SVTYPE=FOO;END=94471000", "<DEL>", "unknown SVTYPE 'FOO'"),
    ("SVTYPE=DUP;END=94471000;SVLEN=1000", "<DEL>", "SVTYPE DUP disagrees with ALT <DEL>"),
    ("END=94471000", "<XYZ>", "unknown structural type: ALT <XYZ>"),
    # VCF 4.3 section 5.4: a mate is written chrom:pos between matching brackets
    ("SVTYPE=BND", "N[chr2:abc[", "malformed breakend ALT 'N[CHR2:ABC['"),
    ("SVTYPE=BND", "N[chr2:321682]", "malformed breakend ALT"),
    ("SVTYPE=BND", "N[chr2:321682[N", "malformed breakend ALT"),
    ("SVTYPE=BND", "<DEL>", "SVTYPE BND needs a breakend ALT"),
]


@pytest.mark.parametrize("info,alt,needle", BAD)
def test_self_contradicting_records_are_one_line_errors(tmp_path, info, alt, needle):
    path = write_vcf(tmp_path / "bad.vcf", ["P1"], [sv_record("chr1", BASE, alt, info, ["0/1:60:1"], fmt=FMT)])
    out = tmp_path / "out"
    r = _cli("triage", path, "--out", str(out), "--formats", "json", "--quiet")
    assert r.returncode == 2, (r.returncode, r.stderr)
    lines = [ln for ln in r.stderr.splitlines() if ln.strip()]
    assert len(lines) == 1, r.stderr
    assert f"{path}:{len(open(path).read().splitlines())}:" in lines[0] and needle in lines[0], lines[0]
    assert not out.exists() or not any(out.iterdir())


# VCF 4.3 section 5.4, the breakend example block (from memory of the specification): chr2 321681
# G -> G]17:198982], chr2 321682 T -> ]13:123456]T, chr13 123456 C -> C[2:321682[, chr13 123457 A ->
# [17:198983[A, chr17 198982 A -> A]2:321681], chr17 198983 C -> [13:123457[C; plus the single
# breakends of section 5.4.9 (G. and .A).  The four forms: t[p[ and ]p]t join the piece in the same
# orientation, t]p] and [p[t join it reverse-complemented.
SPEC_BND = [
    ("2", 321681, "G]17:198982]", "t]p]", "17", 198982, "translocation junction with 17:198982"),
    ("2", 321682, "]13:123456]T", "]p]t", "13", 123456, "translocation junction with 13:123456"),
    ("13", 123456, "C[2:321682[", "t[p[", "2", 321682, "translocation junction with 2:321682"),
    ("13", 123457, "[17:198983[A", "[p[t", "17", 198983, "translocation junction with 17:198983"),
    ("17", 198982, "A]2:321681]", "t]p]", "2", 321681, "translocation junction with 2:321681"),
    ("17", 198983, "[13:123457[C", "[p[t", "13", 123457, "translocation junction with 13:123457"),
    ("1", 1000, "G.", "t.", None, None, "single breakend (partner unknown)"),
    ("1", 1000, ".A", ".t", None, None, "single breakend (partner unknown)"),
    # same chromosome: reverse-complemented joins are inversion junctions; t[p[ to a later position
    # skips the bases between (deletion-type), to an earlier one repeats them (duplication-type)
    ("1", 1000, "A]1:5000]", "t]p]", "1", 5000, "inversion junction with 1:5000"),
    ("1", 1000, "A[1:5000[", "t[p[", "1", 5000, "deletion-type junction with 1:5000 (same chromosome)"),
    ("1", 5000, "A[1:1000[", "t[p[", "1", 1000, "duplication-type junction with 1:1000 (same chromosome)"),
]


@pytest.mark.parametrize("chrom,pos,alt,form,mate_chrom,mate_pos,junction", SPEC_BND)
def test_spec_breakends_parse(chrom, pos, alt, form, mate_chrom, mate_pos, junction):
    from irdtriage.sv.intake import parse_breakend

    b = parse_breakend(alt)
    assert (b.form, b.mate_chrom, b.mate_pos) == (form, mate_chrom, mate_pos)
    assert b.junction(chrom, pos) == junction
