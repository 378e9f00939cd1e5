"""VCF writer read back by outside readers: pysam/htslib (VariantFile, tabix index) and htslib's
bcftools as bundled with pysam (``pysam.bcftools``). Percent-encoding of reserved characters
follows VCF 4.3 spec section 1.2; FORMAT DP/GQ/AD (Number=R) as the VCF 4.3 spec section 1.6.2
defines them."""
import json
from pathlib import Path

import pysam
import pysam.bcftools
import pytest

from irdtriage import CAUTION, __version__
from irdtriage.report.vcf_out import INFO_FIELDS, decode, encode, write_vcf

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"


def _result():
    return json.loads(FIXTURE.read_text())


def test_pysam_reads_back(tmp_path):
    r = _result()
    r["findings"][0]["hgvs_p"] = "p.(Arg34Ter); odd=value, with %"
    vcf, tbi = write_vcf(r, tmp_path / "findings.vcf.gz")
    assert vcf.exists() and tbi.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["findings.vcf.gz", "findings.vcf.gz.tbi"]
    with pysam.VariantFile(str(vcf)) as vf:
        assert list(vf.header.samples) == ["EXAMPLE-PROBAND", "EXAMPLE-MOTHER", "EXAMPLE-FATHER"]
        for fid, num, typ, _ in INFO_FIELDS:
            meta = vf.header.info[fid]
            assert (str(meta.number), meta.type) == (num, typ)
        text = str(vf.header)
        assert text.startswith("##fileformat=VCFv4.2")
        assert f"##source=irdtriage-{__version__}" in text
        assert f"##irdtriage_caution={' '.join(CAUTION.split())}" in text
        assert set(vf.header.contigs) == {"chr1", "chr4"}
        recs = list(vf)
        # region query through the tabix index (htslib)
        assert [x.pos for x in vf.fetch("chr1", 1000000, 1001000)] == [1000100, 1000500]
    assert [(x.chrom, x.pos, x.ref, x.alts) for x in recs] == [
        (f["chrom"], f["pos"], f["ref"], (f["alt"],)) for f in r["findings"]]
    f1, f2, f3 = recs
    assert decode(f1.info["IRDT_HGVSP"]) == "p.(Arg34Ter); odd=value, with %"
    assert decode(f1.info["IRDT_CLASS"]) == "Likely pathogenic"
    assert f1.info["IRDT_CRIT"] == ("PVS1", "PM2(Sup)")
    assert f1.info["IRDT_POINTS"] == 9 and f1.info["IRDT_RANK"] == 1
    assert f2.info["IRDT_ORIG"] == "1000500|A|C%2CG|2"
    assert "IRDT_ORIG" not in f1.info
    assert decode(f3.info["IRDT_FIT"]) == "single heterozygous in a recessive gene"
    assert f1.samples["EXAMPLE-PROBAND"]["GT"] == (0, 1)


def test_other_alt_allele_is_missing_in_split_record(tmp_path):
    r = _result()
    r["findings"][1]["genotype"] = "1/2"
    vcf, _ = write_vcf(r, tmp_path / "f.vcf.gz")
    with pysam.VariantFile(str(vcf)) as vf:
        gts = [x.samples[0]["GT"] for x in vf]
    assert gts[1] == (1, None)


def test_encoding_is_reversible():
    raw = "a b;c=d,e:f%g\th\ni"
    enc = encode(raw)
    assert not set(enc) & set(" ;=,:\t\n")
    assert decode(enc) == raw


def test_bcftools_accepts_it(tmp_path):
    r = _result()
    r["findings"][2]["hgvs_c"] = "c.250del ;x=1"
    vcf, _ = write_vcf(r, tmp_path / "findings.vcf.gz")
    header = pysam.bcftools.view("-h", str(vcf))
    for fid, _, _, _ in INFO_FIELDS:
        assert f"##INFO=<ID={fid}," in header
    assert "##irdtriage_caution=Decision support only." in header
    body = pysam.bcftools.view("-H", str(vcf))
    assert len(body.splitlines()) == 3
    # indexed region query
    chr4 = pysam.bcftools.view("-H", "-r", "chr4", str(vcf))
    assert chr4.split("\t")[:5] == ["chr4", "2000200", ".", "GA", "G"]
    q = pysam.bcftools.query("-f", "%IRDT_GENE\t%IRDT_POINTS\t%IRDT_HGVSC[\t%GT]\n", str(vcf)).splitlines()
    assert q[2].split("\t") == ["GENEB", "3", "c.250del%20%3Bx%3D1", "0/1", ".", "."]  # parents: no call given


