"""Command-line front of event detectors, generated from their declared parameters.

``calendra events NAME --from DATE --to DATE [--site S] [--PARAM VALUE ...]``
exists for every installed detector with no command-line code in the
plugin: each :class:`calendra.detector.Parameter` becomes an option.
"""

from __future__ import annotations

import click

from .errors import ParameterError

_TYPES = {"float": click.FLOAT, "int": click.INT, "str": click.STRING, "bool": click.BOOL}
_RESERVED = {"from", "to", "site", "delta_t", "format", "reform", "calendar"}


def command_for(detector) -> click.Command:
    """Build the click command of one detector."""
    params = [
        click.Option(["--from", "date_from"], required=True, metavar="DATE",
                     help="Start of the search (a date, or a year like -1500 or '585 BC')."),
        click.Option(["--to", "date_to"], required=True, metavar="DATE", help="End of the search."),
        click.Option(["--site"], default=None, metavar="SITE",
                     help="Observer: gazetteer name or LAT,LON[,ELEVATION_M]" +
                          (" (required)" if detector.needs_site else "")),
        click.Option(["--delta-t", "deltat"], default=None, metavar="MODEL", help="Delta-T model."),
        click.Option(["--calendar", "calendar"], default=None, metavar="CAL",
                     help="Also show each event's date in this calendar."),
        click.Option(["--format", "fmt"], type=click.Choice(["table", "json", "csv"]), default="table",
                     show_default=True, help="Output format."),
    ]
    for p in detector.parameters:
        if p.name in _RESERVED:
            raise ParameterError(f"detector {detector.name}: parameter name {p.name!r} is reserved")
        ptype = click.Choice(list(p.choices)) if p.type == "choice" else _TYPES[p.type]
        params.append(click.Option([f"--{p.name.replace('_', '-')}", p.name], type=ptype, default=p.default,
                                   required=p.required, show_default=p.default is not None, help=p.help))

    def callback(date_from, date_to, site, deltat, calendar, fmt, **values):
        run_detector(detector, date_from, date_to, site, deltat, calendar, fmt, values)

    return click.Command(detector.name, params=params, callback=callback,
                         help=(detector.title + ("\n\n" + detector.description if detector.description else "")),
                         short_help=detector.title)


def run_detector(detector, date_from, date_to, site, deltat, calendar, fmt, values):
    """Resolve the command-line arguments, run the search with a progress bar, print the table."""
    import sys

    from .dateparse import date_to_jd_tt
    from .deltat import DEFAULT_MODEL, get_model
    from .pluginmanager import get_host
    from .sites import parse_site

    host = get_host()
    model = get_model(deltat or DEFAULT_MODEL)
    site_obj = parse_site(site) if site else None
    start = date_to_jd_tt(date_from, host, model)
    end = date_to_jd_tt(date_to, host, model)
    start, end = clamp_to_ephemeris(start, end)
    cal = host.calendars.get(calendar) if calendar else None
    bar = None

    def progress(done, total, label):
        nonlocal bar
        if not sys.stderr.isatty():
            return
        if bar is None:
            bar = click.progressbar(length=total, label=label, file=sys.stderr)
            bar.__enter__()
        bar.update(done - bar.pos)

    try:
        table = detector.search(start, end, site=site_obj, deltat=model, progress=progress, **values)
    finally:
        if bar is not None:
            bar.__exit__(None, None, None)
    click.echo(render_events(table, fmt, cal, host))


def clamp_to_ephemeris(start: float, end: float) -> tuple[float, float]:
    """Trim a search range (JD TT) to the ephemeris span, saying so on standard error.

    A range wholly outside the span is an error (the ephemeris raises it with the span named).
    """
    from .ephemeris import SPAN_JD, check_span

    lo, hi = SPAN_JD
    if end < lo or start > hi:
        check_span([start, end])
    new = (max(start, lo + 1e-6), min(end, hi - 1e-6))
    if new != (start, end):
        click.echo(f"calendra: note: search range trimmed to the span of the ephemeris "
                   f"(JD {new[0]:.1f} to {new[1]:.1f} TT)", err=True)
    return new


def render_events(table, fmt, calendar=None, host=None) -> str:
    """Render an EventTable with its dates in the western calendar (and ``calendar`` if given)."""
    import numpy as np

    from .daylib import split_jd
    from .output import render_csv, render_json, render_table
    from .pluginmanager import get_host

    host = host or get_host()
    western = host.calendars.get("western")
    jdn, frac = split_jd(table["jd_ut"])
    fields = western.from_jdn(jdn)
    cols = ["date_ut", "time_ut"] + [n for n in table.names if n not in ("kind",)] + ["kind"]
    rows = []
    for i, row in enumerate(table.rows()):
        y, m, d = (int(np.atleast_1d(fields[f])[i]) for f in western.fields)
        secs = int(round(float(frac[i]) * 86400.0)) % 86400
        row["date_ut"] = western.format(y, m, d)
        row["time_ut"] = f"{secs // 3600:02d}:{secs % 3600 // 60:02d}:{secs % 60:02d}"
        rows.append(row)
    if calendar is not None:
        cf = calendar.from_jdn(jdn)
        for i, row in enumerate(rows):
            row[calendar.label] = calendar.format(*(np.atleast_1d(cf[f])[i].item() for f in calendar.fields))
        cols.insert(2, calendar.label)
    if fmt == "json":
        return render_json({"events": rows, "columns": {k: vars(v) for k, v in table.meta.items()},
                            "provenance": table.provenance})
    if fmt == "csv":
        return render_csv(rows, cols)
    def header(c):
        unit = table.meta[c].unit if table.meta.get(c) else ""
        if not unit or c.endswith("_" + unit) or c.endswith("_" + unit.replace(" ", "")):
            return c
        return f"{c} ({unit})"

    headers = [header(c) for c in cols]
    return render_table(rows, cols, headers, provenance=table.provenance)


def list_detectors(host) -> str:
    """Return a text listing of the detectors and their parameters."""
    dets = list(host.detectors)
    if not dets:
        return "no event detectors are installed"
    lines = []
    for d in dets:
        lines.append(f"{d.name}: {d.title}" + ("  [needs --site]" if d.needs_site else ""))
        for p in d.parameters:
            kind = "|".join(p.choices) if p.type == "choice" else p.type
            default = "" if p.default is None else f" (default {p.default})"
            lines.append(f"    --{p.name.replace('_', '-')} {kind.upper() if p.type != 'choice' else kind}"
                         f"{default}  {p.help}")
    lines.append("")
    lines.append("run: calendra events NAME --from DATE --to DATE [--site SITE] [options]; "
                 "calendra events NAME --help for details")
    return "\n".join(lines)
