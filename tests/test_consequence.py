"""Consequence read from CSQ / ANN INFO annotation, through real VCFs read by pysam.

Field orders: the ANN layout is the published functional-annotation field specification
('Allele | Annotation | Annotation_Impact | Gene_Name | Gene_ID | Feature_Type | Feature_ID |
Transcript_BioType | Rank | HGVS.c | HGVS.p | cDNA.pos / cDNA.length | CDS.pos / CDS.length |
AA.pos / AA.length | Distance | ERRORS / WARNINGS / INFO'); the CSQ layout is whatever
the header's "Format:" declares.  Transcript IDs: RPE65 MANE Select NM_000329.3 /
ENST00000262340.6 and RHO NM_000539.3 / ENST00000296271.4 (MANE release 1.5).
Sequence Ontology term names from the Sequence Ontology (so.obo); their severity order is
common practice among annotators.
"""
from __future__ import annotations

import pysam

from irdtriage.consequence import SEVERITY, annotation_layouts, most_severe, pick_annotation, sort_terms
from irdtriage.consequence.annotations import csq_allele, parse_layout
from irdtriage.vcf import read_vcf

from test_vcf import PANEL, vcf_text  # noqa: E402  (same folder; shared real-file helpers)

CSQ_FIELDS = ("Allele|Consequence|IMPACT|SYMBOL|Gene|Feature_type|Feature|BIOTYPE|EXON|INTRON|HGVSc|HGVSp|"
              "cDNA_position|CDS_position|Protein_position|Amino_acids|Codons|MANE_SELECT|REVEL|SpliceAI_pred_DS_AG|gnomADe_AF|CLIN_SIG")
CSQ_HEADER = f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {CSQ_FIELDS}">\n'
ANN_HEADER = ("##INFO=<ID=ANN,Number=.,Type=String,Description=\"Functional annotations: 'Allele | Annotation | "
              "Annotation_Impact | Gene_Name | Gene_ID | Feature_Type | Feature_ID | Transcript_BioType | Rank | "
              "HGVS.c | HGVS.p | cDNA.pos / cDNA.length | CDS.pos / CDS.length | AA.pos / AA.length | Distance | "
              "ERRORS / WARNINGS / INFO' \">\n")


def annotated_vcf(tmp_path, records, extra_header, name="ann.vcf"):
    text = vcf_text(records)
    text = text.replace("##FORMAT=<ID=GT", extra_header + "##FORMAT=<ID=GT", 1)
    p = tmp_path / name
    p.write_text(text)
    return p


def csq(*fields):
    return "|".join(fields)


GT = "\tGT:AD:DP:GQ\t0/1:10,10:20:60"


def test_layouts_from_header(tmp_path):
    p = annotated_vcf(tmp_path, [], CSQ_HEADER + ANN_HEADER)
    with pysam.VariantFile(str(p)) as vf:
        lay = annotation_layouts(vf.header)
    assert lay["CSQ"] == CSQ_FIELDS.split("|")
    assert lay["ANN"][:4] == ["Allele", "Annotation", "Annotation_Impact", "Gene_Name"]
    assert lay["ANN"][11] == "cDNA.pos / cDNA.length" and lay["ANN"][-1] == "ERRORS / WARNINGS / INFO"
    assert len(lay["ANN"]) == 16  # ANN specification: 16 sub-fields
    assert parse_layout("no layout here") == []


