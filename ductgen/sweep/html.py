"""The sweep's comparison files: ``comparison.csv``, ``comparison.json`` and one
self-contained ``comparison.html`` (no network: pictures inline as base64 PNG).

The page holds the table, the planforms and centreline sections of all variants overlaid
(drawn from the pure geometry, not from meshes), metric-versus-parameter plots and each
variant's preview picture (``NAME-preview.png`` in its folder, when the build made one).
The table's data are also embedded as JSON (``<script id="sweep-data">``) for scripts.
"""

from __future__ import annotations

import base64
import html
import io
import json
import math
import re
from pathlib import Path
from typing import TYPE_CHECKING, Any

from ductgen.display import SHOWN
from ductgen.sweep.compare import METRICS, csv_text

if TYPE_CHECKING:
    from ductgen.sweep.results import SweepResult
    from ductgen.sweep.variants import Variant

__all__ = [
    "CSS",
    "MAX_OVERLAY",
    "MAX_PREVIEWS",
    "failures_html",
    "number",
    "page_html",
    "table_html",
    "write_outputs",
]

#: Variants drawn in the overlay figures and shown as previews (the table has them all).
MAX_OVERLAY = 40
MAX_PREVIEWS = 60

_PLOTTED = (*METRICS, "sym_diff_volume_mm3", "hausdorff_mm", "build_s")

CSS = """
body{font-family:system-ui,-apple-system,'Segoe UI',Roboto,sans-serif;margin:24px;
  color:#1b1b1b;background:#fff}
h1{font-size:22px;margin:0 0 4px} h2{font-size:17px;margin:28px 0 8px;border-bottom:1px solid #ccc}
p.meta{color:#555;margin:0 0 12px}
table{border-collapse:collapse;font-size:12px}
th,td{border:1px solid #bbb;padding:3px 4px;text-align:right;white-space:nowrap}
th{background:#e8eef6;position:sticky;top:0;white-space:normal;max-width:6em;
  vertical-align:bottom;font-weight:600} th span.unit{font-weight:400;color:#445}
td.id{text-align:left;font-weight:600;white-space:normal;min-width:8em;max-width:12em}
td.err{text-align:left;white-space:normal;min-width:10em;max-width:14em;color:#8a1010;
  font-size:11px}
ul.failures li{margin:4px 0} ul.failures code{white-space:pre-wrap}
tr:nth-child(even) td{background-color:#f7f7f7}
tr.baseline td{background:#fff7d6} tr.failed td{background:#fde2e2}
.wrap{overflow-x:auto;max-width:100%} img.fig{max-width:100%;border:1px solid #ddd}
.previews{display:flex;flex-wrap:wrap;gap:12px} figure{margin:0;width:300px}
figure img{width:300px;border:1px solid #ddd} figcaption{font-size:12px;color:#333}
.none{color:#777;font-style:italic;font-size:12px}
"""


def _png(fig: Any) -> str:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=100, bbox_inches="tight")
    return base64.b64encode(buf.getvalue()).decode()


def _label(v: Variant) -> str:
    return v.id if len(v.id) <= 48 else v.id[:45] + "..."


