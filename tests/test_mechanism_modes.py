"""Disease mechanism per inheritance mode, through the real pipeline on VCFs written here.

Each case is a heterozygous (or homozygous) predicted null allele in a gene whose modes differ in
mechanism; the VCF carries a CSQ field with the EXON number, as annotators write it, and is
read by pysam through ``irdtriage.pipeline.triage``. Expected fits come from the sources named at
each test (the gene-disease facts), from the ClinGen SVI PVS1 decision tree (Abou Tayoun et al., Hum
Mutat 2018;39:1517-1524: PVS1 presumes loss of function is the disease mechanism; a stop in the
last exon escapes nonsense-mediated decay) and from Mendelian genetics (common practice). Gene
positions lie inside the GRCh38 MANE v1.5 spans and the transcripts are the MANE v1.5 Select
(or Plus Clinical) accessions, typed in from the MANE v1.5 summary; exon counts of the
transcripts are from memory unless a source is named. The variants themselves are constructed
for the test.
"""
from __future__ import annotations

from pathlib import Path


from irdtriage.pipeline import triage
from vcf_builder import write_csq_vcf

CSQ = ("Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
       "Protein_position|gnomADe_AF")
HET, HOM, REF = "0/1:16,15:31:99", "1/1:0,30:30:99", "0/0:32,0:32:99"


def write_vcf(path: Path, samples: list[str], records: list[tuple]) -> str:
    return write_csq_vcf(path, samples, records, CSQ)


def csq(alt, gene, tx, consequence, exon, c, p, prot, intron=""):
    return "|".join([alt, consequence, "HIGH", gene, "", "Transcript", tx, "protein_coding", exon, intron, c, p,
                     prot, ""])


def one(tmp_path, chrom, pos, ref, alt, entry, gt=HET, **kw):
    vcf = write_vcf(tmp_path / "case.vcf", ["P1"], [(chrom, pos, ref, alt, entry, [gt])])
    return triage(vcf, sample="P1", hpo="HP:0000510", **kw)


def gene_row(r, symbol):
    return next(g for g in r["genes"] if g["symbol"] == symbol)


def crit(r, code):
    return next(c for c in r["findings"][0]["criteria"] if c["code"] == code)


# ------------------------------------------------------------------ nulls that make a dominant fit
def test_prph2_null_inherited_from_an_affected_parent_fits_dominant(tmp_path):
    # Source: PRPH2 splice null c.828+3A>T causes autosomal dominant retinal dystrophy in 19
    # families (Shankar et al., Invest Ophthalmol Vis Sci 2016, PMC4736744); c.828+2T>C segregated
    # with dominant disease in four relatives (PMID 35042295): heterozygous loss of function is a
    # dominant mechanism. PRPH2 has three exons (from memory).
    entry = csq("A", "PRPH2", "NM_000322.5", "stop_gained", "1/3", "c.400C>T", "p.(Gln134Ter)", "134/346")
    vcf = write_vcf(tmp_path / "fam.vcf", ["KID", "MUM", "DAD"], [
        ("chr6", 42700000, "G", "A", entry, [HET, "0/1:17,16:33:99", REF]),
    ])
    ped = tmp_path / "fam.ped"  # mother affected (2) and carrying the allele, father unaffected
    ped.write_text("F\tKID\tDAD\tMUM\t1\t2\nF\tMUM\t0\t0\t2\t2\nF\tDAD\t0\t0\t1\t1\n")
    r = triage(vcf, sample="KID", ped=str(ped), hpo="HP:0000510")
    g = gene_row(r, "PRPH2")
    assert g["genotype_fit"] == "heterozygous in a dominant gene"
    assert any("not de novo" in s for s in g["next_steps"])


