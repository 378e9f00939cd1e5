"""PVS1 from genomic position and the panel structure alone (no EXON, no protein length in the
annotation), by the decision tree of Abou Tayoun et al., Hum Mutat 2018;39:1517-1524, Figure 1:

* nonsense/frameshift with NMD predicted -> VeryStrong (MANE Select); NMD not predicted -> Strong
  when > 10 % of the protein is removed, else Moderate;
* NMD is not predicted for a stop in the last exon or in the 3'-most 50 nt of the penultimate exon
  (the project counts 50 nt, inclusive of the stop codon's last base);
* canonical +/-1,2 splice site: exon skipping in frame -> the same removed-share test; out of frame
  with NMD -> VeryStrong; out of frame without NMD -> removed-share test;
* initiation codon -> Moderate (no alternative start curated).

Positions are typed from GA4GH phenopacket-store cases (Monarch Initiative, BSD-3-Clause; the
file named beside each), which give the GRCh38 vcfRecord with the HGVS c./p. on the MANE Select
transcript:
* RPGRIP1 NM_020366.4 (plus strand), PMID_34722527_Individual_MOL0600_1: chr14:21312500 T>A,
  c.1145T>A p.(Leu382Ter);
* RPGRIP1 PMID_26047050_Patient_SRF103: chr14:21345145 C>T, c.3565C>T p.(Arg1189Ter);
* RPGRIP1 PMID_26047050_Patient_SRF133: chr14:21345198 G>A, c.3617+1G>A -> c.3617 is the last base
  of an exon and c.3618 (chr14:21345199 + intron) starts the next one;
* RPGRIP1 PMID_21602930_QT491: chr14:21348303 C>A, c.3748+1C>A -> c.3748 (chr14:21348302) is the
  last base of an exon;
* RPGRIP1 PMID_21602930_QT511: chr14:21321257 A>G, c.1468-2A>G; PMID_30072743_individual_601_1236:
  c.1611+27G>A -> the exon c.1468..c.1611 (144 nt, a multiple of 3);
* BBS1 NM_024649.5 (plus strand), PMID_23559858_Family_A_IV_4: chr11:66510707 G>T, c.47+1G>T ->
  c.47 is chr11:66510706, the last base of exon 1, which holds the start codon (c.1 = 66510660).
From memory: RPGRIP1 has 24 exons, the exon c.3618..c.3748 is exon 23 (penultimate) and the protein
has 1,286 residues (so c.3749..c.3861 lie in the last exon); BBS1 exon 1 is uninterrupted from c.1
to c.47.  Abou Tayoun et al. do not tabulate these genes; the expected strengths below follow the
tree from these facts (arithmetic shown beside each).
"""
import pytest

from irdtriage.acmg.pvs1 import evaluate_pvs1
from irdtriage.acmg.rules import load_rules
from irdtriage.models import Annotation, Gene, Span, Variant

RULES = load_rules()


def _gene(symbol, chrom, strand, start, end):
    return Gene(symbol, "HGNC:0", symbol, "", "", "", strand, Span(chrom, start, end), None, ("AR",), ("LOF",), (),
                "x")


RPGRIP1 = _gene("RPGRIP1", "14", "+", 21280000, 21360000)
BBS1 = _gene("BBS1", "11", "+", 66490000, 66540000)


def _ann(gene, csq, c, p="", mane=True):
    return Annotation(gene.symbol, "NM_020366.4" if gene is RPGRIP1 else "NM_024649.5", (csq,), c, p, is_mane=mane)


def pvs1(gene, csq, pos, ref, alt, c, p="", mane=True):
    return evaluate_pvs1(_ann(gene, csq, c, p, mane), gene, RULES, Variant("chr" + gene.grch38.chrom, pos, ref, alt),
                         "GRCh38")


