"""Roman dates: Kalends, Nones and Ides with inclusive "ante diem" counts.

A Roman date names the next of three fixed days of a month and counts
inclusively back from it: the Kalends (1st), the Nones (5th; 7th in March,
May, July and October) and the Ides (13th; 15th in those months).  The day
itself is count 1 ("Kal. Aug."), the day before is count 2 ("prid. Kal.
Aug.", *pridie*), and earlier days are "a.d. III Kal. Aug." (*ante diem
tertium*) and so on.  Days after the Ides count towards the Kalends of the
next month (and of the next year after the Ides of December).

In a leap year the extra day is the doubled sixth day before the Kalends of
March (*bis sextum*, hence "bissextile"): 24 February is "a.d. VI Kal.
Mart." and 25 February "a.d. bis VI Kal. Mart."; the counts before it are
one larger than the day of the month suggests (14 February is "a.d. XVI
Kal. Mart." in every year).

Fields (as Calendrical Calculations' Roman calendar)
----------------------------------------------------
``year``
    Astronomical Julian year (year 0 = 1 BC) of the named Kalends, Nones or
    Ides; so late December is in the *next* year's Kalends of January.
    (Calendrical Calculations prints these years without a year 0.)
``month``
    The month of the Kalends, Nones or Ides named (1..12).
``event``
    1 = Kalends, 2 = Nones, 3 = Ides (:data:`KALENDS`, :data:`NONES`, :data:`IDES`).
``count``
    The inclusive count, 1 = on the day itself.
``leap``
    1 for the second (bissextile) a.d. VI Kal. Mart. of a leap year, else 0.

Option ``leap``: ``proleptic`` (default; proleptic Julian leap years) or
``scaliger`` (the Roman leap years of 45 BC - AD 8 in Scaliger's
reconstruction, see :mod:`calendra_eras.julian_roman`).  The day is the
civil day, midnight to midnight.

Weekdays: :func:`roman_weekday` gives the Latin planetary names of the
seven-day week (*dies Solis* = Sunday ... *dies Saturni*).  The eight-day
nundinal cycle (market-day letters A-H) is not offered: its phase in a given
year depends on a reconstruction for which no epoch is at hand.

References
----------
E. M. Reingold & N. Dershowitz, *Calendrical Calculations*, 3rd ed. (2008),
section 3.3 "Roman nomenclature" (``fixed-from-roman``, ``roman-from-fixed``),
re-implemented here vectorized.
"""

from __future__ import annotations

import numpy as np

from calendra.calendar import Calendar, historical_year, iso_year
from calendra.daylib import as_int_array, weekday
from calendra.errors import ParameterError

from ._text import Reader, from_roman, to_roman
from .julian_roman import leap_rule

KALENDS, NONES, IDES = 1, 2, 3
EVENT_NAMES = ("Kalends", "Nones", "Ides")
EVENT_ABBREVIATIONS = ("Kal.", "Non.", "Id.")
#: Latin month adjectives as abbreviated in dates (Kal. Ian., Non. Mart., Id. Sept.).
MONTH_ABBREVIATIONS = ("Ian.", "Feb.", "Mart.", "Apr.", "Mai.", "Iun.", "Iul.", "Aug.", "Sept.", "Oct.",
                       "Nov.", "Dec.")
MONTH_NAMES = ("Ianuarius", "Februarius", "Martius", "Aprilis", "Maius", "Iunius", "Iulius", "Augustus",
               "September", "October", "November", "December")
#: Latin weekday names, 0 = Sunday (the calendra weekday numbering).
WEEKDAY_NAMES = ("dies Solis", "dies Lunae", "dies Martis", "dies Mercurii", "dies Iovis", "dies Veneris",
                 "dies Saturni")

_MONTH_PREFIXES = {"ian": 1, "jan": 1, "feb": 2, "mar": 3, "apr": 4, "mai": 5, "may": 5, "iun": 6, "jun": 6,
                   "iul": 7, "jul": 7, "qui": 7, "aug": 8, "sex": 8, "sep": 9, "oct": 10, "nov": 11, "dec": 12}


