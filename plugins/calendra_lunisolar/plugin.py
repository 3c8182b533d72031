"""Hook implementations of the lunisolar plugin (calendars and commands computed from the sky)."""

from __future__ import annotations

from calendra.hookspecs import hookimpl


def builtin_calendars() -> list:
    """Return fresh instances of the built-in sky calendars (default options)."""
    from .babylonian import BabylonianCalendar
    from .chinese import ChineseCalendar
    from .islamic_observed import ObservedIslamicCalendar

    return [ChineseCalendar(), BabylonianCalendar(), ObservedIslamicCalendar()]


@hookimpl
def calendra_calendars():
    from calendra.errors import CalendraError

    from .generic import ENV_VAR, calendars_from_environment

    cals, problems = calendars_from_environment()
    # Exceptions in the list are reported by the host as this plugin's problems (see hookspecs).
    return builtin_calendars() + cals + [CalendraError(f"{ENV_VAR} file skipped: {p}") for p in problems]


@hookimpl
def calendra_cli_commands():
    from .cli import commands

    return commands()
