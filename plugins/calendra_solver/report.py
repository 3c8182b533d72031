"""Rendering a dating result as a text table, JSON, CSV, or a self-contained HTML page.

The table lists each solution with every observation's event (western date
and time in UT, local civil time at the site, the date in the record's own
calendar), the residuals with their units, the margins and the delta-T
note; then the messages (why the runner-up lost, or that the record does not
decide), the candidates left after each stage, the chronology sweep when a
reign list has a free epoch, and the provenance footer.
"""

from __future__ import annotations

import html

from calendra.output import render_csv, render_json, render_table
from calendra.provenance import footer_lines
from calendra.registry import parse_spec

EVENT_COLUMNS = ["rank", "observation", "kind", "date_ut", "time_ut", "local", "stated_date", "residuals", "margin"]


def _resid_text(ev) -> str:
    parts = []
    r = ev.get("date_residual_d")
    if r:
        parts.append(f"date {r:+g} d")
    for x in ev.get("residuals", []):
        if x["residual"]:
            parts.append(f"{x['column']} {x['residual']:+g}{(' ' + x['unit']) if x['unit'] else ''}")
    return "; ".join(parts) or "0"


def _margin_text(ev) -> str:
    m = ev.get("margin")
    if not m:
        return ""
    v = m["value"]
    return f"{m['column']} = {v:g}" if isinstance(v, (int, float)) else f"{m['column']} = {v}"


def event_rows(solutions) -> list:
    """One row per (solution, observation), plain values."""
    rows = []
    for s in solutions:
        for ev in s.events:
            rows.append({"rank": s.rank, "observation": ev["observation"], "kind": ev.get("kind", "-"),
                         "date_ut": ev.get("date_ut", "(fails)"), "time_ut": ev.get("time_ut", ""),
                         "local": ev.get("local", ""), "stated_date": ev.get("stated_date", ""),
                         "stated_calendar": ev.get("stated_calendar", ""),
                         # the calendar's name (its epoch options are in the solution's header)
                         "stated": (f"{parse_spec(ev['stated_calendar'])[0]}: {ev.get('stated_date', '')}"
                                    if ev.get("stated_calendar") else ev.get("stated_date", "")),
                         "residuals": _resid_text(ev) if ev.get("holds") else "fails",
                         "margin": _margin_text(ev), "jd_tt": ev.get("jd_tt"), "jd_ut": ev.get("jd_ut"),
                         "score": round(s.score, 3), "delta_t": s.fragility, "holds": ev.get("holds")})
    return rows


def _solution_header(s, partial=False) -> list:
    lines = [f"#{s.rank}  score {s.score:.3f}  [{s.fragility}] {s.note}"]
    if partial:
        lines[0] = f"#{s.rank}  score {s.score:.3f}  fails: {', '.join(s.failed)}"
    for e in s.epochs:
        lines.append(f"    {e['epoch']}: {e['text']}")
    for r in s.relations:
        if r.get("holds") is None:
            continue
        extra = ""
        if "days_between" in r:
            extra = f": {r['days_between']:g} d"
            if "residual_d" in r:
                extra += f" (residual {r['residual_d']:+g} d)"
        if r["type"] != "regnal":
            lines.append(f"    relation {r['relation']} ({r['label']}){extra}")
    return lines


def render_text(result) -> str:
    """Return the dating result as readable text with a provenance footer."""
    rec = result.record
    out = [f"{rec.title}: {result.n_solutions} solution(s) in {rec.window[0]}..{rec.window[1]}"
           f" (record {rec.path})", ""]
    cols = ["observation", "kind", "date_ut", "time_ut", "local", "stated", "residuals", "margin"]
    heads = ["observation", "event", "date (UT)", "UT", "local civil time", "stated calendar date",
             "residuals", "margin"]
    blocks = [(s, False) for s in result.solutions] or [(s, True) for s in result.partial]
    if not result.solutions and result.partial:
        out.append("No solution satisfies every observation. Best partial solutions (all but one):")
        out.append("")
    for s, partial in blocks:
        out.extend(_solution_header(s, partial))
        out.append(render_table(event_rows([s]), cols, heads))
        out.append("")
    for m in result.messages:
        out.append(f"note: {m}")
    out.append("")
    out.append(render_table(result.counts, ["observation", "detector", "events", "after_kind", "after_where",
                                            "after_require", "after_bounds", "after_date", "in_solutions"],
                            ["observation", "detector", "events", "kind", "where", "require", "bounds", "date",
                             "in solutions"], title="candidates left after each stage"))
    if result.chronology:
        out.append("")
        out.extend(chronology_lines(result.chronology))
    out.append("")
    out.extend(footer_lines(result.provenance))
    return "\n".join(out)


