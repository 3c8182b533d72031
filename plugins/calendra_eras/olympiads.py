"""Olympiads: four-year periods counted from the first Olympic games (776 BC).

Conventions
-----------
* Olympiad 1, year 1 = 776/775 BC.  The Olympic year began at midsummer
  (the games were held at a full moon near the summer solstice; the Attic
  year began with the first new moon after it).  The exact turn of the year
  varied; this calendar uses the conventional **1 July** (Julian), the
  choice of modern conversion tables, so Ol. 1.1 = 1 July 776 BC
  (Julian -775) to 30 June 775 BC.  The option ``new_year`` moves it.
* Ol. N.k (N >= 1, k = 1..4) begins on 1 July of Julian year
  -775 + 4 (N - 1) + (k - 1); e.g. Ol. 195.1 begins 1 July 1 AD, so 1 January
  AD 1 is in Ol. 194.4.
* Fields: olympiad, year (1..4 within it), Julian month, Julian day
  (proleptic Julian, midnight to midnight).  Text: ``Ol. 001.1 07-01``
  (numeric, olympiad padded to three digits) and ``1 July 776 BC,
  Olympiad 1 year 1`` (long); ``Ol. 1.1, 1 July`` is read too.  Olympiads before the first are
  proleptic and numbered 0, -1, ... (an olympiad 0, as astronomical years).

References
----------
E. J. Bickerman, *Chronology of the Ancient World* (1980), ch. on eras
(the 1 July convention and the 776 BC epoch; from memory).
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import Calendar, historical_year
from calendra.calendars_core import MONTH_NAMES
from calendra.daylib import as_int_array
from calendra.errors import ParameterError

from ._text import Reader, normalize_phrases
from .julian_years import JULIAN_MONTH, JulianYearCount, parse_month_day

#: Day number of 1 July 776 BC (Julian), first day of Ol. 1.1 under the 1 July convention.
OLYMPIAD_EPOCH_JDN = int(jg.julian_to_jdn(-775, 7, 1))


class OlympiadCalendar(Calendar):
    """Dates by Olympiad: fields olympiad, year (1..4), Julian month, Julian day; years from 1 July."""

    name = "olympiad"
    aliases = ("olympiads", "ol")
    fields = ("olympiad", "year", "month", "day")
    day_start = "midnight"
    options = {"new_year": "Julian month-day on which the Olympic year turns (default 07-01)"}
    year_numbering = ("Olympiad N, year k = 1..4: Ol. 1.1 begins 1 July 776 BC (Julian); "
                      "olympiads 0, -1, ... before it (proleptic)")

    def __init__(self, new_year="07-01"):
        self.new_year = parse_month_day(new_year)
        self.count = JulianYearCount(OLYMPIAD_EPOCH_JDN, self.new_year)
        self.options = {"new_year": f"{self.new_year[0]:02d}-{self.new_year[1]:02d}"}

    @property
    def description(self):  # type: ignore[override]
        return (f"Olympiads from 776 BC, Olympic years from {self.new_year[1]} {MONTH_NAMES[self.new_year[0] - 1]} "
                "(Julian, a convention for the midsummer new year); Julian months and days")

    @property
    def epoch_jdn(self):  # type: ignore[override]
        return int(self.count.year_start_jdn(1))

    @property
    def label(self):
        if self.new_year == (7, 1):
            return self.name
        return f"{self.name}[new_year={self.new_year[0]:02d}-{self.new_year[1]:02d}]"

    def with_options(self, **options):
        extra = set(options) - {"new_year"}
        if extra:
            raise ParameterError(f"calendar olympiad takes option new_year, not {', '.join(sorted(extra))}")
        return OlympiadCalendar(options.get("new_year", self.new_year))

    def month_name(self, month, year=None) -> str:
        """Name of the second field, the year of the olympiad (``"Ol. year 2"``); Julian months are in MONTH_NAMES."""
        return f"Ol. year {month}"

    @staticmethod
    def running_year(olympiad, year):
        """Return the running Olympic year 4 (olympiad - 1) + year (1 = Ol. 1.1)."""
        return 4 * (as_int_array(olympiad) - 1) + as_int_array(year)

    def months_in_year(self, year):
        return np.full(np.shape(year), 12, dtype=np.int64)

    def month_length(self, year, month):
        """Days of Julian ``month`` in running Olympic year ``year`` (see :meth:`running_year`)."""
        return self.count.month_length(year, month)

    def is_valid(self, olympiad, year, month, day):
        k = as_int_array(year)
        ok = (k >= 1) & (k <= 4)
        return ok & self.count.is_valid(self.running_year(olympiad, np.where(ok, k, 1)), month, day)

    def _invalid_reason(self, olympiad, year, month, day):
        if not 1 <= year <= 4:
            return f"year {year} of an olympiad does not exist (years 1..4)"
        return self.count.invalid_reason(f"Ol. {olympiad}.{year}", int(self.running_year(olympiad, year)),
                                         month, day)

    def _to_jdn(self, olympiad, year, month, day):
        return self.count.to_jdn(self.running_year(olympiad, year), month, day)

    def _from_jdn(self, jdn):
        y, m, d = self.count.from_jdn(jdn)
        olympiad = (y - 1) // 4 + 1
        return olympiad, y - 4 * (olympiad - 1), m, d

    def year_start_jdn(self, olympiad, year=1):
        """Day number of the first day of ``year`` (default 1) of ``olympiad``."""
        return self.count.year_start_jdn(self.running_year(olympiad, year))

    def format(self, olympiad, year, month, day, style: str = "iso") -> str:
        o, k, m, d = (int(v) for v in (olympiad, year, month, day))
        if style == "iso":
            sign = "-" if o < 0 else ""
            return f"Ol. {sign}{abs(o):03d}.{k} {m:02d}-{d:02d}"
        if style == "long":
            jy = int(self.count.julian_year(self.running_year(o, k), m, d))
            return f"{d} {MONTH_NAMES[m - 1]} {historical_year(jy)}, Olympiad {o} year {k}"
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def parse(self, text: str):
        """Read ``Ol. 001.1 07-01``, ``Ol. 1.1, 1 July``, ``Olympiad 1 year 1, July 1`` or four numbers.

        A BC/AD year written beside the date (as the long form does) is
        checked against the olympiad, not used to find it.  The numeric form
        pads the olympiad to three digits (``Ol. 001.1``) because the core
        date parser reads ``1.1`` after a calendar prefix as a decimal day.
        """
        reader = Reader(normalize_phrases(text, {}), self.name)
        olympiad = year = None
        for i, t in enumerate(list(reader.tokens)):
            if t.kind == "word" and t.word in ("ol", "olymp", "olympiad", "olympias"):
                nxt = reader.tokens[i + 1] if i + 1 < len(reader.tokens) else None
                if nxt is not None and nxt.kind == "pair":
                    olympiad, year = nxt.value
                    del reader.tokens[i:i + 2]
                elif nxt is not None and nxt.kind == "num":
                    olympiad = int(nxt.value)
                    del reader.tokens[i:i + 2]
                    year = reader.take_keyword_number(("year", "yr"))
                    if year is None:
                        raise reader.fail("give the year of the olympiad: 'Olympiad 1 year 1' or 'Ol. 001.1' "
                                          "(after a calendar prefix a bare 'Ol. 1.1' is read as a decimal day)")
                else:
                    raise reader.fail(f"{t.raw!r} must be followed by the olympiad, e.g. 'Ol. 1.1'")
                break
        if olympiad is None:
            nums = [t for t in reader.tokens if t.kind == "num"]
            if len(nums) == 4 and len(reader.tokens) == 4:
                return tuple(int(t.value) for t in nums)
            raise reader.fail("write e.g. 'Ol. 001.1 07-01' or 'Olympiad 1 year 1, 1 July'")
        # A historical year with BC/AD beside the month-day (long form) is a redundant check.
        check_year = reader.take_era_year()
        _, month, day = reader.read_ymd(JULIAN_MONTH, need_year=False)
        if check_year is not None and 1 <= month <= 12 and 1 <= year <= 4:
            jy = int(self.count.julian_year(self.running_year(olympiad, year), month, day))
            if jy != check_year:
                raise reader.fail(f"Ol. {olympiad}.{year}, {MONTH_NAMES[month - 1]} {day} falls in "
                                  f"{historical_year(jy)}, not {historical_year(check_year)}")
        return int(olympiad), int(year), int(month), int(day)
