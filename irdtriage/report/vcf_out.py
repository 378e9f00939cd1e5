"""Findings as a bgzipped, tabix-indexed VCF (pysam/htslib).

Representation: one biallelic record per finding, at the finding's split and trimmed
allele (``chrom``/``pos``/``ref``/``alt``), the way a multi-allelic splitter writes it.
When the input record was multi-allelic or written differently, its original
representation is kept in ``IRDT_ORIG`` (``pos|ref|alt1,alt2|allele_index``, encoded), and a
genotype allele that belonged to *another* ALT of the original record is written as missing
(``.``) because the output record has one ALT only.

Samples: the proband first, then the mother and father named in ``result['sample']`` (PED)
when the findings carry their calls; each with GT, DP, GQ and AD (reference, this allele).
Contigs: one ``##contig`` line for every contig used, in the order the records are written
(natural chromosome order, then the name itself, so an input mixing ``chr1`` and ``1``
gives two contiguous blocks and a valid tabix index).

New INFO fields (all ours, prefix ``IRDT_``) are declared in the header with Number/Type and
a description. Text values are percent-encoded as the VCF 4.3 spec asks for reserved
characters (``%`` ``:`` ``;`` ``=`` ``,`` CR LF TAB), plus space, so every value is one token.
"""
from __future__ import annotations

import os
import re
from pathlib import Path
from typing import Iterable, Optional, Union

import pysam

from irdtriage import __version__
from irdtriage.atomic import atomic_path
from irdtriage.errors import InputError

from .common import cautions, criterion_label, met_criteria

INFO_FIELDS = [
    # id, Number, Type, Description
    ("IRDT_ID", "1", "String", "irdtriage finding id"),
    # structural findings (VCF 4.3 section 3, reserved structural-variant keys)
    ("END", "1", "Integer", "End position of the variant described in this record"),
    ("SVTYPE", "1", "String", "Type of structural variant"),
    ("IRDT_GENE", "1", "String", "Panel gene symbol of the finding"),
    ("IRDT_TX", "1", "String", "Transcript used for HGVS"),
    ("IRDT_HGVSC", "1", "String", "HGVS coding expression (percent-encoded)"),
    ("IRDT_HGVSP", "1", "String", "HGVS protein expression (percent-encoded)"),
    ("IRDT_CSQ", ".", "String", "Sequence Ontology consequence terms, most severe first"),
    ("IRDT_CLASS", "1", "String", "ACMG/AMP classification (percent-encoded, e.g. Likely%20pathogenic)"),
    ("IRDT_CRIT", ".", "String", "Met ACMG/AMP criteria; strength in parentheses when not the default (Sup Mod Str VStr SA)"),
    ("IRDT_RULESET", "1", "String", "Combining rule set that gave IRDT_CLASS (an ##irdtriage_combining ID)"),
    ("IRDT_POINTS", "1", "Integer", "Sum of criterion points (Tavtigian et al. 2020 scale)"),
    ("IRDT_POST", "1", "Float", "Posterior probability of pathogenicity (Tavtigian et al. 2018 model)"),
    ("IRDT_FIT", "1", "String", "Genotype fit of the finding's gene hypothesis (percent-encoded)"),
    ("IRDT_RANK", "1", "Integer", "Rank of the finding's gene hypothesis (1 = best)"),
    ("IRDT_STATUS", "1", "String", "Interpretation status (GA4GH Phenopacket word: CAUSATIVE, CANDIDATE, CONTRIBUTORY, REJECTED, UNKNOWN_STATUS)"),
    ("IRDT_QFLAG", ".", "String", "Quality thresholds the call failed (percent-encoded)"),
    ("IRDT_ORIG", "1", "String", "Original input representation pos|ref|alts|allele_index (percent-encoded) when it differs"),
    ("IRDT_ZYG", "1", "String", "Allelic state of the proband's call: heterozygous, homozygous, hemizygous, homoplasmic, "
     "heteroplasmic, haploid%20call (one allele where two copies are expected), reference, no%20call (percent-encoded)"),
    ("IRDT_HPL", "1", "Float", "Heteroplasmy level of a mitochondrial call: share of the proband's reads carrying this allele (AD)"),
]
FORMAT_FIELDS = [
    ("GT", "1", "String", "Genotype"),
    ("DP", "1", "Integer", "Read depth of the call (from the input VCF)"),
    ("GQ", "1", "Integer", "Genotype quality (from the input VCF)"),
    ("AD", "R", "Integer", "Allelic depths for the reference and this allele (from the input VCF)"),
]

