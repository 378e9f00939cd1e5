"""HGVS c./p. and SO terms on a small hand-made two-exon transcript.

Every expected value below was written by hand from the rule it names, not produced by the
code: HGVS recommendations (den Dunnen et al., Hum Mutat 2016;37:564-569; varnomen.hgvs.org)
for numbering, the 3' rule, dup/delins and the protein forms; the Sequence Ontology
definitions (so.obo) for the terms; the standard genetic code for the codons.

The sequence (1-based genome positions, forward strand):

    1-10   ACGTACGTAC             flank (5' of the transcript)
    11-20  GGGGGCCCCC             exon 1, 5' UTR      c.-10 .. c.-1
    21-32  ATG GCT AAA AAG        exon 1, CDS         c.1 .. c.12    Met Ala Lys Lys
    33-53  GTAAGT CCCCCCCCC TTTCAG  intron 1 (21 nt)  c.12+1 .. c.12+11 | c.13-10 .. c.13-1
    54-65  TGG TTC GAT TAA        exon 2, CDS         c.13 .. c.24   Trp Phe Asp Ter
    66-71  CCCGGG                 exon 2, 3' UTR      c.*1 .. c.*6
    72-76  TTTTT                  flank (3')

The protein is MAKKWFD (7 residues). The same transcript is also laid on the minus strand
(the whole region reverse-complemented), where every description must come out the same.
"""
from __future__ import annotations

import pytest

from irdtriage.annotate.annotate import TxCache, annotate_allele
from irdtriage.annotate.hgvs_c import TxMap, describe
from irdtriage.annotate.providers import RegionSequence, TranscriptSet, TxModel, revcomp

REGION = ("ACGTACGTAC" "GGGGGCCCCC" "ATGGCTAAAAAG" "GTAAGTCCCCCCCCCTTTCAG" "TGGTTCGATTAA" "CCCGGG" "TTTTT")
L = len(REGION)
assert L == 76

PLUS = TxModel("NM_TEST.1", "GENE1", "T", "+", ((11, 32), (54, 71)), (21, 65), "NP_TEST.1")
MINUS = TxModel("NM_TEST.1", "GENE1", "T", "-", ((L + 1 - 71, L + 1 - 54), (L + 1 - 32, L + 1 - 11)),
                (L + 1 - 65, L + 1 - 21), "NP_TEST.1")


def _plus(pos, ref, alt):
    return pos, ref, alt


def _mirror(pos, ref, alt):
    """The same change written on the reverse-complemented region, VCF style: position g
    becomes L + 1 - g; an anchored indel (pos, X+R', X+A') changes pos+1..pos+len(R'), which
    on the mirror is re-anchored on the base just left of M(pos + len(R'))."""
    if len(ref) != len(alt) and ref[0] == alt[0]:
        r1, a1 = ref[1:], alt[1:]
        q = L - pos - len(r1)
        base = revcomp(REGION)[q - 1]
        return q, base + revcomp(r1), base + revcomp(a1)
    end = pos + len(ref) - 1
    return L + 1 - end, revcomp(ref), revcomp(alt)


@pytest.fixture(params=["+", "-"], ids=["plus", "minus"])
def setup(request):
    if request.param == "+":
        seq = RegionSequence("T", 1, REGION)
        return TranscriptSet([PLUS]), TxCache(seq), _plus
    seq = RegionSequence("T", 1, revcomp(REGION))
    return TranscriptSet([MINUS]), TxCache(seq), _mirror


def one(setup, pos, ref, alt):
    txs, cache, conv = setup
    p, r, a = conv(pos, ref, alt)
    got = annotate_allele("chrT", p, r, a, txs, cache)
    assert len(got) == 1
    return got[0]


