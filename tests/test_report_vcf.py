"""VCF writer read back by two outside readers: pysam/htslib and `bcftools view` (Debian
`bcftools`). Percent-encoding of reserved characters follows VCF 4.3 spec section 1.2."""
import json
import shutil
import subprocess
from pathlib import Path

import pysam
import pytest

from irdtriage import CAUTION, __version__
from irdtriage.report.vcf_out import INFO_FIELDS, decode, encode, write_vcf

FIXTURE = Path(__file__).parent / "fixtures" / "result_example.json"
BCFTOOLS = shutil.which("bcftools")


def _result():
    return json.loads(FIXTURE.read_text())


def test_pysam_reads_back(tmp_path):
    r = _result()
    r["findings"][0]["hgvs_p"] = "p.(Arg34Ter); odd=value, with %"
    vcf, tbi = write_vcf(r, tmp_path / "findings.vcf.gz")
    assert vcf.exists() and tbi.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["findings.vcf.gz", "findings.vcf.gz.tbi"]
    with pysam.VariantFile(str(vcf)) as vf:
        assert list(vf.header.samples) == ["EXAMPLE-PROBAND"]
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


@pytest.mark.skipif(BCFTOOLS is None, reason="bcftools is not installed (Debian package `bcftools`)")
def test_bcftools_accepts_it(tmp_path):
    r = _result()
    r["findings"][2]["hgvs_c"] = "c.250del ;x=1"
    vcf, _ = write_vcf(r, tmp_path / "findings.vcf.gz")
    header = subprocess.run([BCFTOOLS, "view", "-h", str(vcf)], capture_output=True, text=True, check=True).stdout
    for fid, _, _, _ in INFO_FIELDS:
        assert f"##INFO=<ID={fid}," in header
    assert "##irdtriage_caution=Decision support only." in header
    body = subprocess.run([BCFTOOLS, "view", "-H", str(vcf)], capture_output=True, text=True, check=True)
    assert len(body.stdout.splitlines()) == 3 and "[W::" not in body.stderr and "[E::" not in body.stderr
    # indexed region query
    chr4 = subprocess.run([BCFTOOLS, "view", "-H", "-r", "chr4", str(vcf)], capture_output=True, text=True, check=True).stdout
    assert chr4.split("\t")[:5] == ["chr4", "2000200", ".", "GA", "G"]
    q = subprocess.run([BCFTOOLS, "query", "-f", "%IRDT_GENE\t%IRDT_POINTS\t%IRDT_HGVSC[\t%GT]\n", str(vcf)],
                       capture_output=True, text=True, check=True).stdout.splitlines()
    assert q[2].split("\t") == ["GENEB", "3", "c.250del%20%3Bx%3D1", "0/1"]


def test_failure_leaves_nothing(tmp_path):
    r = _result()
    r["findings"][2]["ref"] = None
    target = tmp_path / "findings.vcf.gz"
    with pytest.raises(Exception):
        write_vcf(r, target)
    assert list(tmp_path.iterdir()) == []
