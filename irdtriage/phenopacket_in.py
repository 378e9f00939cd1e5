"""Phenotype input: GA4GH Phenopacket v2 JSON files and lists of HPO term IDs.

``read_phenopacket(path)`` validates the file against the Phenopacket v2 schema (the
``phenopackets`` protobuf classes, parsed with ``google.protobuf.json_format``) and returns
a :class:`~irdtriage.models.PhenotypeProfile` with the observed and excluded HPO terms, the
subject id, sex and the term labels. The ``interpretations`` block is never read: it holds
the answer (the diagnosis), and phenotype matching must not see it.

``parse_hpo_terms(value)`` turns ``"HP:0000510,HP:0000662"`` (or a list, or ``"@file"``
naming a file with one or more IDs per line, ``#`` comments allowed) into validated,
de-duplicated HPO IDs, replacing obsolete IDs by their replacement when the ontology
offers one (with a warning) and rejecting unknown or malformed IDs with an
:class:`~irdtriage.errors.InputError`.
"""
from __future__ import annotations

import re
import warnings
from pathlib import Path
from typing import Iterable, Optional, Union

from irdtriage.errors import InputError
from irdtriage.jsonio import read_json_object
from irdtriage.models import PhenotypeProfile

HPO_ID = re.compile(r"^HP:\d{7}$")

# Phenopacket v2 Sex enum -> the words PhenotypeProfile uses (None = not stated / other).
_SEX = {"MALE": "MALE", "FEMALE": "FEMALE", "OTHER_SEX": None, "UNKNOWN_SEX": None}


class ObsoleteTermWarning(UserWarning):
    """An obsolete HPO ID was replaced by the ontology's replacement term."""


def _line_of(text: str, needle: str) -> Optional[int]:
    """1-based line of the first occurrence of ``needle`` in ``text`` (None if absent)."""
    if not needle:
        return None
    idx = text.find(needle)
    if idx < 0:
        return None
    return text.count("\n", 0, idx) + 1


def _schema_check(text: str, data: dict, path: str) -> None:
    """Parse into the Phenopacket v2 protobuf message; raise one InputError on failure."""
    from google.protobuf import json_format
    from phenopackets import Phenopacket

    try:
        json_format.ParseDict(data, Phenopacket(), ignore_unknown_fields=False)
    except json_format.ParseError as exc:
        msg = str(exc)
        # Messages look like: 'Failed to parse sex field: Invalid enum value FOO for enum type ...'
        # or 'Message type "...Phenopacket" has no field named "phenotypicFeature" at "Phenopacket".'
        line = None
        m = re.search(r'field named "([^"]+)"', msg) or re.search(r"enum value (\S+)", msg)
        if m:
            line = _line_of(text, f'"{m.group(1)}"') or _line_of(text, m.group(1))
        else:
            m = re.search(r"Failed to parse (\w+) field", msg)
            if m:
                line = _line_of(text, f'"{m.group(1)}"')
        raise InputError(f"not a valid GA4GH Phenopacket v2: {msg}", path, line) from None


def read_phenopacket(path: Union[str, Path], *, validate_terms: bool = True) -> PhenotypeProfile:
    """Read a GA4GH Phenopacket v2 JSON file into a PhenotypeProfile.

    Observed features go to ``present`` and ``excluded: true`` features to ``excluded``
    (file order, duplicates dropped). With ``validate_terms`` every ID is checked against
    the HPO (obsolete IDs are replaced, unknown IDs raise InputError naming the line).
    """
    p = Path(path)
    spath = str(p)
    text, data = read_json_object(p, "phenopacket")
    _schema_check(text, data, spath)

    present: list[str] = []
    excluded: list[str] = []
    labels: dict[str, str] = {}
    for feat in data.get("phenotypicFeatures", []) or []:
        term = feat.get("type") or {}
        tid = term.get("id", "")
        if not HPO_ID.match(tid):
            raise InputError(
                f"phenotypic feature {tid!r} is not an HPO term ID (HP:nnnnnnn)", spath, _line_of(text, f'"{tid}"')
            )
        if validate_terms:
            try:
                tid = parse_hpo_terms([tid], source=spath)[0]
            except InputError as exc:
                raise InputError(exc.problem, spath, _line_of(text, f'"{term.get("id")}"')) from None
        if term.get("label"):
            labels.setdefault(tid, term["label"])
        target = excluded if feat.get("excluded") else present
        if tid not in target:
            target.append(tid)

    subject = data.get("subject") or {}
    sex = _SEX.get(subject.get("sex", "UNKNOWN_SEX"))
    return PhenotypeProfile(
        present=tuple(present),
        excluded=tuple(excluded),
        sex=sex,
        subject_id=subject.get("id") or data.get("id"),
        source=spath,
        labels=labels,
    )