_ENC = {"%": "%25", ":": "%3A", ";": "%3B", "=": "%3D", ",": "%2C", "\r": "%0D", "\n": "%0A", "\t": "%09", " ": "%20"}
_ENC_TABLE = str.maketrans(_ENC)  # one pass of str.translate per value (no regex per finding)
_GT_SPLIT = re.compile(r"[/|]")
_FILTER_BAD = re.compile(r"[^A-Za-z0-9_.]")


def encode(value: object) -> str:
    """Percent-encode a text value for an INFO field (VCF 4.3 section 1.2, plus space)."""
    return str(value).translate(_ENC_TABLE)


def decode(value: str) -> str:
    from urllib.parse import unquote

    return unquote(value)


def _header_text(text: str) -> str:
    """Text for a ##key=value header line: one line, no angle brackets or quotes."""
    return " ".join(str(text).replace('"', "'").replace("<", "(").replace(">", ")").split())


def _sample_name(sid: str) -> str:
    name = re.sub(r"\s+", "_", str(sid or "SAMPLE"))
    return name or "SAMPLE"


def _gt(finding: dict) -> tuple[tuple[Optional[int], ...], bool]:
    return _parse_gt(finding.get("genotype"))


def _parse_gt(genotype: Optional[str]) -> tuple[tuple[Optional[int], ...], bool]:
    gt = str(genotype or ".")
    phased = "|" in gt
    out: list[Optional[int]] = []
    for a in _GT_SPLIT.split(gt):
        if a in (".", ""):
            out.append(None)
        elif a.isdigit():
            out.append(int(a) if int(a) <= 1 else None)  # another ALT of the original record -> missing
        else:
            out.append(None)
    return tuple(out), phased


def _contig_key(chrom: str):
    """Natural chromosome order, then the name itself: ``chr1`` and ``1`` stay separate blocks."""
    c = chrom[3:] if chrom.lower().startswith("chr") else chrom
    return ((0, int(c), "") if c.isdigit() else (1, 0, c)), chrom


def family_samples(result: dict) -> list[tuple[str, str]]:
    """(role, sample id) of the parents named in result['sample'] whose calls the findings carry."""
    sample = result.get("sample") or {}
    seen: set[str] = set()
    for f in result.get("findings") or []:
        seen.update((f.get("family") or {}).keys())
    out = []
    for role in ("mother", "father"):
        sid = sample.get(role)
        if sid and sid in seen and sid != sample.get("id"):
            out.append((role, str(sid)))
    return out


