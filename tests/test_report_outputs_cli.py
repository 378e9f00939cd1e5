"""The written outputs of a real `irdtriage triage` run (subprocess, real files) on a hand-built
trio VCF, each read back by its outside reader: result.json by `jsonschema` against the bundled
schema, findings.vcf.gz by pysam/htslib (and re-indexed by pysam.tabix_index), findings.tsv by
pandas, the phenopacket by the `phenopackets` protobuf classes.

The input mixes ``chr1`` and ``1`` naming in one file (seen in merged call sets). RPE65 MANE
Select on GRCh38 (MANE v1.5): chr1:68,428,822-68,449,954, ENST00000262340.6 / ENSP00000262340.5.
The variants are constructed for the test and checked only for how they are written out."""
from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import jsonschema
import pandas as pd
import phenopackets
import pysam
from google.protobuf import json_format

from irdtriage import CAUTION

ROOT = Path(__file__).resolve().parents[1]
SCHEMA = ROOT / "irdtriage" / "schema" / "result.schema.json"
ENST, ENSP = "ENST00000262340.6", "ENSP00000262340.5"
FIELDS = "Allele|Consequence|IMPACT|SYMBOL|Feature_type|Feature|BIOTYPE|EXON|HGVSc|HGVSp|ENSP|Protein_position"


def _csq(alt, cons, exon, c, p, pos):
    return "|".join([alt, cons, "HIGH", "RPE65", "Transcript", ENST, "protein_coding", exon,
                     f"{ENST}:{c}", f"{ENSP}:{p}", ENSP, f"{pos}/533"])


def _write_trio(tmp: Path) -> tuple[Path, Path]:
    lines = ["##fileformat=VCFv4.2", "##reference=GRCh38",
             "##contig=<ID=chr1,length=248956422>", "##contig=<ID=1,length=248956422>",
             f'##INFO=<ID=CSQ,Number=.,Type=String,Description="Consequence annotations. Format: {FIELDS}">',
             '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">',
             '##FORMAT=<ID=AD,Number=R,Type=Integer,Description="Allelic depths">',
             '##FORMAT=<ID=DP,Number=1,Type=Integer,Description="Depth">',
             '##FORMAT=<ID=GQ,Number=1,Type=Integer,Description="Genotype quality">',
             "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tKID\tMUM\tDAD",
             "\t".join(["chr1", "68431000", ".", "G", "A", "500", "PASS",
                        "CSQ=" + _csq("A", "stop_gained", "5/14", "c.400C>T", "p.(Gln134Ter)", 134),
                        "GT:AD:DP:GQ", "0/1:16,18:34:99", "0/1:20,19:39:99", "0/0:31,0:31:90"]),
             "\t".join(["1", "68440000", ".", "C", "T", "500", "PASS",
                        "CSQ=" + _csq("T", "stop_gained", "9/14", "c.900G>A", "p.(Trp300Ter)", 300),
                        "GT:AD:DP:GQ", "0/1:14,15:29:99", "0/0:27,0:27:80", "0/1:12,13:25:99"]),
             # a third allele under the other name, after the second by position: the written
             # records used to interleave chr1 / 1 / chr1 and htslib refused the index
             "\t".join(["chr1", "68445000", ".", "A", "G", "500", "PASS",
                        "CSQ=" + _csq("G", "missense_variant", "12/14", "c.1300T>C", "p.(Tyr434His)", 434),
                        "GT:AD:DP:GQ", "0/1:20,21:41:99", "0/0:33,0:33:90", "0/0:30,0:30:90"])]
    plain = tmp / "trio.vcf"  # plain text, no index: read by streaming, both names kept
    plain.write_text("\n".join(lines) + "\n")
    ped = tmp / "trio.ped"
    ped.write_text("FAM\tKID\tDAD\tMUM\t2\t2\nFAM\tMUM\t0\t0\t2\t1\nFAM\tDAD\t0\t0\t1\t1\n")
    return plain, ped


def test_triage_outputs_read_back_by_their_readers(tmp_path):
    vcf, ped = _write_trio(tmp_path)
    out = tmp_path / "out"
    env = dict(os.environ, NO_COLOR="1", COLUMNS="100", PYTHONPATH=str(ROOT))
    run = subprocess.run([sys.executable, "-m", "irdtriage", "triage", str(vcf), "--sample", "KID", "--ped", str(ped),
                          "--hpo", "HP:0000510,HP:0000662", "--out", str(out)],
                         capture_output=True, text=True, cwd=ROOT, env=env, timeout=600)
    assert run.returncode == 0, run.stderr

    # result.json against the bundled JSON Schema (jsonschema reference validator)
    result = json.loads((out / "result.json").read_text())
    jsonschema.Draft202012Validator(json.loads(SCHEMA.read_text())).validate(result)
    findings = {f["pos"]: f for f in result["findings"]}
    assert set(findings) == {68431000, 68440000, 68445000}
    assert findings[68431000]["ad"] == [16, 18] and findings[68440000]["protein_accession"] == ENSP
    assert findings[68431000]["family"]["MUM"]["ad"] == [20, 19]

    # findings.vcf.gz: pysam reads it, the index answers both names, htslib re-indexes a copy
    with pysam.VariantFile(str(out / "findings.vcf.gz")) as vf:
        assert list(vf.header.samples) == ["KID", "MUM", "DAD"]
        assert set(vf.header.contigs) == {"1", "chr1"}
        recs = {r.pos: r for r in vf}
        on_chr1 = [r.pos for r in vf.fetch("chr1")]
        on_1 = [r.pos for r in vf.fetch("1")]
    assert (on_chr1, on_1) == ([68431000, 68445000], [68440000])
    r1 = recs[68431000]
    assert [tuple(r1.samples[s][k] for k in ("GT", "DP", "GQ", "AD")) for s in ("KID", "MUM", "DAD")] == [
        ((0, 1), 34, 99, (16, 18)), ((0, 1), 39, 99, (20, 19)), ((0, 0), 31, 90, (31, 0))]
    copy = tmp_path / "again.vcf.gz"
    copy.write_bytes((out / "findings.vcf.gz").read_bytes())
    pysam.tabix_index(str(copy), preset="vcf", force=True)

    # findings.tsv: the first row is the header
    df = pd.read_csv(out / "findings.tsv", sep="\t", dtype=str, keep_default_na=False)
    assert list(df.columns[:2]) == ["finding_id", "gene"] and df.columns[-1] == "caution"
    assert set(df["caution"]) == {" ".join(CAUTION.split())}
    assert "vc_" not in " ".join(df["cascade_step"])  # the step title, not its key

    # phenopacket: protobuf parse, disease present, HPO names, c./p. on the Ensembl pair
    (ppath,) = out.glob("*.phenopacket.json")
    pp = json.loads(ppath.read_text())
    json_format.ParseDict(pp, phenopackets.Phenopacket(), ignore_unknown_fields=False)
    assert [f["type"]["label"] for f in pp["phenotypicFeatures"]] == ["Rod-cone dystrophy", "Nyctalopia"]  # HPO names (from memory)
    dx = pp["interpretations"][0]["diagnosis"]
    assert dx["disease"]["id"] and dx["disease"]["label"]
    for gi in dx["genomicInterpretations"]:
        ex = {e["syntax"]: e["value"] for e in gi["variantInterpretation"]["variationDescriptor"]["expressions"]}
        assert ex["hgvs.c"].startswith(ENST + ":c.") and ex["hgvs.p"].startswith(ENSP + ":p.")