def chronology_lines(chrono, most=40) -> list:
    """The chronology sweep as text: observations holding per epoch sample (runs of equal scores merged)."""
    from .describe import _jtext

    lines = [f"chronology: observations holding (of {len(chrono['observations'])}) against the epoch "
             f"{', '.join(chrono['epochs'])}"]
    samples, score, full = chrono["samples"], chrono["holding"], chrono["full"]
    runs = []
    for s, v, f in zip(samples, score, full):
        if runs and runs[-1][2] == v and runs[-1][3] == f:
            runs[-1][1] = s
        else:
            runs.append([s, s, v, f])
    for a, b, v, f in runs[:most]:
        span = _jtext(a[0]) if a == b else f"{_jtext(a[0])} .. {_jtext(b[0])}"
        lines.append(f"    {span}: {v}{'  (a full solution)' if f else ''}")
    if len(runs) > most:
        lines.append(f"    ... {len(runs) - most} more runs (see --format json)")
    return lines


def to_payload(result) -> dict:
    """The result as a dict of plain values (for JSON)."""
    def sol(s):
        return {"rank": s.rank, "score": s.score, "delta_t": {"class": s.fragility, "note": s.note,
                                                                "holds_at_sigma": s.holds_k,
                                                                "events_from_sigma": s.scenario_k},
                "failed": s.failed, "epochs": s.epochs, "events": s.events, "relations": s.relations,
                "score_terms": s.terms}

    return {"record": result.record.path, "title": result.record.title, "window": list(result.record.window),
            "n_solutions": result.n_solutions, "solutions": [sol(s) for s in result.solutions],
            "partial_solutions": [sol(s) for s in result.partial], "messages": result.messages,
            "counts": result.counts, "chronology": result.chronology,
            "timings_s": {k: (round(v, 3) if isinstance(v, float) else v) for k, v in result.timings.items()},
            "provenance": result.provenance}


def render(result, fmt: str) -> str:
    """Render in ``table``, ``json`` or ``csv``."""
    if fmt == "json":
        return render_json(to_payload(result))
    if fmt == "csv":
        rows = event_rows(result.solutions or result.partial)
        return render_csv(rows, ["rank", "score", "delta_t", "observation", "kind", "jd_tt", "jd_ut", "date_ut",
                                 "time_ut", "local", "stated_calendar", "stated_date", "residuals", "margin",
                                 "holds"])
    return render_text(result)


