"""Regression checks for VCF intake defects, each on a real VCF written to disk and read by the
real reader (irdtriage.vcf.read_vcf, i.e. pysam/htslib) or the real command in a subprocess.

Sources for the expected behaviour:
- VCF 4.3 specification (samtools/hts-specs, VCFv4.3.pdf), section 1.6.1: REF bases are
  A, C, G, T, N and case-insensitive; ALT is bases, '*', a symbolic <ID> or a breakend; POS is
  1-based; GT allele indexes refer to REF (0) and the ALT list (1..n); a one-allele GT is a
  haploid call; INFO END gives the end of a symbolic allele; gVCF <NON_REF>/<*> stand for
  "any other allele" (GATK/bcftools gVCF convention, common practice).
- Normalisation: Tan, Abecasis and Kang, "Unified representation of genetic variants",
  Bioinformatics 31:2202 (2015; volume and page from memory): a variant is normalised when left-aligned and parsimonious, so
  two records describing one change normalise to the same position and alleles.
- Index age: htslib's own rule (hts.c warns "The index file is older than the data file" when
  the index's modification time is earlier than the data's; from memory of the htslib source).
- Contig lengths: GRCh38 chr1 248,956,422 bp and GRCh37 chr1 249,250,621 bp (project standards
  notes); T2T-CHM13v2.0 chr1 248,387,328 bp (from memory).
- Gene coordinates: GRCh38 MANE Select v1.5 spans, RPE65 chr1:68,428,822-68,449,954 and
  RHO chr3:129,528,639-129,535,344; records themselves are made up for the checks.
"""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import pysam
import pytest

from irdtriage.consequence.annotations import annotation_layouts, pick_annotation
from irdtriage.errors import InputError
from irdtriage.evidence.indexed import open_indexed_vcf
from irdtriage.models import Gene, Panel, Span
from irdtriage.vcf import QualityThresholds, check_counts, quality_flags, read_vcf

ROOT = Path(__file__).resolve().parents[1]

RPE65 = Gene("RPE65", "HGNC:10294", "retinoid isomerohydrolase RPE65", "NM_000329.3", "ENST00000262340.6",
             "NP_000320.1", "-", Span("1", 68428822, 68449954), None, ("AR",), ("LOF",), (), "visual_cycle")
RHO = Gene("RHO", "HGNC:10012", "rhodopsin", "NM_000539.3", "ENST00000296271.4", "NP_000530.1", "+",
           Span("3", 129528639, 129535344), None, ("AD", "AR"), ("LOF", "GOF", "DN"), (), "chain")
PANEL = Panel("test", "0", "", {"RPE65": RPE65, "RHO": RHO}, {})

CSQ_FORMAT = "Allele|Consequence|IMPACT|SYMBOL|Feature|HGVSc|HGVSp"


def header(samples=("P",), contigs=(("chr1", 248956422), ("chr3", 198295559)), extra=()):
    lines = ["##fileformat=VCFv4.3", '##FILTER=<ID=PASS,Description="All filters passed">']
    lines += [f"##contig=<ID={c},length={n}>" if n else f"##contig=<ID={c}>" for c, n in contigs]
    lines += [
        f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {CSQ_FORMAT}">',
        '##INFO=<ID=END,Number=1,Type=Integer,Description="End position">',
        '##INFO=<ID=SVTYPE,Number=1,Type=String,Description="Structural variant type">',
        '##ALT=<ID=DEL,Description="Deletion">',
        '##ALT=<ID=NON_REF,Description="Any other allele">',
        '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
        '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
        '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
        '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
        *extra,
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\t" + "\t".join(samples),
    ]
    return "\n".join(lines) + "\n"


def rec(chrom, pos, ref, alt, *calls, info=".", fmt="GT:AD:DP:GQ", qual="60", flt="PASS"):
    return "\t".join([chrom, str(pos), ".", ref, alt, qual, flt, info, fmt, *calls])


def write(path: Path, records, **kw) -> Path:
    path.write_text(header(**kw) + "".join(r + "\n" for r in records))
    return path


def bgzip_index(path: Path) -> Path:
    return Path(pysam.tabix_index(str(path), preset="vcf", force=True, keep_original=True))


