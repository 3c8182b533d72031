"""Exception types of calendra.

Every error a user can cause derives from :class:`CalendraError`; the command
line turns it into one line on standard error and exit status 2.  Errors that
reject a value also derive from the matching builtin (``ValueError``,
``LookupError``) so that generic code can catch them.
"""

from __future__ import annotations


class CalendraError(Exception):
    """Base class of every error calendra raises on purpose."""


class InvalidDateError(CalendraError, ValueError):
    """A calendar date that does not exist (month 13, February 30, ...).

    Attributes
    ----------
    calendar : str
        Name of the calendar that rejected the date.
    mask : numpy.ndarray of bool or None
        For array input, True where the date is invalid.
    """

    def __init__(self, message: str, calendar: str = "", mask=None):
        super().__init__(message)
        self.calendar = calendar
        self.mask = mask


class DateParseError(CalendraError, ValueError):
    """A date string that could not be read."""


class DateRangeError(CalendraError, ValueError):
    """A moment outside the range a model, calendar or ephemeris covers.

    Attributes
    ----------
    jd_min, jd_max : float
        The covered span as Julian Days (TT/TDB for ephemerides).
    mask : numpy.ndarray of bool or None
        For array input, True where the value is outside the span.
    """

    def __init__(self, message: str, jd_min: float = float("nan"),
                 jd_max: float = float("nan"), mask=None):
        super().__init__(message)
        self.jd_min = jd_min
        self.jd_max = jd_max
        self.mask = mask


class EphemerisRangeError(DateRangeError):
    """A request outside the span of the ephemeris kernel."""


class EphemerisError(CalendraError):
    """The ephemeris kernel could not be built, read or verified."""


class UnknownNameError(CalendraError, LookupError):
    """A name (calendar, detector, model, site...) that is not registered.

    Attributes
    ----------
    kind : str
        What was looked up ("calendar", "detector", "delta-T model"...).
    name : str
        The name as given.
    known : list of str
        Every name that would have been accepted.
    """

    def __init__(self, kind: str, name: str, known):
        import difflib

        self.kind = kind
        self.name = name
        self.known = sorted(known)
        close = difflib.get_close_matches(name.lower(), [k.lower() for k in self.known], n=3, cutoff=0.5)
        hint = f"; did you mean {', '.join(close)}?" if close else ""
        listing = ", ".join(self.known) if len(self.known) <= 12 else ", ".join(self.known[:12]) + ", ..."
        super().__init__(f"unknown {kind} {name!r}{hint} (known: {listing})")


class UnknownCalendarError(UnknownNameError):
    """A calendar name that no installed plugin provides."""

    def __init__(self, name: str, known):
        super().__init__("calendar", name, known)


class PluginError(CalendraError):
    """A plugin failed to load or registered something invalid.

    Attributes
    ----------
    plugin : str
        The plugin's entry-point or registration name.
    """

    def __init__(self, plugin: str, message: str):
        super().__init__(f"plugin {plugin!r}: {message}")
        self.plugin = plugin


class ParameterError(CalendraError, ValueError):
    """A detector or command parameter with a wrong type or value."""