def build_header(result: dict, contigs: Iterable[str]) -> pysam.VariantHeader:
    h = pysam.VariantHeader()
    h.add_line(f"##source=irdtriage-{__version__}")
    build = result.get("genome_build")
    if build:
        h.add_line(f"##reference={_header_text(build)}")
    panel = result.get("panel") or {}
    rules = result.get("rules") or {}
    h.add_line(f"##irdtriage_panel={_header_text(panel.get('name'))} {_header_text(panel.get('version'))} sha256:{_header_text(panel.get('sha256'))}")
    h.add_line(f"##irdtriage_rules={_header_text(rules.get('name'))} {_header_text(rules.get('version'))} sha256:{_header_text(rules.get('sha256'))}")
    for rs in (rules.get("combining") or {}).get("rule_sets") or []:  # each combining rule set the findings used
        h.add_line(f'##irdtriage_combining=<ID={_header_text(rs.get("name"))},Version="{_header_text(rs.get("version"))}",'
                   f'SHA256={_header_text(rs.get("sha256"))}>')
    case = result.get("case") or {}
    h.add_line(f"##irdtriage_case_status={_header_text(case.get('status'))}")
    for c in cautions(result):
        h.add_line(f"##irdtriage_caution={_header_text(c)}")
    from ..evidence.describe import vcf_header_values  # one line per evidence source, or "none given"

    for v in vcf_header_values(result.get("evidence_sources")):
        h.add_line(f"##irdtriage_evidence={v}")
    for c in sorted(set(contigs), key=_contig_key):
        h.contigs.add(c)
    for fid, num, typ, desc in INFO_FIELDS:
        h.info.add(fid, num, typ, desc)
    for fid, num, typ, desc in FORMAT_FIELDS:
        h.formats.add(fid, num, typ, desc)
    names = [_sample_name((result.get("sample") or {}).get("id"))]
    for role, sid in family_samples(result):
        name = _sample_name(sid)
        if name not in names:
            names.append(name)
            h.add_line(f"##irdtriage_{role}={_header_text(name)}")
    for n in names:
        h.add_sample(n)
    return h


def _int(v) -> Optional[int]:
    return v if isinstance(v, int) and not isinstance(v, bool) else None


def _set_call(r, name: str, call: dict) -> None:
    """GT, DP, GQ and AD of one sample (``call``: genotype, dp, gq, ad from result.json)."""
    gt, phased = _parse_gt(call.get("genotype"))
    s = r.samples[name]
    s["GT"] = gt
    s.phased = phased
    for key in ("dp", "gq"):
        if _int(call.get(key)) is not None:
            s[key.upper()] = call[key]
    ad = call.get("ad")
    if isinstance(ad, (list, tuple)) and len(ad) == 2 and any(_int(x) is not None for x in ad):
        s["AD"] = tuple(_int(x) for x in ad)


def write_vcf(result: dict, path: Union[str, Path], all_records: Optional[Iterable[dict]] = None) -> tuple[Path, Path]:
    """Write ``path`` (bgzipped VCF, name should end in .vcf.gz) and ``path + '.tbi'``, atomically.

    ``all_records``: optional extra records (dicts with chrom, pos, ref, alt and optionally
    genotype, vcf_id, qual, filters) that are written without IRDT_ annotations, e.g. every
    in-panel record read; records equal to a finding are not repeated.
    Returns (vcf_path, index_path).
    """
    path = Path(path)
    findings = list(result.get("findings") or [])
    extra = list(all_records or [])
    gene_of = {}
    for g in result.get("genes") or []:
        for fid in g.get("findings") or []:
            gene_of[fid] = g
    for rec in findings + extra:
        for key in ("chrom", "pos", "ref", "alt"):
            if rec.get(key) in (None, ""):
                raise InputError(f"finding {rec.get('id', '?')} has no {key}; cannot write a VCF record", None)
    header = build_header(result, [r["chrom"] for r in findings + extra])
    sample = list(header.samples)[0]
    seen = {(f["chrom"], f["pos"], f["ref"], f["alt"]) for f in findings}
    rows = [(f, True) for f in findings] + [(r, False) for r in extra if (r["chrom"], r["pos"], r["ref"], r["alt"]) not in seen]
    rows.sort(key=lambda x: (_contig_key(x[0]["chrom"]), int(x[0]["pos"]), x[0]["ref"], x[0]["alt"]))
    parents = [(sid, _sample_name(sid)) for _, sid in family_samples(result)]
    parents = [(sid, name) for sid, name in parents if name in header.samples and name != sample]

    tbi = Path(str(path) + ".tbi")
    with atomic_path(path) as tmp_vcf, atomic_path(tbi) as tmp_tbi:
        plain = Path(str(tmp_vcf) + ".vcf.gz")
        try:
            with pysam.VariantFile(str(plain), "wz", header=header) as out:
                for rec, is_finding in rows:
                    sv = rec.get("structural") or {}
                    # a symbolic event is written as read: POS is the padding base, INFO END its last base
                    pos = int((rec.get("original") or {}).get("pos") or rec["pos"]) if sv else int(rec["pos"])
                    r = out.new_record(contig=rec["chrom"], start=pos - 1, alleles=(rec["ref"], rec["alt"]))
                    if sv and str(rec["alt"]).startswith("<"):
                        r.info["SVTYPE"] = str(sv.get("type"))
                        r.stop = int(sv["end"])
                    if rec.get("vcf_id"):
                        r.id = str(rec["vcf_id"]).replace(";", ",").replace(" ", "_")
                    if rec.get("qual") is not None:
                        r.qual = float(rec["qual"])
                    for flt in rec.get("filters") or []:
                        if flt == "PASS":
                            r.filter.add("PASS")
                        else:
                            name = _FILTER_BAD.sub("_", flt)
                            if name not in out.header.filters:
                                out.header.filters.add(name, None, None, "Filter from the input VCF")
                            r.filter.add(name)
                    _set_call(r, sample, rec)
                    fam = rec.get("family") or {}
                    for sid, name in parents:
                        _set_call(r, name, fam.get(sid) or {})
                    if is_finding:
                        _annotate(r, rec, gene_of.get(rec.get("id")))
                    out.write(r)
            pysam.tabix_index(str(plain), preset="vcf", force=True)
            os.replace(plain, tmp_vcf)
            os.replace(str(plain) + ".tbi", tmp_tbi)
        finally:
            for leftover in (plain, Path(str(plain) + ".tbi")):
                if leftover.exists():
                    leftover.unlink()
    return path, tbi