def data_line(path: Path, record: str) -> int:
    return path.read_text().splitlines().index(record) + 1


def cli(*args: str) -> subprocess.CompletedProcess:
    env = dict(os.environ, NO_COLOR="1", COLUMNS="100", PYTHONPATH=str(ROOT))
    return subprocess.run([sys.executable, "-m", "irdtriage", *args], capture_output=True, text=True,
                          cwd=ROOT, env=env, timeout=600)


HET = "0/1:15,14:29:99"
HOM = "1/1:0,30:30:99"
IN_RPE65 = 68430000  # inside the RPE65 span
IN_RHO = 129530000  # inside the RHO span


# ---------------------------------------------------------------------------
# 2. duplicate records are counted once
# ---------------------------------------------------------------------------
def test_same_record_twice_is_one_allele_with_a_warning(tmp_path):
    r = rec("chr1", IN_RPE65, "G", "A", HET)
    p = write(tmp_path / "dup.vcf", [r, r])
    res = read_vcf(p, PANEL)
    assert len(res.variants) == 1
    assert res.counts["duplicates_merged"] == 1 and res.counts["in_panel"] == 1
    first = data_line(p, r)
    w = [x for x in res.warnings if "duplicate" in x]
    assert len(w) == 1 and f"line {first}" in w[0] and f"line {first + 1}" in w[0] and str(IN_RPE65) in w[0]
    assert quality_flags(res.variants[0], "P") == ()  # same genotype: nothing to review


def test_padded_and_minimal_spellings_are_one_allele(tmp_path):
    # CG>CA at POS-1 and G>A at POS are one substitution (VCF 4.3 §1.6.1 allows padding)
    p = write(tmp_path / "pad.vcf", [rec("chr1", IN_RPE65 - 1, "CG", "CA", HET), rec("chr1", IN_RPE65, "G", "A", HET)])
    res = read_vcf(p, PANEL)
    assert [(v.pos, v.ref, v.alt) for v in res.variants] == [(IN_RPE65, "G", "A")]
    # the same through the index (no line numbers there: the records are named as written)
    res = read_vcf(bgzip_index(p), PANEL)
    assert len(res.variants) == 1
    assert any(f"chr1:{IN_RPE65 - 1} CG>CA" in w and f"chr1:{IN_RPE65} G>A" in w for w in res.warnings)


def test_deletion_in_a_repeat_left_aligned_before_comparing(tmp_path):
    # reference C A A at POS..POS+2 (spelled out by the first record's REF). Deleting one A is
    # CAA>CA at POS or AA>A at POS+1; normalised (Tan et al. 2015) both are CA>C at POS.
    p = write(tmp_path / "rep.vcf", [rec("chr1", IN_RPE65, "CAA", "CA", HET), rec("chr1", IN_RPE65 + 1, "AA", "A", HET)])
    res = read_vcf(p, PANEL)
    assert len(res.variants) == 1 and res.counts["duplicates_merged"] == 1
    # different deletions are not merged
    p2 = write(tmp_path / "two.vcf", [rec("chr1", IN_RPE65, "CAA", "CA", HET), rec("chr1", IN_RPE65 + 1, "AT", "A", HET)])
    assert len(read_vcf(p2, PANEL).variants) == 2


def test_duplicates_with_different_genotypes_keep_the_better_call_flagged(tmp_path):
    worse = rec("chr1", IN_RPE65, "G", "A", "1/1:0,9:9:25")
    better = rec("chr1", IN_RPE65, "G", "A", "0/1:20,18:38:99")
    p = write(tmp_path / "disc.vcf", [worse, better])
    res = read_vcf(p, PANEL)
    assert len(res.variants) == 1
    v = res.variants[0]
    assert v.calls["P"].gq == 99 and v.calls["P"].zygosity == "heterozygous"
    flags = quality_flags(v, "P", QualityThresholds())
    assert any("review" in f and "different genotypes" in f for f in flags)
    assert res.counts["failed_quality"] == 1


