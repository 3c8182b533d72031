"""The ``calendra`` command line (click).

Commands stay thin over the library; heavy modules (skyfield, the
ephemeris) are imported inside the commands so that ``calendra --help``
answers at once.  Every error a user can cause ends in one line on standard
error and exit status 2.
"""

from __future__ import annotations

import os
import sys

import click

from .errors import CalendraError, ParameterError

FORMAT_OPTION = click.option("--format", "fmt", type=click.Choice(["table", "json", "csv"]), default="table",
                             show_default=True, help="Output format.")
DELTAT_OPTION = click.option("--delta-t", "deltat", default=None, metavar="MODEL",
                             help="Delta-T model: smh2016 (default), espenak-meeus-2006, ms2004, "
                                  "constant:SECONDS, table:FILE.csv. See 'calendra deltat --list'.")
REFORM_OPTION = click.option("--reform", default=None, metavar="REFORM",
                             help="First Gregorian day for dates with no calendar named: rome (1582-10-15, "
                                  "default), britain (1752-09-14), russia, greece, ... or YYYY-MM-DD.")
SITE_OPTION = click.option("--site", default=None, metavar="SITE",
                           help="Observer: a gazetteer name or LAT,LON[,ELEVATION_M] (degrees, north and east "
                                "positive).")


class CalendraGroup(click.Group):
    """Top-level group: one-line errors, plugin commands added on demand."""

    def main(self, args=None, prog_name=None, **kwargs):
        try:
            rv = super().main(args=args, prog_name=prog_name or "calendra", standalone_mode=False, **kwargs)
        except CalendraError as exc:
            _fail(str(exc))
        except click.UsageError as exc:
            if type(exc).__name__.startswith("NoArgsIsHelp"):   # a group called bare: its help, not an error
                click.echo(exc.ctx.get_help() if exc.ctx else str(exc))
                sys.exit(0)
            where = exc.ctx.command_path if exc.ctx else "calendra"
            _fail(f"{exc.format_message()} (see '{where} --help')")
        except click.ClickException as exc:
            _fail(exc.format_message())
        except click.exceptions.Abort:
            click.echo("calendra: aborted", err=True)
            sys.exit(1)
        except click.exceptions.Exit as exc:
            sys.exit(exc.exit_code)
        except KeyboardInterrupt:
            click.echo("calendra: interrupted", err=True)
            sys.exit(130)
        except BrokenPipeError:
            sys.exit(0)
        except Exception as exc:  # an internal fault, not the user's: still one line unless debugging
            if os.environ.get("CALENDRA_DEBUG"):
                raise
            click.echo(f"calendra: internal error: {type(exc).__name__}: {exc} "
                       "(set CALENDRA_DEBUG=1 to see the traceback)", err=True)
            sys.exit(1)
        if isinstance(rv, int) and rv:
            sys.exit(rv)
        sys.exit(0)

    def list_commands(self, ctx):
        names = super().list_commands(ctx)
        return names + sorted(c.name for c in _plugin_commands() if c.name not in names)

    def get_command(self, ctx, name):
        cmd = super().get_command(ctx, name)
        if cmd is not None:
            return cmd
        for c in _plugin_commands():
            if c.name == name:
                return c
        return None


def _fail(message: str):
    click.echo(f"calendra: error: {message}", err=True)
    sys.exit(2)


def _plugin_commands():
    from .pluginmanager import get_host

    return get_host().cli_commands()


def _host():
    from .pluginmanager import get_host

    return get_host()


def _deltat(spec):
    from .deltat import DEFAULT_MODEL, get_model

    return get_model(spec or DEFAULT_MODEL)


def _site(spec):
    if not spec:
        return None
    from .sites import parse_site

    return parse_site(spec)


def _emit(text: str):
    click.echo(text)


@click.group(cls=CalendraGroup, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="calendra", prog_name="calendra")
def main():
    """calendra: date the past by the sky.

    Convert dates between calendars with delta T and its uncertainty, list the
    installed calendars, event detectors and plugins, and search for sky events.
    Years are astronomical (0 = 1 BC) unless written with BC/AD.
    """


# --------------------------------------------------------------------- convert
DATE_ARGS = {"ignore_unknown_options": True}     # so that "-0584-05-28" is a date, not an option


def _check_dates(dates):
    for d in dates:
        if d.startswith("--") or (d.startswith("-") and not d[1:2].isdigit()):
            raise click.UsageError(f"no such option: {d}")


