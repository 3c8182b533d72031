"""The ``calendra geocentric`` command: Almagest model positions against DE406, and plots.

``calendra geocentric --body mars --from DATE --to DATE --step 10 [--plot out.png]``
prints the table of the ``geocentric-positions`` detector (table, JSON or
CSV like every calendra command) and, with ``--plot``, writes a figure
(see :mod:`calendra_geocentric.plot`).
"""

from __future__ import annotations

import re

import click

from .compare import BODIES

_STEP_RE = re.compile(r"^\s*([0-9]*\.?[0-9]+(?:[eE][+-]?[0-9]+)?)\s*(d|days?)?\s*$")


def parse_step_days(text) -> float:
    """Return a step in days from ``'10'``, ``'10d'`` or ``'2.5 days'``."""
    from calendra.errors import ParameterError

    m = _STEP_RE.match(str(text))
    if not m or not float(m.group(1)) > 0:
        raise ParameterError(f"--step {text!r}: give a positive number of days, e.g. 10 or 10d")
    return float(m.group(1))


def geocentric_command() -> click.Command:
    """Build the click command ``geocentric``."""

    @click.command("geocentric", short_help="Almagest model positions against DE406 (and plots).")
    @click.option("--body", type=click.Choice(list(BODIES)), default="mars", show_default=True,
                  help="Body of the model.")
    @click.option("--from", "date_from", required=True, metavar="DATE", help="First instant (a date or a year).")
    @click.option("--to", "date_to", required=True, metavar="DATE", help="Last instant.")
    @click.option("--step", default="10", show_default=True, metavar="DAYS",
                  help="Interval between rows, days ('10' or '10d').")
    @click.option("--plot", "plot_path", default=None, metavar="FILE",
                  help="Also draw the model's epicycle loop beside the real track over one synodic period "
                       "from --from, and the model error over centuries (PNG, PDF, SVG).")
    @click.option("--delta-t", "deltat", default=None, metavar="MODEL", help="Delta-T model.")
    @click.option("--calendar", default=None, metavar="CAL", help="Also show each date in this calendar.")
    @click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table",
                  show_default=True, help="Output format.")
    def geocentric(body, date_from, date_to, step, plot_path, deltat, calendar, fmt):
        """Positions from Ptolemy's models (Almagest, tr. Toomer) beside DE406.

        Columns: model and DE406 longitude (and latitude), the difference,
        Ptolemy's equinox offset (his mean Sun - the modern mean Sun, about
        -1 deg around AD 137) and the difference with the offset removed,
        all in degrees.  The models run on mean solar time at Alexandria
        (UT1 = TT - delta T).
        """
        import sys

        from calendra.dateparse import date_to_jd_tt
        from calendra.deltat import DEFAULT_MODEL, get_model
        from calendra.eventcli import render_events
        from calendra.pluginmanager import get_host

        from .detectors import GeocentricPositions

        host = get_host()
        model = get_model(deltat or DEFAULT_MODEL)
        step_days = parse_step_days(step)
        start = date_to_jd_tt(date_from, host, model)
        end = date_to_jd_tt(date_to, host, model)
        table = GeocentricPositions().search(start, end, deltat=model, body=body, step_days=step_days)
        cal = host.calendars.get(calendar) if calendar else None
        click.echo(render_events(table, fmt, cal, host))
        if plot_path:
            from .plot import plot_comparison

            plot_comparison(body, start, end, plot_path, deltat=model)
            click.echo(f"calendra: wrote {plot_path}", err=True)
            sys.stderr.flush()

    return geocentric
