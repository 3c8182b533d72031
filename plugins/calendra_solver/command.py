"""The ``calendra date RECORD.toml`` command (click is imported by the hook, not at module import)."""

from __future__ import annotations


def date_command():
    """Build the click command ``calendra date``."""
    import sys

    import click

    @click.command("date")
    @click.argument("record_file", metavar="RECORD.toml", type=click.Path(dir_okay=False))
    @click.option("--top", type=click.IntRange(min=1), default=None, help="Solutions to show (default: the record's, 5).")
    @click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table",
                  show_default=True, help="Output format.")
    @click.option("--window", default=None, metavar="FROM..TO",
                  help="Search window overriding the record's, e.g. -1500..-300 (astronomical years or dates).")
    @click.option("--site", default=None, metavar="SITE",
                  help="Default site overriding the record's: a gazetteer name or LAT,LON[,ELEVATION_M].")
    @click.option("--delta-t", "deltat", default=None, metavar="MODEL", help="Delta-T model (default: smh2016).")
    @click.option("--sweep", type=click.Choice(["near", "full", "off"]), default=None,
                  help="Delta-T sensitivity: re-run site observations near the solutions (near), over the whole "
                       "window (full), or not at all (off).")
    @click.option("--report", "report_path", default=None, metavar="OUT.html",
                  help="Also write a self-contained HTML page with the table and plots.")
    def command(record_file, top, fmt, window, site, deltat, sweep, report_path):
        """Find the dates on which the sky observations of RECORD.toml all hold, best first.

        The record lists observations (a detector, its parameters, conditions on its output
        columns, date information in any installed calendar) and relations between them
        (intervals in days, same or consecutive years, before/after, a reign list whose
        accession is uncertain). See SCHEMA.md of the calendra_solver plugin.
        """
        from .engine import date_record
        from .report import render, render_html

        bar = None

        def progress(done, total, label):
            nonlocal bar
            if not sys.stderr.isatty():
                return
            if bar is not None and bar.label != label:
                bar.__exit__(None, None, None)
                bar = None
            if bar is None:
                bar = click.progressbar(length=total, label=label, file=sys.stderr)
                bar.__enter__()
            bar.update(done - bar.pos)

        try:
            result = date_record(record_file, top=top, window=window, site=site, deltat=deltat, sweep=sweep,
                                 progress=progress)
        finally:
            if bar is not None:
                bar.__exit__(None, None, None)
        click.echo(render(result, fmt))
        if report_path:
            with open(report_path, "w", encoding="utf-8") as fh:
                fh.write(render_html(result))
            click.echo(f"calendra: report written to {report_path}", err=True)

    return command
