"""Self-contained HTML report: one file with inline CSS and images, printable to PDF.

No external resources (figures are base64 data URIs), every piece of user text is HTML-escaped,
and a print stylesheet sets page margins and keeps figures and table rows whole across pages.
"""
from __future__ import annotations

import base64
import datetime as _dt
import html
import math

from calib.atomic import write_text

PNG_SIGNATURE = b"\x89PNG\r\n\x1a\n"

# Known figure keys in report order, with their captions; other keys follow in the given order.
FIGURE_CAPTIONS = {
    "mesh": "Fixture and mesh in the meridional plane (x along the axis, r radial).",
    "field": "Velocity field: magnitude in colour, streamlines in white.",
    "profile": "Axial velocity across the rotor plane against the uniform profile of the same flow.",
    "k": "Correction factor K against the indicated flow, with its 95 % band (k = 2).",
    "compare": "Correction factor of several fixtures.",
}

CSS = """
body { font-family: "Helvetica Neue", Arial, sans-serif; font-size: 10.5pt; color: #111;
       max-width: 60em; margin: 2em auto; padding: 0 1em; line-height: 1.4; }
h1 { font-size: 1.6em; margin-bottom: 0.2em; }
h2 { font-size: 1.2em; border-bottom: 1px solid #999; margin-top: 1.6em; }
table { border-collapse: collapse; font-size: 0.9em; margin: 0.6em 0; }
th, td { border: 1px solid #bbb; padding: 0.2em 0.45em; text-align: right; }
th { background: #eee; } td.text, th.text { text-align: left; }
figure { margin: 1em 0; text-align: center; }
figure img { max-width: 100%; height: auto; }
figcaption { font-size: 0.9em; color: #333; }
pre { background: #f5f5f5; border: 1px solid #ddd; padding: 0.6em; font-size: 0.85em;
      white-space: pre-wrap; }
.cautions { border: 2px solid #b00; background: #fff4f2; padding: 0.4em 1em; }
.cautions h2 { color: #900; border-bottom-color: #b00; }
.warnings { border: 1px solid #c80; background: #fff9e8; padding: 0.3em 1em; }
.meta { color: #555; font-size: 0.9em; }
@page { size: A4; margin: 18mm 15mm; }
@media print {
  body { max-width: none; margin: 0; font-size: 9.5pt; }
  figure, table, tr, pre, .cautions { break-inside: avoid; page-break-inside: avoid; }
  h2 { break-after: avoid; page-break-after: avoid; }
  thead { display: table-header-group; }
}
"""

BUDGET_TEXT = (
    ("Numerical", "Discretisation error of K, from the solutions on three mesh levels by the grid "
     "convergence index (GCI) of Celik et al. (2008), J. Fluids Eng. 130, 078001, with "
     "safety factor 1.25. The GCI is read as a band of about 95 %, so the standard uncertainty "
     "is half of it. With two levels the two-grid index with safety factor 3 is used; with one "
     "level this part is not estimated and the row says so."),
    ("Model", "Sensitivity of K to the turbulence closure's constants: each constant is moved to "
     "the low and high ends of its published range and the flow is solved again. The larger "
     "change is taken as the half-width of a rectangular distribution (standard uncertainty = "
     "half-width / &radic;3)."),
    ("Model form", "The closure's own error, measured by comparing it with published velocity "
     "profiles and friction factors of developed pipe flow."),
    ("Instrument", "Sensitivity of K to the instrument's stated dimensional tolerances: the same "
     "velocity profile is read again with each dimension at the ends of its tolerance, "
     "rectangular distribution."),
    ("Combination", "The four parts are treated as independent and combined by the root sum of "
     "squares (JCGM 100:2008, Evaluation of measurement data &mdash; Guide to the expression of "
     "uncertainty in measurement, Eq. 10). The expanded uncertainty U95 is twice the combined "
     "standard uncertainty (coverage factor k = 2, about 95 % coverage). It covers the "
     "correction only, not the scatter of the instrument's own reading."),
)

TABLE_HEAD = (("flow_Ls", "true flow (L/s)"), ("indicated_Ls", "indicated (L/s)"),
              ("indicated_ms", "indicated (m/s)"), ("K", "K"), ("K_U95", "U95 of K"),
              ("u_numerical", "u num. (%)"), ("u_model", "u model (%)"),
              ("u_model_form", "u form (%)"), ("u_instrument", "u instr. (%)"),
              ("pressure_drop_Pa", "&Delta;p (Pa)"), ("flatness", "centre / mean"),
              ("momentum_coefficient", "&beta;"), ("energy_coefficient", "&alpha;"))
PERCENT = {"u_numerical", "u_model", "u_model_form", "u_instrument"}


def _e(text) -> str:
    return html.escape(str(text), quote=True)


def _number(value, digits: int = 4) -> str:
    if isinstance(value, float) and not math.isfinite(value):
        return "&ndash;"
    return f"{value:.{digits}g}"


def _direction(bias_percent: float) -> str:
    return "high" if bias_percent > 0.0 else "low" if bias_percent < 0.0 else "(no bias)"


