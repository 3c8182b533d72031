"""The public interface of calendra, in one place.

>>> from calendra.api import convert_dates, get_calendar
>>> get_calendar("julian").to_jdn(-584, 5, 28)
np.int64(1507900)

Names here are stable; modules behind them may move.
"""

from __future__ import annotations

from .calendar import Calendar, SolarCalendar
from .convert import convert_dates
from .dateparse import date_to_jd_tt, parse_date, resolve_dates
from .daylib import jd_to_mjd, jdn_to_jd, jdn_to_rd, mjd_to_jd, rd_to_jdn, split_jd, weekday
from .detector import Detector, Parameter
from .errors import (CalendraError, DateParseError, DateRangeError, EphemerisError, EphemerisRangeError,
                     InvalidDateError, ParameterError, PluginError, UnknownCalendarError, UnknownNameError)
from .events import Column, EventTable
from .hookspecs import hookimpl
from .pluginmanager import Host, get_host
from .sites import Site, parse_site


def get_calendar(name: str) -> Calendar:
    """Return the installed calendar called ``name`` (``NAME[opt=value]`` sets options)."""
    return get_host().calendars.get(name)


def get_detector(name: str) -> Detector:
    """Return the installed event detector called ``name``."""
    return get_host().detectors.get(name)


def get_deltat_model(spec: str | None = None):
    """Return a delta-T model by name (default: the project's default model)."""
    from .deltat import DEFAULT_MODEL, get_model

    return get_model(spec or DEFAULT_MODEL)


__all__ = [
    "Calendar", "SolarCalendar", "Column", "Detector", "EventTable", "Host", "Parameter", "Site",
    "CalendraError", "DateParseError", "DateRangeError", "EphemerisError", "EphemerisRangeError",
    "InvalidDateError", "ParameterError", "PluginError", "UnknownCalendarError", "UnknownNameError",
    "convert_dates", "date_to_jd_tt", "get_calendar", "get_deltat_model", "get_detector", "get_host",
    "hookimpl", "jd_to_mjd", "jdn_to_jd", "jdn_to_rd", "mjd_to_jd", "parse_date", "parse_site",
    "rd_to_jdn", "resolve_dates", "split_jd", "weekday",
]