def _overlays(variants: list[Variant], baseline: str) -> str:
    """PNG (base64) of the planforms (top) and centreline sections (bottom), overlaid."""
    import numpy as np
    from matplotlib.figure import Figure

    fig = Figure(figsize=(11, 7.5))
    ax_p, ax_s = fig.subplots(2, 1)
    shown = variants[:MAX_OVERLAY]
    for i, v in enumerate(shown):
        g = v.design.geometry
        lw = 2.2 if v.id == baseline else 1.1
        colour = f"C{i % 10}"
        o = g.planform.outline()
        closed = np.vstack([o, o[:1]])
        ax_p.plot(closed[:, 0], closed[:, 1], color=colour, lw=lw, label=_label(v))
        if g.transition is not None:  # the duct in plan: throat width to outlet width
            t = g.transition
            for s in (1, -1):
                ax_p.plot(
                    [g.throat_end_mm, t.x_start_mm, t.x_end_mm],
                    [s * g.width_mm / 2, s * t.width_mm / 2, s * t.outlet_width_mm / 2],
                    color=colour,
                    lw=lw * 0.7,
                    ls="--",
                )
        x = np.linspace(0.0, g.length_mm, 300)
        ax_s.plot(x, -g.floor.depth(x), color=colour, lw=lw, label=_label(v))
        nose = g.lip.nose()
        ax_s.plot(nose[:, 0], nose[:, 1], color=colour, lw=lw)
        ax_s.plot([g.length_mm, g.throat_end_mm], [-g.drop_mm, -g.drop_mm], color=colour, lw=lw)
        if g.transition is not None:
            t = g.transition
            bot = t.outlet_top_z_mm - t.outlet_height_mm
            ax_s.plot(
                [t.x_start_mm, t.x_end_mm],
                [t.roof_z_mm, t.outlet_top_z_mm],
                color=colour,
                lw=lw * 0.7,
                ls="--",
            )
            ax_s.plot(
                [t.x_start_mm, t.x_end_mm], [t.floor_z_mm, bot], color=colour, lw=lw * 0.7, ls="--"
            )
    ax_s.axhline(0.0, color="0.3", lw=0.8)
    for ax, title, ylabel in (
        (ax_p, "planform (walls from ramp start to lip station; duct dashed)", "y (mm)"),
        (
            ax_s,
            "centreline section (floor, lip nose; duct ends joined, dashed); skin at z = 0",
            "z (mm)",
        ),
    ):
        ax.set_title(title, fontsize=10)
        ax.set_xlabel("x (mm) from the ramp start")
        ax.set_ylabel(ylabel)
        ax.set_aspect("equal", adjustable="datalim")
        ax.grid(True, lw=0.3)
    ax_p.legend(fontsize=7, loc="upper left", ncol=2, framealpha=0.8)
    fig.tight_layout()
    return _png(fig)


def _numeric(x: Any) -> bool:
    return isinstance(x, int | float) and not isinstance(x, bool)


