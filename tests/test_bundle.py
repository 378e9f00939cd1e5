"""Evidence bundles: build from files in the public sources' own layouts, read back, triage with them.

Sources for the checks:
* Published null variant: RPGRIP1 NM_020366.4:c.2662C>T p.(Arg888Ter), GRCh38 chr14:21326125 C>T,
  homozygous in a case of Leber congenital amaurosis (PMID 23505306, Patient 5), as curated in
  GA4GH phenopacket-store (file RPGRIP1/PMID_23505306_Patient_5.json, commit b694d17e).
* PVS1 for a nonsense variant predicted to undergo NMD in a loss-of-function gene, and
  PM2_Supporting for absence from the population data (Richards et al. 2015; ClinGen SVI
  PM2 recommendation v1.0, 2020); PVS1 + PM2_Supporting is Likely pathogenic under the ClinGen
  SVI points scale (8 + 1 points, Tavtigian et al. 2020) and under Richards Table 5 with the
  SVI note that PVS1 plus one Supporting criterion is Likely pathogenic (from memory).
* BA1: allele frequency > 5 % in a continental population (Ghosh et al., Hum Mutat 2018;
  39:1525-1530). The common allele below is constructed for the test: its position is a
  real RPGRIP1 exon position only so that it falls inside the gene; its frequency is invented.
* File layouts: gnomAD sites VCF INFO keys (AC, AN, AF, nhomalt, AC_<group>, AN_<group>,
  AF_<group>, nhomalt_<group>, sex-split _XX/_XY keys, AC_raw, grpmax, AF_grpmax, faf95 keys,
  a vep annotation string) as in the gnomAD v4 release VCF headers (from memory); ClinVar's
  VCF (##fileDate, ##source=ClinVar, ##reference=GRCh38, CLNSIG, CLNREVSTAT, GENEINFO, MC,
  bare chromosome names) as described on ClinVar's FTP README for VCF files. Record values
  are constructed for the test, not copied from those releases.
"""
from __future__ import annotations

import gzip
import json
import os
from pathlib import Path

import pysam
import pytest

from irdtriage.cli import main
from irdtriage.errors import InputError
from irdtriage.evidence.bundle import Bundle, Regions, build_bundle, keep_population_key
from irdtriage.pipeline import triage

RPGRIP1_NULL = ("chr14", 21326125, "C", "T")  # PMID 23505306 Patient 5 (see module docstring)
RPGRIP1_COMMON = ("chr14", 21317778, "C", "G")  # constructed: exon position of c.1234 (phenopacket-store), invented AF
OUTSIDE = ("chr14", 60000000, "A", "G")  # far from every panel gene on chr14 (constructed)

GNOMAD_INFO = [
    ("AC", "A", "Integer"), ("AN", "1", "Integer"), ("AF", "A", "Float"), ("nhomalt", "A", "Integer"),
    ("AC_afr", "A", "Integer"), ("AN_afr", "1", "Integer"), ("AF_afr", "A", "Float"), ("nhomalt_afr", "A", "Integer"),
    ("AC_nfe", "A", "Integer"), ("AN_nfe", "1", "Integer"), ("AF_nfe", "A", "Float"), ("nhomalt_nfe", "A", "Integer"),
    ("AC_nfe_XX", "A", "Integer"), ("AN_nfe_XX", "1", "Integer"), ("AC_raw", "A", "Integer"),
    ("grpmax", "A", "String"), ("AF_grpmax", "A", "Float"), ("faf95_nfe", "A", "Float"),
    ("fafmax_faf95_max", "A", "Float"), ("vep", ".", "String"),
]


def gnomad_vcf(path: Path, chrom: str, length: int, records: list[str], index: bool = True) -> str:
    lines = ["##fileformat=VCFv4.2", '##FILTER=<ID=PASS,Description="All filters passed">',
             '##FILTER=<ID=AC0,Description="Allele count is zero after filtering">',
             f"##contig=<ID={chrom},length={length},assembly=GRCh38>"]
    lines += [f'##INFO=<ID={k},Number={n},Type={t},Description="{k}">' for k, n, t in GNOMAD_INFO]
    lines.append("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO")
    path.write_text("\n".join(lines + records) + "\n")
    if not index:
        return str(path)
    return pysam.tabix_index(str(path), preset="vcf", force=True)