def test_nonsense_mid_gene_nmd():
    # c.1145T>A p.(Leu382Ter): exon far upstream of the last junction -> NMD -> VeryStrong
    r = pvs1(RPGRIP1, "stop_gained", 21312500, "T", "A", "c.1145T>A", "p.(Leu382Ter)")
    assert (r.met, r.strength) == (True, "VeryStrong")
    assert r.evidence["nmd_predicted"] is True and r.evidence["hgvs_c_from_structure"] == "c.1145"
    assert r.evidence["protein_length"] == 1286 and "from panel structure: exon" in r.reason
    # not MANE Select: the tree's "exon present in biologically relevant transcript" is not shown -> Strong
    assert pvs1(RPGRIP1, "stop_gained", 21312500, "T", "A", "c.1145T>A", mane=False).strength == "Strong"


def test_nonsense_antepenultimate_exon():
    # c.3565C>T p.(Arg1189Ter): stop codon c.3565-3567 in the exon ending at c.3617; the last junction
    # follows c.3748, so the stop ends 3748 - 3567 + 1 = 182 nt before it (> 50) -> NMD -> VeryStrong
    r = pvs1(RPGRIP1, "stop_gained", 21345145, "C", "T", "c.3565C>T")
    assert r.strength == "VeryStrong" and "182 nt before the last exon-exon junction" in r.reason


# c.3748 = chr14:21348302 (from c.3748+1 at 21348303).  Codon 1233 = c.3697-3699: its last base is
# 3748 - 3699 + 1 = 50 nt before the junction (not > 50) -> no NMD; removed (1286 - 1233 + 1) / 1286
# = 4.2 % <= 10 % -> Moderate.  Codon 1232 = c.3694-3696: 53 nt -> NMD -> VeryStrong.
@pytest.mark.parametrize("c,strength,nmd", [(3697, "Moderate", False), (3694, "VeryStrong", True),
                                            (3699, "Moderate", False), (3696, "VeryStrong", True)])
def test_fifty_nt_boundary_of_penultimate_exon(c, strength, nmd):
    pos = 21348302 - (3748 - c)
    r = pvs1(RPGRIP1, "stop_gained", pos, "C", "T", f"c.{c}C>T")
    assert (r.strength, r.evidence["nmd_predicted"]) == (strength, nmd), r.reason
    assert r.evidence["hgvs_c_from_structure"] == f"c.{c}"


def test_last_exon_stop_share():
    # c.3751 (codon 1251) lies in the last exon: the exon c.3618-3748 is 131 nt, so c.3749 is the
    # last exon's first base, reached across intron 23.  Removed (1286 - 1251 + 1) / 1286 = 2.8 %.
    # Its genomic position comes from the structure's exon start; the check is on the strength.
    from irdtriage.transcripts import default_model
    tx = default_model().get("RPGRIP1", "GRCh38")
    last_start = tx.ordered()[-1][0]
    r = pvs1(RPGRIP1, "stop_gained", last_start + 2, "C", "T", "c.3751C>T")
    assert r.evidence["hgvs_c_from_structure"] == "c.3751"  # c.3749 + 2
    assert r.evidence["nmd_predicted"] is False and "last exon" in r.reason and r.strength == "Moderate"
    assert r.evidence["removed_fraction"] == pytest.approx(36 / 1286, abs=1e-4)


def test_frameshift_without_fster_uses_own_position():
    # c.1145del: no fsTer -> new stop unknown; exon well before the penultimate -> NMD predicted and said so
    r = pvs1(RPGRIP1, "frameshift_variant", 21312499, "CT", "C", "c.1145del")
    assert r.strength == "VeryStrong" and "new stop position unknown" in r.reason
    # in the last 50 nt of the penultimate exon a frameshift's new stop can only lie further 3' -> no NMD
    r = pvs1(RPGRIP1, "frameshift_variant", 21348302 - 10 - 1, "CA", "C", "c.3738del")
    assert r.evidence["nmd_predicted"] is False and r.strength == "Moderate"  # 1286-1246+1 = 41 res = 3.2 %


