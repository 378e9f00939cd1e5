"""Write every output of one case from the result dict.

Every file is first written under a temporary name in the output folder; only when all
chosen formats have been rendered and written are they renamed over their targets (each
rename atomic), so a rendering error leaves no file half-written and none replaced.
result.json and findings.tsv are streamed into their temporary files piece by piece (an
exome can give tens of thousands of findings); the other formats are small strings.
"""
from __future__ import annotations

import contextlib
import re
from pathlib import Path
from typing import Iterable, Optional, Union

from irdtriage.atomic import atomic_open

from .html import render_html
from .json_out import iter_result_json
from .phenopacket_out import render_phenopacket
from .tsv import iter_tsv
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
    out_dir.mkdir(parents=True, exist_ok=True)
    pieces: dict[str, tuple[Path, object]] = {}
    if "json" in formats:
        pieces["json"] = (out_dir / FILE_NAMES["json"], lambda: iter_result_json(result))
    if "html" in formats:
        pieces["html"] = (out_dir / FILE_NAMES["html"], lambda: [render_html(result, cascade_steps)])
    if "tsv" in formats:
        pieces["tsv"] = (out_dir / FILE_NAMES["tsv"], lambda: iter_tsv(result))
    if "phenopacket" in formats:
        pieces["phenopacket"] = (out_dir / phenopacket_name(result),
                                 lambda: [render_phenopacket(result, input_phenopacket, input_phenopacket_path)])
    written: dict[str, Path] = {}
    # All temporary files stay open in one stack: an error anywhere unwinds every one of them
    # (temporary removed, target untouched); leaving the block without error renames them all.
    with contextlib.ExitStack() as stack:
        for fmt_name, (path, make) in pieces.items():
            fh = stack.enter_context(atomic_open(path))
            for chunk in make():
                fh.write(chunk)
            written[fmt_name] = path
        if "vcf" in formats:  # built by htslib straight into a temporary file, renamed when complete
            written["vcf"], _ = write_vcf(result, out_dir / FILE_NAMES["vcf"])
    return {f: written[f] for f in formats if f in written}