def gnomad_record(chrom, pos, ref, alt, ac, an, nhom, ac_nfe, an_nfe, extra=""):
    af, af_nfe = ac / an, ac_nfe / an_nfe
    return (f"{chrom}\t{pos}\t.\t{ref}\t{alt}\t.\tPASS\tAC={ac};AN={an};AF={af:.6g};nhomalt={nhom};"
            f"AC_afr=0;AN_afr=40000;AF_afr=0;nhomalt_afr=0;AC_nfe={ac_nfe};AN_nfe={an_nfe};AF_nfe={af_nfe:.6g};"
            f"nhomalt_nfe={nhom};AC_nfe_XX=1;AN_nfe_XX=50000;AC_raw={ac + 3};grpmax=nfe;AF_grpmax={af_nfe:.6g};"
            f"faf95_nfe=0.1;fafmax_faf95_max=0.1;vep=T|synonymous_variant|LOW{extra}")


def clinvar_vcf(path: Path, records: list[str]) -> str:
    lines = ["##fileformat=VCFv4.1", "##fileDate=2024-05-02", "##source=ClinVar", "##reference=GRCh38",
             '##ID=<Description="ClinVar Variation ID">',
             '##INFO=<ID=ALLELEID,Number=1,Type=Integer,Description="the ClinVar Allele ID">',
             '##INFO=<ID=CLNSIG,Number=.,Type=String,Description="Aggregate germline classification">',
             '##INFO=<ID=CLNREVSTAT,Number=.,Type=String,Description="ClinVar review status">',
             '##INFO=<ID=GENEINFO,Number=1,Type=String,Description="Gene(s) for the variant">',
             '##INFO=<ID=MC,Number=.,Type=String,Description="molecular consequence">',
             "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO"]
    path.write_text("\n".join(lines + records) + "\n")
    return pysam.tabix_index(str(path), preset="vcf", force=True)


CSQ = "Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|Protein_position"


def patient_vcf(path: Path, records: list[tuple]) -> str:
    lines = ["##fileformat=VCFv4.2", "##reference=GRCh38", "##contig=<ID=chr14,length=107043718>",
             '##FILTER=<ID=PASS,Description="All filters passed">',
             f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {CSQ}">',
             '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
             '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
             '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
             '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
             "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tP1"]
    for (chrom, pos, ref, alt), csq, call in sorted(records, key=lambda r: r[0][1]):
        lines.append("\t".join([chrom, str(pos), ".", ref, alt, "500", "PASS", f"CSQ={csq}", "GT:AD:DP:GQ", call]))
    path.write_text("\n".join(lines) + "\n")
    return pysam.tabix_index(str(path), preset="vcf", force=True)


# EXON 16/24: the exon holding chr14:21,326,125 (21,325,830-21,326,173) on the GENCODE-derived
# canonical RPGRIP1 transcript (../shared/refdata/gene_spans/gencode_canonical_grch38.txt.gz);
# MANE may number it differently at its 5' end, but any exon that is neither the last nor the
# penultimate gives the same NMD prediction (Abou Tayoun et al., Hum Mutat 2018;39:1517-1524).
# Protein length 1286 aa for NP_065099.3 (from memory).
NULL_CSQ = "T|stop_gained|HIGH|RPGRIP1||Transcript|NM_020366.4|protein_coding|16/24||c.2662C>T|p.(Arg888Ter)|888/1286"
COMMON_CSQ = "G|missense_variant|MODERATE|RPGRIP1||Transcript|NM_020366.4|protein_coding|||c.1234C>G|p.(Gln412Glu)|412/1286"