# (VCF on the forward layout, HGVS c., HGVS p., most severe SO term) -- by hand, see module doc
CASES = [
    # substitutions in codon 5 (TGG, Trp)
    ((55, "G", "A"), "c.14G>A", "p.(Trp5Ter)", "stop_gained"),  # TAG
    ((56, "G", "C"), "c.15G>C", "p.(Trp5Cys)", "missense_variant"),  # TGC
    ((59, "C", "T"), "c.18C>T", "p.(Phe6=)", "synonymous_variant"),  # TTC -> TTT
    ((64, "A", "G"), "c.23A>G", "p.(Ter8=)", "stop_retained_variant"),  # TAA -> TGA
    # TAA -> CAA: Gln, then CCC GGG to the transcript's end and no stop: extension of unknown end
    ((63, "T", "C"), "c.22T>C", "p.(Ter8GlnextTer?)", "stop_lost"),
    ((22, "T", "C"), "c.2T>C", "p.(Met1?)", "start_lost"),  # ATG -> ACG
    # one A of the run c.7-c.11 deleted: 3' rule -> c.11del; AAA AGT GGT TCG ATT AAC CCG GG: no stop
    ((26, "TA", "T"), "c.11del", "p.(Lys4SerfsTer?)", "frameshift_variant"),
    # one A inserted in the run: c.11dup; AAA AAA GTG GTT CGA TTA ACC CGG G -> Trp5 first change
    ((26, "T", "TA"), "c.11dup", "p.(Trp5ValfsTer?)", "frameshift_variant"),
    # three A deleted from the run: c.9_11del; the protein loses one of Lys3-Lys4: the 3'-most, Lys4
    ((26, "TAAA", "T"), "c.9_11del", "p.(Lys4del)", "inframe_deletion"),
    # AAA inserted in the run: c.9_11dup; Lys Lys Lys: p.(Lys4dup)
    ((26, "T", "TAAA"), "c.9_11dup", "p.(Lys4dup)", "inframe_insertion"),
    # GGC inserted after c.3 (ATG|GCT): rolls one base 3' to c.4_5insGCG; Met Gly Ala ...
    ((23, "G", "GGGC"), "c.4_5insGCG", "p.(Met1_Ala2insGly)", "inframe_insertion"),
    # AA inserted after c.13 (T|GG): T AA GGT ...: the first changed codon is a stop
    ((54, "T", "TAA"), "c.13_14insAA", "p.(Trp5Ter)", "stop_gained"),
    # two bases changed: delins; TGG -> TCT (Ser)
    ((55, "GG", "CT"), "c.14_15delinsCT", "p.(Trp5Ser)", "missense_variant"),
    # exon 1's third-last base... c.11 A>G: AAG -> AGG (Arg), and within 3 exon bases of the intron
    ((31, "A", "G"), "c.11A>G", "p.(Lys4Arg)", "missense_variant"),
    # splice sites and intron (offsets from the nearest exon base; odd intron: middle base takes +)
    ((34, "T", "A"), "c.12+2T>A", "p.?", "splice_donor_variant"),
    ((52, "A", "G"), "c.13-2A>G", "p.?", "splice_acceptor_variant"),
    ((38, "T", "C"), "c.12+6T>C", "", "splice_region_variant"),
    ((43, "C", "A"), "c.12+11C>A", "", "intron_variant"),
    ((44, "C", "A"), "c.13-10C>A", "", "intron_variant"),
    # UTRs and flanks
    ((15, "G", "A"), "c.-6G>A", "", "5_prime_UTR_variant"),
    ((68, "C", "T"), "c.*3C>T", "", "3_prime_UTR_variant"),
    ((5, "A", "G"), "c.-16A>G", "", "upstream_gene_variant"),
    ((74, "T", "G"), "c.*9T>G", "", "downstream_gene_variant"),
]


@pytest.mark.parametrize("vcf,c,p,term", CASES, ids=[c[1] for c in CASES])
def test_hgvs_and_terms(setup, vcf, c, p, term):
    got = one(setup, *vcf)
    assert got.hgvs_c == c
    assert got.hgvs_p == p
    assert got.terms[0] == term


def test_splice_region_term_rides_with_missense(setup):
    got = one(setup, 31, "A", "G")  # exon base 2 from the intron: SO:0001630 "1-3 bases of the exon"
    assert set(got.terms) == {"missense_variant", "splice_region_variant"}
    assert (got.exon, got.intron, got.splice_distance, got.splice_side) == ("1/2", "", 2, "exon")