def test_csq_prefers_mane_transcript_over_more_severe_other(tmp_path):
    e_mane = csq("T", "missense_variant", "MODERATE", "RPE65", "ENSG00000116745", "Transcript", "ENST00000262340.6",
                 "protein_coding", "11/14", "", "ENST00000262340.6:c.1022T>C", "ENSP00000262340.5:p.Leu341Ser",
                 "1100", "1022", "341", "L/S", "cTg/cCg", "NM_000329.3", "0.9", "0.01", "1e-05", "pathogenic")
    e_other = csq("T", "stop_gained&NMD_transcript_variant", "HIGH", "RPE65", "ENSG00000116745", "Transcript",
                  "ENST00000999999.1", "nonsense_mediated_decay", "3/5", "", "ENST00000999999.1:c.100C>T",
                  "ENSP00000999999.1:p.(Gln34Ter)", "", "", "", "", "", "", "", "", "", "")
    rec = "1\t68431000\t.\tC\tT\t50\tPASS\tAC=1;AF=0.5;AN=2;CSQ=" + e_other + "," + e_mane + GT
    res = read_vcf(annotated_vcf(tmp_path, [rec], CSQ_HEADER), PANEL)
    assert not any("no CSQ/ANN" in w for w in res.warnings)
    v = res.variants[0]
    with pysam.VariantFile(str(tmp_path / "ann.vcf")) as vf:
        lay = annotation_layouts(vf.header)
    a = pick_annotation(v, lay, PANEL, ["RPE65"])
    assert a.is_mane and a.transcript == "ENST00000262340.6" and a.source == "CSQ"
    assert a.consequence == ("missense_variant",) and a.impact == "MODERATE"
    assert a.hgvs_c == "c.1022T>C" and a.hgvs_p == "p.Leu341Ser" and a.exon == "11/14" and a.intron == ""
    assert a.extra["Amino_acids"] == "L/S" and a.extra["REVEL"] == "0.9" and a.extra["CLIN_SIG"] == "pathogenic"
    assert a.extra["SpliceAI_pred_DS_AG"] == "0.01" and a.extra["gnomADe_AF"] == "1e-05"
    # without MANE in the panel: most severe among panel-gene transcripts
    a2 = pick_annotation(v, lay, None, ["RPE65"])
    assert not a2.is_mane and a2.consequence == ("stop_gained", "NMD_transcript_variant")
    assert a2.hgvs_p == "p.(Gln34Ter)"  # parenthesised prediction kept as given


def test_csq_multiallelic_minimal_alleles_and_fallbacks(tmp_path):
    # REF ATT, ALT A and AT: every allele shares the first base, so CSQ writes '-' and 'T'
    # (minimal allele convention, from memory); a third gene outside the panel is more severe.
    e1 = csq("-", "frameshift_variant", "HIGH", "RHO", "", "Transcript", "NM_000539.3", "protein_coding", "2/5", "",
             "NM_000539.3:c.400_401del", "NP_000530.1:p.(Leu134fs)", *[""] * 10)
    e2 = csq("T", "inframe_deletion", "MODERATE", "RHO", "", "Transcript", "NM_000539.3", "protein_coding", "2/5",
             "", "NM_000539.3:c.401del", "NP_000530.1:p.Leu134%3D", *[""] * 10)
    e3 = csq("T", "transcript_ablation", "HIGH", "OTHER1", "", "Transcript", "NM_123456.1", "protein_coding", "", "",
             "", "", *[""] * 10)
    rec = "3\t129530000\t.\tATT\tA,AT\t50\tPASS\tAC=1,1;AF=0.5,0.5;AN=2;CSQ=" + ",".join([e1, e2, e3]) + \
        "\tGT:AD:DP:GQ\t1/2:0,10,10:20:60"
    res = read_vcf(annotated_vcf(tmp_path, [rec], CSQ_HEADER), PANEL)
    with pysam.VariantFile(str(tmp_path / "ann.vcf")) as vf:
        lay = annotation_layouts(vf.header)
    v1, v2 = res.variants
    assert csq_allele("ATT", ("A", "AT"), 1) == "-" and csq_allele("ATT", ("A", "AT"), 2) == "T"
    assert csq_allele("A", ("G", "AT"), 2) == "AT"  # G does not share the base: nothing trimmed
    a1 = pick_annotation(v1, lay, PANEL, ["RHO"])
    assert a1.consequence == ("frameshift_variant",) and a1.is_mane and a1.hgvs_c == "c.400_401del"
    a2 = pick_annotation(v2, lay, PANEL, ["RHO"])
    assert a2.consequence == ("inframe_deletion",) and a2.hgvs_p == "p.Leu134="  # %3D decoded
    # no panel gene given: most severe overall (the out-of-panel transcript ablation)
    a3 = pick_annotation(v2, lay, PANEL, [])
    assert a3.consequence == ("transcript_ablation",) and a3.gene == "OTHER1"