def test_canonical_donor_out_of_frame_into_last_exon():
    # c.3748+1C>A: skipping the exon c.3618-3748 (131 nt, not a multiple of 3) shifts the frame from
    # the last exon on -> NMD not predicted; removed from residue 1206 (c.3618): 81/1286 = 6.3 % -> Moderate
    r = pvs1(RPGRIP1, "splice_donor_variant", 21348303, "C", "A", "c.3748+1C>A")
    assert r.evidence["skipped_exon_coding_nt"] == 131 and r.evidence["splice_site"] == "donor +1"
    assert r.evidence["nmd_predicted"] is False and r.strength == "Moderate"
    assert r.evidence["removed_fraction"] == pytest.approx(81 / 1286, abs=1e-4)


def test_canonical_acceptor_in_frame():
    # c.1468-2A>G: skipping the exon c.1468-1611 (144 nt = 48 codons, in frame) removes 48/1286 = 3.7 %
    r = pvs1(RPGRIP1, "splice_acceptor_variant", 21321257, "A", "G", "c.1468-2A>G")
    assert r.evidence["splice_site"] == "acceptor -2" and r.evidence["skipped_exon_coding_nt"] == 144
    assert r.strength == "Moderate" and "in-frame" in r.reason
    assert r.evidence["removed_fraction"] == pytest.approx(48 / 1286, abs=1e-4)


def test_donor_of_first_coding_exon_and_start_codon():
    # c.47+1G>T: the skipped exon 1 holds the start codon -> conservative Moderate
    r = pvs1(BBS1, "splice_donor_variant", 66510707, "G", "T", "c.47+1G>T")
    assert r.strength == "Moderate" and "start codon" in r.reason and r.evidence["skipped_exon"] == 1
    # c.2T>C (chr11:66510661, 45 nt upstream of c.47 in exon 1): initiation codon -> Moderate
    r = pvs1(BBS1, "start_lost", 66510661, "T", "C", "c.2T>C", "p.Met1?")
    assert r.strength == "Moderate" and r.evidence["hgvs_c_from_structure"] == "c.2" and "start codon" in r.reason
    # one base past the start codon (c.4) is not an initiation codon on the structure: no structure claim
    r = pvs1(BBS1, "start_lost", 66510663, "A", "G", "c.4A>G")
    assert "no base of the allele in the start codon" in r.evidence["structure_note"]


def test_structure_not_used_when_annotation_residue_disagrees():
    r = pvs1(RPGRIP1, "stop_gained", 21312500, "T", "A", "c.1145T>A", "p.(Leu900Ter)")
    assert "differs from the structure's residue 382" in r.evidence["structure_note"]
    # neither the structure nor its exons are used: exon and length unknown -> conservative Moderate
    assert r.strength == "Moderate" and r.evidence["transcript_model"] is None
    assert "hgvs_c_from_structure" not in r.evidence


def test_grch37_structure_same_call():
    # GRCh37 position of c.1145 on the carried-over structure: the ClinGen/phenopacket g. give GRCh38
    # only here, so the check is that the structure is present and places the allele on the same c.
    from irdtriage.transcripts import default_model, hgvs_c_position
    m = default_model()
    g38, g37 = m.get("RPGRIP1", "GRCh38"), m.get("RPGRIP1", "GRCh37")
    assert g37 is not None and g37.protein_length == g38.protein_length == 1286
    off = 21312500 - g38.cds_start  # plus strand, same exon lengths on both builds
    assert hgvs_c_position(g37, g37.cds_start + off) == "1145"


# --- Genes structured from the GENCODE transcript with the MANE Select span ------------------
# MYO7A (MANE Select NM_000260.4; its CDS chosen among two tied candidates by the published length
# of NP_000251.3, panels/curation/mane_protein_lengths.yaml) and NR2E3 (NM_014249.4; not in the
# GRCh38 canonical table).  Published null variants:
# * MYO7A c.6070C>T p.(Arg2024Ter) and c.5168+1G>A, compound heterozygous in a Usher type 1 family
#   (Cheng L et al., Oncotarget 2018;9:2295-2303, PMID 29416772; NM_000260 numbering);
# * NR2E3 c.119-2A>C, the intron 1 acceptor variant of enhanced S-cone syndrome (Haider NB et al.,
#   Nat Genet 2000;24:127-131, as IVS1-2A>C, from memory; written c.[119-2A>C] in a later case report
#   on eScholarship, "Enhanced S Cone Syndrome", Small K et al.).
# The published intronic positions c.5168+1 and c.119-2 are facts about the exon boundaries and the
# CDS start: the structure must put an exon end exactly there.  Genomic positions come from the
# structure (the sources give c. only); the expected strengths follow Abou Tayoun et al. 2018.