@pytest.fixture
def sources(tmp_path):
    """gnomAD-layout files split by chromosome (chr14 indexed, chr1 plain and streamed), a
    ClinVar-layout VCF, and a REVEL-like score table (plain gzip, unsorted rows)."""
    d = tmp_path / "src"
    d.mkdir()
    chr14 = gnomad_vcf(d / "gnomad.exomes.v4.1.sites.chr14.vcf", "chr14", 107043718, [
        gnomad_record("chr14", RPGRIP1_COMMON[1], "C", "G", 30000, 200000, 2500, 25000, 100000),
        gnomad_record("chr14", 21326200, "G", "A", 1, 200000, 0, 1, 100000),  # rare allele nearby
        gnomad_record("chr14", OUTSIDE[1], "A", "G", 5, 200000, 0, 5, 100000),  # outside every panel gene
    ])
    chr1 = gnomad_vcf(d / "gnomad.exomes.v4.1.sites.chr1.vcf", "chr1", 248956422, [
        gnomad_record("chr1", 100000, "A", "G", 3, 200000, 0, 3, 100000),  # outside
        gnomad_record("chr1", 68440000, "A", "G", 3, 200000, 0, 3, 100000),  # inside RPE65 (MANE v1.5 span)
    ], index=False)
    clin = clinvar_vcf(d / "clinvar_20240502.vcf", [
        "14\t21326125\t.\tC\tT\t.\t.\tALLELEID=1;CLNSIG=Pathogenic;CLNREVSTAT=criteria_provided,_single_submitter;"
        "GENEINFO=RPGRIP1:57096;MC=SO:0001587|nonsense",
        "14\t60000000\t.\tA\tG\t.\t.\tALLELEID=2;CLNSIG=Benign;CLNREVSTAT=no_assertion_criteria_provided;"
        "GENEINFO=OTHER:1",
    ])
    revel = d / "revel.tsv.gz"
    with gzip.open(revel, "wt") as fh:
        fh.write("#chrom\tpos\tref\talt\tscore\n")
        fh.write("chr14\t21326200\tG\tA\t0.812\n")
        fh.write("chr14\t21317778\tC\tG\t0.05\n")  # unsorted on purpose
        fh.write("chr14\t60000000\tA\tG\t0.5\n")
    return {"population": [chr14, chr1], "clinical": [clin], "scores": [str(revel)], "dir": d}


@pytest.fixture
def bundle_dir(tmp_path, sources):
    out = tmp_path / "bundle"
    build_bundle(str(out), population=sources["population"], clinical=sources["clinical"],
                 scores=sources["scores"], build="GRCh38")
    return out


def _records(path) -> list[pysam.VariantRecord]:
    with pysam.VariantFile(str(path)) as vf:
        return list(vf)


def test_population_key_selection_follows_gnomad_layout():
    kept = [k for k, _, _ in GNOMAD_INFO if keep_population_key(k)]
    assert kept == ["AC", "AN", "AF", "nhomalt", "AC_afr", "AN_afr", "AF_afr", "nhomalt_afr", "AC_nfe", "AN_nfe",
                    "AF_nfe", "nhomalt_nfe", "grpmax", "AF_grpmax", "faf95_nfe", "fafmax_faf95_max"]