def test_proband_and_parents_carry_gt_dp_gq_ad(tmp_path):
    r = _result()
    f1 = r["findings"][0]
    f1.update(dp=35, gq=99, ad=[18, 17])
    f1["family"] = {"EXAMPLE-MOTHER": {"role": "mother", "genotype": "0/1", "zygosity": "heterozygous",
                                       "dp": 40, "gq": 90, "ad": [21, 19]},
                    "EXAMPLE-FATHER": {"role": "father", "genotype": "0/0", "zygosity": "reference",
                                       "dp": 28, "gq": 60, "ad": [28, 0]}}
    r["findings"][1]["ad"] = None  # no AD in the input: left missing, not invented
    vcf, _ = write_vcf(r, tmp_path / "findings.vcf.gz")
    with pysam.VariantFile(str(vcf)) as vf:
        for fid, num in (("GT", "1"), ("DP", "1"), ("GQ", "1"), ("AD", "R")):
            assert str(vf.header.formats[fid].number) == num
        recs = list(vf)
    p, m, fa = (recs[0].samples[n] for n in ("EXAMPLE-PROBAND", "EXAMPLE-MOTHER", "EXAMPLE-FATHER"))
    assert (p["GT"], p["DP"], p["GQ"], p["AD"]) == ((0, 1), 35, 99, (18, 17))
    assert (m["GT"], m["DP"], m["GQ"], m["AD"]) == ((0, 1), 40, 90, (21, 19))
    assert (fa["GT"], fa["DP"], fa["GQ"], fa["AD"]) == ((0, 0), 28, 60, (28, 0))
    assert "AD" not in recs[1].format or recs[1].samples["EXAMPLE-PROBAND"]["AD"] in ((None,), (None, None))
    # the same through htslib's bcftools
    q = pysam.bcftools.query("-f", "[%SAMPLE=%GT:%DP:%GQ:%AD ]\n", str(vcf)).splitlines()
    assert q[0].split() == ["EXAMPLE-PROBAND=0/1:35:99:18,17", "EXAMPLE-MOTHER=0/1:40:90:21,19",
                            "EXAMPLE-FATHER=0/0:28:60:28,0"]


def test_no_parents_means_proband_column_only(tmp_path):
    r = _result()
    r["sample"]["mother"] = r["sample"]["father"] = None
    vcf, _ = write_vcf(r, tmp_path / "findings.vcf.gz")
    with pysam.VariantFile(str(vcf)) as vf:
        assert list(vf.header.samples) == ["EXAMPLE-PROBAND"]


def test_mixed_chr_naming_is_indexed(tmp_path):
    # an input naming one chromosome both "chr1" and "1": the records of the two names used to be
    # interleaved by position and htslib refused the index ("Chromosome blocks not continuous")
    r = _result()
    r["findings"][1].update(chrom="1", pos=1000300)
    r["findings"].append(dict(r["findings"][0], id="F4", pos=1000700))
    vcf, tbi = write_vcf(r, tmp_path / "findings.vcf.gz")
    assert tbi.exists()
    with pysam.VariantFile(str(vcf)) as vf:
        assert list(vf.header.contigs) == ["1", "chr1", "chr4"]  # a header line for every contig used
        got = [(x.chrom, x.pos) for x in vf]
        assert got == [("1", 1000300), ("chr1", 1000100), ("chr1", 1000700), ("chr4", 2000200)]
        assert [x.pos for x in vf.fetch("chr1")] == [1000100, 1000700]
        assert [x.pos for x in vf.fetch("1")] == [1000300]
    # htslib re-indexes the file the same way (tabix, VCF preset)
    copy = tmp_path / "copy.vcf.gz"
    copy.write_bytes(vcf.read_bytes())
    pysam.tabix_index(str(copy), preset="vcf", force=True)
    assert Path(str(copy) + ".tbi").exists()


@pytest.mark.parametrize("zygosity, genotype, gt", [
    ("hemizygous", "1", (1,)),
    ("homoplasmic", "1/1", (1, 1)),
    ("heteroplasmic", "0/1", (0, 1)),
    ("haploid call", "1", (1,)),
])
def test_every_zygosity_is_written(tmp_path, zygosity, genotype, gt):
    r = _result()
    r["findings"][0].update(zygosity=zygosity, genotype=genotype)
    vcf, _ = write_vcf(r, tmp_path / "f.vcf.gz")
    with pysam.VariantFile(str(vcf)) as vf:
        rec = next(iter(vf))
    assert decode(rec.info["IRDT_ZYG"]) == zygosity
    assert rec.samples["EXAMPLE-PROBAND"]["GT"] == gt


def test_failure_leaves_nothing(tmp_path):
    r = _result()
    r["findings"][2]["ref"] = None
    target = tmp_path / "findings.vcf.gz"
    with pytest.raises(Exception):
        write_vcf(r, target)
    assert list(tmp_path.iterdir()) == []
