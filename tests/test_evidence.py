"""Evidence collection from real bgzipped + tabix-indexed files read through pysam/htslib.

External checks:
* Filtering AF (Whiffin et al., Genet Med 2017;19:1151-1158) reproduces the values printed in
  ClinGen Hearing Loss expert-panel ClinVar submissions: GJB2 p.Arg127His 3021/30612 South
  Asian alleles -> "9.5%" (RCV001257158) and GJB2 p.(Gly160Ser) 55/24922 African alleles ->
  "0,17%" (RCV001257159), both printed truncated to the shown digits.
* AC = 1: the bound solves 1 - exp(-lambda) = 0.05, lambda = -ln(0.95) (Poisson, textbook).
"""
import math

import pysam
import pytest

from irdtriage.acmg.engine import evaluate
from irdtriage.acmg.rules import load_rules
from irdtriage.errors import InputError
from irdtriage.evidence import EvidenceConfig, EvidenceSources, collect_evidence, filtering_af
from irdtriage.evidence.values import spliceai_from_string
from irdtriage.models import Annotation, Finding, Gene, Span, Variant

RULES = load_rules()


def test_faf_matches_expert_panel_records():
    assert math.floor(filtering_af(3021, 30612) * 1000) / 10 == 9.5
    assert math.floor(filtering_af(55, 24922) * 10000) / 100 == 0.17


def test_faf_single_allele_closed_form():
    assert filtering_af(1, 100000) == pytest.approx(-math.log(0.95) / 100000, rel=1e-9)
    assert filtering_af(0, 100000) == 0.0
    assert filtering_af(None, 100) is None and filtering_af(3, 0) is None
    with pytest.raises(ValueError):
        filtering_af(5, 3)


def _bgzip_vcf(tmp_path, name, header_lines, records):
    p = tmp_path / name
    contig = "##contig=<ID=1,length=248956422>\n##contig=<ID=3,length=198295559>\n"
    body = "".join(r + "\n" for r in records)
    p.write_text("##fileformat=VCFv4.2\n" + contig + "".join(h + "\n" for h in header_lines)
                 + "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n" + body)
    return pysam.tabix_index(str(p), preset="vcf", force=True)


POP_HEADER = [
    f'##INFO=<ID={k},Number={n},Type={t},Description="{k}">'
    for k, n, t in [("AC", "A", "Integer"), ("AN", "1", "Integer"), ("AF", "A", "Float"),
                    ("nhomalt", "A", "Integer"), ("AC_nfe", "A", "Integer"), ("AN_nfe", "1", "Integer"),
                    ("AF_nfe", "A", "Float"), ("nhomalt_nfe", "A", "Integer"), ("AC_afr", "A", "Integer"),
                    ("AN_afr", "1", "Integer"), ("AF_afr", "A", "Float"), ("AC_fin", "A", "Integer"),
                    ("AN_fin", "1", "Integer"), ("AC_nfe_XX", "A", "Integer")]
]


@pytest.fixture
def popvcf(tmp_path):
    recs = [
        # multi-allelic record; second allele is the one queried as an anchored deletion
        "1\t1000\t.\tCAG\tC,CA\t.\tPASS\tAC=10,300;AN=200000;AF=0.00005,0.0015;nhomalt=0,2;"
        "AC_nfe=8,290;AN_nfe=100000;AF_nfe=0.00008,0.0029;nhomalt_nfe=0,2;AC_afr=2,10;AN_afr=40000;"
        "AF_afr=0.00005,0.00025;AC_fin=0,0;AN_fin=10000;AC_nfe_XX=1,1",
        "1\t2000\t.\tA\tT\t.\tPASS\tAC=14000;AN=200000;AF=0.07;nhomalt=500;AC_nfe=7000;AN_nfe=100000;"
        "AF_nfe=0.07;nhomalt_nfe=300;AC_afr=100;AN_afr=40000;AF_afr=0.0025;AC_fin=0;AN_fin=10000",
    ]
    return _bgzip_vcf(tmp_path, "pop.vcf", POP_HEADER, recs)


CLIN_HEADER = [
    '##INFO=<ID=CLNSIG,Number=.,Type=String,Description="significance">',
    '##INFO=<ID=CLNREVSTAT,Number=.,Type=String,Description="review">',
    '##INFO=<ID=GENEINFO,Number=1,Type=String,Description="gene">',
    '##INFO=<ID=HGVSp,Number=1,Type=String,Description="protein change">',
]