@main.command(context_settings=DATE_ARGS)
@click.argument("dates", nargs=-1)
@click.option("--to", "targets", multiple=True, metavar="CAL",
              help="Calendar to show (repeatable; default: every installed calendar). CAL[opt=value] sets options.")
@click.option("--file", "date_file", type=click.File("r"), default=None,
              help="Read dates from a file, one per line ('-' for standard input); '#' starts a comment.")
@SITE_OPTION
@DELTAT_OPTION
@REFORM_OPTION
@FORMAT_OPTION
def convert(dates, targets, date_file, site, deltat, reform, fmt):
    """Show DATES in other calendars, with JD, weekday and delta T.

    A DATE is e.g. '585 BC May 28', '-0584-05-28', 'julian:333-01-27 6:00 UT',
    'JD 1507900.5', or CAL:TEXT for any installed calendar. Many dates (from
    --file) are converted as one array job.
    """
    from .convert import convert_dates, render

    _check_dates(dates)
    texts = list(dates)
    if date_file is not None:
        for line in date_file:
            line = line.split("#", 1)[0].strip()
            if line:
                texts.append(line)
    if not texts:
        raise click.UsageError("give at least one DATE (or --file)")
    result = convert_dates(texts, targets=targets, site=_site(site), deltat=_deltat(deltat), reform=reform,
                           host=_host())
    _emit(render(result, fmt))


# ------------------------------------------------------------------ calendars
@main.command()
@FORMAT_OPTION
def calendars(fmt):
    """List the installed calendars with their descriptions and valid ranges."""
    from .output import render_csv, render_json, render_table

    host = _host()
    rows = []
    for cal in host.calendars:
        d = cal.describe()
        lo, hi = d["valid_jd"]
        rows.append({**d, "aliases": ", ".join(d["aliases"]), "plugin": host.calendars.plugin_of(cal),
                     "valid": _range_text(cal), "options": ", ".join(d["options"])})
    cols = ["name", "aliases", "day_start", "valid", "plugin", "description"]
    if fmt == "json":
        _emit(render_json({"calendars": rows}))
    elif fmt == "csv":
        _emit(render_csv(rows, cols + ["options", "year_numbering"]))
    else:
        _emit(render_table(rows, cols, ["calendar", "aliases", "day starts", "valid", "plugin", "description"]))
        _report_problems(host)


def _range_text(cal) -> str:
    lo, hi = cal.valid_jdn
    if lo <= -1_000_000_000 and hi >= 1_000_000_000:
        return "unbounded"
    from .julian_gregorian import julian_from_jdn
    from .calendar import iso_year

    def one(j):
        y, m, d = (int(v) for v in julian_from_jdn(j))
        return f"{iso_year(y)}-{m:02d}-{d:02d}"

    return f"julian {one(lo)} .. {one(hi)}"


def _report_problems(host):
    for line in host.problems():
        click.echo(f"calendra: warning: {line}", err=True)


# ------------------------------------------------------------------- calendar
@main.command("calendar", context_settings=DATE_ARGS)
@click.argument("calendar_name", metavar="CAL")
@click.argument("year", type=int)
@click.option("--month", type=int, default=None, help="Print a grid of this month with weekdays.")
@click.option("--ruler", default=None, help="For a reign list: the ruler (name, key or reign number) whose "
                                            "regnal YEAR to print.")
@FORMAT_OPTION
def calendar_command(calendar_name, year, month, ruler, fmt):
    """Print the months of YEAR in calendar CAL, with the JD and western date of each month start.

    YEAR is the calendar's own year number (astronomical for julian and gregorian; a negative year
    needs no quoting: calendra calendar babylonian -292); for a reign list, the regnal year of
    --ruler.
    """
    from .yeartable import month_grid, year_table
    from .output import render_csv, render_json, render_table

    cal = _host().calendars.get(calendar_name)
    lead = ()
    if ruler is not None:
        if not hasattr(cal, "reign_index"):
            raise ParameterError(f"calendar {cal.label} is not a reign list: --ruler needs one")
        lead = (cal.reign_index(int(ruler) if ruler.strip().isdigit() else ruler),)
    if month is not None:
        _emit(month_grid(cal, year, month, _host(), lead))
        return
    rows = year_table(cal, year, _host(), lead)
    cols = ["month", "name", "days", "first_jd", "first_western", "first_weekday"]
    if fmt == "json":
        _emit(render_json({"calendar": cal.label, "year": year, "months": rows}))
    elif fmt == "csv":
        _emit(render_csv(rows, cols))
    else:
        _emit(render_table(rows, cols, ["month", "name", "days", "JD of 1st (0h)", "1st in western calendar",
                                        "weekday"],
                           title=f"{cal.label} {'year' if not lead else cal.rulers()[lead[0] - 1] + ', year'} {year} "
                                 f"({cal.year_numbering or 'own numbering'}; "
                                 f"day begins at {cal.day_start})"))


