"""The calendar protocol every calendar of calendra implements.

A calendar names civil days.  It converts between integer day numbers
(chronological Julian Day Numbers, see :mod:`calendra.daylib`) and arrays of
date fields, validates dates with a specific message, formats and parses its
own date strings, and states its day boundary (midnight, sunset, sunrise or
noon), its epoch and its year numbering.  Calendars of plugins (arithmetic,
lunisolar, observational) subclass :class:`Calendar` and register through the
``calendra_calendars`` hook.

Conversions are vectorized: every field may be a scalar, a list or a numpy
array, and the result keeps the broadcast shape.
"""

from __future__ import annotations

import re
from typing import ClassVar, Mapping, Sequence

import numpy as np

from .daylib import as_int_array
from .errors import DateParseError, InvalidDateError

#: Day boundaries a calendar can declare.
DAY_STARTS = ("midnight", "sunset", "sunrise", "noon")
#: The default :attr:`Calendar.valid_jdn`: a calendar defined for every day (+-8 million years).
UNBOUNDED_JDN = (-3_000_000_000, 3_000_000_000)


class Calendar:
    """Base class of calendars.

    Subclasses set the class attributes and implement :meth:`_to_jdn`,
    :meth:`_from_jdn` and :meth:`_invalid_reason` (or :meth:`is_valid`).

    Attributes
    ----------
    name : str
        Registry name, lower case, no spaces (``"julian"``).
    aliases : tuple of str
        Other accepted names.
    fields : tuple of str
        Names of the date fields, most significant first.
    description : str
        One line saying what the calendar is and which reconstruction it follows.
    day_start : str
        One of :data:`DAY_STARTS`: when the calendar's day begins.
    year_numbering : str
        How years are counted, shown in every output.
    epoch_jdn : int or None
        Day number of the first day of the era (year 1, month 1, day 1), if any.
    valid_jdn : tuple of int
        Inclusive range of day numbers the calendar is defined for.
    invertible : bool
        False for cyclic day names without a year (the Mayan Haab and
        Tzolkin): they name every day, but a name alone does not give one day.
    """

    name: ClassVar[str] = ""
    aliases: ClassVar[tuple[str, ...]] = ()
    fields: ClassVar[tuple[str, ...]] = ("year", "month", "day")
    description: ClassVar[str] = ""
    day_start: ClassVar[str] = "midnight"
    year_numbering: ClassVar[str] = ""
    epoch_jdn: ClassVar[int | None] = None
    valid_jdn: tuple[int, int] = UNBOUNDED_JDN
    options: ClassVar[Mapping[str, str]] = {}
    invertible: ClassVar[bool] = True

    # ----------------------------------------------------------------- API
    def to_jdn(self, *fields, **named) -> np.ndarray:
        """Return day numbers of the dates given by ``fields`` (in the order of :attr:`fields`).

        Raises
        ------
        InvalidDateError
            If any date does not exist; the message names the first offender.
        """
        values = self._gather(fields, named)
        bad = ~np.asarray(self.is_valid(*values), dtype=bool)
        if bad.any():
            self._raise_invalid(values, bad)
        return self._to_jdn(*values)

    def from_jdn(self, jdn) -> dict[str, np.ndarray]:
        """Return a dict of field arrays for day numbers ``jdn``.

        Raises
        ------
        DateRangeError
            If a day number is outside :attr:`valid_jdn`.
        """
        jdn = as_int_array(jdn)
        if self.valid_jdn != UNBOUNDED_JDN:      # an unbounded calendar needs no range pass
            self.check_range(jdn)
        out = self._from_jdn(jdn)
        return dict(zip(self.fields, out))

    def is_valid(self, *fields) -> np.ndarray:
        """Return a boolean mask, True where the date exists in this calendar."""
        values = [np.asarray(f) for f in fields]
        shape = np.broadcast_shapes(*(v.shape for v in values))
        ok = np.ones(shape, dtype=bool)
        for idx in np.ndindex(shape):
            ok[idx] = self._invalid_reason(*(int(np.broadcast_to(v, shape)[idx]) for v in values)) is None
        return ok

    def validate(self, *fields) -> None:
        """Raise :class:`InvalidDateError` if any of the dates does not exist."""
        self.to_jdn(*fields)

    def check_range(self, jdn) -> None:
        """Raise DateRangeError when a day number lies outside :attr:`valid_jdn`."""
        from .errors import DateRangeError

        jdn = np.asarray(jdn)
        lo, hi = self.valid_jdn
        bad = (jdn < lo) | (jdn > hi)
        if np.any(bad):
            first = int(jdn[bad].flat[0]) if jdn.ndim else int(jdn)
            raise DateRangeError(
                f"{self.name} is defined for day numbers {lo}..{hi} (JD {lo - 0.5}..{hi + 0.5}); got day {first}",
                lo - 0.5, hi + 0.5, bad)

    def month_name(self, month: int, year: int | None = None) -> str:
        """Return the name of ``month`` (of ``year`` when names depend on it)."""
        names = getattr(self, "month_names", None)
        if names and 1 <= month <= len(names):
            return names[month - 1]
        return str(month)

    def format(self, *fields, style: str = "iso") -> str:
        """Format one date (scalar fields) as text.

        ``style`` is ``"iso"`` (numeric, most significant first) or
        ``"long"`` (with month names); subclasses may add styles.
        """
        return "-".join(str(int(f)) for f in fields)

    def parse(self, text: str) -> tuple[int, ...]:
        """Parse this calendar's date string into a tuple of fields.

        The default accepts the numeric form the default :meth:`format` writes,
        with fields separated by ``-``, ``/``, ``.`` or spaces.
        """
        parts = re.findall(r"[+-]?\d+", text.strip())
        if len(parts) != len(self.fields):
            raise DateParseError(
                f"cannot read {text!r} as a {self.name} date: expected {len(self.fields)} numbers ({', '.join(self.fields)})")
        return tuple(int(p) for p in parts)

    def with_options(self, **options) -> "Calendar":
        """Return a variant of this calendar with options set (see :attr:`options`)."""
        if options:
            from .errors import ParameterError

            raise ParameterError(f"calendar {self.name} takes no options (got {', '.join(options)})")
        return self

    @property
    def label(self) -> str:
        """The name with any options, as shown in output."""
        return self.name

    def year_start_jdn(self, year) -> np.ndarray:
        """Return the day number of the first day of ``year``.

        The default is month 1, day 1 (1 for every field after the year);
        calendars whose year does not begin with month 1 (the Hebrew year
        begins in Tishri, month 7) override it.
        """
        ones = np.ones_like(as_int_array(year))
        args = [year] + [ones] * (len(self.fields) - 1)
        return self._to_jdn(*(as_int_array(a) for a in args))

    def describe(self) -> dict:
        """Return a dict describing the calendar (for listings and provenance)."""
        lo, hi = self.valid_jdn
        return {
            "name": self.label,
            "aliases": list(self.aliases),
            "fields": list(self.fields),
            "description": self.description,
            "day_start": self.day_start,
            "year_numbering": self.year_numbering,
            "epoch_jdn": self.epoch_jdn,
            "valid_jd": [lo - 0.5, hi + 0.5],
            "options": dict(self.options),
        }

    # --------------------------------------------------------- to override
    def _to_jdn(self, *fields) -> np.ndarray:
        raise NotImplementedError

    def _from_jdn(self, jdn) -> tuple[np.ndarray, ...]:
        raise NotImplementedError

    def _invalid_reason(self, *fields) -> str | None:
        """Return None if the (scalar) date exists, else a message saying why not."""
        return None

    # ------------------------------------------------------------ helpers
    def _gather(self, fields: Sequence, named: Mapping) -> list[np.ndarray]:
        if named:
            if fields:
                raise TypeError("give date fields either by position or by name")
            missing = [f for f in self.fields if f not in named]
            extra = [k for k in named if k not in self.fields]
            if missing or extra:
                raise TypeError(f"{self.name} fields are {', '.join(self.fields)}")
            fields = [named[f] for f in self.fields]
        if len(fields) != len(self.fields):
            raise TypeError(f"{self.name} takes {len(self.fields)} fields ({', '.join(self.fields)}), got {len(fields)}")
        try:
            return [as_int_array(f) for f in fields]
        except ValueError as exc:
            raise InvalidDateError(f"{self.name}: {exc}", self.name) from None

    def _raise_invalid(self, values, bad) -> None:
        shape = bad.shape
        idx = tuple(np.argwhere(bad)[0]) if bad.ndim else ()
        first = [int(np.broadcast_to(v, shape)[idx]) for v in values]
        reason = self._invalid_reason(*first) or "date does not exist"
        raise InvalidDateError(reason, self.name, bad)


