"""The Julian calendar as the Romans kept it: the leap years of 45 BC - AD 8.

Caesar's calendar began on 1 January 45 BC.  After his death the pontiffs
intercalated every third year instead of every fourth (counting
inclusively), until Augustus suspended leap years to absorb the surplus;
intercalation resumed in AD 8 and has been regular since.  No ancient
source lists the leap years, so every table of the period is a
reconstruction.

Leap-year rules (option ``leap``)
---------------------------------
``proleptic`` (default)
    The proleptic Julian calendar: every year divisible by 4 is a leap year
    (45 BC, 41 BC, ..., AD 4, AD 8, ...).  Identical to the core ``julian``
    calendar; the convention of astronomers and chronologists.
``scaliger`` (also ``triennial``)
    J. J. Scaliger's reconstruction (*De emendatione temporum*, 1583), the
    most widely followed: leap years 42, 39, 36, 33, 30, 27, 24, 21, 18, 15,
    12 and 9 BC, none from 8 BC to AD 4, then AD 8, 12, ... .  45 BC is a
    common year.  The calendar is assumed to agree with the proleptic
    Julian calendar from 1 March AD 4 on (after the omitted AD 4 leap day),
    the usual anchoring of the scheme.  It follows by arithmetic that the
    Roman label of a day in 45 BC - AD 4 runs 0 to 3 days behind its
    proleptic Julian label (Roman 1 January 45 BC = proleptic 2 January
    45 BC; three days behind in e.g. 16-15 BC); see
    :func:`roman_minus_proleptic`.  Dates before 1 January 45 BC belong to
    the pre-Julian republican calendar, which this calendar does not model:
    they are rejected.

Other reconstructions exist and place the triennial leap years and the
end of the pause differently, so that their dates differ from Scaliger's by
a day or two in places: among them Ideler (1825), Matzat (1883), Soltau
(1889), Radke (1960) and Bennett (2004).  Only Scaliger's is implemented;
the list of names is given from memory, without a source at hand, and none
of their sequences is asserted here.

Conventions: astronomical years (year 0 = 1 BC), long form BC/AD; the civil
day from midnight to midnight (the Roman civil day began at midnight,
Pliny *NH* II.188, from memory).
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import SolarCalendar, historical_year, iso_year, parse_ymd_text
from calendra.calendars_core import MONTH_NAMES
from calendra.daylib import as_int_array
from calendra.errors import ParameterError

#: Astronomical Julian years that were leap years in Scaliger's reconstruction (42 ... 9 BC).
SCALIGER_LEAP_YEARS = tuple(range(-41, -7, 3))
#: First year of the Julian calendar (45 BC, astronomical -44).
FIRST_JULIAN_YEAR = -44
#: From this year on every rule agrees with the proleptic Julian calendar (AD 5; in AD 4 from 1 March).
AGREES_FROM_YEAR = 5

_CUM = np.array([0, 31, 59, 90, 120, 151, 181, 212, 243, 273, 304, 334, 365], dtype=np.int64)


class LeapRule:
    """Leap years and day numbers of one reading of the Julian calendar.

    Attributes
    ----------
    key : str
        The option value (``leap=KEY``).
    valid_jdn : tuple of int
        Day numbers the rule names (inclusive).
    """

    key = "proleptic"
    valid_jdn = (-3_000_000_000, 3_000_000_000)
    first_year = None

    def is_leap(self, year) -> np.ndarray:
        return jg.julian_is_leap(year)

    def to_jdn(self, year, month, day) -> np.ndarray:
        return jg.julian_to_jdn(year, month, day)

    def from_jdn(self, jdn):
        return jg.julian_from_jdn(jdn)

    def month_length(self, year, month) -> np.ndarray:
        return jg.month_length(year, month, self.is_leap)


class ScaligerRule(LeapRule):
    """Scaliger's triennial leap years 42 ... 9 BC, none until AD 8 (see the module docstring)."""

    key = "scaliger"
    first_year = FIRST_JULIAN_YEAR

    def __init__(self):
        years = np.arange(FIRST_JULIAN_YEAR, AGREES_FROM_YEAR)
        lengths = 365 + np.isin(years, SCALIGER_LEAP_YEARS)
        end = int(jg.julian_to_jdn(AGREES_FROM_YEAR, 1, 1))
        self._starts = end - np.concatenate(([0], np.cumsum(lengths[::-1])))[::-1]
        # _starts[i] = first day of year FIRST_JULIAN_YEAR + i; the last entry is 1 January AD 5.
        self.valid_jdn = (int(self._starts[0]), 3_000_000_000)

    def is_leap(self, year) -> np.ndarray:
        y = as_int_array(year)
        early = np.isin(y, SCALIGER_LEAP_YEARS)
        return np.where(y < AGREES_FROM_YEAR, early, y % 4 == 0) & (y >= FIRST_JULIAN_YEAR)

    def _doy0(self, year, month, day):
        m = np.clip(as_int_array(month), 1, 12)
        return _CUM[m - 1] + as_int_array(day) - 1 + ((m > 2) & self.is_leap(year))

    def to_jdn(self, year, month, day) -> np.ndarray:
        y = as_int_array(year)
        idx = np.clip(y - FIRST_JULIAN_YEAR, 0, len(self._starts) - 1)
        early = self._starts[idx] + self._doy0(y, month, day)
        return np.where(y < AGREES_FROM_YEAR, early, jg.julian_to_jdn(y, month, day))

    def from_jdn(self, jdn):
        j = as_int_array(jdn)
        py, pm, pd = jg.julian_from_jdn(j)
        idx = np.clip(np.searchsorted(self._starts, j, side="right") - 1, 0, len(self._starts) - 2)
        y = FIRST_JULIAN_YEAR + idx
        doy0 = j - self._starts[idx]
        leap = self.is_leap(y)
        feb29 = leap & (doy0 == 59)
        adj = doy0 - (leap & (doy0 > 59))
        m = np.searchsorted(_CUM, adj, side="right")
        m = np.clip(m, 1, 12)
        d = adj - _CUM[m - 1] + 1
        m = np.where(feb29, 2, m)
        d = np.where(feb29, 29, d)
        late = j >= self._starts[-1]
        return np.where(late, py, y), np.where(late, pm, m), np.where(late, pd, d)