@pytest.fixture
def clinvcf(tmp_path):
    recs = [
        # RHO codon 296 (invented coordinates for the test; codon positions 3000-3002)
        "3\t3000\t101\tA\tG\t.\t.\tCLNSIG=Pathogenic;CLNREVSTAT=criteria_provided,_multiple_submitters;"
        "GENEINFO=RHO:6010;HGVSp=NP_000530.1:p.Lys296Glu",
        "3\t3001\t102\tA\tC\t.\t.\tCLNSIG=Pathogenic;CLNREVSTAT=criteria_provided,_single_submitter;"
        "GENEINFO=RHO:6010;HGVSp=p.Lys296Thr",
        "3\t3002\t103\tG\tA\t.\t.\tCLNSIG=Conflicting_classifications_of_pathogenicity;"
        "CLNREVSTAT=criteria_provided,_conflicting_classifications;GENEINFO=RHO:6010;HGVSp=p.Lys296Lys",
    ]
    return _bgzip_vcf(tmp_path, "clin.vcf", CLIN_HEADER, recs)


@pytest.fixture
def revel_table(tmp_path):
    p = tmp_path / "revel.tsv"
    p.write_text("#chrom\tpos\tref\talt\tscore\n3\t3000\tA\tG\t0.951\n3\t3000\tA\tC\t0.20\n")
    return pysam.tabix_index(str(p), seq_col=0, start_col=1, end_col=1, meta_char="#", force=True)


def test_population_lookup_multiallelic_and_normalised(popvcf):
    with EvidenceSources.open(popfreq_vcf=popvcf) as src:
        assert set(src.population.populations) == {"nfe", "afr", "fin"}  # sex-split keys ignored
        ev = collect_evidence(Variant("chr1", 1000, "CAG", "CA"), None, None, src)
        p = ev["population"]
        assert p["found"] and p["ac"] == 300 and p["an"] == 200000 and p["nhomalt"] == 2
        assert p["populations"]["nfe"]["af"] == pytest.approx(0.0029)
        # filtering AF (Whiffin et al. 2017): one-sided 95 % Poisson lower bound for AC 290 of
        # AN 100,000, typed from scipy 1.17.1: scipy.stats.chi2.ppf(0.05, 2 * 290) / 2 / 100000
        assert p["populations"]["nfe"]["faf95"] == pytest.approx(0.0026256908, rel=1e-6)
        # the same deletion written with padding (trim-normalised) matches the same record
        ev2 = collect_evidence(Variant("1", 1001, "AG", "A"), None, None, src)
        assert ev2["population"]["ac"] == 300
        absent = collect_evidence(Variant("1", 1500, "G", "T"), None, None, src)["population"]
        assert absent["found"] is False and absent["af"] == 0.0


def test_abca4_frequent_allele_from_population_vcf_not_ba1(popvcf):
    g = Gene("ABCA4", "HGNC:34", "ABCA4", "NM_000350.3", "ENST", "NP", "-", Span("1", 1, 5000), None,
             ("AR",), ("LOF",), (), "visual_cycle")
    a = Annotation("ABCA4", "NM_000350.3", ("missense_variant",), "c.5603A>T", "p.(Asn1868Ile)", "40/50",
                   is_mane=True, extra={"Protein_position": "1868/2273"})
    v = Variant("1", 2000, "A", "T")
    with EvidenceSources.open(popfreq_vcf=popvcf) as src:
        ev = collect_evidence(v, a, None, src)
    res = {r.code: r for r in evaluate(Finding("F1", v, "ABCA4", a, evidence=ev), g, RULES)}
    assert ev["population"]["populations"]["nfe"]["af"] == pytest.approx(0.07)  # > 5 %
    assert res["BA1"].met is False and "exception" in res["BA1"].reason
    assert res["BS2"].met is False  # ABCA4 not curated as fully penetrant (hypomorphs exist)


def test_clinical_assertions_ps1_pm5(clinvcf, revel_table):
    g = Gene("RHO", "HGNC:10012", "rhodopsin", "NM_000539.3", "ENST", "NP", "+", Span("3", 1, 9000), None,
             ("AD", "AR"), ("LOF", "GOF", "DN"), (), "step")
    # different nucleotide, same amino-acid change as record 101 -> PS1; record 102 -> PM5
    v = Variant("3", 3000, "A", "G")
    a = Annotation("RHO", "NM_000539.3", ("missense_variant",), "c.886A>G", "p.Lys296Glu", "4/5", is_mane=True,
                   extra={"Protein_position": "296/348"})
    with EvidenceSources.open(clinical_vcf=clinvcf, score_tables=[revel_table]) as src:
        ev = collect_evidence(v, a, None, src)
        assert ev["revel"] == pytest.approx(0.951) and ev["scores"]["revel"] == pytest.approx(0.951)
        res = {r.code: r for r in evaluate(Finding("F1", v, "RHO", a, evidence=ev), g, RULES)}
        # same variant present -> evidence only, PS1 needs a different nucleotide change
        assert res["PS1"].met is False and "identical variant" in res["PS1"].reason
        assert res["PM5"].met is True and "Lys296Thr" in res["PM5"].reason
        v2 = Variant("3", 3002, "G", "A")  # another nucleotide change giving p.Lys296Glu
        a2 = Annotation("RHO", "NM_000539.3", ("missense_variant",), "c.888G>A", "p.Lys296Glu", "4/5",
                        is_mane=True, extra={"Protein_position": "296/348"})
        ev2 = collect_evidence(v2, a2, None, src)
        res2 = {r.code: r for r in evaluate(Finding("F2", v2, "RHO", a2, evidence=ev2), g, RULES)}
        assert res2["PS1"].met is True and res2["PS1"].strength == "Strong"
        assert "101" in res2["PS1"].reason
        # the conflicting record at 3002 never counts
        assert all("Conflicting" not in (res2[c].reason) for c in ("PS1", "PM5"))