def test_ann_entries_exon_intron_and_split_alleles(tmp_path):
    def ann(allele, term, impact, gene, tx, rank, c, p=""):
        return "|".join([allele, term, impact, gene, "ENSG1", "transcript", tx, "protein_coding", rank, c, p,
                         "", "", "", "", ""])
    entries = [
        ann("G", "intron_variant", "MODIFIER", "RPE65", "NM_000329.3", "4/13", "c.353+20A>C"),
        ann("G", "splice_region_variant&intron_variant", "LOW", "RPE65", "NM_001999999.1", "4/13", "c.353+5A>C"),
        ann("T", "missense_variant", "MODERATE", "RPE65", "NM_000329.3", "5/14", "c.400A>T", "p.Lys134Ter"),
    ]
    rec = "1\t68432000\t.\tA\tG,T\t50\tPASS\tAC=1,1;AF=0.5,0.5;AN=2;ANN=" + ",".join(entries) + \
        "\tGT:AD:DP:GQ\t1/2:0,10,10:20:60"
    res = read_vcf(annotated_vcf(tmp_path, [rec], ANN_HEADER), PANEL)
    with pysam.VariantFile(str(tmp_path / "ann.vcf")) as vf:
        lay = annotation_layouts(vf.header)
    g, t = res.variants
    ag = pick_annotation(g, lay, PANEL, ["RPE65"])
    assert ag.source == "ANN" and ag.is_mane and ag.transcript == "NM_000329.3"
    assert ag.consequence == ("intron_variant",) and ag.intron == "4/13" and ag.exon == ""
    assert ag.extra["entries_for_allele"] == "2"
    at = pick_annotation(t, lay, PANEL, ["RPE65"])
    assert at.consequence == ("missense_variant",) and at.exon == "5/14" and at.hgvs_c == "c.400A>T"
    # other gene order: without MANE, the splice-region entry outranks the plain intronic one
    ag2 = pick_annotation(g, lay, None, ["RPE65"])
    assert ag2.consequence == ("splice_region_variant", "intron_variant")


def test_unannotated(tmp_path):
    rec = "1\t68431000\t.\tC\tT\t50\tPASS\tAC=1;AF=0.5;AN=2" + GT
    res = read_vcf(annotated_vcf(tmp_path, [rec], ""), PANEL)
    a = pick_annotation(res.variants[0], {}, PANEL, ["RPE65"])
    assert a.gene == "RPE65" and a.consequence == ("not annotated",) and a.source == "none"
    assert any("annotate with your annotator first" in w for w in res.warnings)


def test_severity_order():
    # Sequence Ontology terms; order common practice (loss-of-function > protein-altering >
    # splice region > synonymous > UTR > intronic > flanking > intergenic)
    chain = ["transcript_ablation", "splice_acceptor_variant", "stop_gained", "frameshift_variant",
             "start_lost", "inframe_deletion", "missense_variant", "splice_region_variant",
             "synonymous_variant", "5_prime_UTR_variant", "intron_variant", "upstream_gene_variant",
             "intergenic_variant"]
    assert [SEVERITY[t] for t in chain] == sorted(SEVERITY[t] for t in chain)
    assert most_severe(["intron_variant&splice_region_variant", "missense_variant"]) == "missense_variant"
    assert most_severe([]) is None
    assert sort_terms(["made_up_term&synonymous_variant"]) == ("synonymous_variant", "made_up_term")


def test_intake_carries_layouts(tmp_path):
    rec = "1\t68431000\t.\tC\tT\t50\tPASS\tAC=1;AF=0.5;AN=2;CSQ=T|missense_variant" + GT
    res = read_vcf(annotated_vcf(tmp_path, [rec], CSQ_HEADER), PANEL)
    assert res.header_info["annotation_layouts"]["CSQ"] == CSQ_FIELDS.split("|")
    a = pick_annotation(res.variants[0], res.header_info["annotation_layouts"], PANEL, ["RPE65"])
    assert a.consequence == ("missense_variant",) and a.gene == "RPE65"
