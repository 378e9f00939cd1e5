"""Evidence bundle: the panel-sized, versioned extract of the large public evidence files.

``build_bundle`` reads the files a lab already has (population-frequency sites VCFs in gnomAD's
layout, possibly one file per chromosome; a ClinVar-style clinical-assertion VCF; score tables
with columns chrom, pos, ref, alt, score) and keeps only the records inside the panel genes'
spans plus padding.  Each kind becomes one bgzipped, tabix-indexed file; ``manifest.json``
records for every source its file name, version and date (from the header where it says),
sha256, size and record counts.  The whole folder is written as one transaction
(``irdtriage.atomic.output_transaction``).  Format: docs/evidence-bundle.md.

``Bundle.open`` checks a bundle (manifest format and version, each file's sha256) and gives
the paths ``EvidenceSources.open`` takes, the covered regions, and the provenance that goes
into result.json.  A variant outside the bundle's regions gets no evidence from it (None:
"not evaluable"), never "absent from the population".
"""
from __future__ import annotations

import bisect
import datetime as _dt
import gzip
import json
import os
import re
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any, Iterable, Iterator, Optional, Sequence

import pysam

from ..errors import InputError
from .alleles import bare
from .indexed import index_file

FORMAT_NAME = "irdtriage-evidence-bundle"
FORMAT_VERSION = 1
MANIFEST = "manifest.json"
REGIONS = "regions.bed"
POPULATION = "population.vcf.gz"
CLINICAL = "clinical.vcf.gz"
SCORES_DIR = "scores"
DEFAULT_PADDING = 1000

# Population INFO keys kept in the bundle (the rest of a gnomAD record is large and unused):
# AC/AN/AF/nhomalt overall and per genetic-ancestry group, and the filtering/group-max keys.
_POP_GROUP_KEY = re.compile(r"^(AC|AN|AF|nhomalt)_([A-Za-z]+)$")
_POP_SUMMARY_KEY = re.compile(r"faf|grpmax|popmax", re.IGNORECASE)
_POP_SKIP = re.compile(r"(^|_)(XX|XY|raw|male|female)($|_)|^(non|controls)_", re.IGNORECASE)
_HEADER_VERSION_KEYS = ("version", "source_version", "dataset_version", "release")
_NAME_VERSION = re.compile(r"(?:^|[._-])v?(\d+(?:\.\d+)+)(?=[._-]|$)", re.IGNORECASE)


def keep_population_key(key: str, config=None) -> bool:
    """Is this INFO key of a population-frequency VCF kept in the bundle?"""
    if key in ("AC", "AN", "AF", "nhomalt", "Hom", "HOM", "AC_Hom"):
        return True
    if config is not None and key in (config.popmax_keys + config.faf_keys):
        return True
    if _POP_SKIP.search(key):
        return False
    m = _POP_GROUP_KEY.match(key)
    if m:
        return True
    return bool(_POP_SUMMARY_KEY.search(key))


# ---------------------------------------------------------------------------------------
# regions

