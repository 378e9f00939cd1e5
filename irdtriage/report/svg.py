"""Inline SVG figures for the HTML report: the light-response cascade with the steps served
by the top-ranked genes highlighted, and a protein sketch with each finding's position.

Both figures are plain strings of SVG (no script, no external reference), with <title> and
<desc> for screen readers; every text from the result is escaped.
"""
from __future__ import annotations

import html
from typing import Iterable, Optional

from .common import affected_steps, cascade_steps as all_cascade_steps, chain, protein_position

# Own palette (see html.py): ink, paper, ochre accent, slate lines.
INK = "#22313f"
MUTED = "#5f6b76"
LINE = "#aab4bf"
BOX = "#eef1f4"
HIT_FILL = "#f6e3c4"
HIT_LINE = "#9a5b0f"
TEAL = "#2f6f73"

def _e(s: object) -> str:
    return html.escape(str(s), quote=True)


def _wrap(text: str, width: int, max_lines: int = 3) -> list[str]:
    words, lines, cur = str(text).split(), [], ""
    for w in words:
        if cur and len(cur) + 1 + len(w) > width:
            lines.append(cur)
            cur = w
        else:
            cur = f"{cur} {w}".strip()
    if cur:
        lines.append(cur)
    if len(lines) > max_lines:
        lines = lines[:max_lines]
        lines[-1] = lines[-1][: max(0, width - 1)] + "…"
    return lines


def _text_block(x: float, y: float, lines: list[str], size: int = 12, weight: str = "normal",
                anchor: str = "middle", fill: str = INK) -> str:
    out = [f'<text x="{x:.1f}" y="{y:.1f}" font-size="{size}" font-weight="{weight}" text-anchor="{anchor}" fill="{fill}">']
    for i, line in enumerate(lines):
        out.append(f'<tspan x="{x:.1f}" dy="{0 if i == 0 else size + 2}">{_e(line)}</tspan>')
    out.append("</text>")
    return "".join(out)


def _svg_open(w: int, h: int, title: str, desc: str, fig_id: str) -> tuple[str, str]:
    tid, did = f"{fig_id}-title", f"{fig_id}-desc"
    head = (f'<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 {w} {h}" width="100%" role="img" '
            f'aria-labelledby="{tid} {did}" font-family="inherit" class="irdt-figure">'
            f'<title id="{tid}">{_e(title)}</title><desc id="{did}">{_e(desc)}</desc>')
    return head, "</svg>"