def test_build_keeps_panel_regions_only_and_writes_a_manifest(bundle_dir, sources):
    files = sorted(p.name for p in bundle_dir.iterdir())
    assert files == ["clinical.vcf.gz", "clinical.vcf.gz.tbi", "manifest.json", "population.vcf.gz",
                     "population.vcf.gz.tbi", "regions.bed", "scores"]
    pop = _records(bundle_dir / "population.vcf.gz")
    assert [(r.chrom, r.pos) for r in pop] == [("chr14", 21317778), ("chr14", 21326200), ("chr1", 68440000)]
    assert set(pop[0].info) == {"AC", "AN", "AF", "nhomalt", "AC_afr", "AN_afr", "AF_afr", "nhomalt_afr", "AC_nfe",
                                "AN_nfe", "AF_nfe", "nhomalt_nfe", "grpmax", "AF_grpmax", "faf95_nfe",
                                "fafmax_faf95_max"}
    assert pop[0].info["AC"] == (30000,) and pop[0].info["nhomalt_nfe"] == (2500,)
    clin = _records(bundle_dir / "clinical.vcf.gz")
    assert [(r.chrom, r.pos, r.info["CLNSIG"]) for r in clin] == [("14", 21326125, ("Pathogenic",))]
    with pysam.TabixFile(str(bundle_dir / "scores" / "revel.tsv.gz")) as t:
        rows = [line.split("\t") for line in t.fetch("chr14")]
    assert [(r[1], r[4]) for r in rows] == [("21317778", "0.05"), ("21326200", "0.812")]  # sorted

    m = json.loads((bundle_dir / "manifest.json").read_text())
    assert m["format"] == "irdtriage-evidence-bundle" and m["format_version"] == 1
    assert m["genome_build"] == "GRCh38" and m["regions"]["padding"] == 1000
    by_kind = {c["kind"]: c for c in m["contents"]}
    popsrc = by_kind["population"]["sources"]
    assert [s["name"] for s in popsrc] == ["gnomad.exomes.v4.1.sites.chr14.vcf.gz", "gnomad.exomes.v4.1.sites.chr1.vcf"]
    assert [(s["version"], s["version_from"]) for s in popsrc] == [("4.1", "file name")] * 2
    assert [(s["records_read"], s["records_written"]) for s in popsrc] == [(2, 2), (2, 1)]  # indexed vs streamed
    assert popsrc[1]["sha256"] == __import__("hashlib").sha256(Path(sources["population"][1]).read_bytes()).hexdigest()
    clinsrc = by_kind["clinical"]["sources"][0]
    assert (clinsrc["date"], clinsrc["date_from"]) == ("2024-05-02", "header ##fileDate")
    assert clinsrc["header"] == {"fileDate": "2024-05-02", "source": "ClinVar", "reference": "GRCh38"}
    assert (clinsrc["records_read"], clinsrc["records_written"]) == (1, 1)
    assert by_kind["scores"]["name"] == "revel" and by_kind["scores"]["records"] == 2


def test_show_and_open_check_the_manifest(bundle_dir, capsys):
    assert main(["resources", "show", str(bundle_dir)]) == 0
    out = capsys.readouterr().out
    assert "GRCh38" in out and "clinvar_20240502.vcf.gz" in out and "2024-05-02" in out
    b = Bundle.open(str(bundle_dir))
    assert b.regions.covers(*RPGRIP1_NULL[:2]) and not b.regions.covers(*OUTSIDE[:2])
    # a changed file no longer matches its sha256: one clear line naming the folder
    with open(bundle_dir / "regions.bed", "a") as fh:
        fh.write("22\t1\t2\n")
    with pytest.raises(InputError, match="regions.bed does not match its sha256"):
        Bundle.open(str(bundle_dir))
    assert main(["resources", "show", str(bundle_dir)]) == 2
    assert "does not match its sha256" in capsys.readouterr().err


def test_bad_inputs_are_one_line_errors(tmp_path, sources, capsys):
    d = sources["dir"]
    # two files of one dataset may not hold the same contig
    with pytest.raises(InputError, match="contig chr14 is in more than one file"):
        build_bundle(str(tmp_path / "b1"), population=[sources["population"][0], sources["population"][0]],
                     build="GRCh38")
    # a clinical file without CLNSIG
    bad = clinvar_vcf(d / "noclnsig.vcf", [])
    Path(bad[:-3]).write_text("x")  # leftover plain file is harmless
    plain = d / "plain_no_clnsig.vcf"
    plain.write_text("##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n")
    with pytest.raises(InputError, match="no CLNSIG"):
        build_bundle(str(tmp_path / "b2"), clinical=[str(plain)], build="GRCh38")
    # a score row with too few columns names its line
    t = d / "short.tsv"
    t.write_text("#chrom\tpos\tref\talt\tscore\nchr14\t21326125\tC\tT\n")
    assert main(["resources", "build", "--scores", str(t), "--build", "GRCh38", "--out", str(tmp_path / "b3")]) == 2
    err = capsys.readouterr().err.strip()
    assert err.endswith("short.tsv:2: score table row has 4 columns; need chrom, pos, ref, alt, score")
    assert not (tmp_path / "b3").exists()  # nothing half-written
    # a folder that is not a bundle
    with pytest.raises(InputError, match="not an evidence bundle"):
        Bundle.open(str(d))