def test_missing_index_is_input_error(tmp_path):
    plain = tmp_path / "plain.vcf"
    plain.write_text("##fileformat=VCFv4.2\n##contig=<ID=1>\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n"
                     "1\t5\t.\tA\tG\t.\t.\t.\n")
    gz = str(plain) + ".gz"
    pysam.tabix_compress(str(plain), gz)  # bgzipped but not indexed
    with pytest.raises(InputError) as e:
        EvidenceSources.open(popfreq_vcf=gz)
    assert "index" in e.value.problem
    with pytest.raises(InputError):
        EvidenceSources.open(clinical_vcf=str(tmp_path / "missing.vcf.gz"))


def test_info_keys_and_annotation_columns():
    v = Variant("1", 5, "A", "G", info={"AF": 0.5, "gnomADe_AF": "0.0012&0.0009", "REVEL_rankscore": 0.99,
                                        "SpliceAI": "G|RHO|0.01|0.00|0.35|0.00|1|2|3|4,G|OTHER|0.9|0|0|0|1|1|1|1"})
    a = Annotation("RHO", extra={"REVEL_score": ".&0.71", "CLIN_SIG": "likely_pathogenic",
                                 "AF_grpmax": "0.002"})
    ev = collect_evidence(v, a, EvidenceConfig(), None)
    # patient-level AF (0.5) is never read as a population frequency
    assert ev["population"]["af"] == pytest.approx(0.0012)
    assert ev["population"]["popmax_af"] == pytest.approx(0.002)
    assert ev["revel"] == pytest.approx(0.71)  # rank score ignored
    assert ev["spliceai_max"] == pytest.approx(0.35)  # entry for this gene and allele
    assert ev["clinsig"] == "likely_pathogenic"
    assert ev["clinical"] is None and ev["scores"] == {}


def test_annotation_spliceai_columns_and_nothing():
    a = Annotation("RHO", extra={"SpliceAI_pred_DS_AG": "0.05", "SpliceAI_pred_DS_AL": "0.00",
                                 "SpliceAI_pred_DS_DG": "0.12", "SpliceAI_pred_DS_DL": "0.01"})
    ev = collect_evidence(Variant("1", 5, "A", "G"), a)
    assert ev["spliceai_max"] == pytest.approx(0.12)
    empty = collect_evidence(Variant("1", 5, "A", "G"), Annotation("RHO"))
    assert empty["population"] is None and empty["revel"] is None and empty["spliceai_max"] is None


def test_spliceai_string_parse():
    assert spliceai_from_string("T|ABCA4|0.00|0.80|0.10|0.00|1|2|3|4", "T", "ABCA4")["DS_AL"] == 0.8
    assert spliceai_from_string("garbage") is None


# --- absence from a declared frequency resource ------------------------------------------------
# An annotator run with a frequency resource writes an empty field for an allele the resource
# does not hold (VCF 4.2 INFO with a header-declared "Format:" layout; the emptiness convention is
# common practice for per-transcript annotation).  Read through pysam and the project's reader.
CSQ_HEADER = ('##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. '
              'Format: Allele|Consequence|IMPACT|SYMBOL|Feature|HGVSc|HGVSp|EXON|gnomADe_AF|gnomADg_AF|MAX_AF">')


@pytest.fixture
def csq_vcf(tmp_path):
    text = "\n".join([
        "##fileformat=VCFv4.2", "##contig=<ID=3,length=198295559>", CSQ_HEADER,
        "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO",
        "3\t129528800\t.\tC\tT\t.\tPASS\tCSQ=T|stop_gained|HIGH|RHO|ENST00000296271|c.1C>T|p.Gln1Ter|1/5|||",
        "3\t129528810\t.\tG\tA\t.\tPASS\tCSQ=A|missense_variant|MODERATE|RHO|ENST00000296271|c.2G>A|p.Arg2His|1/5|0.0004||0.0011",
    ]) + "\n"
    p = tmp_path / "csq.vcf"
    p.write_text(text)
    gz = str(p) + ".gz"
    pysam.tabix_compress(str(p), gz)
    pysam.tabix_index(gz, preset="vcf")
    return gz