@dataclass
class Regions:
    """Merged, sorted 0-based half-open intervals per bare chromosome name ("1", "X", "MT")."""

    by_chrom: dict[str, list[tuple[int, int]]] = field(default_factory=dict)

    @classmethod
    def from_panel(cls, panel, build: str, padding: int) -> "Regions":
        raw: dict[str, list[tuple[int, int]]] = {}
        for gene in panel.genes.values():
            span = gene.span(build)
            if span is None:
                continue
            raw.setdefault(bare(span.chrom), []).append((max(0, span.start - 1 - padding), span.end + padding))
        return cls({c: _merge(v) for c, v in raw.items()})

    @classmethod
    def read_bed(cls, path: str) -> "Regions":
        raw: dict[str, list[tuple[int, int]]] = {}
        with open(path, encoding="utf-8") as fh:
            for n, line in enumerate(fh, 1):
                if not line.strip() or line.startswith("#"):
                    continue
                cols = line.rstrip("\n").split("\t")
                try:
                    raw.setdefault(bare(cols[0]), []).append((int(cols[1]), int(cols[2])))
                except (IndexError, ValueError):
                    raise InputError("regions line needs chrom, start, end (tab-separated numbers)", path, n) from None
        return cls({c: _merge(v) for c, v in raw.items()})

    def bed(self) -> str:
        return "".join(f"{c}\t{s}\t{e}\n" for c in self.chroms() for s, e in self.by_chrom[c])

    def chroms(self) -> list[str]:
        return sorted(self.by_chrom, key=_chrom_order)

    def covers(self, chrom: str, pos: int, end: Optional[int] = None) -> bool:
        """Is the 1-based closed interval pos..end entirely inside one region?"""
        ivs = self.by_chrom.get(bare(chrom))
        if not ivs:
            return False
        end = pos if end is None else end
        i = bisect.bisect_right(ivs, (pos - 1, float("inf"))) - 1
        return i >= 0 and ivs[i][0] <= pos - 1 and end <= ivs[i][1]

    def overlaps(self, chrom: str, start0: int, end0: int) -> bool:
        ivs = self.by_chrom.get(bare(chrom))
        if not ivs:
            return False
        # intervals are merged, so ends rise with starts: test the last one starting before end0
        i = bisect.bisect_left(ivs, (end0, -1)) - 1
        return i >= 0 and ivs[i][1] > start0

    @property
    def bases(self) -> int:
        return sum(e - s for v in self.by_chrom.values() for s, e in v)

    @property
    def count(self) -> int:
        return sum(len(v) for v in self.by_chrom.values())


def _merge(ivs: list[tuple[int, int]]) -> list[tuple[int, int]]:
    out: list[list[int]] = []
    for s, e in sorted(ivs):
        if out and s <= out[-1][1]:
            out[-1][1] = max(out[-1][1], e)
        else:
            out.append([s, e])
    return [(s, e) for s, e in out]


def _chrom_order(c: str) -> tuple[int, str]:
    c = bare(c)
    if c.isdigit():
        return int(c), ""
    return {"X": 23, "Y": 24, "MT": 25}.get(c, 99), c


# ---------------------------------------------------------------------------------------
# source description

def sha256_file(path: str | Path, chunk: int = 1 << 20) -> str:
    import hashlib

    h = hashlib.sha256()
    with open(path, "rb") as fh:
        while block := fh.read(chunk):
            h.update(block)
    return h.hexdigest()


def _header_meta(lines: Iterable[str]) -> dict[str, str]:
    """Simple ``##key=value`` header lines (first value per key), without structured ones."""
    meta: dict[str, str] = {}
    for line in lines:
        if not line.startswith("##") or "=" not in line:
            continue
        k, v = line[2:].rstrip("\n").split("=", 1)
        if v.startswith("<"):
            continue
        meta.setdefault(k, v.strip().strip('"'))
    return meta


def describe_source(path: str, kind: str, header_lines: Sequence[str]) -> dict[str, Any]:
    """Name, version, date, size and sha256 of one input file.

    Version: a ``##version``-like header line, else ``##source`` when it names a version, else a
    version-like part of the file name (``gnomad.exomes.v4.1.sites.chr1.vcf.bgz`` -> 4.1), with
    ``version_from`` saying which.  Date: ``##fileDate`` (ClinVar writes it), else the file's
    modification date (``date_from: file modification time``).
    """
    meta = _header_meta(header_lines)
    version, version_from = None, None
    for k in _HEADER_VERSION_KEYS:
        for mk, mv in meta.items():
            if mk.lower() == k or mk.lower().endswith("_" + k):
                version, version_from = mv, f"header ##{mk}"
                break
        if version:
            break
    if version is None and meta.get("source") and re.search(r"\d", meta["source"]):
        version, version_from = meta["source"], "header ##source"
    if version is None:
        m = _NAME_VERSION.search(os.path.basename(path))
        if m:
            version, version_from = m.group(1), "file name"
    date, date_from = None, None
    if meta.get("fileDate"):
        date, date_from = _iso_date(meta["fileDate"]), "header ##fileDate"
    else:
        st = os.stat(path)
        date = _dt.datetime.fromtimestamp(st.st_mtime, _dt.timezone.utc).date().isoformat()
        date_from = "file modification time"
    return {
        "kind": kind, "name": os.path.basename(path), "size": os.path.getsize(path), "sha256": sha256_file(path),
        "version": version, "version_from": version_from, "date": date, "date_from": date_from,
        "header": {k: meta[k] for k in ("fileDate", "source", "reference") if k in meta},
    }