# -------------------------------------------------------------------- plugins
@main.command()
@FORMAT_OPTION
def plugins(fmt):
    """List the plugins, their versions and what each adds."""
    from .output import render_csv, render_json, render_table

    host = _host().load_all()
    rows = []
    for info in host.info.values():
        adds = "; ".join(f"{kind}s: {', '.join(names)}" for kind, names in info.added.items() if names)
        rows.append({"plugin": info.name, "version": info.version, "source": info.source,
                     "adds": adds or "-", "status": "ok" if info.ok else "; ".join(info.errors)})
    cols = ["plugin", "version", "source", "status", "adds"]
    if fmt == "json":
        _emit(render_json({"plugins": rows}))
    elif fmt == "csv":
        _emit(render_csv(rows, cols))
    else:
        _emit(render_table(rows, cols))


# --------------------------------------------------------------------- deltat
@main.command("deltat", context_settings=DATE_ARGS)
@click.argument("dates", nargs=-1)
@click.option("--list", "list_models", is_flag=True, help="List the delta-T models.")
@click.option("--models", default=None, metavar="M1,M2,...",
              help="Models to compare (default: every built-in model).")
@FORMAT_OPTION
def deltat_command(dates, list_models, models, fmt):
    """Show delta T (TT - UT) and its uncertainty at DATES under several models."""
    from . import deltat as dtmod
    from .dateparse import parse_date, resolve_dates
    from .output import render_csv, render_json, render_table
    from .provenance import format_seconds

    _check_dates(dates)
    if list_models or not dates:
        rows = [{"model": name, "title": title} for name, title in dtmod.available_models().items()]
        if fmt == "json":
            _emit(render_json({"models": rows}))
        else:
            _emit(render_table(rows, ["model", "title"]) if fmt == "table" else render_csv(rows, ["model", "title"]))
        return
    host = _host()
    names = [m.strip() for m in models.split(",")] if models else [n for n in dtmod.available_models()
                                                                    if ":" not in n]
    specs = [parse_date(t, host, allow_partial=True) for t in dates]
    res = resolve_dates(specs, host)
    rows = []
    for name in names:
        model = dtmod.get_model(name)
        vals = model.seconds(res.jd_tt)
        sig = model.sigma(res.jd_tt)
        for text, v, s in zip(dates, vals, sig):
            rows.append({"date": text, "model": name, "delta_t_s": round(float(v), 1),
                         "sigma_s": round(float(s), 1), "readable": f"{format_seconds(v)} +- {format_seconds(s)}"})
    cols = ["date", "model", "delta_t_s", "sigma_s", "readable"]
    if fmt == "json":
        _emit(render_json({"delta_t": rows}))
    elif fmt == "csv":
        _emit(render_csv(rows, cols))
    else:
        _emit(render_table(rows, cols, ["date", "model", "delta T (s)", "1 sigma (s)", ""],
                           title="delta T = TT - UT"))


# --------------------------------------------------------------------- events
class EventsGroup(click.Group):
    """``calendra events DETECTOR ...``: one subcommand per installed detector, generated from its parameters."""

    def list_commands(self, ctx):
        return sorted(_host().detectors.names())

    def get_command(self, ctx, name):
        host = _host()
        if name not in host.detectors:
            from .errors import UnknownNameError

            raise UnknownNameError("detector", name, host.detectors.names() or ["(none installed)"])
        from .eventcli import command_for

        return command_for(host.detectors.get(name))


@main.group(cls=EventsGroup, invoke_without_command=True)
@click.pass_context
def events(ctx):
    """Search for sky events with an installed detector; alone, list the detectors and their parameters."""
    if ctx.invoked_subcommand is None:
        from .eventcli import list_detectors

        _emit(list_detectors(_host()))


if __name__ == "__main__":  # pragma: no cover
    main()