def test_crx_last_exon_frameshift_fits_dominant_without_full_pvs1(tmp_path):
    # Source: heterozygous CRX frameshifts in the last exon giving altered C-termini cause dominant
    # Leber congenital amaurosis, one de novo, one from an affected father (Perrault et al., Hum
    # Mutat 2001;18:550-551, PMID 11748859, e.g. Pro263 1-bp deletion); CRX has four exons, the
    # first non-coding, 299 residues (review PMC11010719). The truncation escapes NMD (last exon,
    # ClinGen SVI PVS1 tree) and acts dominantly, so PVS1 as a loss-of-function criterion is capped.
    entry = csq("-", "CRX", "NM_000554.6", "frameshift_variant", "4/4", "c.787del", "p.(Pro263fs)", "263/299")
    r = one(tmp_path, "chr19", 47842000, "AC", "A", entry)
    g = gene_row(r, "CRX")
    assert g["genotype_fit"] == "heterozygous in a dominant gene"
    pvs1 = crit(r, "PVS1")
    assert pvs1["met"] is True and pvs1["strength"] == "Moderate"  # not VeryStrong, not Strong
    assert "capped" in pvs1["reason"] and "dominant" in pvs1["reason"]


def test_crx_early_frameshift_is_a_recessive_carrier_allele(tmp_path):
    # Same sources: a CRX null predicted to undergo NMD (exon 2 of 4) is not the dominant-acting
    # kind; with one allele it is a single heterozygous allele of the recessive disease.
    entry = csq("-", "CRX", "NM_000554.6", "frameshift_variant", "2/4", "c.100del", "p.(Gln34fs)", "34/299")
    r = one(tmp_path, "chr19", 47830000, "AC", "A", entry)
    g = gene_row(r, "CRX")
    assert g["genotype_fit"] == "single heterozygous in a recessive gene"
    assert any("not counted for AD" in s for s in g["next_steps"])
    assert crit(r, "PVS1")["strength"] == "VeryStrong"  # NMD predicted in MANE Select: loss of function


def test_topors_null_fits_dominant_and_gets_pvs1(tmp_path):
    # Source: ClinGen Retina GCEP, TOPORS-related retinopathy, definitive (2023-04-06; GenCC
    # GENCC_000102-HGNC_21653): nonsense and frameshift alleles in adRP, mechanism haploinsufficiency.
    # TOPORS has three exons, most of the coding sequence in the last (from memory).
    entry = csq("T", "TOPORS", "NM_005802.5", "stop_gained", "3/3", "c.1500C>A", "p.(Tyr500Ter)", "500/1045")
    r = one(tmp_path, "chr9", 32542000, "G", "T", entry)
    assert gene_row(r, "TOPORS")["genotype_fit"] == "heterozygous in a dominant gene"
    assert crit(r, "PVS1")["met"] is True


def test_prpf8_last_exon_frameshift_fits_dominant(tmp_path):
    # Source: RP13 alleles cluster in the last exon of PRPF8 (McKie et al., Hum Mol Genet
    # 2001;10:1555-1562); last-exon truncations act dominantly (from memory). 43 exons (from memory).
    entry = csq("-", "PRPF8", "NM_006445.4", "frameshift_variant", "43/43", "c.6930del", "p.(Tyr2310fs)",
                "2310/2335")
    r = one(tmp_path, "chr17", 1651000, "GA", "G", entry)
    assert gene_row(r, "PRPF8")["genotype_fit"] == "heterozygous in a dominant gene"


def test_unc119_null_fits_dominant(tmp_path):
    # Source (from memory): heterozygous nonsense p.(Lys57Ter) in dominant cone-rod dystrophy
    # (Kobayashi et al. 2000). UNC119 has five exons (from memory).
    entry = csq("A", "UNC119", "NM_005148.4", "stop_gained", "1/5", "c.169A>T", "p.(Lys57Ter)", "57/240")
    r = one(tmp_path, "chr17", 28552000, "T", "A", entry)
    assert gene_row(r, "UNC119")["genotype_fit"] == "heterozygous in a dominant gene"


# ------------------------------------------------------------------ nulls that must not
def test_kcnj13_null_does_not_fit_dominant(tmp_path):
    # Source: heterozygous carriers of p.(Arg166Ter) had no ocular disease (Sergouniotis et al., Am J
    # Hum Genet 2011;89:183-190, PMID 21763485); dominant snowflake degeneration is the missense
    # p.(Arg162Trp) only. KCNJ13 has three exons (from memory).
    entry = csq("A", "KCNJ13", "NM_002242.4", "stop_gained", "3/3", "c.496C>T", "p.(Arg166Ter)", "166/360")
    r = one(tmp_path, "chr2", 232770000, "G", "A", entry)
    g = gene_row(r, "KCNJ13")
    assert g["genotype_fit"] == "single heterozygous in a recessive gene"
    assert any("not counted for AD" in s for s in g["next_steps"])


