"""A minimal, self-contained ``report.html`` drawn from ``summary.json`` alone.

Used when the full report (``schedcheck.outputs.report.write_report``) is not available. Every
value passes through Jinja2 with autoescaping, so names from a site file cannot inject markup.
No scripts, no network: the page opens offline in any browser.
"""

from __future__ import annotations

import json
from pathlib import Path

import jinja2

_TEMPLATE = """<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<title>Schedule audit: {{ s.site.name }}</title>
<style>
body { font: 15px/1.45 system-ui, sans-serif; margin: 2rem auto; max-width: 70rem;
       padding: 0 1rem; color: #1d1d1f; }
table { border-collapse: collapse; margin: 1rem 0; width: 100%; }
th, td { border-bottom: 1px solid #ccc; padding: .3rem .5rem; text-align: left;
         vertical-align: top; }
td.n, th.n { text-align: right; font-variant-numeric: tabular-nums; }
.note { background: #f4f4f4; border-left: 4px solid #888; padding: .5rem 1rem; }
</style>
</head>
<body>
<h1>Schedule audit: {{ s.site.name }}</h1>
<p>{{ s.period.first_date }} to {{ s.period.last_date }} (local dates, {{ s.site.timezone }}),
{{ "%.0f"|format(s.period.hours) }} h. Written {{ s.generated }} by schedcheck
{{ s.tool_version }}.</p>

<h2>Per component</h2>
<table>
<tr><th>Component</th><th>Unit name</th><th class="n">Scheduled h</th><th class="n">Running h</th>
<th class="n">Off-schedule h</th><th class="n">Missed h</th><th class="n">No data h</th>
<th class="n">Off-schedule kWh</th><th class="n">Cost {{ s.site.currency }}</th>
<th class="n">Findings</th></tr>
{% for c in s.components %}
<tr><td>{{ c.id }}</td><td>{{ c.name }}</td>
<td class="n">{{ "%.1f"|format(c.hours.scheduled) }}</td>
<td class="n">{{ "%.1f"|format(c.hours.running) }}</td>
<td class="n">{{ "%.1f"|format(c.hours.off_schedule) }}</td>
<td class="n">{{ "%.1f"|format(c.hours.missed) }}</td>
<td class="n">{{ "%.1f"|format(c.hours.no_data) }}</td>
<td class="n">{{ "%.1f"|format(c.energy.off_schedule_kwh) }}</td>
<td class="n">{{ "%.2f"|format(c.energy.off_schedule_cost) }}</td>
<td class="n">{{ c.findings }}</td></tr>
{% endfor %}
</table>

<h2>Findings ({{ s.findings|length }})</h2>
{% if s.findings %}
<table>
<tr><th>Component</th><th>Kind</th><th>Start</th><th>End</th><th class="n">Hours</th>
<th class="n">kWh</th><th>What was seen</th></tr>
{% for f in s.findings %}
<tr><td>{{ f.component }}</td><td>{{ f.kind }}</td><td>{{ f.start }}</td><td>{{ f.end }}</td>
<td class="n">{{ "%.1f"|format(f.hours) }}</td><td class="n">{{ "%.1f"|format(f.kwh) }}</td>
<td>{{ f.detail }}</td></tr>
{% endfor %}
</table>
{% else %}<p>No findings.</p>{% endif %}

{% if s.warnings %}<h2>Warnings</h2><ul>{% for w in s.warnings %}<li>{{ w }}</li>{% endfor %}
</ul>{% endif %}

<p class="note">Energy figures are estimates from the fan affinity laws at each component's
usual speed, not meter readings. Before changing any schedule, check the ventilation minimums
for the occupancy, freeze protection of coils, and smoke-control and other life-safety
sequences, which must stay as designed; defer to local codes and licensed practice.</p>
</body>
</html>
"""


def render_minimal_report(summary: dict) -> str:
    """The page as text, from the parsed ``summary.json``."""
    env = jinja2.Environment(autoescape=True, undefined=jinja2.StrictUndefined)
    return env.from_string(_TEMPLATE).render(s=summary)


def write_minimal_report(outdir: Path) -> Path:
    """Write ``report.html`` into an audit folder from its ``summary.json``."""
    outdir = Path(outdir)
    summary = json.loads((outdir / "summary.json").read_text(encoding="utf-8"))
    path = outdir / "report.html"
    path.write_text(render_minimal_report(summary), encoding="utf-8")
    return path