class SolarCalendar(Calendar):
    """Shared behaviour of calendars with year, month and day fields and named months.

    Subclasses provide ``month_names`` and ``month_length(year, month)``
    (vectorized) and the arithmetic; validation and long formatting come
    from here.
    """

    month_names: ClassVar[tuple[str, ...]] = ()

    def months_in_year(self, year) -> np.ndarray:
        """Return the number of months of ``year``."""
        return np.full(np.shape(year), len(self.month_names), dtype=np.int64)

    def month_length(self, year, month) -> np.ndarray:  # pragma: no cover - abstract
        raise NotImplementedError

    def is_valid(self, year, month, day) -> np.ndarray:
        y, m, d = (as_int_array(v) for v in (year, month, day))
        nmonths = self.months_in_year(y)
        mok = (m >= 1) & (m <= nmonths)
        length = self.month_length(y, np.where(mok, m, 1))
        return mok & (d >= 1) & (d <= length)

    def _invalid_reason(self, year, month, day):
        nmonths = int(self.months_in_year(np.int64(year)))
        if not 1 <= month <= nmonths:
            return f"month {month} does not exist in {self.name} {year} (months 1..{nmonths})"
        length = int(self.month_length(np.int64(year), np.int64(month)))
        if not 1 <= day <= length:
            return (f"{self.month_name(month, year)} {day} does not exist in {self.name} {year}: "
                    f"{self.month_name(month, year)} has {length} days")
        return None