def _iso_date(text: str) -> str:
    t = text.strip()
    for fmt in ("%Y-%m-%d", "%Y%m%d", "%Y/%m/%d"):
        try:
            return _dt.datetime.strptime(t, fmt).date().isoformat()
        except ValueError:
            continue
    return t


# ---------------------------------------------------------------------------------------
# reading inputs

def _open_vcf(path: str, what: str) -> pysam.VariantFile:
    if not os.path.exists(path):
        raise InputError(f"{what} not found", path)
    try:
        return pysam.VariantFile(path)
    except (OSError, ValueError) as e:
        raise InputError(f"cannot open {what}: {e}", path) from None


def _contig_lookup(names: Iterable[str]) -> dict[str, str]:
    """bare name -> the file's own contig name."""
    return {bare(n): n for n in names}


def _records_in_regions(vf: pysam.VariantFile, path: str, regions: Regions, what: str,
                        counts: dict[str, int]) -> Iterator[pysam.VariantRecord]:
    """Records overlapping the regions, in file order; by the index when there is one.

    ``counts["read"]`` counts the records looked at (all of them when the file is streamed).
    """
    has_index = False
    try:
        has_index = bool(vf.index)
    except (AttributeError, ValueError):
        has_index = False
    if has_index:
        names = _contig_lookup(list(vf.header.contigs) + list(vf.index.keys()))
        for chrom in regions.chroms():
            contig = names.get(chrom)
            if contig is None:
                continue
            prev_end = -1
            for s, e in regions.by_chrom[chrom]:
                try:
                    it = vf.fetch(contig, s, e)
                except ValueError:
                    break
                for rec in it:
                    counts["read"] += 1
                    if rec.start < s and rec.start < prev_end:
                        continue  # already written with the previous region
                    yield rec
                prev_end = e
        return
    last: dict[str, int] = {}
    order: list[str] = []
    line = 0
    try:
        for rec in vf:
            line += 1
            counts["read"] += 1
            c = rec.chrom
            if c not in last:
                if order and c in order:
                    raise InputError(f"{what} is not sorted: contig {c} appears again", path)
                order.append(c)
            elif rec.pos < last[c]:
                raise InputError(f"{what} is not sorted by position at {c}:{rec.pos}", path)
            last[c] = rec.pos
            if regions.overlaps(c, rec.start, max(rec.stop, rec.start + 1)):
                yield rec
    except (OSError, ValueError) as e:
        raise InputError(f"cannot read {what} after record {line}: {e}", path) from None


def _header_lines(vf: pysam.VariantFile) -> list[str]:
    return str(vf.header).splitlines()


def _info_id(line: str) -> Optional[str]:
    m = re.match(r"##INFO=<ID=([^,>]+)", line)
    return m.group(1) if m else None