def test_unsorted_streamed_vcf_is_refused(tmp_path):
    p = gnomad_vcf(tmp_path / "g.vcf", "chr14", 107043718, [
        gnomad_record("chr14", 21326200, "G", "A", 1, 200000, 0, 1, 100000),
        gnomad_record("chr14", 21317778, "C", "G", 1, 200000, 0, 1, 100000),
    ], index=False)
    with pytest.raises(InputError, match="not sorted by position at chr14:21317778"):
        build_bundle(str(tmp_path / "b"), population=[p], build="GRCh38")


def test_build_detected_from_contig_lengths_and_conflict_refused(tmp_path, sources):
    out = tmp_path / "auto"
    m = build_bundle(str(out), population=[sources["population"][0]])
    assert m["genome_build"] == "GRCh38"  # chr14 length 107,043,718 is GRCh38's (GRCh37: 107,349,540)
    with pytest.raises(InputError, match="bundle is being built for GRCh37"):
        build_bundle(str(tmp_path / "b37"), population=[sources["population"][0]], build="GRCh37")


def test_regions_cover_and_overlap():
    r = Regions({"14": [(100, 200), (300, 400)]})
    assert r.covers("chr14", 101) and r.covers("14", 200) and not r.covers("14", 201)
    assert not r.covers("14", 199, 301)  # spans a gap
    assert r.overlaps("14", 150, 160) and r.overlaps("14", 199, 305) and not r.overlaps("14", 200, 300)
    assert not r.overlaps("1", 150, 160) and not r.overlaps("14", 0, 100)


def _triage(tmp_path, bundle_dir, **kw):
    vcf = patient_vcf(tmp_path / "p.vcf", [
        (RPGRIP1_NULL, NULL_CSQ, "1/1:0,35:35:99"),
        (RPGRIP1_COMMON, COMMON_CSQ, "0/1:20,18:38:99"),
    ])
    return triage(vcf, resources=str(bundle_dir), hpo="HP:0000510", all_variants=True, **kw)


def test_triage_with_bundle_classifies_published_null_and_common_allele(tmp_path, bundle_dir):
    r = _triage(tmp_path, bundle_dir)
    by_pos = {f["pos"]: f for f in r["findings"]}
    null, common = by_pos[RPGRIP1_NULL[1]], by_pos[RPGRIP1_COMMON[1]]
    met = set(null["met_criteria"])
    assert "PVS1_VeryStrong" in met and "PM2_Supporting" in met
    assert null["classification"] in ("Likely pathogenic", "Pathogenic")
    assert null["evidence"]["population"]["found"] is False and null["evidence"]["population"]["af"] == 0.0
    assert [e["clnsig"] for e in null["evidence"]["clinical"]["same_variant"]] == ["Pathogenic"]
    crit = {c["code"]: c for c in common["criteria"]}
    assert crit["BA1"]["met"] is True and common["classification"] == "Benign"
    # the versions of every source are in result.json
    es = r["evidence_sources"]
    assert es["bundle"]["genome_build"] == "GRCh38" and es["online"] is None and es["files"] == []
    origins = {s["kind"]: s["origin"] for s in es["bundle"]["sources"]}
    assert [o["version"] for o in origins["population"]] == ["4.1", "4.1"]
    assert origins["clinical"][0]["date"] == "2024-05-02"


