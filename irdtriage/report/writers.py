"""Write every output of one case from the result dict.

Everything is rendered in memory first; only then are files written, each atomically (temp
file + rename), so a rendering error leaves no file half-written and none replaced.
"""
from __future__ import annotations

import re
from pathlib import Path
from typing import Iterable, Optional, Union

from irdtriage.atomic import write_text

from .html import render_html
from .json_out import render_result_json
from .phenopacket_out import render_phenopacket
from .tsv import render_tsv
from .vcf_out import write_vcf

FORMATS = ("json", "html", "tsv", "vcf", "phenopacket")
FILE_NAMES = {"json": "result.json", "html": "report.html", "tsv": "findings.tsv", "vcf": "findings.vcf.gz"}


def phenopacket_name(result: dict) -> str:
    sid = str((result.get("sample") or {}).get("id") or "sample")
    safe = re.sub(r"[^A-Za-z0-9._-]+", "_", sid).strip("._") or "sample"
    return f"{safe}.phenopacket.json"


def write_outputs(
    result: dict,
    out_dir: Union[str, Path],
    formats: Iterable[str] = FORMATS,
    input_phenopacket: Optional[dict] = None,
    cascade_steps: Optional[list[dict]] = None,
    input_phenopacket_path: Optional[Union[str, Path]] = None,
) -> dict[str, Path]:
    """Render the chosen formats, then write them into ``out_dir``; returns {format: path}.

    ``cascade_steps`` (the panel's [{id, title, kind, order, ...}, ...]) is stored in
    ``result['cascade']`` when given so that result.json carries the whole chain.
    The VCF's index is written beside it as ``findings.vcf.gz.tbi``.
    """
    formats = tuple(formats)
    unknown = [f for f in formats if f not in FORMATS]
    if unknown:
        raise ValueError(f"unknown output format(s): {', '.join(unknown)}; choose from {', '.join(FORMATS)}")
    if cascade_steps:
        result = dict(result)
        result["cascade"] = [dict(s) for s in cascade_steps]
    out_dir = Path(out_dir)
    texts: dict[str, tuple[Path, str]] = {}
    if "json" in formats:
        texts["json"] = (out_dir / FILE_NAMES["json"], render_result_json(result))
    if "html" in formats:
        texts["html"] = (out_dir / FILE_NAMES["html"], render_html(result, cascade_steps))
    if "tsv" in formats:
        texts["tsv"] = (out_dir / FILE_NAMES["tsv"], render_tsv(result))
    if "phenopacket" in formats:
        texts["phenopacket"] = (out_dir / phenopacket_name(result),
                                render_phenopacket(result, input_phenopacket, input_phenopacket_path))
    written: dict[str, Path] = {}
    out_dir.mkdir(parents=True, exist_ok=True)
    if "vcf" in formats:  # built by htslib straight into a temporary file, renamed when complete
        written["vcf"], _ = write_vcf(result, out_dir / FILE_NAMES["vcf"])
    for fmt_name, (path, text) in texts.items():
        write_text(path, text)
        written[fmt_name] = path
    return {f: written[f] for f in formats if f in written}