def cascade_svg(result: dict, cascade_steps: Optional[Iterable[dict]] = None, top: int = 3,
                fig_id: str = "irdt-cascade") -> str:
    """The chain of the light response left to right, then lanes for response shut-off
    (recovery), the visual cycle and photoreceptor upkeep; steps served by the top genes are
    drawn with a thick ochre outline and the gene names beneath."""
    steps = all_cascade_steps(result, cascade_steps)
    hit = affected_steps(result, top=top)
    ch = chain(steps)
    lanes = [("recovery", "switching the response off"), ("visual_cycle", "visual cycle: recharging opsin"),
             ("module", "photoreceptor upkeep")]
    W, bw, bh, gap = 1000, 120, 78, 20
    per_row = max(1, (W - 40 + gap) // (bw + gap))
    rows = [ch[i:i + per_row] for i in range(0, len(ch), per_row)] or [[]]
    y0 = 40
    row_h = bh + 46
    parts: list[str] = []
    hit_titles = []
    y = y0
    for r, row in enumerate(rows):
        for i, s in enumerate(row):
            x = 20 + i * (bw + gap)
            is_hit = s["id"] in hit
            parts.append(_box(x, y, bw, bh, s, is_hit, hit.get(s["id"], []), number=s.get("order")))
            if is_hit:
                hit_titles.append(f"{s.get('title', s['id'])} ({', '.join(hit[s['id']])})")
            if i < len(row) - 1:
                ax = x + bw
                parts.append(f'<path d="M{ax + 2},{y + bh / 2} h{gap - 6}" stroke="{INK}" stroke-width="1.6" marker-end="url(#irdt-arrow)"/>')
        if r < len(rows) - 1 and row:
            # continue on the next row: a bent arrow from the last box down to the first box
            lx = 20 + (len(row) - 1) * (bw + gap) + bw / 2
            parts.append(f'<path d="M{lx},{y + bh + 2} v14 H{20 + bw / 2} v{row_h - bh - 20}" fill="none" stroke="{INK}" '
                         f'stroke-width="1.6" marker-end="url(#irdt-arrow)"/>')
        y += row_h
    if ch:
        parts.insert(0, _text_block(20, 26, ["Light response, in order (rod and cone photoreceptors → retinal neurons)"], 13, "bold", "start", TEAL))
    # lanes beside the chain: side by side while they fit, a lane wider than the figure wraps
    inner = W - 40
    x, band_top, band_rows, used = 20.0, y + 4, 1, False
    for kind, label in lanes:
        lane = [s for s in steps if s.get("kind") == kind]
        if not lane:
            continue
        per = max(1, (inner + gap) // (bw + gap))
        nrows = -(-len(lane) // per)
        need = max(min(len(lane), per) * (bw + gap) - gap, len(label) * 7.4)
        if used and (x + need > W - 20 or nrows > 1):
            x, band_top, band_rows = 20.0, band_top + band_rows * row_h + 26, 1
        parts.append(_text_block(x, band_top + 12, [label], 13, "bold", "start", TEAL))
        for j, s in enumerate(lane):
            bx = x + (j % per) * (bw + gap)
            by = band_top + 22 + (j // per) * row_h
            is_hit = s["id"] in hit
            parts.append(_box(bx, by, bw, bh, s, is_hit, hit.get(s["id"], [])))
            if is_hit:
                hit_titles.append(f"{s.get('title', s['id'])} ({', '.join(hit[s['id']])})")
        band_rows = max(band_rows, nrows)
        if nrows > 1:
            x, band_top, band_rows = 20.0, band_top + nrows * row_h + 26, 1
            used = False
            continue
        x += need + 2 * gap
        used = True
    y = band_top + (22 + band_rows * row_h if used else 0)
    H = int(y + 2)
    title = "Light-response cascade with the steps of the top-ranked genes"
    desc = ("Steps of the light response in order" + (", plus " + ", ".join(l for k, l in lanes if any(s.get('kind') == k for s in steps)) if steps else "")
            + ". Highlighted: " + ("; ".join(hit_titles) if hit_titles else "none") + ".")
    head, tail = _svg_open(W, H, title, desc, fig_id)
    defs = (f'<defs><marker id="irdt-arrow" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse">'
            f'<path d="M0,0 L10,5 L0,10 z" fill="{INK}"/></marker>'
            f'<pattern id="irdt-hatch" width="6" height="6" patternUnits="userSpaceOnUse" patternTransform="rotate(45)">'
            f'<rect width="6" height="6" fill="{HIT_FILL}"/><line x1="0" y1="0" x2="0" y2="6" stroke="#e9c98f" stroke-width="2"/></pattern></defs>')
    return head + defs + "".join(parts) + tail


def _box(x: float, y: float, w: float, h: float, s: dict, is_hit: bool, genes: list[str], number=None) -> str:
    fill = "url(#irdt-hatch)" if is_hit else BOX
    stroke, sw = (HIT_LINE, 3) if is_hit else (LINE, 1.2)
    out = [f'<g class="{"irdt-step irdt-hit" if is_hit else "irdt-step"}" data-step="{_e(s["id"])}">'
           f'<rect x="{x}" y="{y}" width="{w}" height="{h}" rx="9" fill="{fill}" stroke="{stroke}" stroke-width="{sw}"/>']
    title = s.get("title") or s["id"]
    for prefix in ("visual cycle:", "recovery:"):  # the lane label already says it
        if number is None and title.lower().startswith(prefix):
            title = title[len(prefix):].strip()
    lines = _wrap(title, 17, 4)
    ty = y + h / 2 - (len(lines) - 1) * 7 + 4
    if number is not None:
        out.append(f'<circle cx="{x + 12}" cy="{y + 12}" r="9" fill="{INK if is_hit else "#ffffff"}" stroke="{INK}" stroke-width="1"/>')
        out.append(_text_block(x + 12, y + 16, [str(number)], 10, "bold", "middle", "#ffffff" if is_hit else INK))
        ty = max(ty + 4, y + 32)  # clear of the number badge
    out.append(_text_block(x + w / 2, ty, lines, 11, "bold" if is_hit else "normal"))
    if is_hit:
        out.append(_text_block(x + w / 2, y + h + 15, ["◆ " + ", ".join(genes)], 12, "bold", "middle", HIT_LINE))
    out.append("</g>")
    return "".join(out)


def protein_svg(result: dict, gene: dict, findings: list[dict], fig_id: str = "irdt-protein") -> str:
    """A protein bar (length from ``gene['protein']['length']`` when given, else scaled to the
    furthest finding), optional domains, and a marker per finding at its amino-acid position."""
    prot = gene.get("protein") or {}
    length = prot.get("length")
    placed = [(f, protein_position(f)) for f in findings]
    pos_known = [(f, p) for f, p in placed if p]
    unplaced = [f for f, p in placed if not p]
    scale_note = ""
    if not length:
        length = int(max([p for _, p in pos_known] or [100]) * 1.15) + 1
        scale_note = "protein length not given: bar scaled to the furthest finding"
    W, left, right = 1000, 60, 40
    bar_y = 88
    H = 150 + (18 if unplaced else 0) + (16 if scale_note else 0)
    sx = lambda aa: left + (W - left - right) * (min(max(aa, 1), length) / length)
    parts = [f'<rect x="{left}" y="{bar_y}" width="{W - left - right}" height="18" rx="4" fill="{BOX}" stroke="{LINE}"/>']
    for d in prot.get("domains") or []:
        try:
            x1, x2 = sx(int(d["start"])), sx(int(d["end"]))
        except (KeyError, TypeError, ValueError):
            continue
        parts.append(f'<rect x="{x1:.1f}" y="{bar_y - 3}" width="{max(2, x2 - x1):.1f}" height="24" rx="3" fill="#cfe0df" stroke="{TEAL}"/>')
        parts.append(_text_block((x1 + x2) / 2, bar_y + 38, _wrap(d.get("name", ""), max(6, int((x2 - x1) / 7)), 1), 10, "normal", "middle", TEAL))
    parts.append(_text_block(left - 6, bar_y + 13, ["1"], 11, "normal", "end", MUTED))
    parts.append(_text_block(W - right + 6, bar_y + 13, [str(length)], 11, "normal", "start", MUTED))
    levels = [64, 44, 24]
    placed_at: list[tuple[float, int]] = []
    for f, p in sorted(pos_known, key=lambda t: t[1]):
        x = sx(p)
        lvl = next((lv for lv in range(len(levels)) if all(abs(x - px) >= 160 for px, pl in placed_at if pl == lv)),
                   len(placed_at) % len(levels))
        placed_at.append((x, lvl))
        ly = levels[lvl]
        parts.append(f'<line x1="{x:.1f}" y1="{bar_y}" x2="{x:.1f}" y2="{ly + 4}" stroke="{HIT_LINE}" stroke-width="1.5"/>')
        parts.append(f'<circle cx="{x:.1f}" cy="{ly}" r="5.5" fill="{HIT_FILL}" stroke="{HIT_LINE}" stroke-width="2"/>')
        label = f"{f.get('id')} {f.get('hgvs_p') or ''}".strip()
        anchor = "start" if x < W - 200 else "end"
        parts.append(_text_block(x + (9 if anchor == "start" else -9), ly + 4, [label], 12, "bold", anchor, INK))
    y = bar_y + 58
    if scale_note:
        parts.append(_text_block(left, y, [scale_note], 11, "normal", "start", MUTED))
        y += 16
    if unplaced:
        names = ", ".join(f"{f.get('id')} ({f.get('hgvs_c') or f.get('consequence') and f['consequence'][0] or 'no HGVS'})" for f in unplaced)
        parts.append(_text_block(left, y, [f"no protein position for: {names}"], 11, "normal", "start", MUTED))
    sym = gene.get("symbol", "?")
    title = f"{sym} protein with the positions of the findings"
    desc = (f"Bar from amino acid 1 to {length}. " + "; ".join(f"{f.get('id')} at amino acid {p}" for f, p in pos_known)
            + (f". Without a protein position: {', '.join(str(f.get('id')) for f in unplaced)}" if unplaced else "") + ".")
    head, tail = _svg_open(W, H, title, desc, fig_id)
    return head + "".join(parts) + tail


def exon_svg(gene: dict, findings: list[dict], fig_id: str = "irdt-exons") -> str:
    """The panel transcript's exons as numbered boxes (transcript order, equal widths: a map of
    exon numbers, not of lengths), one row per copy-number/structural finding: deleted exons
    drawn hatched, duplicated exons filled, a breakpoint as a vertical mark at its exon or intron.
    Empty when no structural finding names an exon count."""
    rows = [f for f in findings if (f.get("structural") or {}).get("overlap", {}).get("exon_count")]
    if not rows:
        return ""
    n = int(rows[0]["structural"]["overlap"]["exon_count"])
    tx = rows[0]["structural"]["overlap"].get("transcript") or ""
    W, left, right, row_h = 1000, 150, 30, 44
    H = 50 + row_h * len(rows) + 24
    step = (W - left - right) / n
    parts = ['<defs><pattern id="' + fig_id + '-hatch" width="6" height="6" patternUnits="userSpaceOnUse" '
             f'patternTransform="rotate(45)"><rect width="6" height="6" fill="{HIT_FILL}"/>'
             f'<line x1="0" y1="0" x2="0" y2="6" stroke="{HIT_LINE}" stroke-width="2"/></pattern></defs>']
    label_every = 1 if n <= 25 else (5 if n <= 100 else 10)
    for k in range(1, n + 1):
        if k == 1 or k == n or k % label_every == 0:
            parts.append(_text_block(left + step * (k - 0.5), 30, [str(k)], 10, "normal", "middle", MUTED))
    descs = []
    for i, f in enumerate(rows):
        s = f["structural"]
        o = s.get("overlap") or {}
        y = 44 + i * row_h
        kind = s.get("type")
        hit = set(o.get("exons") or [])
        parts.append(f'<line x1="{left}" y1="{y + 9}" x2="{W - right}" y2="{y + 9}" stroke="{LINE}"/>')
        for k in range(1, n + 1):
            x = left + step * (k - 1) + 1
            fill, stroke = BOX, LINE
            if k in hit and kind == "DEL":
                fill, stroke = f"url(#{fig_id}-hatch)", HIT_LINE
            elif k in hit and kind in ("DUP", "INV", "INS"):
                fill, stroke = HIT_FILL, HIT_LINE
            parts.append(f'<rect x="{x:.1f}" y="{y}" width="{max(1.5, step - 2):.1f}" height="18" fill="{fill}" '
                         f'stroke="{stroke}"/>')
        if kind == "BND":
            where = (o.get("exons") or [None])[0]
            intron = (o.get("introns") or [None])[0]
            xb = left + step * (where - 0.5) if where else (left + step * intron if intron else None)
            if xb is not None:
                parts.append(f'<line x1="{xb:.1f}" y1="{y - 4}" x2="{xb:.1f}" y2="{y + 22}" stroke="{HIT_LINE}" '
                             'stroke-width="3"/>')
        verb = {"DEL": "deleted", "DUP": "duplicated", "INV": "inverted", "INS": "insertion in"}.get(kind, "breakpoint")
        from irdtriage.sv.overlap import exon_ranges

        what = f"{verb} exons {exon_ranges(sorted(hit))}" if hit else (
            f"breakpoint in intron {o['introns'][0]}" if o.get("introns") and kind == "BND" else
            f"{s.get('extent')}")
        parts.append(_text_block(left - 8, y + 13, [f"{f.get('id')} {kind}"], 12, "bold", "end", INK))
        descs.append(f"{f.get('id')}: {what}")
    parts.append(_text_block(left, H - 8, ["hatched: deleted; filled: duplicated or inverted; bar: breakpoint; "
                                           "boxes are exon numbers, not lengths"], 11, "normal", "start", MUTED))
    sym = gene.get("symbol", "?")
    title = f"{sym} exons ({tx}, {n} exons) with the copy-number and structural findings"
    head, tail = _svg_open(W, H, title, "; ".join(descs) + ".", fig_id)
    return head + "".join(parts) + tail