def _write_vcf_kind(kind: str, paths: Sequence[str], regions: Regions, dest: Path,
                    keep_key=None) -> dict[str, Any]:
    """Extract one evidence kind from its input VCF(s) into ``dest`` (bgzipped + tabix).

    Several inputs must be one dataset split by chromosome: a contig in two files is refused.
    ``keep_key(key) -> bool`` selects INFO keys (None keeps all).
    """
    what = {"population": "population-frequency VCF", "clinical": "clinical-assertion VCF"}[kind]
    plain = dest.with_suffix("")  # population.vcf
    sources = []
    body_path = dest.parent / f".{kind}.body"
    header: list[str] = []
    header_set: set[str] = set()
    seen_info: set[str] = set()
    contigs_done: set[str] = set()
    total_written = 0
    kept_keys: set[str] = set()
    with open(body_path, "w", encoding="utf-8") as body:
        for path in paths:
            vf = _open_vcf(path, what)
            try:
                lines = _header_lines(vf)
                if kind == "clinical" and "CLNSIG" not in vf.header.info:
                    raise InputError("clinical-assertion VCF has no CLNSIG INFO field in its header", path)
                if kind == "population" and not any(k in vf.header.info for k in ("AC", "AF")):
                    raise InputError("population-frequency VCF has neither AC nor AF in its INFO header", path)
                keys = {k for k in vf.header.info if keep_key is None or keep_key(k)}
                kept_keys |= keys
                for ln in lines:
                    if ln.startswith("#CHROM") or ln.startswith("##FORMAT"):
                        continue
                    iid = _info_id(ln)
                    if iid is not None:
                        if iid in keys and iid not in seen_info:
                            seen_info.add(iid)
                            header.append(ln)
                        continue
                    if ln not in header_set:
                        header_set.add(ln)
                        header.append(ln)
                counts = {"read": 0, "written": 0}
                file_contigs: set[str] = set()
                for rec in _records_in_regions(vf, path, regions, what, counts):
                    c = bare(rec.chrom)
                    if c not in file_contigs:
                        if c in contigs_done:
                            raise InputError(f"{what}s overlap: contig {rec.chrom} is in more than one file "
                                             "(give one dataset, split by chromosome)", path)
                        file_contigs.add(c)
                    cols = str(rec).rstrip("\n").split("\t")[:8]
                    if keep_key is not None and cols[7] not in (".", ""):
                        items = [it for it in cols[7].split(";") if it.split("=", 1)[0] in keys]
                        cols[7] = ";".join(items) or "."
                    body.write("\t".join(cols) + "\n")
                    counts["written"] += 1
                contigs_done |= file_contigs
            finally:
                vf.close()
            desc = describe_source(path, kind, lines)
            desc.update(records_read=counts["read"], records_written=counts["written"])
            sources.append(desc)
            total_written += counts["written"]
    if total_written == 0:
        body_path.unlink()
        raise InputError(f"no record of the {what}(s) lies in the panel genes' regions: is the genome build right, "
                         f"and do the files name chromosomes as expected?", paths[0])
    meta = [h for h in header if h.startswith("##") and not h.startswith("##fileformat")
            and not h.startswith("##irdtriage_bundle_kind")]
    fileformat = next((h for h in header if h.startswith("##fileformat")), "##fileformat=VCFv4.2")
    meta.append(f"##irdtriage_bundle_kind={kind}")
    with open(plain, "w", encoding="utf-8") as out:
        out.write(fileformat + "\n" + "\n".join(meta) + "\n")
        out.write("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\n")
        with open(body_path, encoding="utf-8") as body:
            for ln in body:
                out.write(ln)
    body_path.unlink()
    try:
        pysam.tabix_index(str(plain), preset="vcf", force=True)
    except (OSError, ValueError) as e:
        raise InputError(f"cannot index the extracted {what} (are its records sorted?): {e}", paths[0]) from None
    return {"kind": kind, "file": dest.name, "records": total_written, "sources": sources,
            "info_keys": sorted(kept_keys) if keep_key is not None else "all"}


def _score_name(spec: str) -> tuple[str, str]:
    from .scores import table_name

    name, path = table_name(spec)
    if not re.fullmatch(r"[a-z0-9_-]+", name):
        raise InputError(f"score table name {name!r}: use letters, digits, '-' or '_' (NAME=PATH)", path)
    return name, path


