"""Write every output of one case from the result dict, as one transaction.

The whole output set is written into a fresh staging folder beside the output folder and
swapped in at once (:func:`irdtriage.atomic.output_transaction`): a reader of the output
folder sees the previous set or the new one, never a mix, and a set written with fewer
formats leaves no file of the previous set behind. An error or an interruption anywhere
leaves the previous set as it was.

The output folder may hold only irdtriage outputs (:func:`is_output_file`); a folder holding
anything else is refused, never emptied. result.json and findings.tsv are streamed into
their files piece by piece (an exome can give tens of thousands of findings); the other
formats are small strings.
"""
from __future__ import annotations

import json
import re
from pathlib import Path
from typing import Iterable, Optional, Union

from irdtriage.atomic import output_transaction

from .html import render_html
from .json_out import iter_result_json
from .phenopacket_out import render_phenopacket
from .tsv import iter_tsv
from .vcf_out import write_vcf

FORMATS = ("json", "html", "tsv", "vcf", "phenopacket")
FILE_NAMES = {"json": "result.json", "html": "report.html", "tsv": "findings.tsv", "vcf": "findings.vcf.gz"}
INDEX_NAME = "findings.vcf.gz.tbi"
PHENOPACKET_SUFFIX = ".phenopacket.json"
#: the phenopacket interpretation irdtriage adds carries this id prefix (phenopacket_out)
_OUR_INTERPRETATION = "irdtriage-"


def phenopacket_name(result: dict) -> str:
    sid = str((result.get("sample") or {}).get("id") or "sample")
    safe = re.sub(r"[^A-Za-z0-9._-]+", "_", sid).strip("._") or "sample"
    return f"{safe}{PHENOPACKET_SUFFIX}"


def is_output_file(path: Path) -> bool:
    """True when ``path`` is a file irdtriage writes into an output folder.

    The fixed names (result.json, report.html, findings.tsv, findings.vcf.gz and its .tbi),
    and ``*.phenopacket.json`` files holding an interpretation irdtriage added. Anything else
    (other files, folders, symbolic links) is not ours.
    """
    path = Path(path)
    if path.is_symlink() or not path.is_file():
        return False
    if path.name in FILE_NAMES.values() or path.name == INDEX_NAME:
        return True
    if path.name.endswith(PHENOPACKET_SUFFIX):
        try:
            with open(path, encoding="utf-8") as fh:
                data = json.load(fh)
            return any(str(i.get("id", "")).startswith(_OUR_INTERPRETATION)
                       for i in data.get("interpretations") or [] if isinstance(i, dict))
        except (OSError, ValueError, AttributeError):
            return False
    return False


def output_names(result: dict, formats: Iterable[str]) -> list[str]:
    """The file names the chosen formats give for this result."""
    names = []
    for f in formats:
        if f == "phenopacket":
            names.append(phenopacket_name(result))
        else:
            names.append(FILE_NAMES[f])
            if f == "vcf":
                names.append(INDEX_NAME)
    return names


def _check_formats(formats: Iterable[str]) -> tuple[str, ...]:
    formats = tuple(formats)
    unknown = [f for f in formats if f not in FORMATS]
    if unknown:
        raise ValueError(f"unknown output format(s): {', '.join(unknown)}; choose from {', '.join(FORMATS)}")
    return formats


def render_outputs(
    result: dict,
    folder: Union[str, Path],
    formats: Iterable[str] = FORMATS,
    input_phenopacket: Optional[dict] = None,
    cascade_steps: Optional[list[dict]] = None,
    input_phenopacket_path: Optional[Union[str, Path]] = None,
) -> dict[str, Path]:
    """Render the chosen formats straight into ``folder`` (a staging folder); returns {format: path}.

    ``cascade_steps`` (the panel's [{id, title, kind, order, ...}, ...]) is stored in
    ``result['cascade']`` when given so that result.json carries the whole chain.
    The VCF's index is written beside it as ``findings.vcf.gz.tbi``.
    """
    formats = _check_formats(formats)
    if cascade_steps:
        result = dict(result)
        result["cascade"] = [dict(s) for s in cascade_steps]
    folder = Path(folder)
    pieces = {
        "json": (FILE_NAMES["json"], lambda: iter_result_json(result)),
        "html": (FILE_NAMES["html"], lambda: [render_html(result, cascade_steps)]),
        "tsv": (FILE_NAMES["tsv"], lambda: iter_tsv(result)),
        "phenopacket": (phenopacket_name(result),
                        lambda: [render_phenopacket(result, input_phenopacket, input_phenopacket_path)]),
    }
    written: dict[str, Path] = {}
    for fmt_name in formats:
        if fmt_name == "vcf":  # built by htslib
            written["vcf"], _ = write_vcf(result, folder / FILE_NAMES["vcf"])
            continue
        name, make = pieces[fmt_name]
        with open(folder / name, "w", encoding="utf-8", newline="") as fh:
            for chunk in make():
                fh.write(chunk)
        written[fmt_name] = folder / name
    return written


def write_outputs(
    result: dict,
    out_dir: Union[str, Path],
    formats: Iterable[str] = FORMATS,
    input_phenopacket: Optional[dict] = None,
    cascade_steps: Optional[list[dict]] = None,
    input_phenopacket_path: Optional[Union[str, Path]] = None,
    inputs: Iterable[Optional[Union[str, Path]]] = (),
) -> dict[str, Path]:
    """Render the chosen formats and put them in ``out_dir`` as one set; returns {format: path}.

    ``inputs``: the run's input files; an ``out_dir`` that holds one is refused.
    Files of a previous set in ``out_dir`` that this set does not write are removed.
    """
    formats = _check_formats(formats)
    with output_transaction(out_dir, inputs=inputs, owned=is_output_file) as tx:
        staged = render_outputs(result, tx.staging, formats, input_phenopacket, cascade_steps,
                                input_phenopacket_path)
    return {f: tx.final_path(p) for f, p in staged.items()}
