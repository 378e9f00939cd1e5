"""The list of recurrent pathogenic non-coding alleles (panels/noncoding_alleles.yaml): load-time
validation with one clear error naming file and line, and the entries checked against their
sources.

Sources typed here: CEP290 c.2991+1655A>G (den Hollander et al., Am J Hum Genet 2006;79:556-561);
ABCA4 c.5196+1137G>A, c.4539+2064C>T, c.4253+43G>A (Nassisi et al., Int J Mol Sci 2019;20:5053,
PMID 31614660); OFD1 c.935+706A>G (Webb et al., Hum Mol Genet 2012;21:3647-3654, PMID 22619378).
MANE Select transcripts: MANE v1.5 summary (CEP290 NM_025114.4, ABCA4 NM_000350.3, OFD1 NM_003611.3).
"""
from __future__ import annotations

import pytest

from irdtriage.errors import InputError
from irdtriage.models import Annotation
from irdtriage.noncoding_alleles import load_noncoding_alleles, match
from irdtriage.panel import load_panel

GOOD = """version: "1"
alleles:
  - gene: CEP290
    transcript: "NM_025114.4"
    hgvs_c: "c.2991+1655A>G"
    effect: "cryptic exon"
    source: "den Hollander 2006"
"""


def test_bundled_list_loads_against_the_panel_and_holds_the_published_alleles():
    table = load_noncoding_alleles(panel=load_panel())  # every gene on the panel, every transcript MANE
    keys = set(table.alleles)
    for key in [("CEP290", "c.2991+1655A>G"), ("ABCA4", "c.5196+1137G>A"), ("ABCA4", "c.4539+2064C>T"),
                ("ABCA4", "c.4253+43G>A"), ("OFD1", "c.935+706A>G")]:
        assert key in keys, key
    assert table.alleles[("CEP290", "c.2991+1655A>G")].transcript == "NM_025114.4"
    assert table.alleles[("ABCA4", "c.5196+1137G>A")].transcript == "NM_000350.3"
    assert table.alleles[("OFD1", "c.935+706A>G")].transcript == "NM_003611.3"
    assert all(a.source for a in table.alleles.values())


@pytest.mark.parametrize("edit,problem,line", [
    (lambda t: t.replace('    source: "den Hollander 2006"\n', ""), "missing source", 3),
    (lambda t: t.replace("c.2991+1655A>G", "c.2991A>G"), "not an intronic or UTR c. description", 3),
    (lambda t: t.replace("NM_025114.4", "NM_025114"), "versioned RefSeq", 3),
    (lambda t: t + "    colour: red\n", "unknown field(s) colour", 3),
    (lambda t: t + t[t.index("  - gene"):], "already listed at line 3", 8),
    (lambda t: t.replace("version: \"1\"\n", ""), "missing version", 1),
])
def test_bad_list_is_one_clear_error_with_file_and_line(tmp_path, edit, problem, line):
    p = tmp_path / "list.yaml"
    p.write_text(edit(GOOD))
    with pytest.raises(InputError) as e:
        load_noncoding_alleles(p)
    assert problem in str(e.value) and e.value.line == line and str(p) in str(e.value)


def test_transcript_must_be_the_panel_mane_transcript(tmp_path):
    p = tmp_path / "list.yaml"
    p.write_text(GOOD.replace("NM_025114.4", "NM_025114.3"))
    with pytest.raises(InputError, match="not the gene's MANE Select transcript NM_025114.4"):
        load_noncoding_alleles(p, panel=load_panel())


def test_match_needs_same_gene_same_c_and_the_mane_transcript(tmp_path):
    p = tmp_path / "list.yaml"
    p.write_text(GOOD)
    table = load_noncoding_alleles(p)
    gene = load_panel().genes["CEP290"]
    assert match(Annotation("CEP290", transcript="NM_025114.4", hgvs_c="c.2991+1655A>G"), gene, table) is not None
    assert match(Annotation("CEP290", transcript="ENST00000552810.6", hgvs_c="c.2991+1655A>G"), gene, table)
    assert match(Annotation("CEP290", transcript="NM_001999.1", hgvs_c="c.2991+1655A>G"), gene, table) is None
    assert match(Annotation("CEP290", transcript="NM_025114.4", hgvs_c="c.2991+1656A>G"), gene, table) is None