def _score_rows(path: str, regions: Regions, counts: dict[str, int]) -> Iterator[tuple[str, int, list[str], int]]:
    """(bare chrom, pos, the five columns, line) of score rows inside the regions."""
    tbx = None
    if index_file(path):
        try:
            tbx = pysam.TabixFile(path)
        except (OSError, ValueError):
            tbx = None
    if tbx is not None:
        try:
            names = _contig_lookup(tbx.contigs)
            for chrom in regions.chroms():
                contig = names.get(chrom)
                if contig is None:
                    continue
                for s, e in regions.by_chrom[chrom]:
                    for line in tbx.fetch(contig, s, e):
                        counts["read"] += 1
                        yield _score_cols(line, path, None, regions, check=False)
        finally:
            tbx.close()
        return
    try:
        with open(path, "rb") as probe:
            magic = probe.read(2)
        opener = gzip.open if magic == b"\x1f\x8b" else open
        with opener(path, "rt", encoding="utf-8", newline="") as fh:
            for n, line in enumerate(fh, 1):
                if not line.strip() or line.startswith("#"):
                    continue
                counts["read"] += 1
                row = _score_cols(line, path, n, regions, check=True)
                if row is not None:
                    yield row
    except (OSError, EOFError, UnicodeDecodeError) as e:
        raise InputError(f"cannot read score table: {e}", path) from None


def _score_cols(line: str, path: str, n: Optional[int], regions: Regions, check: bool):
    cols = line.rstrip("\r\n").split("\t")
    if len(cols) < 5:
        raise InputError(f"score table row has {len(cols)} columns; need chrom, pos, ref, alt, score", path, n)
    try:
        pos = int(cols[1])
    except ValueError:
        if n is not None and n == 1:
            return None  # a column-name line without '#'
        raise InputError(f"score table position is not a number: {cols[1]!r}", path, n) from None
    if check and not regions.overlaps(cols[0], pos - 1, pos - 1 + max(len(cols[2]), 1)):
        return None
    return bare(cols[0]), pos, cols[:5], n


def _write_scores(spec: str, regions: Regions, folder: Path) -> dict[str, Any]:
    name, path = _score_name(spec)
    if not os.path.exists(path):
        raise InputError("score table not found", path)
    counts = {"read": 0}
    rows: dict[str, list[tuple[int, str]]] = {}
    header_lines: list[str] = []
    with open(path, "rb") as probe:
        opener = gzip.open if probe.read(2) == b"\x1f\x8b" else open
    with opener(path, "rt", encoding="utf-8", errors="replace") as fh:
        for line in fh:
            if not line.startswith("#"):
                break
            header_lines.append(line.rstrip("\n"))
    for chrom, pos, cols, _ in filter(None, _score_rows(path, regions, counts)):
        rows.setdefault(chrom, []).append((pos, "\t".join(cols)))
    folder.mkdir(exist_ok=True)
    plain = folder / f"{name}.tsv"
    written = 0
    with open(plain, "w", encoding="utf-8") as out:
        out.write("#chrom\tpos\tref\talt\tscore\n")
        for chrom in sorted(rows, key=_chrom_order):
            for _, text in sorted(rows[chrom], key=lambda r: r[0]):
                out.write(text + "\n")
                written += 1
    pysam.tabix_index(str(plain), seq_col=0, start_col=1, end_col=1, meta_char="#", force=True)
    desc = describe_source(path, "scores", header_lines)
    desc.update(records_read=counts["read"], records_written=written)
    return {"kind": "scores", "name": name, "file": f"{SCORES_DIR}/{name}.tsv.gz", "records": written,
            "sources": [desc]}


# ---------------------------------------------------------------------------------------
# build

def is_bundle_file(path: Path) -> bool:
    """Entries a bundle folder holds (an existing folder holding anything else is not replaced)."""
    return path.name in (MANIFEST, REGIONS, POPULATION, CLINICAL, POPULATION + ".tbi", CLINICAL + ".tbi",
                         SCORES_DIR)