def test_bundle_equals_the_same_files_given_one_by_one(tmp_path, bundle_dir):
    """--resources gives the same evidence as --population-vcf/--clinical-vcf/--scores on the bundle's files."""
    a = _triage(tmp_path, bundle_dir)
    vcf = str(tmp_path / "p.vcf.gz")
    b = triage(vcf, popfreq_vcf=str(bundle_dir / "population.vcf.gz"), clinical_vcf=str(bundle_dir / "clinical.vcf.gz"),
               score_tables=[str(bundle_dir / "scores" / "revel.tsv.gz")], hpo="HP:0000510", all_variants=True)
    strip = lambda r: [(f["key"], f["classification"], f["met_criteria"], f["evidence"]["population"]) for f in r["findings"]]  # noqa: E731
    assert strip(a) == strip(b)
    assert [e["kind"] for e in b["evidence_sources"]["files"]] == ["population", "clinical", "scores"]


def test_variant_outside_bundle_regions_is_not_evaluable_not_absent(tmp_path, sources):
    out = tmp_path / "small"
    # a bundle built for one gene only: RPGRIP1's null allele lies outside it
    genes = tmp_path / "genes.txt"
    genes.write_text("RPE65\n")
    assert main(["resources", "build", "--population", sources["population"][0], "--build", "GRCh38",
                 "--genes", "@" + str(genes), "--out", str(out)]) == 2  # chr14 holds nothing in RPE65
    assert main(["resources", "build", "--population", sources["population"][0], "--population",
                 sources["population"][1], "--build", "GRCh38", "--genes", "@" + str(genes), "--out", str(out)]) == 0
    r = _triage(tmp_path, out)
    null = next(f for f in r["findings"] if f["pos"] == RPGRIP1_NULL[1])
    crit = {c["code"]: c for c in null["criteria"]}
    assert null["evidence"]["population"] is None
    assert crit["PM2"]["met"] is None and crit["BA1"]["met"] is None
    assert any("outside the evidence bundle's regions" in w for w in r["warnings"])


def test_bundle_with_other_build_or_same_kind_twice_is_refused(tmp_path, bundle_dir, sources):
    vcf = patient_vcf(tmp_path / "p.vcf", [(RPGRIP1_NULL, NULL_CSQ, "1/1:0,35:35:99")])
    with pytest.raises(InputError, match="both give population frequencies"):
        triage(vcf, resources=str(bundle_dir), popfreq_vcf=sources["population"][0])
    m = json.loads((bundle_dir / "manifest.json").read_text())
    m["genome_build"] = "GRCh37"
    (bundle_dir / "manifest.json").write_text(json.dumps(m))
    with pytest.raises(InputError, match="bundle is for GRCh37 but the VCF is GRCh38"):
        triage(vcf, resources=str(bundle_dir))


def test_cli_triage_with_resources_writes_versions_into_result(tmp_path, bundle_dir):
    vcf = patient_vcf(tmp_path / "p.vcf", [(RPGRIP1_NULL, NULL_CSQ, "1/1:0,35:35:99")])
    out = tmp_path / "out"
    assert main(["triage", vcf, "--resources", str(bundle_dir), "--hpo", "HP:0000510", "--out", str(out),
                 "--formats", "json", "--quiet"]) == 0
    r = json.loads((out / "result.json").read_text())
    assert r["evidence_sources"]["bundle"]["path"] == str(bundle_dir)
    assert r["findings"][0]["classification"] in ("Likely pathogenic", "Pathogenic")
    import jsonschema

    schema = json.loads((Path(__file__).resolve().parents[1] / "irdtriage" / "schema" / "result.schema.json").read_text())
    jsonschema.validate(r, schema)