def test_exon_intron_numbers_and_splice_distance(setup):
    got = one(setup, 38, "T", "C")
    assert (got.exon, got.intron, got.splice_distance, got.splice_side) == ("", "1/1", 6, "intron")
    assert set(got.terms) == {"splice_region_variant", "intron_variant"}
    got = one(setup, 56, "G", "C")
    assert (got.exon, got.protein_position, got.protein_length) == ("2/2", 5, 7)


def test_stop_in_last_exon_escapes_nmd(setup):
    got = one(setup, 55, "G", "A")  # new stop in exon 2 of 2: the last exon (50-nt rule)
    assert got.nmd is False


def test_no_sequence_keeps_what_needs_none():
    """Without the reference: substitutions keep their c. (bases from the VCF), indels are
    frameshift / in-frame by their length change, and the amino-acid change is unknown."""
    txs, cache = TranscriptSet([PLUS]), TxCache(None)
    sub = annotate_allele("T", 56, "G", "C", txs, cache)[0]
    assert (sub.hgvs_c, sub.hgvs_p) == ("c.15G>C", "p.?")
    assert set(sub.terms) == {"coding_sequence_variant", "splice_region_variant"}  # c.15: exon 2, base 3
    assert any("amino-acid change unknown" in n for n in sub.notes)
    fs = annotate_allele("T", 26, "TA", "T", txs, cache)[0]
    assert (fs.hgvs_c, fs.terms[0], fs.exon) == ("", "frameshift_variant", "1/2")
    inframe = annotate_allele("T", 26, "TAAA", "T", txs, cache)[0]
    assert inframe.terms[0] == "inframe_deletion"
    donor = annotate_allele("T", 34, "T", "A", txs, cache)[0]
    assert (donor.hgvs_c, donor.terms[0]) == ("c.12+2T>A", "splice_donor_variant")


def test_far_away_allele_has_no_transcript():
    txs, cache = TranscriptSet([PLUS]), TxCache(RegionSequence("T", 1, REGION))
    assert annotate_allele("T", 71 + 5001, "A", "G", txs, cache) == []


def test_positions_round_trip_through_c():
    m = TxMap(PLUS)
    # by hand from the layout in the module doc
    assert [m.c_to_g(c) for c in ("1", "-10", "12", "13", "24", "*1", "12+11", "13-10")] == \
        [21, 11, 32, 54, 65, 66, 43, 44]
    mm = TxMap(MINUS)
    assert mm.c_to_g("1") == L + 1 - 21 and mm.c_to_g("12+2") == L + 1 - 34


def test_shift_stays_in_its_exon():
    """The 3' roll stops at the exon's end (HGVS exon/intron border exception, from memory):
    deleting the G at c.12 next to the intron's G (c.12+1) stays c.12del, not c.12+1del."""
    seq = RegionSequence("T", 1, REGION)
    d = describe(TxMap(PLUS), 31, "AG", "A", seq)
    assert d is not None and d.text == "c.12del"


def test_cds_that_is_not_one_open_reading_frame_gives_no_protein_change():
    """A transcript model whose CDS does not match the sequence (here the CDS starts one base late,
    so its length, 44 nt, is not a multiple of 3 -- common practice: a CDS is whole codons from
    ATG to one stop) gives HGVS c. but p.? with a note, never a made-up protein change or a crash."""
    bad = TxModel("NM_TEST.1", "GENE1", "T", "+", ((11, 32), (54, 71)), (22, 65), "NP_TEST.1")
    res = annotate_allele("T", 27, "A", "G", TranscriptSet([bad]), TxCache(RegionSequence("T", 1, REGION)))
    assert len(res) == 1
    r = res[0]
    assert r.hgvs_p == "p.?" and "coding_sequence_variant" in r.terms
    assert any("does not translate from ATG to one stop codon" in n for n in r.notes)
    assert r.hgvs_c == "c.6A>G"  # position 27 is the 6th base from the (wrong) CDS start at 22