def _month_word(word: str) -> int | None:
    w = word.lower().rstrip(".")
    return _MONTH_PREFIXES.get(w[:3]) if len(w) >= 3 else None


def _event_word(word: str) -> int | None:
    w = word.lower().rstrip(".")
    if w.startswith("kal") or w.startswith("cal"):
        return KALENDS
    if w.startswith("non"):
        return NONES
    if w in ("id", "ides", "idus", "eid", "eidus", "idib"):
        return IDES
    return None


def nones_of_month(month) -> np.ndarray:
    """Day of the Nones: 7 in March, May, July, October; 5 otherwise."""
    m = as_int_array(month)
    return np.where((m == 3) | (m == 5) | (m == 7) | (m == 10), 7, 5)


def ides_of_month(month) -> np.ndarray:
    """Day of the Ides: 15 in March, May, July, October; 13 otherwise."""
    return nones_of_month(month) + 8


def roman_weekday(jdn) -> np.ndarray:
    """Return the Latin weekday names (``dies Solis`` ... ``dies Saturni``) of day numbers ``jdn``."""
    return np.asarray(WEEKDAY_NAMES)[weekday(jdn)]


class RomanCalendar(Calendar):
    """Roman dates (Kalends, Nones, Ides) of the Julian calendar, after Calendrical Calculations.

    See the module docstring for the fields and conventions.
    """

    name = "roman"
    aliases = ("roman-kalends",)
    fields = ("year", "month", "event", "count", "leap")
    month_names = MONTH_NAMES
    day_start = "midnight"
    options = {"leap": "proleptic (default) or scaliger (Roman leap years 42-9 BC, none to AD 8)"}

    def __init__(self, leap="proleptic"):
        self.rule = leap_rule(leap)
        self.valid_jdn = self.rule.valid_jdn
        self.options = {"leap": self.rule.key}

    @property
    def description(self):  # type: ignore[override]
        base = "Roman dates (Kalends, Nones, Ides, inclusive ante diem counts, bissextile day) of the Julian calendar"
        if self.rule.key == "scaliger":
            return base + ", Roman leap years of 45 BC-AD 8 after Scaliger (from 1 January 45 BC)"
        return base + ", proleptic leap years (Calendrical Calculations' Roman calendar)"

    @property
    def year_numbering(self):  # type: ignore[override]
        return ("astronomical Julian year of the named Kalends/Nones/Ides (year 0 = 1 BC; late December is in "
                "the next year's Kal. Ian.); long form BC/AD")

    @property
    def label(self):
        return self.name if self.rule.key == "proleptic" else f"{self.name}[leap={self.rule.key}]"

    def with_options(self, **options):
        extra = set(options) - {"leap"}
        if extra:
            raise ParameterError(f"calendar roman takes option leap, not {', '.join(sorted(extra))}")
        return RomanCalendar(options.get("leap", self.rule.key))

    # ----------------------------------------------------------- limits
    def _max_count(self, year, month, event):
        """Largest count of each (year, month, event): the days back to the previous named day."""
        m = as_int_array(month)
        e = as_int_array(event)
        prev = np.where(m == 1, 12, m - 1)
        prev_len = self.rule.month_length(np.where(m == 1, as_int_array(year) - 1, year), prev)
        # Kalends of March count back over the bissextile day, so the count is that of a common year.
        prev_len = np.where(m == 3, 28, prev_len)
        kal = prev_len - ides_of_month(prev) + 1
        return np.where(e == KALENDS, kal, np.where(e == NONES, nones_of_month(m) - 1, 8))

    def is_valid(self, year, month, event, count, leap):
        y, m, e, c, lf = (as_int_array(v) for v in (year, month, event, count, leap))
        ok = (m >= 1) & (m <= 12) & (e >= 1) & (e <= 3) & ((lf == 0) | (lf == 1))
        mm = np.where(ok, m, 1)
        ee = np.where(ok, e, 1)
        ok &= (c >= 1) & (c <= self._max_count(y, mm, ee))
        bis = (lf == 1)
        ok &= ~bis | ((m == 3) & (e == KALENDS) & (c == 6) & self.rule.is_leap(y))
        if self.rule.first_year is not None:
            safe = np.where(ok, 1, 0)
            ok &= self._to_jdn(y, np.where(ok, m, 1), np.where(ok, e, 1), np.where(ok, c, 1),
                               lf * safe) >= self.valid_jdn[0]
        return ok

    def _invalid_reason(self, year, month, event, count, leap):
        if not 1 <= month <= 12:
            return f"month {month} does not exist (1..12)"
        if event not in (KALENDS, NONES, IDES):
            return f"event {event} does not exist: 1 = Kalends, 2 = Nones, 3 = Ides"
        if leap not in (0, 1):
            return f"leap flag {leap} must be 0 or 1"
        top = int(self._max_count(np.int64(year), np.int64(month), np.int64(event)))
        where = f"{EVENT_ABBREVIATIONS[event - 1]} {MONTH_ABBREVIATIONS[month - 1]}"
        if not 1 <= count <= top:
            span = {KALENDS: "after the Ides of the previous month", NONES: "after the Kalends",
                    IDES: "after the Nones"}[event]
            shown = to_roman(count) if 1 <= count <= 39 else str(count)
            return f"a.d. {shown} {where} (count {count}) does not exist: counts run 1..{top} (the days {span})"
        if leap == 1:
            if not (month == 3 and event == KALENDS and count == 6):
                return f"the bissextile day is a.d. bis VI Kal. Mart. only, not a.d. bis {count} {where}"
            return (f"a.d. bis VI Kal. Mart. {historical_year(year)} does not exist: {historical_year(year)} "
                    f"is not a leap year ({self.label})")
        if self.rule.first_year is not None and int(self._to_jdn(year, month, event, count, leap)) < self.valid_jdn[0]:
            return (f"{self.label} begins on 1 January 45 BC (Kal. Ian. 45 BC); earlier dates belong to the "
                    "pre-Julian republican calendar, which is not computable")
        return None

    # ------------------------------------------------------- arithmetic
    def _to_jdn(self, year, month, event, count, leap):
        y, m, e, c, lf = (as_int_array(v) for v in (year, month, event, count, leap))
        day = np.where(e == KALENDS, 1, np.where(e == NONES, nones_of_month(m), ides_of_month(m)))
        base = self.rule.to_jdn(y, m, day)
        # fixed-from-roman (CC 3.3): no +1 for the Kalends of March counts 6..16 in a leap year.
        skip = self.rule.is_leap(y) & (m == 3) & (e == KALENDS) & (c >= 6) & (c <= 16)
        return base - c + np.where(skip, 0, 1) + lf

    def _from_jdn(self, jdn):
        j = as_int_array(jdn)
        y, m, d = self.rule.from_jdn(j)
        nones = nones_of_month(m)
        ides = ides_of_month(m)
        next_m = m % 12 + 1
        next_y = np.where(m == 12, y + 1, y)
        kal_next = self.rule.to_jdn(next_y, next_m, np.ones_like(m))
        leap_feb = (m == 2) & self.rule.is_leap(y)

        out_y = np.where(d <= ides, y, np.where(leap_feb, y, next_y))
        out_m = np.where(d <= ides, m, np.where(leap_feb, 3, next_m))
        out_e = np.where(d == 1, KALENDS, np.where(d <= nones, NONES, np.where(d <= ides, IDES, KALENDS)))
        count = np.where(d == 1, 1,
                         np.where(d <= nones, nones - d + 1,
                                  np.where(d <= ides, ides - d + 1,
                                           np.where(~leap_feb, kal_next - j + 1,
                                                    np.where(d < 25, 30 - d, 31 - d)))))
        leap = (leap_feb & (d == 25)).astype(np.int64)
        return out_y, out_m, out_e.astype(np.int64), count.astype(np.int64), leap

    def year_start_jdn(self, year):
        """Day number of the Kalends of January of ``year``."""
        y = as_int_array(year)
        one = np.ones_like(y)
        return self._to_jdn(y, one, one, one, np.zeros_like(y))

    def month_length(self, year, month):
        """Days of Julian ``month`` in ``year`` under the calendar's leap rule."""
        return self.rule.month_length(year, month)

    def months_in_year(self, year):
        return np.full(np.shape(year), 12, dtype=np.int64)

    # ------------------------------------------------------------- text
    @staticmethod
    def _phrase(month, event, count, leap) -> str:
        where = f"{EVENT_ABBREVIATIONS[event - 1]} {MONTH_ABBREVIATIONS[month - 1]}"
        if count == 1:
            return where
        if count == 2:
            return f"prid. {where}"
        return f"a.d. {'bis ' if leap else ''}{to_roman(count)} {where}"

    def format(self, year, month, event, count, leap, style: str = "iso") -> str:
        y, m, e, c, lf = (int(v) for v in (year, month, event, count, leap))
        if style == "iso":
            return f"{iso_year(y)} {self._phrase(m, e, c, lf)}"
        if style == "long":
            return f"{self._phrase(m, e, c, lf)} {historical_year(y)}"
        if style == "fields":
            return f"{y} {m} {e} {c} {lf}"
        raise ParameterError(f"unknown date style {style!r} (iso, long, fields)")

    def parse(self, text: str):
        """Read ``-0586 a.d. III Kal. Aug.``, ``a.d. III Kal. Aug. 587 BC``, ``prid. Id. Mart. 44 BC``,
        ``Kalends of August 70``, ``a.d. bis VI Kal. Mart. AD 4`` or five numbers (year month event count leap).
        """
        reader = Reader(text.replace("ante diem", "a.d.").replace("Ante diem", "a.d."), self.name,
                        fillers=("of", "the", "a.d", "ante", "diem"))
        tokens = reader.tokens
        if len(tokens) == 5 and all(t.kind == "num" for t in tokens):
            return tuple(int(t.value) for t in tokens)
        event, epos = reader.take_word(_event_word)
        if event is None:
            raise reader.fail("no Kalends, Nones or Ides (Kal., Non., Id.) found")
        month, mpos = reader.take_word(_month_word)
        if month is None:
            raise reader.fail("no month after the Kalends/Nones/Ides (e.g. 'Kal. Aug.')")
        leap = 0
        _, bpos = reader.take_word(lambda w: True if w in ("bis", "bissextum", "bisextum") else None)
        if bpos >= 0:
            leap = 1
        count = None
        _, ppos = reader.take_word(lambda w: True if w in ("prid", "pridie", "pr") else None)
        if ppos >= 0:
            count = 2
        roman, rpos = reader.take_word(from_roman)
        if roman is not None:
            if count is not None:
                raise reader.fail("both pridie and a count given")
            count = roman
        year = reader.take_era_year()
        nums = [t for t in reader.tokens if t.kind == "num"]
        rest = [t for t in reader.tokens if t.kind != "num"]
        if rest:
            raise reader.fail(f"unknown word {rest[0].raw!r}")
        if count is None and len(nums) == 2 and year is None:
            # "-586 3 Kal. Aug.": a number right before the event word is the count
            year, count = int(nums[0].value), int(nums[1].value)
            nums = []
        elif year is None and len(nums) == 1:
            year = int(nums[0].value)
            nums = []
        elif count is None and year is not None and len(nums) == 1:
            count = int(nums[0].value)
            nums = []
        if nums or year is None:
            raise reader.fail("expected one year (e.g. '-0586 a.d. III Kal. Aug.' or 'a.d. III Kal. Aug. 587 BC')")
        if count is None:
            count = 1
        return int(year), int(month), int(event), int(count), int(leap)