def _summary(table, summary_rows) -> str:
    ks = [row.K for row in table.rows]
    biases = [table.bias_percent(row.indicated_flow) for row in table.rows]
    worst = max(range(len(biases)), key=lambda i: abs(biases[i]))
    row = table.rows[worst]
    lines = [f"<p><strong>Correction factor K from {_number(min(ks))} to {_number(max(ks))}</strong> "
             f"over {_number(min(r.indicated_Ls for r in table.rows))} to "
             f"{_number(max(r.indicated_Ls for r in table.rows))} L/s indicated "
             f"({_e(table.instrument_kind)} instrument). Largest bias: the instrument reads "
             f"<strong>{abs(biases[worst]):.2f} % {_direction(biases[worst])}</strong> "
             f"at {_number(row.indicated_Ls)} L/s indicated "
             f"(true {_number(row.flow_Ls)} L/s, K = {_number(row.K)} &plusmn; {_number(row.K_U95, 2)}).</p>",
             "<p>True flow = K &times; indicated flow. Read the safety cautions below before "
             "running the setup.</p>"]
    if summary_rows:
        lines.append("<table>" + "".join(f"<tr><th class='text'>{_e(k)}</th><td class='text'>{_e(v)}</td></tr>"
                                         for k, v in summary_rows) + "</table>")
    return "\n".join(lines)


def _table_html(table) -> str:
    head = "".join(f"<th>{label}</th>" for _, label in TABLE_HEAD)
    body = []
    for row in table.rows:
        cells = []
        for name, _ in TABLE_HEAD:
            value = getattr(row, name)
            cells.append(f"<td>{_number(value * 100.0, 3) if name in PERCENT else _number(value)}</td>")
        cells.append(f"<td class='text'>{'yes' if row.converged else '<strong>no</strong>'}</td>")
        cells.append(f"<td class='text'>{_e('; '.join(row.notes))}</td>")
        body.append("<tr>" + "".join(cells) + "</tr>")
    return (f"<table><thead><tr>{head}<th class='text'>converged</th><th class='text'>notes</th>"
            f"</tr></thead><tbody>{''.join(body)}</tbody></table>"
            "<p class='meta'>u: relative standard uncertainties of K; U95 = 2 u<sub>c</sub> K. "
            "&beta;, &alpha;: momentum and kinetic-energy flux coefficients of the rotor-plane profile; "
            "centre / mean: centre velocity over area-mean velocity.</p>")


def _figures_html(figures: dict[str, bytes]) -> str:
    names = [n for n in FIGURE_CAPTIONS if n in figures] + [n for n in figures if n not in FIGURE_CAPTIONS]
    parts = []
    for name in names:
        data = figures[name]
        if not isinstance(data, (bytes, bytearray)) or not bytes(data).startswith(PNG_SIGNATURE):
            raise ValueError(f"figures[{name!r}]: expected PNG bytes (from calib.figures)")
        uri = "data:image/png;base64," + base64.b64encode(bytes(data)).decode("ascii")
        caption = FIGURE_CAPTIONS.get(name, name)
        # The load/error handlers mark each image in the DOM, so a browser test can see it decoded.
        parts.append(f"<figure><img src=\"{uri}\" alt=\"{_e(name)}\" "
                     "onload=\"this.dataset.state='loaded'\" onerror=\"this.dataset.state='broken'\">"
                     f"<figcaption>{_e(caption)}</figcaption></figure>")
    return "\n".join(parts) if parts else "<p>No figures.</p>"


def _budget_html() -> str:
    return "<dl>" + "".join(f"<dt><strong>{name}</strong></dt><dd>{text}</dd>"
                            for name, text in BUDGET_TEXT) + "</dl>"


def render_report(*, title: str, case_text: str, table, figures: dict[str, bytes], cautions,
                  version: str, summary_rows=(), warnings=(), date: str | None = None) -> str:
    """The report as one HTML string (see the module docstring).

    ``summary_rows``: (label, value) pairs shown under the headline. ``warnings``: strings shown
    in a box at the top. ``date``: ISO date, today when None.
    """
    if not table.rows:
        raise ValueError("table: no rows to report")
    date = date or _dt.date.today().isoformat()
    warning_html = ("<div class='warnings'><h2>Warnings</h2><ul>"
                    + "".join(f"<li>{_e(w)}</li>" for w in warnings) + "</ul></div>") if warnings else ""
    caution_html = "<ul>" + "".join(f"<li>{_e(c)}</li>" for c in cautions) + "</ul>"
    return f"""<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<title>{_e(title)}</title>
<style>{CSS}</style>
</head>
<body>
<h1>{_e(title)}</h1>
<p class="meta">airbias {_e(version)} &middot; {_e(date)}</p>
{warning_html}
<section><h2>1. Summary</h2>
{_summary(table, summary_rows)}
</section>
<section><h2>2. Correction table</h2>
{_table_html(table)}
</section>
<section><h2>3. Figures</h2>
{_figures_html(figures)}
</section>
<section><h2>4. Uncertainty budget</h2>
{_budget_html()}
</section>
<section class="cautions"><h2>5. Safety cautions</h2>
{caution_html}
</section>
<section><h2>6. Case</h2>
<pre>{_e(case_text)}</pre>
</section>
<p class="meta">Produced by airbias {_e(version)} on {_e(date)}.</p>
</body>
</html>
"""


def write_report(path, **report):
    """Render the report (keywords of :func:`render_report`) and write it to ``path`` atomically."""
    return write_text(path, render_report(**report))