def test_duplicated_het_does_not_make_a_recessive_diagnosis(tmp_path):
    # one heterozygous stop-gain in the recessive gene RPE65, written twice: one allele, never
    # "biallelic"; the bundled panel's RPE65 span is the MANE v1.5 span used above
    csq = "A|stop_gained|HIGH|RPE65|ENST00000262340.6|c.100C>T|p.Gln34Ter"
    r = rec("chr1", IN_RPE65, "G", "A", HET, info=f"CSQ={csq}")
    p = write(tmp_path / "case.vcf", [r, r])
    out = tmp_path / "out"
    done = cli("triage", str(p), "--out", str(out), "--formats", "json", "--quiet")
    assert done.returncode == 0, done.stderr
    result = json.loads((out / "result.json").read_text())
    mine = [f for f in result["findings"] if f["gene"] == "RPE65"]
    assert len(mine) == 1
    fits = {g["symbol"]: g["genotype_fit"] for g in result["genes"]}
    assert not fits["RPE65"].startswith("biallelic")
    assert result["counts"]["duplicates_merged"] == 1
    assert any("duplicate" in w for w in result["warnings"])


# ---------------------------------------------------------------------------
# 3. stale or foreign index
# ---------------------------------------------------------------------------
def _age(path: Path, seconds: int = 1000) -> None:
    st = os.stat(path)
    os.utime(path, (st.st_atime - seconds, st.st_mtime - seconds))


def _stale_pair(tmp_path: Path) -> Path:
    """A bgzipped VCF whose .tbi was made before chr1 records were added (RHO only then)."""
    old = write(tmp_path / "case.vcf", [rec("chr3", IN_RHO, "G", "C", HET)])
    gz = bgzip_index(old)
    tbi = Path(str(gz) + ".tbi")
    new = write(tmp_path / "new.vcf", [rec("chr1", IN_RPE65, "G", "A", HET), rec("chr3", IN_RHO, "G", "C", HET)])
    pysam.tabix_compress(str(new), str(gz), force=True)
    _age(tbi)
    return gz


def test_stale_index_of_the_patient_vcf_is_not_used(tmp_path):
    gz = _stale_pair(tmp_path)
    res = read_vcf(gz, PANEL)
    assert {v.pos for v in res.variants} == {IN_RPE65, IN_RHO}
    assert res.header_info["access"] == "streamed"
    assert any("older than the data" in w and "NOT used" in w for w in res.warnings)


def test_index_of_another_file_is_not_used(tmp_path):
    a = bgzip_index(write(tmp_path / "a.vcf", [rec("chr3", IN_RHO, "G", "C", HET)]))
    b = write(tmp_path / "b.vcf", [rec("chr1", IN_RPE65, "G", "A", HET), rec("chr3", IN_RHO, "G", "C", HET)])
    bgz = tmp_path / "b.vcf.gz"
    pysam.tabix_compress(str(b), str(bgz), force=True)
    foreign = Path(str(bgz) + ".tbi")
    foreign.write_bytes(Path(str(a) + ".tbi").read_bytes())  # newer than the data: age check passes
    res = read_vcf(bgz, PANEL)
    assert {v.pos for v in res.variants} == {IN_RPE65, IN_RHO}
    assert any("index does not find" in w for w in res.warnings)


def _sites(tmp_path: Path, name: str, records) -> Path:
    p = tmp_path / name
    p.write_text("##fileformat=VCFv4.3\n##contig=<ID=chr1,length=248956422>\n##contig=<ID=chr3,length=198295559>\n"
                 '##INFO=<ID=AF,Number=A,Type=Float,Description="Allele frequency">\n'
                 "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n" + "".join(r + "\n" for r in records))
    return p


def test_stale_index_of_an_evidence_vcf_stops(tmp_path):
    old = _sites(tmp_path, "pop.vcf", ["chr3\t%d\t.\tG\tC\t.\tPASS\tAF=0.01" % IN_RHO])
    gz = bgzip_index(old)
    new = _sites(tmp_path, "pop2.vcf", ["chr1\t%d\t.\tG\tA\t.\tPASS\tAF=0.2" % IN_RPE65,
                                        "chr3\t%d\t.\tG\tC\t.\tPASS\tAF=0.01" % IN_RHO])
    pysam.tabix_compress(str(new), str(gz), force=True)
    _age(Path(str(gz) + ".tbi"))
    with pytest.raises(InputError) as ei:
        open_indexed_vcf(str(gz), "population-frequency VCF")
    msg = str(ei.value)
    assert msg.startswith(str(gz) + ": ") and "older than the data" in msg and "re-index" in msg and "\n" not in msg
    # and through the command: exit 2, one line, no traceback
    case = write(tmp_path / "case.vcf", [rec("chr1", IN_RPE65, "G", "A", HET)])
    done = cli("triage", str(case), "--population-vcf", str(gz), "--out", str(tmp_path / "o"), "--quiet")
    assert done.returncode == 2
    assert "older than the data" in done.stderr and "Traceback" not in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1