# --------------------------------------------------------------------------
# Text forms shared by year-month-day calendars.

_ERA_BEFORE = {"bc", "bce", "b.c.", "b.c.e.", "bc.", "bce."}
_ERA_AFTER = {"ad", "ce", "a.d.", "c.e.", "ad.", "ce."}
_ISO_RE = re.compile(r"^([+-]?\d+)-(\d{1,2})-(\d{1,2})$")


def iso_year(year: int) -> str:
    """Format an astronomical year the ISO 8601 way: at least four digits, a sign before zero-or-negative or 5+ digit years."""
    if year < 0:
        return f"-{-year:04d}"
    if year > 9999:
        return f"+{year}"
    return f"{year:04d}"


def historical_year(year: int, style: str = "BC") -> str:
    """Format an astronomical year with an era: 1 -> "AD 1", 0 -> "1 BC", -584 -> "585 BC".

    ``style`` is ``"BC"`` (BC/AD) or ``"BCE"`` (BCE/CE).
    """
    if year >= 1:
        return f"AD {year}" if style == "BC" else f"{year} CE"
    return f"{1 - year} {'BC' if style == 'BC' else 'BCE'}"


def parse_ymd_text(text: str, month_names: Sequence[str], calendar: str,
                   eras: bool = True) -> tuple[int, int, int]:
    """Read a year-month-day date written the way historians or astronomers write it.

    Accepted forms (month names of the calendar, or their first three letters):

    * ISO-style astronomical: ``-0584-05-28``, ``1957-10-04``
    * with an era: ``585 BC May 28``, ``28 May 585 BCE``, ``May 28, 585 BC``,
      ``AD 1066 Oct 14``, ``1066 October 14 CE``
    * astronomical with a month name: ``-584 May 28``
    * without an era, ``D Month Y`` when the first number is 1..31, else
      ``Y Month D``; ``Month D, Y``.

    Era years have no year 0 (1 BC is followed by AD 1) and are converted to
    astronomical numbering (585 BC -> -584).

    Raises
    ------
    DateParseError
        If the text is not one of these forms.
    """
    s = text.strip()
    m = _ISO_RE.match(s)
    if m:
        return int(m.group(1)), int(m.group(2)), int(m.group(3))
    tokens = [t for t in re.split(r"[\s,/]+", s) if t]
    numbers: list[tuple[int, int]] = []   # (position, value)
    month = None
    era = None
    era_pos = -1
    for pos, tok in enumerate(tokens):
        low = tok.lower()
        if re.fullmatch(r"[+-]?\d+", tok):
            numbers.append((pos, int(tok)))
        elif eras and low in _ERA_BEFORE:
            era, era_pos = "BC", pos
        elif eras and low in _ERA_AFTER:
            era, era_pos = "AD", pos
        else:
            idx = match_month_name(tok, month_names)
            if idx is None or month is not None:
                raise DateParseError(f"cannot read {text!r} as a {calendar} date: unknown word {tok!r}")
            month = (pos, idx)
    if month is None:
        if len(numbers) == 3:
            y, mo, d = (v for _, v in numbers)
            month = (-1, mo)
            numbers = [numbers[0], numbers[2]]
            year_val, day_val = y, d
            return _apply_era(year_val, era, text, calendar), mo, day_val
        raise DateParseError(f"cannot read {text!r} as a {calendar} date: no month found "
                             f"(write e.g. '585 BC May 28' or '-0584-05-28')")
    if len(numbers) != 2:
        raise DateParseError(f"cannot read {text!r} as a {calendar} date: expected a year and a day beside the month")
    (p1, v1), (p2, v2) = numbers
    if era is not None:
        # The year is the number next to the era word.
        if abs(p1 - era_pos) < abs(p2 - era_pos):
            year, day = v1, v2
        else:
            year, day = v2, v1
    elif month[0] < p1:            # Month D, Y
        day, year = v1, v2
    elif 1 <= v1 <= 31 and p1 < month[0]:   # D Month Y
        day, year = v1, v2
    else:                           # Y Month D
        year, day = v1, v2
    return _apply_era(year, era, text, calendar), month[1], day


def _apply_era(year: int, era, text, calendar) -> int:
    if era is None:
        return year
    if year <= 0:
        raise DateParseError(f"{text!r}: years with BC/AD are counted from 1 (there is no year 0 in that numbering)")
    return 1 - year if era == "BC" else year


def match_month_name(token: str, month_names: Sequence[str]) -> int | None:
    """Return the 1-based month whose name matches ``token`` (whole name or first three letters)."""
    low = token.lower().rstrip(".")
    for i, name in enumerate(month_names):
        n = name.lower()
        if low == n or (len(low) >= 3 and n.startswith(low)):
            return i + 1
    return None