RULES = {"proleptic": LeapRule, "scaliger": ScaligerRule, "triennial": ScaligerRule}


def leap_rule(spec="proleptic") -> LeapRule:
    """Return the :class:`LeapRule` for an option value (``proleptic``, ``scaliger`` / ``triennial``)."""
    if isinstance(spec, LeapRule):
        return spec
    try:
        return RULES[str(spec).strip().lower()]()
    except KeyError:
        raise ParameterError(f"unknown leap rule {spec!r}: proleptic (every 4th year) or scaliger "
                             "(triennial leap years 42-9 BC, Scaliger 1583)") from None


def roman_minus_proleptic(jdn, rule="scaliger") -> np.ndarray:
    """Return how many days the Roman label of each day runs ahead (+) of or behind (-) its proleptic label.

    The Roman (year, month, day) of day ``jdn`` under ``rule`` is read as a
    proleptic Julian date and its day number compared with ``jdn``: under
    Scaliger's rule the result is -1 on 1 January 45 BC and between -3 and 0
    until 1 March AD 4, 0 afterwards.
    """
    r = leap_rule(rule)
    ry, rm, rd = r.from_jdn(jdn)
    return jg.julian_to_jdn(ry, rm, rd) - as_int_array(jdn)


class JulianRomanCalendar(SolarCalendar):
    """The Julian calendar with a choice of leap years for 45 BC - AD 8 (option ``leap``)."""

    name = "julian-roman"
    aliases = ("julian-historical",)
    month_names = MONTH_NAMES
    day_start = "midnight"
    options = {"leap": "proleptic (every 4th year, default) or scaliger (triennial leap years 42-9 BC, none to AD 8)"}

    def __init__(self, leap="proleptic"):
        self.rule = leap_rule(leap)
        self.valid_jdn = self.rule.valid_jdn
        self.options = {"leap": self.rule.key}

    @property
    def description(self):  # type: ignore[override]
        if self.rule.key == "proleptic":
            return "Julian calendar, proleptic leap years (same as julian); option leap=scaliger for 45 BC-AD 8"
        return ("Julian calendar as kept in Rome: Scaliger's reconstruction (1583), leap years 42, 39, ..., 9 BC, "
                "none until AD 8; from 1 January 45 BC")

    @property
    def year_numbering(self):  # type: ignore[override]
        base = "astronomical (year 0 = 1 BC, -1 = 2 BC); long form BC/AD"
        if self.rule.key == "scaliger":
            return base + "; begins 1 January 45 BC"
        return base

    @property
    def epoch_jdn(self):  # type: ignore[override]
        return 1721424

    @property
    def label(self):
        return self.name if self.rule.key == "proleptic" else f"{self.name}[leap={self.rule.key}]"

    def with_options(self, **options):
        extra = set(options) - {"leap"}
        if extra:
            raise ParameterError(f"calendar julian-roman takes option leap, not {', '.join(sorted(extra))}")
        return JulianRomanCalendar(options.get("leap", self.rule.key))

    def is_leap(self, year):
        return self.rule.is_leap(year)

    def month_length(self, year, month):
        return self.rule.month_length(year, month)

    def is_valid(self, year, month, day):
        ok = super().is_valid(year, month, day)
        if self.rule.first_year is not None:
            ok = ok & (as_int_array(year) >= self.rule.first_year)
        return ok

    def _invalid_reason(self, year, month, day):
        if self.rule.first_year is not None and year < self.rule.first_year:
            return (f"{self.label} begins on 1 January 45 BC; {historical_year(year)} belongs to the pre-Julian "
                    "republican calendar, which is not computable (use julian for the proleptic convention)")
        reason = super()._invalid_reason(year, month, day)
        if reason and month == 2 and day == 29 and self.rule.key == "scaliger":
            return (f"February 29 does not exist in {self.label} {iso_year(year)} ({historical_year(year)}): "
                    "leap years were 42, 39, ..., 9 BC, then AD 8, 12, ... (Scaliger)")
        return reason

    def _to_jdn(self, year, month, day):
        return self.rule.to_jdn(year, month, day)

    def _from_jdn(self, jdn):
        return self.rule.from_jdn(jdn)

    def day_of_year(self, year, month, day):
        return jg.day_of_year(year, month, day, self.is_leap)

    def format(self, year, month, day, style: str = "iso") -> str:
        y, m, d = int(year), int(month), int(day)
        if style == "iso":
            return f"{iso_year(y)}-{m:02d}-{d:02d}"
        if style == "long":
            return f"{d} {MONTH_NAMES[m - 1]} {historical_year(y)}"
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def parse(self, text: str):
        return parse_ymd_text(text, MONTH_NAMES, self.name)