def test_foreign_index_of_an_evidence_vcf_stops(tmp_path):
    a = bgzip_index(_sites(tmp_path, "a.vcf", ["chr3\t%d\t.\tG\tC\t.\tPASS\tAF=0.01" % IN_RHO]))
    b = _sites(tmp_path, "b.vcf", ["chr1\t%d\t.\tG\tA\t.\tPASS\tAF=0.2" % IN_RPE65])
    bgz = tmp_path / "b.vcf.gz"
    pysam.tabix_compress(str(b), str(bgz), force=True)
    Path(str(bgz) + ".tbi").write_bytes(Path(str(a) + ".tbi").read_bytes())
    with pytest.raises(InputError) as ei:
        open_indexed_vcf(str(bgz), "clinical-assertion VCF")
    assert "index does not find chr1:%d" % IN_RPE65 in str(ei.value)


# ---------------------------------------------------------------------------
# 4. lowercase alleles
# ---------------------------------------------------------------------------
def test_lowercase_alleles_are_uppercased_and_match_their_annotation(tmp_path):
    csq = ",".join(["T|missense_variant|MODERATE|RPE65|ENST00000262340.6|c.200G>A|p.Arg67Gln",
                    "G|stop_gained|HIGH|RPE65|ENST00000262340.6|c.200G>C|p.Arg67Ter"])
    r = rec("chr1", IN_RPE65, "c", "t,g", "1/2:0,15,14:29:99", info=f"CSQ={csq}")
    p = write(tmp_path / "lc.vcf", [r])
    res = read_vcf(p, PANEL)
    by = {v.alt: v for v in res.variants}
    assert set(by) == {"T", "G"} and all(v.ref == "C" for v in by.values())
    assert by["T"].key == f"1-{IN_RPE65}-C-T"
    layouts = annotation_layouts(pysam.VariantFile(str(p)).header)
    assert pick_annotation(by["T"], layouts, PANEL, ["RPE65"]).consequence[0] == "missense_variant"
    assert pick_annotation(by["G"], layouts, PANEL, ["RPE65"]).consequence[0] == "stop_gained"


# ---------------------------------------------------------------------------
# 5. GT allele index beyond the ALT list
# ---------------------------------------------------------------------------
def test_gt_naming_a_missing_alt_stops_with_file_and_line(tmp_path):
    bad = rec("chr1", IN_RPE65, "G", "A", "0/2:10,9:19:99")
    p = write(tmp_path / "gt.vcf", [rec("chr3", IN_RHO, "G", "C", HET), bad])
    with pytest.raises(InputError) as ei:
        read_vcf(p, PANEL)
    e = ei.value
    assert e.line == data_line(p, bad) and str(e).startswith(f"{p}:{e.line}: ")
    assert "0/2" in e.problem and "1 ALT allele" in e.problem
    # indexed: no line number, the record is named instead
    with pytest.raises(InputError) as ei:
        read_vcf(bgzip_index(p), PANEL)
    assert f"chr1:{IN_RPE65}" in str(ei.value) and "0/2" in str(ei.value)


# ---------------------------------------------------------------------------
# 6. haploid calls on autosomes
# ---------------------------------------------------------------------------
def test_haploid_gt_on_an_autosome_is_not_homozygous(tmp_path):
    p = write(tmp_path / "hap.vcf", [rec("chr1", IN_RPE65, "G", "A", "1:0,30:30:99")])
    v = read_vcf(p, PANEL).variants[0]
    assert v.calls["P"].gt == (1,) and v.calls["P"].zygosity == "haploid call"
    assert any("one-allele GT where two copies are expected" in f for f in quality_flags(v, "P"))