def _detect_build(paths: Sequence[str], wanted: Optional[str]) -> Optional[str]:
    from ..build import detect_build, normalise_build

    want = normalise_build(wanted) if wanted else None
    for p in paths:
        vf = _open_vcf(p, "evidence VCF")
        try:
            got = detect_build(vf.header, p)
        finally:
            vf.close()
        if got and want and got != want:
            raise InputError(f"this file's header is {got} but the bundle is being built for {want}", p)
        want = want or got
    return want


def build_bundle(out: str, *, population: Sequence[str] = (), clinical: Sequence[str] = (),
                 scores: Sequence[str] = (), panel_path: Optional[str] = None, genes: Optional[Sequence[str]] = None,
                 build: Optional[str] = None,
                 padding: int = DEFAULT_PADDING, command: str = "") -> dict[str, Any]:
    """Build a bundle folder at ``out`` (as one transaction); returns the manifest."""
    from .. import __version__
    from ..atomic import output_transaction
    from ..panel import load_panel
    from .config import EvidenceConfig

    if not (population or clinical or scores):
        raise InputError("resources build needs at least one of --population, --clinical, --scores")
    if padding < 0:
        raise InputError(f"--padding must be 0 or more, got {padding}")
    for p in list(population) + list(clinical):
        if not os.path.exists(p):
            raise InputError("evidence file not found", p)
    build = _detect_build(list(population) + list(clinical), build)
    if build is None:
        raise InputError("the genome build is not named in the evidence headers: give --build GRCh37 or GRCh38")
    panel = load_panel(panel_path, genes=genes)
    regions = Regions.from_panel(panel, build, padding)
    config = EvidenceConfig()
    inputs = list(population) + list(clinical) + [_score_name(s)[1] for s in scores]
    names = [_score_name(s)[0] for s in scores]
    if len(set(names)) != len(names):
        raise InputError(f"two score tables share a name ({', '.join(sorted(n for n in names if names.count(n) > 1))}); "
                         "name them NAME=PATH")
    with output_transaction(out, inputs=inputs, owned=is_bundle_file) as tx:
        staging = Path(tx.staging)
        contents = []
        if population:
            contents.append(_write_vcf_kind("population", list(population), regions, staging / POPULATION,
                                            keep_key=lambda k: keep_population_key(k, config)))
        if clinical:
            contents.append(_write_vcf_kind("clinical", list(clinical), regions, staging / CLINICAL))
        for spec in scores:
            contents.append(_write_scores(spec, regions, staging / SCORES_DIR))
        (staging / REGIONS).write_text(regions.bed(), encoding="utf-8")
        for c in contents:
            c["sha256"] = sha256_file(staging / c["file"])
        manifest = {
            "format": FORMAT_NAME, "format_version": FORMAT_VERSION,
            "created": _dt.datetime.now(_dt.timezone.utc).replace(microsecond=0).isoformat().replace("+00:00", "Z"),
            "tool": {"name": "irdtriage", "version": __version__}, "command": command,
            "genome_build": build,
            "panel": {"name": panel.name, "version": panel.version, "sha256": panel.sha256,
                      "genes": len(panel.genes), "subset": sorted(panel.genes) if genes else None},
            "regions": {"file": REGIONS, "padding": padding, "count": regions.count, "bases": regions.bases,
                        "sha256": sha256_file(staging / REGIONS)},
            "contents": contents,
        }
        (staging / MANIFEST).write_text(json.dumps(manifest, indent=2) + "\n", encoding="utf-8")
    return manifest


# ---------------------------------------------------------------------------------------
# read