def test_tead1_null_makes_no_fit(tmp_path):
    # Source (from memory): Sveinsson chorioretinal atrophy is one founder missense p.(Tyr421His)
    # (Fossdal et al. 2004); no null allele is known to cause it. TEAD1 exon count from memory.
    entry = csq("T", "TEAD1", "NM_021961.6", "stop_gained", "5/12", "c.300C>T", "p.(Gln100Ter)", "100/426")
    r = one(tmp_path, "chr11", 12800000, "C", "T", entry)
    g = gene_row(r, "TEAD1")
    assert g["genotype_fit"] == "no qualifying finding"
    assert any("not counted for AD" in s and "missense" in s for s in g["next_steps"])


def test_rgr_null_does_not_fit_dominant(tmp_path):
    # Source (from memory): RGR carriers of recessive nulls are unaffected; the dominant allele is a
    # frameshift near the 3' end (Morimura et al. 1999). Seven exons (from memory).
    entry = csq("TA", "RGR", "NM_001012720.2", "frameshift_variant", "3/7", "c.200dup", "p.(Leu68fs)", "68/291")
    r = one(tmp_path, "chr10", 84250000, "T", "TA", entry)
    assert gene_row(r, "RGR")["genotype_fit"] == "single heterozygous in a recessive gene"


def test_rax2_null_does_not_fit_dominant(tmp_path):
    # Source (from memory): heterozygous parents of recessive RAX2 RP95 patients are unaffected
    # (Van de Sompele et al. 2019); dominant cone-rod dystrophy 11 is from missense. Three exons (from memory).
    entry = csq("A", "RAX2", "NM_001319074.4", "stop_gained", "2/3", "c.300C>T", "p.(Gln100Ter)", "100/184")
    r = one(tmp_path, "chr19", 3771000, "G", "A", entry)
    assert gene_row(r, "RAX2")["genotype_fit"] == "single heterozygous in a recessive gene"


def test_elovl4_biallelic_null_gives_no_retinal_fit(tmp_path):
    # Source (from memory): biallelic ELOVL4 nulls give an ichthyosis-spastic quadriplegia-intellectual
    # disability syndrome, not the retinal disease; the retinal disease (Stargardt-like macular
    # dystrophy 3) is dominant, from last-exon truncations. Six exons (from memory).
    entry = csq("A", "ELOVL4", "NM_022726.4", "stop_gained", "2/6", "c.200C>T", "p.(Gln67Ter)", "67/314")
    r = one(tmp_path, "chr6", 79930000, "G", "A", entry, gt=HOM)
    g = gene_row(r, "ELOVL4")
    assert g["genotype_fit"] == "no qualifying finding"
    assert any("not retinal" in s and "AR" in s for s in g["next_steps"])
    assert crit(r, "PVS1")["met"] is False  # loss of function is not a mechanism of a retinal mode


# ------------------------------------------------------------------ MANE Plus Clinical transcript
def test_plus_clinical_transcript_is_taken_when_mane_select_has_no_consequence(tmp_path):
    # Source: MANE v1.5 summary lists REEP6 NM_138393.4 as MANE Select and NM_001329556.3 as MANE Plus
    # Clinical (the retinal isoform, whose extra exon is intronic in the Select transcript; from memory).
    select = csq("A", "REEP6", "NM_138393.4", "intron_variant", "", "c.300+50G>A", "", "", intron="4/5")
    plus = csq("A", "REEP6", "NM_001329556.3", "stop_gained", "5/7", "c.400G>A", "p.(Trp134Ter)", "134/211")
    r = one(tmp_path, "chr19", 1495000, "G", "A", select + "," + plus)
    f = r["findings"][0]
    assert f["transcript"] == "NM_001329556.3"
    assert f["consequence"] == ["stop_gained"]