def _tx(symbol):
    from irdtriage.transcripts import default_model
    tx = default_model().get(symbol, "GRCh38")
    assert tx is not None, f"{symbol} has no GRCh38 structure"
    return tx


def _splice_pos(tx, name):
    """The one genomic position the structure names ``name`` (c.N+k / c.N-k) at a canonical site."""
    from irdtriage.transcripts import hgvs_c_position
    hits = []
    order = tx.ordered()
    for a, b in zip(order, order[1:]):
        donor, acceptor = (a[1], b[0]) if tx.strand == "+" else (a[0], b[1])
        step = 1 if tx.strand == "+" else -1
        hits += [p for p in (donor + step, donor + 2 * step, acceptor - step, acceptor - 2 * step)
                 if hgvs_c_position(tx, p) == name]
    return hits


def _pvs1_on(tx, transcript, csq, pos, c, p=""):
    gene = _gene(tx.symbol, tx.chrom, tx.strand, tx.exons[0][0] - 5000, tx.exons[-1][1] + 5000)
    ann = Annotation(tx.symbol, transcript, (csq,), c, p, is_mane=True)
    return evaluate_pvs1(ann, gene, RULES, Variant("chr" + tx.chrom, pos, "C", "T"), "GRCh38")


def test_myo7a_published_nonsense_from_structure_alone():
    from irdtriage.transcripts import c_number
    tx = _tx("MYO7A")
    assert tx.protein_length == 2215 and tx.exon_count == 49  # NP_000251.3: 2215 aa (GenAtlas MYO7A)
    pos = next(p for s, e in tx.exons for p in range(s, e + 1) if c_number(tx, p) == 6070)
    r = _pvs1_on(tx, "NM_000260.4", "stop_gained", pos, "c.6070C>T", "p.(Arg2024Ter)")
    # residue 2024 of 2215, far from the last exon-exon junction -> NMD -> VeryStrong (MANE Select)
    assert (r.met, r.strength) == (True, "VeryStrong"), r.reason
    assert r.evidence["nmd_predicted"] is True and r.evidence["hgvs_c_from_structure"] == "c.6070"
    assert "from panel structure: exon 45 of 49" in r.reason and "NMD predicted" in r.reason


def test_myo7a_published_donor_matches_an_exon_end():
    tx = _tx("MYO7A")
    hits = _splice_pos(tx, "5168+1")
    assert len(hits) == 1  # the published c.5168+1 is a donor +1 on the structure: c.5168 ends an exon
    r = _pvs1_on(tx, "NM_000260.4", "splice_donor_variant", hits[0], "c.5168+1G>A")
    # the skipped exon holds 125 coding nt (not a multiple of 3): out of frame, far 5' -> NMD -> VeryStrong
    assert (r.met, r.strength) == (True, "VeryStrong"), r.reason
    assert r.evidence["splice_site"] == "donor +1" and r.evidence["skipped_exon_coding_nt"] == 125
    assert "exon 37 of 49 skipped" in r.reason and "NMD predicted" in r.reason


def test_nr2e3_published_acceptor_matches_exon_2():
    tx = _tx("NR2E3")
    assert tx.exon_count == 8 and tx.protein_length == 410
    hits = _splice_pos(tx, "119-2")
    assert len(hits) == 1  # c.119 is the first base of exon 2, so 118 coding nt lie in exon 1
    r = _pvs1_on(tx, "NM_014249.4", "splice_acceptor_variant", hits[0], "c.119-2A>C")
    assert (r.met, r.strength) == (True, "VeryStrong"), r.reason
    assert r.evidence["splice_site"] == "acceptor -2" and r.evidence["skipped_exon"] == 2
    assert "exon 2 of 8 skipped" in r.reason and "NMD predicted" in r.reason