class Bundle:
    """An opened, checked bundle folder."""

    def __init__(self, folder: str, manifest: dict[str, Any], regions: Regions):
        self.folder = folder
        self.manifest = manifest
        self.regions = regions

    @classmethod
    def open(cls, folder: str, verify: bool = True) -> "Bundle":
        mpath = os.path.join(folder, MANIFEST)
        if not os.path.isdir(folder):
            raise InputError("evidence bundle folder not found", folder)
        if not os.path.isfile(mpath):
            raise InputError(f"not an evidence bundle (no {MANIFEST}); build one with 'irdtriage resources build'",
                             folder)
        try:
            with open(mpath, encoding="utf-8") as fh:
                manifest = json.load(fh)
        except (OSError, UnicodeDecodeError) as e:
            raise InputError(f"cannot read the manifest: {e}", mpath) from None
        except json.JSONDecodeError as e:
            raise InputError(f"manifest is not JSON: {e.msg}", mpath, e.lineno) from None
        if not isinstance(manifest, dict) or manifest.get("format") != FORMAT_NAME:
            raise InputError(f"manifest does not declare format {FORMAT_NAME!r}", mpath)
        if manifest.get("format_version") != FORMAT_VERSION:
            raise InputError(f"bundle format version {manifest.get('format_version')!r} is not supported by this "
                             f"version (reads {FORMAT_VERSION}); rebuild the bundle", mpath)
        for key in ("genome_build", "contents", "regions"):
            if key not in manifest:
                raise InputError(f"manifest lacks {key!r}", mpath)
        files = [(c.get("file"), c.get("sha256")) for c in manifest["contents"]]
        files.append((manifest["regions"].get("file"), manifest["regions"].get("sha256")))
        for name, digest in files:
            if not name or not isinstance(name, str) or os.path.isabs(name) or ".." in Path(name).parts:
                raise InputError(f"manifest names an unusable file {name!r}", mpath)
            p = os.path.join(folder, name)
            if not os.path.isfile(p):
                raise InputError(f"bundle file {name} listed in the manifest is missing", folder)
            if verify and digest and sha256_file(p) != digest:
                raise InputError(f"bundle file {name} does not match its sha256 in the manifest (changed after the "
                                 "build?); rebuild the bundle", folder)
        regions = Regions.read_bed(os.path.join(folder, manifest["regions"]["file"]))
        return cls(folder, manifest, regions)

    @property
    def build(self) -> str:
        return self.manifest["genome_build"]

    def _content(self, kind: str) -> list[dict[str, Any]]:
        return [c for c in self.manifest["contents"] if c.get("kind") == kind]

    @property
    def population_vcf(self) -> Optional[str]:
        c = self._content("population")
        return os.path.join(self.folder, c[0]["file"]) if c else None

    @property
    def clinical_vcf(self) -> Optional[str]:
        c = self._content("clinical")
        return os.path.join(self.folder, c[0]["file"]) if c else None

    @property
    def score_tables(self) -> list[str]:
        return [f"{c['name']}={os.path.join(self.folder, c['file'])}" for c in self._content("scores")]

    def provenance(self) -> dict[str, Any]:
        """What result.json records about the bundle and each of its sources."""
        m = self.manifest
        return {
            "path": self.folder, "format_version": m["format_version"], "created": m.get("created"),
            "genome_build": m["genome_build"], "panel": m.get("panel"),
            "padding": m["regions"].get("padding"),
            "sources": [{"kind": c["kind"], **({"name": c["name"]} if c.get("name") else {}),
                         "bundle_file": c["file"], "bundle_sha256": c.get("sha256"), "records": c.get("records"),
                         "origin": [{k: s.get(k) for k in ("name", "version", "version_from", "date", "date_from",
                                                         "sha256")} for s in c.get("sources", [])]}
                        for c in m["contents"]],
        }


class CoveredSource:
    """Wraps a population/clinical source or score table of a bundle: a variant outside the
    bundle's regions gets None (not evaluable), never "absent"; ``outside`` counts them."""

    def __init__(self, inner, regions: Regions):
        self.inner = inner
        self.regions = regions
        self.outside = 0

    def __getattr__(self, name):
        return getattr(self.inner, name)

    def lookup(self, chrom: str, pos: int, ref: str, alt: str, *args, **kwargs):
        if not self.regions.covers(chrom, pos, pos + max(len(ref), 1) - 1):
            self.outside += 1
            return None
        return self.inner.lookup(chrom, pos, ref, alt, *args, **kwargs)

    def close(self) -> None:
        self.inner.close()