def test_rebuild_replaces_only_a_bundle_folder(tmp_path, sources):
    out = tmp_path / "b"
    build_bundle(str(out), clinical=sources["clinical"], build="GRCh38")
    build_bundle(str(out), clinical=sources["clinical"], build="GRCh38")  # replacing our own bundle is fine
    (out / "notes.txt").write_text("mine")
    with pytest.raises(InputError, match="holds files irdtriage did not write"):
        build_bundle(str(out), clinical=sources["clinical"], build="GRCh38")
    assert os.path.exists(out / "notes.txt")


def _outputs(tmp_path, *args):
    """Run the real CLI (subprocess) and read back every output it wrote."""
    import csv
    import subprocess
    import sys

    root = Path(__file__).resolve().parents[1]
    out = tmp_path / "all_out"
    env = dict(os.environ, NO_COLOR="1", COLUMNS="200", PYTHONPATH=str(root))
    r = subprocess.run([sys.executable, "-m", "irdtriage", "triage", *args, "--out", str(out)], capture_output=True,
                       text=True, env=env, timeout=600)
    assert r.returncode == 0, r.stderr
    with open(out / "findings.tsv", newline="") as fh:
        rows = list(csv.DictReader(fh, delimiter="\t"))
    with pysam.VariantFile(str(out / "findings.vcf.gz")) as vf:
        header = [str(h).strip() for h in vf.header.records if h.key == "irdtriage_evidence"]
    return r.stdout, json.loads((out / "result.json").read_text()), (out / "report.html").read_text(), rows, header


def test_evidence_sources_appear_in_every_output(tmp_path, bundle_dir):
    """The bundle's sources (names, versions, dates, checksums; from the ClinVar-layout
    ##fileDate and the gnomAD-layout file names) reach the terminal header, the HTML run block,
    the findings VCF header and a TSV column just before ``caution``."""
    vcf = patient_vcf(tmp_path / "p.vcf", [(RPGRIP1_NULL, NULL_CSQ, "1/1:0,35:35:99")])
    term, res, html, rows, header = _outputs(tmp_path, vcf, "--resources", str(bundle_dir), "--hpo", "HP:0000510")
    manifest = json.loads((bundle_dir / "manifest.json").read_text())
    sha = {c["kind"]: c["sha256"] for c in manifest["contents"]}
    assert set(sha) == {"population", "clinical", "scores"}
    flat = "".join(term.split())  # the terminal wraps long lines
    for kind, digest in sha.items():
        assert digest in flat and digest in html, kind  # every bundle file's checksum
        assert any(f"ID={kind}" in h and digest in h for h in header), (kind, header)
    assert "version4.1" in flat and "date2024-05-02" in flat  # gnomAD file name, ClinVar ##fileDate
    assert "version 4.1" in html and "2024-05-02" in html
    assert any('Version="4.1"' in h for h in header) and any('Date="2024-05-02"' in h for h in header)
    # the terminal shows the sources in the header, before the gene hypotheses
    assert term.index("Evidence: population frequencies") < term.index("Gene hypotheses")
    # TSV: a column just before the final caution names the sources behind the row's values
    cols = list(rows[0])
    assert cols[-2:] == ["evidence_sources", "caution"]
    null = next(r for r in rows if r["pos"] == str(RPGRIP1_NULL[1]))
    assert "frequency: bundle" in null["evidence_sources"] and "clinical: bundle" in null["evidence_sources"]
    assert res["evidence_sources"]["bundle"]["sources"][0]["bundle_sha256"] in sha.values()


def test_no_evidence_source_says_none_given(tmp_path):
    vcf = patient_vcf(tmp_path / "p.vcf", [(RPGRIP1_NULL, NULL_CSQ, "1/1:0,35:35:99")])
    term, res, html, rows, header = _outputs(tmp_path, vcf, "--hpo", "HP:0000510")
    assert res["evidence_sources"] == {"bundle": None, "files": [], "online": None}
    assert "Evidence sources: none given" in term
    assert "none given" in html[html.index('id="run"'):]
    assert header == ['##irdtriage_evidence=<ID=none,Description="none given: no evidence bundle, file or online source">']
    assert {r["evidence_sources"] for r in rows} == {"none given"}