def _annotate(r, f: dict, gene: Optional[dict]) -> None:
    info = r.info
    info["IRDT_ID"] = encode(f.get("id"))
    info["IRDT_GENE"] = encode(f.get("gene"))
    if f.get("transcript"):
        info["IRDT_TX"] = encode(f["transcript"])
    if f.get("hgvs_c"):
        info["IRDT_HGVSC"] = encode(f["hgvs_c"])
    if f.get("hgvs_p"):
        info["IRDT_HGVSP"] = encode(f["hgvs_p"])
    if f.get("consequence"):
        info["IRDT_CSQ"] = tuple(encode(c) for c in f["consequence"])
    if f.get("classification"):
        info["IRDT_CLASS"] = encode(f["classification"])
    if f.get("rule_set"):
        info["IRDT_RULESET"] = encode(f["rule_set"])
    met = met_criteria(f)
    if met:
        info["IRDT_CRIT"] = tuple(encode(criterion_label(c)) for c in met)
    if f.get("points") is not None:
        info["IRDT_POINTS"] = int(f["points"])
    if f.get("posterior") is not None:
        info["IRDT_POST"] = float(f["posterior"])
    if gene:
        info["IRDT_FIT"] = encode(gene.get("genotype_fit"))
        if gene.get("rank") is not None:
            info["IRDT_RANK"] = int(gene["rank"])
    info["IRDT_STATUS"] = encode(f.get("interpretation_status") or "UNKNOWN_STATUS")
    if f.get("zygosity"):
        info["IRDT_ZYG"] = encode(f["zygosity"])
        if f["zygosity"] in ("homoplasmic", "heteroplasmic") and isinstance(f.get("allele_balance"), (int, float)):
            info["IRDT_HPL"] = round(float(f["allele_balance"]), 4)
    if f.get("quality_flags"):
        info["IRDT_QFLAG"] = tuple(encode(q) for q in f["quality_flags"])
    o = f.get("original") or {}
    if o and (o.get("pos") != f.get("pos") or o.get("ref") != f.get("ref") or list(o.get("alts") or []) != [f.get("alt")]):
        info["IRDT_ORIG"] = encode(f"{o.get('pos')}|{o.get('ref')}|{','.join(o.get('alts') or [])}|{o.get('allele_index')}")