def _csq_findings(path):
    from irdtriage.consequence.annotations import annotation_layouts, pick_annotation

    with pysam.VariantFile(path) as vf:
        layouts = annotation_layouts(vf.header)
        out = []
        for rec in vf:
            v = Variant(rec.chrom, rec.pos, rec.ref, rec.alts[0], info=dict(rec.info), original_ref=rec.ref,
                        original_alts=tuple(rec.alts))
            out.append((v, pick_annotation(v, layouts, None, ["RHO"])))
    return layouts, out


def test_declared_but_empty_frequency_is_absent(csq_vcf):
    layouts, ((v_abs, a_abs), (v_obs, a_obs)) = _csq_findings(csq_vcf)
    assert "gnomADe_AF" in layouts["CSQ"]
    # the pipeline passes the declared layout: either through the config or as an argument
    for ev in (collect_evidence(v_abs, a_abs, EvidenceConfig().with_layouts(layouts)),
               collect_evidence(v_abs, a_abs, None, None, layouts=layouts)):
        pop = ev["population"]
        assert pop["absent_declared"] is True and pop["found"] is False
        assert pop["af"] == 0.0 and pop["an"] is None
        assert pop["note"] == "absent: empty gnomADe_AF/gnomADg_AF/MAX_AF in an annotation that declares them"
    # without the declared layout the empty columns are invisible: no frequency data at all
    assert collect_evidence(v_abs, a_abs)["population"] is None
    # a declared column with a value is an observation, not absence
    obs = collect_evidence(v_obs, a_obs, EvidenceConfig().with_layouts(layouts))["population"]
    assert obs["af"] == pytest.approx(0.0004) and obs["popmax_af"] == pytest.approx(0.0011)
    assert not obs.get("absent_declared")


def test_absence_detected_from_empty_values_kept_in_extra():
    # if the annotation keeps empty columns in Annotation.extra, no layout is needed
    a = Annotation("RHO", extra={"gnomADe_AF": "", "gnomADg_AF": "."})
    pop = collect_evidence(Variant("3", 5, "A", "G"), a)["population"]
    assert pop["absent_declared"] is True and pop["declared_empty"] == ["gnomADe_AF", "gnomADg_AF"]
    # a value for any declared frequency field in INFO means the allele is not absent
    v = Variant("3", 5, "A", "G", info={"gnomADg_AF": 0.2})
    assert collect_evidence(v, a)["population"]["af"] == pytest.approx(0.2)
    # declared layout without any frequency column: nothing to conclude
    cfg = EvidenceConfig().with_layouts({"CSQ": ["Allele", "Consequence", "SYMBOL", "REVEL"]})
    assert collect_evidence(Variant("3", 5, "A", "G"), Annotation("RHO"), cfg)["population"] is None


def test_absence_counts_for_pm2_only(csq_vcf, tmp_path):
    layouts, ((v, a), _) = _csq_findings(csq_vcf)
    ev = collect_evidence(v, a, EvidenceConfig().with_layouts(layouts))
    g = Gene("RHO", "HGNC:10012", "RHO", "NM_000539.3", "", "", "+", Span("3", 1, 2), None, ("AD",), ("LOF",), (),
             "x")
    crit = {c.code: c for c in evaluate(Finding("F1", v, "RHO", a, evidence=ev), g, RULES)}
    assert crit["PM2"].met is True and crit["PM2"].strength == "Supporting"
    # the reason names each field in plain words, the raw key in brackets
    assert crit["PM2"].reason.startswith("absent: empty gnomAD exomes allele frequency (annotation field gnomADe_AF)")
    assert crit["BA1"].met is False and crit["BS1"].met is False and crit["BS2"].met is None
    # setting off (panels/criteria.yaml frequency.absent_when_declared_empty): no frequency data
    from irdtriage.acmg.rules import default_path

    text = default_path().read_text().replace("absent_when_declared_empty: true", "absent_when_declared_empty: false")
    off = tmp_path / "criteria.yaml"
    off.write_text(text)
    crit = {c.code: c for c in evaluate(Finding("F1", v, "RHO", a, evidence=ev), g, load_rules(off))}
    assert all(crit[c].met is None for c in ("BA1", "BS1", "PM2", "BS2"))
    assert "absent_when_declared_empty is off" in crit["PM2"].reason