def _tokens(value: Union[str, Iterable[str]], source: Optional[str]) -> list[tuple[str, Optional[str], Optional[int]]]:
    """Split the input into (token, path, line) triples; reads ``@file`` indirections."""
    items: list[str] = [value] if isinstance(value, str) else list(value)
    out: list[tuple[str, Optional[str], Optional[int]]] = []
    for item in items:
        item = item.strip()
        if item.startswith("@"):
            fpath = item[1:]
            try:
                lines = Path(fpath).read_text(encoding="utf-8").splitlines()
            except (OSError, UnicodeDecodeError) as exc:
                raise InputError(f"cannot read HPO term file: {exc}", fpath) from None
            for n, line in enumerate(lines, 1):
                line = line.split("#", 1)[0]
                for tok in re.split(r"[,\s;]+", line):
                    if tok:
                        out.append((tok, fpath, n))
        else:
            for tok in re.split(r"[,\s;]+", item):
                if tok:
                    out.append((tok, source, None))
    return out


def parse_hpo_terms(value: Union[str, Iterable[str]], *, source: Optional[str] = "--hpo") -> list[str]:
    """Validated HPO IDs from ``"HP:0000510,HP:0000662"``, a list of IDs, or ``"@file"``.

    Malformed tokens and IDs the ontology does not know raise InputError naming the token.
    Obsolete IDs are replaced by their replacement (ObsoleteTermWarning); obsolete IDs
    without a replacement raise InputError. Order is kept, duplicates are dropped.
    """
    from irdtriage.phenotype_model import get_model

    model = get_model()
    result: list[str] = []
    for tok, path, line in _tokens(value, source):
        if not HPO_ID.match(tok):
            raise InputError(f"malformed HPO term ID {tok!r} (expected HP: followed by 7 digits)", path, line)
        i = model.index(tok)
        if i is None:
            raise InputError(f"HPO term {tok} is not in the ontology (HPO {model.version})", path, line) from None
        tid = model.term_id(i)
        if model.obsolete[i]:
            repl = model.replaced_by(i)
            if not repl:
                raise InputError(f"HPO term {tok} is obsolete and has no replacement", path, line)
            warnings.warn(f"HPO term {tok} is obsolete; using its replacement {repl}", ObsoleteTermWarning, stacklevel=2)
            tid = repl
        if tid not in result:
            result.append(tid)
    return result


def profile_from_terms(
    value: Union[str, Iterable[str]], *, excluded: Union[str, Iterable[str]] = (), sex: Optional[str] = None
) -> PhenotypeProfile:
    """A PhenotypeProfile from HPO IDs given on the command line (``--hpo``)."""
    from irdtriage.phenotype import term_names

    present = parse_hpo_terms(value)
    exc = parse_hpo_terms(excluded) if excluded else []
    labels = term_names(present + exc)
    return PhenotypeProfile(present=tuple(present), excluded=tuple(exc), sex=sex, source="--hpo", labels=labels)


def check_subject(subject: Optional[str], path: Optional[str], sample: str, vcf_samples: Iterable[str],
                  ped_ids: Iterable[str] = ()) -> Optional[str]:
    """Is the phenopacket about the person being triaged?

    Raises :class:`InputError` when its subject id is another sample of the VCF or another
    person of the PED file (the phenotype of the wrong person); returns a warning naming both
    ids when the subject id matches nobody (laboratory and clinical ids often differ); None
    when it names ``sample`` or the phenopacket gives no subject id.
    """
    if not subject or subject == sample:
        return None
    in_vcf = subject in set(vcf_samples)
    in_ped = subject in set(ped_ids)
    path = str(path) if path else None
    if in_vcf or in_ped:
        line = None
        if path:
            try:
                text = Path(path).read_text(encoding="utf-8")
                line = _line_of(text, f'"{subject}"')
            except (OSError, UnicodeDecodeError):
                line = None
        where = " and ".join(w for w, ok in (("the VCF", in_vcf), ("the PED file", in_ped)) if ok)
        raise InputError(f"the phenopacket's subject {subject!r} is another person in {where} than the sample "
                         f"being triaged ({sample!r}): wrong phenopacket, or give --sample {subject}", path, line)
    return (f"the phenopacket's subject id {subject!r} matches no sample in the VCF or PED file; its phenotype "
            f"is used for the triaged sample {sample!r} - check that both ids are the same person")
