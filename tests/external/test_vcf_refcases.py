"""Published cases through VCF intake.

Source: GA4GH phenopacket-store (Monarch Initiative, BSD-3-Clause) case records in
../shared/refdata/phenopackets/<GENE>/*.json — each causal variant's GRCh38 ``vcfRecord``
and ``allelicState``.  Gene spans: MANE release 1.5 summary
(../shared/refdata/mane/MANE.GRCh38.v1.5.summary.txt.gz).  For each case a GRCh38 VCF is
written holding the case's records (genotype from allelicState: heterozygous 0/1,
homozygous 1/1, hemizygous haploid 1 on chrX), read back through read_vcf (plain text and
bgzip + tabix), and every causal record must come out inside its gene with that zygosity.
"""
from __future__ import annotations

import gzip
import json
from pathlib import Path

import pysam
import pytest

from irdtriage.models import Gene, Panel, Span
from irdtriage.vcf import read_vcf

REFDATA = Path(__file__).resolve().parents[2].parent / "shared" / "refdata"
PHENOPACKETS = REFDATA / "phenopackets"
MANE = REFDATA / "mane" / "MANE.GRCh38.v1.5.summary.txt.gz"

pytestmark = [pytest.mark.external, pytest.mark.skipif(
    not PHENOPACKETS.is_dir() or not MANE.is_file(),
    reason="shared reference data (../shared/refdata phenopackets + MANE) not present on this machine",
)]

GENES = sorted(p.name for p in PHENOPACKETS.iterdir() if p.is_dir()) if PHENOPACKETS.is_dir() else []
ZYGOSITY = {"heterozygous": "heterozygous", "homozygous": "homozygous", "hemizygous": "hemizygous"}


def mane_gene(symbol: str) -> Gene:
    with gzip.open(MANE, "rt") as fh:
        for line in fh:
            f = line.rstrip("\n").split("\t")
            if len(f) > 13 and f[3] == symbol and f[9] == "MANE Select":
                acc = f[10]  # NC_0000NN.v
                num = int(acc.split("_")[1].split(".")[0])
                chrom = {23: "X", 24: "Y"}.get(num, str(num))
                return Gene(symbol, f[2], f[4], f[5], f[7], f[6], f[13], Span(chrom, int(f[11]), int(f[12])), None,
                            (), (), (), "")
    raise LookupError(symbol)


def trimmed(pos: int, ref: str, alt: str) -> tuple[int, str, str]:
    """Shared bases removed, right end first, one base kept (VCF normalisation as in Tan et al.,
    Bioinformatics 2015;31:2202-2204; written here, independently of the reader)."""
    while len(ref) > 1 and len(alt) > 1 and ref[-1] == alt[-1]:
        ref, alt = ref[:-1], alt[:-1]
    while len(ref) > 1 and len(alt) > 1 and ref[0] == alt[0]:
        ref, alt, pos = ref[1:], alt[1:], pos + 1
    return pos, ref, alt


def causal_records(packet: dict):
    out = []
    sex = packet.get("subject", {}).get("sex")
    for interp in packet.get("interpretations", []):
        for gi in interp.get("diagnosis", {}).get("genomicInterpretations", []):
            vd = gi.get("variantInterpretation", {}).get("variationDescriptor", {})
            rec = vd.get("vcfRecord")
            state = vd.get("allelicState", {}).get("label")
            if rec and state in ZYGOSITY and rec.get("genomeAssembly", "").lower() in ("hg38", "grch38"):
                out.append((rec["chrom"], int(rec["pos"]), rec["ref"], rec["alt"], state, sex))
    return sorted(set(out), key=lambda r: r[1])


def case_vcf(path: Path, records) -> Path:
    lines = ["##fileformat=VCFv4.2", "##reference=GRCh38",
             '##FORMAT=<ID=GT,Number=1,Type=String,Description="Genotype">']
    for chrom in sorted({r[0] for r in records}):
        lines.append(f"##contig=<ID={chrom}>")
    lines.append("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT\tcase")
    for chrom, pos, ref, alt, state, sex in records:
        if state == "hemizygous" or (state == "homozygous" and sex == "MALE" and chrom in ("chrX", "X")):
            gt = "1"
        else:
            gt = {"heterozygous": "0/1", "homozygous": "1/1"}[state]
        lines.append(f"{chrom}\t{pos}\t.\t{ref}\t{alt}\t50\tPASS\t.\tGT\t{gt}")
    path.write_text("\n".join(lines) + "\n")
    return path


@pytest.mark.parametrize("symbol", GENES)
def test_causal_records_found_with_zygosity(tmp_path, symbol):
    gene = mane_gene(symbol)
    panel = Panel("refcases", "0", "", {symbol: gene}, {})
    checked = 0
    for i, packet_path in enumerate(sorted((PHENOPACKETS / symbol).glob("*.json"))):
        packet = json.loads(packet_path.read_text())
        records = causal_records(packet)
        if not records:
            continue  # structural variants without a vcfRecord
        plain = case_vcf(tmp_path / f"case{i}.vcf", records)
        paths = [plain]
        if i % 5 == 0:  # the indexed route too, for a fifth of the cases (keeps the test quick)
            paths.append(Path(pysam.tabix_index(str(plain), preset="vcf", force=True, keep_original=True)))
        for p in paths:
            res = read_vcf(p, panel, build="GRCh38")
            got = {(v.chrom, v.pos, v.ref, v.alt): v for v in res.variants}
            for chrom, pos, ref, alt, state, sex in records:
                tpos, tref, talt = trimmed(pos, ref, alt)
                v = got.get((chrom, tpos, tref, talt))
                assert v is not None, f"{packet_path.name}: {chrom}:{pos} {ref}>{alt} not read from {p.name}"
                # inside the MANE span of the case's gene (50 bp padding for splice sites)
                assert gene.grch38.start - 50 <= v.pos <= gene.grch38.end + 50
                call = v.calls["case"]
                # published allelicState; a male's homozygous call on chrX is hemizygous
                want = "hemizygous" if (sex == "MALE" and chrom in ("chrX", "X")) else ZYGOSITY[state]
                assert call.zygosity == want, packet_path.name
            checked += 1
    assert checked > 0