# ---------------------------------------------------------------- HTML report
def _svg_bars(values, labels, title, width=640, height=180, ylabel="") -> str:
    n = max(len(values), 1)
    vmax = max([v for v in values if v == v] + [1e-9])
    bw = (width - 60) / n
    parts = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height + 40}" role="img">',
             f'<text x="{width / 2}" y="14" text-anchor="middle" font-size="13">{html.escape(title)}</text>',
             f'<line x1="50" y1="{height}" x2="{width - 10}" y2="{height}" stroke="#444"/>',
             f'<text x="4" y="{height / 2}" font-size="10">{html.escape(ylabel)}</text>',
             f'<text x="44" y="30" font-size="10" text-anchor="end">{vmax:g}</text>']
    for i, v in enumerate(values):
        h = 0 if v != v else (height - 30) * v / vmax
        x = 50 + i * bw
        parts.append(f'<rect x="{x:.1f}" y="{height - h:.1f}" width="{max(bw - 1, 0.5):.1f}" height="{h:.1f}" '
                     f'fill="#4a78a8"><title>{html.escape(str(labels[i]))}: {v:g}</title></rect>')
    step = max(1, n // 6)
    for i in range(0, n, step):
        parts.append(f'<text x="{50 + i * bw:.1f}" y="{height + 14}" font-size="10">{html.escape(str(labels[i]))}'
                     "</text>")
    parts.append("</svg>")
    return "".join(parts)


def _density(result, bins=40):
    import numpy as np

    from .describe import _western

    a, b = result.problem.window_tt
    edges = np.linspace(a, b, bins + 1)
    base = result.scenarios[0]
    out = []
    for i, c in enumerate(base.cands):
        hist, _ = np.histogram(c.t, edges)
        labels = [_western(result.problem.host, float(x))[0][:5] for x in edges[:-1]]
        out.append(_svg_bars(hist.tolist(), labels, f"candidates of {result.record.ids[i]} over the window",
                             ylabel="events"))
    return out


def render_html(result) -> str:
    """Return a self-contained HTML page: the solutions, the stage counts, and plots as inline SVG."""
    esc = html.escape
    sols = result.solutions or result.partial
    parts = ["<!DOCTYPE html><html><head><meta charset='utf-8'>",
             f"<title>{esc(result.record.title)}</title>",
             "<style>body{font-family:sans-serif;margin:2em;max-width:72em}table{border-collapse:collapse;"
             "margin:.5em 0}td,th{border:1px solid #bbb;padding:2px 6px;font-size:13px}th{background:#eee}"
             ".note{color:#444}</style></head><body>",
             f"<h1>{esc(result.record.title)}</h1>",
             f"<p>Record {esc(result.record.path)}; window {esc(result.record.window[0])}..."
             f"{esc(result.record.window[1])}; {result.n_solutions} solution(s).</p>"]
    if not result.solutions and result.partial:
        parts.append("<p><b>No solution satisfies every observation;</b> the best partial solutions follow.</p>")
    for s in sols:
        head = _solution_header(s, partial=bool(s.failed))
        parts.append(f"<h2>{esc(head[0])}</h2><p class='note'>{'<br>'.join(esc(x.strip()) for x in head[1:])}</p>")
        parts.append("<table><tr>" + "".join(f"<th>{esc(h)}</th>" for h in EVENT_COLUMNS[1:]) + "</tr>")
        for r in event_rows([s]):
            parts.append("<tr>" + "".join(f"<td>{esc(str(r.get(c, '')))}</td>" for c in EVENT_COLUMNS[1:]) +
                         "</tr>")
        parts.append("</table>")
    parts.append("<h2>Notes</h2><ul>" + "".join(f"<li>{esc(m)}</li>" for m in result.messages) + "</ul>")
    parts.append("<h2>Candidates after each stage</h2><table><tr>")
    keys = ["observation", "detector", "events", "after_kind", "after_where", "after_require", "after_bounds",
            "after_date", "in_solutions"]
    parts.append("".join(f"<th>{esc(k)}</th>" for k in keys) + "</tr>")
    for c in result.counts:
        parts.append("<tr>" + "".join(f"<td>{esc(str(c[k]))}</td>" for k in keys) + "</tr>")
    parts.append("</table><h2>Candidate density over the window</h2>")
    parts.extend(_density(result))
    if sols:
        parts.append("<h2>Residuals per observation</h2>")
        for s in sols[:5]:
            vals = [sum(ev.get("score_terms", {}).values()) if ev.get("holds") else float("nan") for ev in s.events]
            parts.append(_svg_bars(vals, [ev["observation"] for ev in s.events],
                                   f"solution {s.rank}: score contribution per observation", height=140,
                                   ylabel="score"))
    if result.chronology:
        ch = result.chronology
        from .describe import _jtext

        labels = [_jtext(x[0])[7:11] for x in ch["samples"]]
        parts.append("<h2>Chronology: observations holding against the epoch</h2>")
        parts.append(_svg_bars(ch["holding"], labels, f"observations holding, epoch {', '.join(ch['epochs'])}",
                               ylabel="holding"))
    parts.append("<h2>Provenance</h2><pre>" + esc("\n".join(footer_lines(result.provenance))) + "</pre>")
    parts.append("</body></html>")
    return "\n".join(parts)