# ---------------------------------------------------------------------------
# 7. genome build evidence that conflicts, unsupported assemblies, records past the end
# ---------------------------------------------------------------------------
def test_reference_line_against_contig_lengths_stops_the_run(tmp_path):
    p = write(tmp_path / "b.vcf", [rec("chr1", IN_RPE65, "G", "A", HET)],
              contigs=(("chr1", 249250621),), extra=("##reference=GRCh38",))
    with pytest.raises(InputError) as ei:
        read_vcf(p, PANEL)
    assert "249250621" in str(ei.value) and "##reference=GRCh38" in str(ei.value)
    # --build agreeing with the lengths settles it; contradicting them is an error
    assert read_vcf(p, PANEL, build="GRCh37").build == "GRCh37"
    with pytest.raises(InputError):
        read_vcf(p, PANEL, build="GRCh38")
    done = cli("triage", str(p), "--out", str(tmp_path / "o"), "--quiet")
    assert done.returncode == 2 and "Traceback" not in done.stderr
    assert len(done.stderr.strip().splitlines()) == 1 and "249250621" in done.stderr


def test_t2t_vcf_is_refused(tmp_path):
    p = write(tmp_path / "t2t.vcf", [rec("chr1", IN_RPE65, "G", "A", HET)], contigs=(("chr1", 248387328),))
    with pytest.raises(InputError) as ei:
        read_vcf(p, PANEL)
    assert "T2T-CHM13" in ei.value.problem and "not supported" in ei.value.problem


def test_record_past_the_declared_contig_end_stops(tmp_path):
    # a test gene reaching past the end of GRCh38 chr1 (248,956,422 bp)
    end_gene = Gene("ENDG", "HGNC:0", "test gene", "", "", "", "+", Span("1", 248956000, 248957000), None,
                    ("AR",), (), (), "")
    panel = Panel("t", "0", "", {"ENDG": end_gene}, {})
    bad = rec("chr1", 248956500, "G", "A", HET)
    p = write(tmp_path / "end.vcf", [bad])
    with pytest.raises(InputError) as ei:
        read_vcf(p, panel)
    assert ei.value.line == data_line(p, bad) and "248956422" in ei.value.problem
    # no ##contig length: the build's length applies (--build GRCh38)
    q = write(tmp_path / "end2.vcf", [bad], contigs=(("chr1", None),))
    with pytest.raises(InputError) as ei:
        read_vcf(q, panel, build="GRCh38")
    assert "248956422" in ei.value.problem and "GRCh38" in ei.value.problem


# ---------------------------------------------------------------------------
# 8. invalid alleles and positions
# ---------------------------------------------------------------------------
@pytest.mark.parametrize("ref,alt,pos,needle", [
    ("CX", "T", IN_RPE65, "REF 'CX'"),
    ("G", "T!", IN_RPE65, "ALT 'T!'"),
    ("G", "A", 0, "POS 0"),
])
def test_invalid_alleles_and_positions_name_file_and_line(tmp_path, ref, alt, pos, needle):
    bad = rec("chr1", pos, ref, alt, HET)
    p = write(tmp_path / "bad.vcf", [bad])
    with pytest.raises(InputError) as ei:
        read_vcf(p, PANEL)
    e = ei.value
    assert needle in e.problem and e.line == data_line(p, bad)
    assert str(e).startswith(f"{p}:{e.line}: ") and "\n" not in str(e)


# ---------------------------------------------------------------------------
# 9. one chromosome spelled both chr1 and 1
# ---------------------------------------------------------------------------
def test_mixed_chr_and_bare_names_in_one_file(tmp_path):
    records = [rec("chr1", IN_RPE65, "G", "A", HET), rec("1", IN_RPE65 + 100, "C", "T", HET),
               rec("3", IN_RHO, "G", "C", HET)]
    p = write(tmp_path / "mixed.vcf", records,
              contigs=(("chr1", 248956422), ("1", 248956422), ("3", 198295559)))
    for path in (p, bgzip_index(p)):
        res = read_vcf(path, PANEL)
        assert sorted((v.chrom, v.pos) for v in res.variants) == [
            ("1", IN_RPE65 + 100), ("3", IN_RHO), ("chr1", IN_RPE65)], path