def _metric_plots(rows: list[dict[str, Any]], keys: list[str]) -> str | None:
    """PNG (base64) of each metric against each varied key; one line per combination of
    the other keys. None when nothing numeric can be plotted."""
    from matplotlib.figure import Figure

    metrics = [m for m in _PLOTTED if any(_numeric(r.get(m)) for r in rows)]
    if not metrics or not keys:
        return None
    ncol = 3
    nplots = len(metrics) * len(keys)
    nrow = -(-nplots // ncol)
    fig = Figure(figsize=(11, 2.9 * nrow))
    axes = fig.subplots(nrow, ncol, squeeze=False).ravel()
    k = 0
    for key in keys:
        others = [o for o in keys if o != key]
        numeric_key = all(_numeric(r.get(key)) for r in rows)
        cats = list(dict.fromkeys(str(r.get(key)) for r in rows))
        for m in metrics:
            ax = axes[k]
            k += 1
            groups: dict[str, list[tuple[Any, float]]] = {}
            for r in rows:
                if not _numeric(r.get(m)):
                    continue
                label = ", ".join(f"{o}={r.get(o)}" for o in others)
                xval = r.get(key) if numeric_key else cats.index(str(r.get(key)))
                groups.setdefault(label, []).append((xval, float(r[m])))
            for j, (label, pts) in enumerate(groups.items()):
                pts.sort()
                ax.plot(
                    [p[0] for p in pts],
                    [p[1] for p in pts],
                    "o-",
                    ms=4,
                    color=f"C{j % 10}",
                    label=label or None,
                )
            if not numeric_key:
                ax.set_xticks(range(len(cats)), cats, fontsize=7)
            ax.set_xlabel(key, fontsize=8)
            ax.set_ylabel(m, fontsize=8)
            ax.tick_params(labelsize=7)
            ax.grid(True, lw=0.3)
            if others and len(groups) <= 6 and k == 1:
                ax.legend(fontsize=6)
    for ax in axes[k:]:
        ax.set_visible(False)
    fig.tight_layout()
    return _png(fig)


def number(v: float, decimals: int | None = None) -> str:
    """A number as people read it: fixed point (never an exponent), thin-space thousands
    groups, ``decimals`` places, or four significant digits when None."""
    if not math.isfinite(v):
        return str(v)
    if decimals is None:
        mag = math.floor(math.log10(abs(v))) if v != 0 else 0
        decimals = min(max(3 - mag, 0), 9)
    return f"{v:,.{decimals}f}".replace(",", "\u2009")


def _breakable(text: str) -> str:
    """Escaped text that may wrap after ``.``, ``_``, ``,`` and ``=`` (spec keys, ids)."""
    return re.sub(r"([._,=])", r"\1<wbr>", html.escape(text))


def _heading(col: str) -> str:
    how = SHOWN.get(col)
    label, unit = (col, "") if how is None else (how.label, how.unit)
    unit_html = f'<br><span class="unit">{html.escape(unit)}</span>' if unit else ""
    name = html.escape(col)
    return f'<th data-col="{name}" title="{name}">{_breakable(label)}{unit_html}</th>'


def _cell(col: str, v: Any) -> tuple[str, str]:
    """(text shown, exact value for ``data-value``) of one table cell."""
    if v is None:
        return "", ""
    if _numeric(v):
        how = SHOWN.get(col)  # unlisted (a varied spec key): four significant digits
        shown_v = float(v) if how is None else how.value(float(v))
        return number(shown_v, None if how is None else how.digits), repr(v)
    text = str(v)
    if col == "variant":
        return _breakable(text), html.escape(text)
    if col == "error" and len(text) > 90:  # in full in the failures list below the table
        return html.escape(text[:88]) + "…", html.escape(text)
    return html.escape(text), html.escape(text)


def table_html(rows: list[dict[str, Any]], baseline: str) -> str:
    # columns empty in every row (e.g. flow metrics without [flow]) stay in the CSV/JSON only;
    # the error column shows whenever a variant failed
    failed = any(r.get("status") == "failed" for r in rows)
    cols = [
        c
        for c in rows[0]
        if c in ("variant", "status")
        or (c == "error" and failed)
        or any(r.get(c) is not None for r in rows)
    ]
    head = "".join(_heading(c) for c in cols)
    body = []
    for r in rows:
        cls = (
            "baseline"
            if r["variant"] == baseline
            else ("failed" if r["status"] == "failed" else "")
        )
        cells = []
        for c in cols:
            klass = ' class="id"' if c == "variant" else (' class="err"' if c == "error" else "")
            text, exact = _cell(c, r.get(c))
            cells.append(f'<td data-col="{html.escape(c)}" data-value="{exact}"{klass}>{text}</td>')
        body.append(
            f'<tr class="variant-row {cls}" data-variant="{html.escape(r["variant"])}">'
            f"{''.join(cells)}</tr>"
        )
    return (
        f'<div class="wrap"><table id="comparison"><thead><tr>{head}</tr></thead>'
        f"<tbody>{''.join(body)}</tbody></table></div>"
    )


def failures_html(rows: list[dict[str, Any]]) -> str:
    """A list of the failed variants with their error messages (empty when none failed)."""
    bad = [r for r in rows if r.get("status") == "failed"]
    if not bad:
        return ""
    items = "".join(
        f"<li><b>{html.escape(str(r['variant']))}</b>: "
        f"<code>{html.escape(str(r.get('error') or 'no message'))}</code></li>"
        for r in bad
    )
    return f'<h2>Failures ({len(bad)})</h2><ul class="failures" id="failures">{items}</ul>'


def _previews(sweep: SweepResult) -> str:
    items = []
    for v, r in list(zip(sweep.variants, sweep.results, strict=True))[:MAX_PREVIEWS]:
        png = Path(r.folder) / f"{v.spec.name}-preview.png"
        cap = f"<figcaption>{html.escape(v.id)}</figcaption>"
        if png.is_file():
            data = base64.b64encode(png.read_bytes()).decode()
            items.append(
                f'<figure><img alt="preview of {html.escape(v.id)}" '
                f'src="data:image/png;base64,{data}">{cap}</figure>'
            )
        else:
            items.append(
                f'<figure><p class="none">no preview picture (built without the '
                f"sheet output, or it failed)</p>{cap}</figure>"
            )
    more = len(sweep.variants) - MAX_PREVIEWS
    tail = f'<p class="none">{more} more variants: see their folders.</p>' if more > 0 else ""
    return f'<div class="previews">{"".join(items)}</div>{tail}'


def page_html(sweep: SweepResult, spec_path: Path, keys: list[str]) -> str:
    """The whole comparison page as one HTML string."""
    from ductgen.pipeline.builder import package_version as _version

    rows = sweep.rows
    ok = [v for v, r in zip(sweep.variants, sweep.results, strict=True) if r.status != "failed"]
    overlay = _overlays(ok or sweep.variants, sweep.baseline)
    plots = _metric_plots(rows, keys)
    n_failed = len(sweep.failed)
    capped = (
        f'<p class="none">first {MAX_OVERLAY} of {len(ok)} variants drawn.</p>'
        if len(ok) > MAX_OVERLAY
        else ""
    )
    data = json.dumps({"baseline": sweep.baseline, "varied": keys, "rows": rows}, allow_nan=False)
    data = data.replace("</", "<\\/")
    plot_html = (
        f'<img class="fig" alt="metrics against the varied keys" '
        f'src="data:image/png;base64,{plots}">'
        if plots
        else '<p class="none">no numeric metric to plot</p>'
    )
    return f"""<!DOCTYPE html>
<html lang="en"><head><meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>ductgen sweep: {html.escape(spec_path.name)}</title>
<style>{CSS}</style></head>
<body>
<h1>Sweep of {html.escape(spec_path.name)}</h1>
<p class="meta">{len(rows)} variants varying {html.escape(", ".join(keys))};
{n_failed} failed; baseline {html.escape(sweep.baseline)} (highlighted). Varied values as resolved
by the spec (mm, deg, SI). Solid comparison: symmetric-difference volume and Hausdorff distance
of each cutter to the baseline's, in the common frame (x = 0 at the ramp start).
ductgen {html.escape(_version())}.</p>
<h2>Table</h2>
{table_html(rows, sweep.baseline)}
{failures_html(rows)}
<h2>Planforms and centreline sections</h2>
<img class="fig" alt="overlaid planforms and centreline sections"
 src="data:image/png;base64,{overlay}">
{capped}
<h2>Metrics against the varied keys</h2>
{plot_html}
<h2>Previews</h2>
{_previews(sweep)}
<script type="application/json" id="sweep-data">{data}</script>
</body></html>
"""


def write_outputs(
    sweep: SweepResult, out: Path, spec_path: Path, keys: list[str]
) -> dict[str, Path]:
    """Write ``comparison.csv``, ``comparison.json`` and ``comparison.html`` (atomic,
    replacing the previous run's)."""
    from ductgen.atomic import write_atomic

    doc = {
        "spec": str(spec_path),
        "varied": keys,
        "baseline": sweep.baseline,
        "columns": list(sweep.rows[0]) if sweep.rows else [],
        "variants": sweep.rows,
    }
    files = {
        "csv": write_atomic(out / "comparison.csv", csv_text(sweep.rows).encode(), force=True),
        "json": write_atomic(
            out / "comparison.json",
            (json.dumps(doc, indent=2, allow_nan=False) + "\n").encode(),
            force=True,
        ),
        "html": write_atomic(
            out / "comparison.html", page_html(sweep, spec_path, keys).encode(), force=True
        ),
    }
    return files
