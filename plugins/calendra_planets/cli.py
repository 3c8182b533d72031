"""The ``calendra retrograde-plot`` command: a planet's retrograde loop among the stars.

``calendra retrograde-plot --planet mars --date 2020-10-01 --output loop.png [--stars normal]``
draws the loop whose middle is nearest to the date (see :mod:`calendra_planets.plot`)
and prints its two stations.  click and matplotlib are imported only when the
command is built or run.
"""

from __future__ import annotations


def retrograde_plot_command():
    """Build the click command ``retrograde-plot``."""
    import click

    @click.command("retrograde-plot", short_help="Draw a planet's retrograde loop among the stars.")
    @click.option("--planet", type=click.Choice(["mercury", "venus", "mars", "jupiter", "saturn"]),
                  default="mars", show_default=True, help="Planet.")
    @click.option("--date", "date", required=True, metavar="DATE",
                  help="A date near the loop (a date, or a year like -567 or '568 BC').")
    @click.option("--output", "output", required=True, metavar="FILE", help="Image file (PNG, PDF, SVG).")
    @click.option("--stars", type=click.Choice(["normal", "bright", "both"]), default="normal", show_default=True,
                  help="Reference stars drawn: Babylonian Normal Stars, bright ecliptic stars, or both.")
    @click.option("--margin-days", type=float, default=None, help="Days drawn before and after the loop.")
    @click.option("--delta-t", "deltat", default=None, metavar="MODEL", help="Delta-T model (for the date).")
    def retrograde_plot(planet, date, output, stars, margin_days, deltat):
        """Draw the retrograde loop of a planet nearest to DATE on the ecliptic, with nearby stars."""
        from calendra.dateparse import date_to_jd_tt
        from calendra.deltat import DEFAULT_MODEL, get_model
        from calendra.errors import CalendraError
        from calendra.pluginmanager import get_host

        from .plot import plot_retrograde

        try:
            model = get_model(deltat or DEFAULT_MODEL)
            jd = date_to_jd_tt(date, get_host(), model)
            tr = plot_retrograde(planet, jd, output, stars=stars, margin_days=margin_days)
        except CalendraError as exc:
            raise click.ClickException(str(exc)) from None
        t0, t1 = tr["stations"]
        click.echo(f"{planet}: stations at JD {t0:.4f} and {t1:.4f} TT ({t1 - t0:.1f} days, "
                   f"{abs(tr['station_longitude_deg'][0] - tr['station_longitude_deg'][1]):.2f} deg); "
                   f"drawn into {output}")

    return retrograde_plot