# ---------------------------------------------------------------------------
# 10. symbolic records over panel genes
# ---------------------------------------------------------------------------
def test_symbolic_deletion_over_a_gene_is_listed_and_warned(tmp_path):
    # starts 1 kb before RPE65 (outside the padded span), INFO END inside it
    start = 68428822 - 1000
    records = [
        rec("chr1", start, "N", "<DEL>", "1/1:0,20:20:60", info=f"END={IN_RPE65};SVTYPE=DEL"),
        rec("chr3", IN_RHO, "G", "<NON_REF>", "0/0:30,0:30:99", info=f"END={IN_RHO + 50}"),
    ]
    p = write(tmp_path / "sv.vcf", records)
    for path in (p, bgzip_index(p)):
        res = read_vcf(path, PANEL)
        assert res.variants == []
        assert res.counts["reference_blocks_ignored"] == 1 and res.counts["symbolic_skipped"] == 1
        assert len(res.structural_events) == 1
        ev = res.structural_events[0]
        assert (ev["chrom"], ev["pos"], ev["end"], ev["svtype"], ev["genotype"], ev["genes"]) == (
            "chr1", start, IN_RPE65, "DEL", "1/1", ["RPE65"])
        assert ev["zygosity"] == "homozygous"
        assert not any("NON_REF" in w for w in res.warnings)
    out = tmp_path / "out"
    done = cli("triage", str(p), "--out", str(out), "--formats", "json", "--quiet")
    assert done.returncode == 0, done.stderr
    result = json.loads((out / "result.json").read_text())
    # the event is classified as a structural finding now (irdtriage.sv), no longer only a warning
    assert not [w for w in result["warnings"] if "<DEL>" in w and "not classified" in w]
    (sv,) = [f for f in result["findings"] if f["kind"] == "structural"]
    assert sv["gene"] == "RPE65" and sv["zygosity"] == "homozygous"
    assert (sv["structural"]["start"], sv["structural"]["end"]) == (start + 1, IN_RPE65)


# ---------------------------------------------------------------------------
# 11. the counts add up
# ---------------------------------------------------------------------------
def test_counts_add_up_on_a_file_of_known_content(tmp_path):
    records = [
        rec("chr1", 1000000, "G", "A", HET),  # outside every gene
        rec("chr1", IN_RPE65, "ATT", "A,AT,*", "1/2:1,10,9,0:20:50"),  # 3 alleles, '*' skipped
        rec("chr1", IN_RPE65 + 10, "C", "T", HET),
        rec("chr1", IN_RPE65 + 10, "C", "T", HET),  # duplicate
        rec("chr1", IN_RPE65 + 20, "A", "<DEL>", HET, info=f"END={IN_RPE65 + 400};SVTYPE=DEL"),
        rec("chr3", 1000, "G", "A", HET),  # outside every gene
        rec("chr3", IN_RHO, "G", "<NON_REF>", "0/0:30,0:30:99", info=f"END={IN_RHO + 10}"),
        rec("chr3", IN_RHO + 100, "G", ".", "0/0:30:30:99"),  # no ALT allele
    ]
    p = write(tmp_path / "counts.vcf", records)
    res = read_vcf(p, PANEL)
    c = res.counts
    expected = {
        "records_read": 8, "records_outside_panel": 2, "records_in_panel": 6, "records_without_alt": 1,
        "alleles": 7, "in_panel": 3, "symbolic_skipped": 2, "reference_blocks_ignored": 1,
        "duplicates_merged": 1,
    }
    assert {k: c[k] for k in expected} == expected
    assert check_counts(c) == []
    assert c["records_read"] == c["records_in_panel"] + c["records_outside_panel"]
    assert c["alleles"] == c["in_panel"] + c["symbolic_skipped"] + c["reference_blocks_ignored"] + c["duplicates_merged"]
    # indexed: only panel regions are read, and the same allele arithmetic holds
    ci = read_vcf(bgzip_index(p), PANEL).counts
    assert ci["records_outside_panel"] == 0 and ci["records_read"] == 6
    assert {k: ci[k] for k in ("alleles", "in_panel", "symbolic_skipped", "reference_blocks_ignored",
                               "duplicates_merged")} == {k: expected[k] for k in (
        "alleles", "in_panel", "symbolic_skipped", "reference_blocks_ignored", "duplicates_merged")}
    assert check_counts(ci) == []
