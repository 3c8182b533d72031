"""The Byzantine world era (Anno Mundi) and the indiction cycle.

Anno Mundi (Byzantine, "era of Constantinople")
------------------------------------------------
Creation placed on 1 September 5509 BC (Julian astronomical -5508): AM 1
runs from 1 September 5509 BC to 31 August 5508 BC, and AM = AD + 5508 for
1 January - 31 August, AD + 5509 for 1 September - 31 December (so
1 January AD 1 is in AM 5509).  Years begin on 1 September (Julian); the
option ``new_year`` sets another day (the older Byzantine and the Russian
usage turned the year on 1 March; from memory).  Months and days are
proleptic Julian, midnight to midnight.  Years before AM 1 are proleptic
(AM 0, -1, ...).

Indiction
---------
A 15-year fiscal cycle.  The indiction of a Julian date is a number 1..15;
the "Greek" (Constantinopolitan) indiction begins on 1 September, and
indiction 1 of the cycle in use began on 1 September AD 312.  Hence for
1 January - 31 August of AD year ``y`` the indiction is
``(y + 2) mod 15 + 1`` and from 1 September it is one more (mod 15); the
indiction of AM year ``a`` is ``a mod 15`` (0 read as 15).

The indiction alone repeats every 15 years, so the calendar ``indiction``
adds a cycle number to make dates unique: fields ``cycle, indiction, month,
day`` with cycle 1 = the 15 years from 1 September AD 312 (cycle 0 the 15
years before it, and so on, with a cycle 0).  The cycle number is this
package's convention, not a historical count; :func:`indiction_of` gives the
historical indiction number alone.

Other indiction starts are selectable with the option ``start``: ``greek``
(1 September, default), ``bedan`` (24 September, "Caesarean"/Bedan
indiction) and ``pontifical`` (1 January following the Greek start, the
Roman/papal indiction; some sources start it 25 December instead, which
``start=12-25`` gives).  The Bedan and pontifical start days are given from
memory (handbook summaries such as Cappelli's *Cronologia*), not re-read.
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import Calendar, historical_year
from calendra.calendars_core import MONTH_NAMES
from calendra.daylib import as_int_array
from calendra.errors import ParameterError

from ._text import Reader, normalize_phrases
from .julian_years import JULIAN_MONTH, JulianEraCalendar, JulianYearCount, parse_month_day

#: Day number of 1 September 5509 BC (Julian), the first day of AM 1.
ANNO_MUNDI_EPOCH_JDN = int(jg.julian_to_jdn(-5508, 9, 1))
#: Day number of 1 September AD 312 (Julian), the first day of indiction 1 of cycle 1.
INDICTION_EPOCH_JDN = int(jg.julian_to_jdn(312, 9, 1))

INDICTION_STARTS = {"greek": (9, 1), "constantinopolitan": (9, 1), "bedan": (9, 24), "caesarean": (9, 24),
                    "pontifical": (1, 1), "roman": (1, 1)}


class AnnoMundiCalendar(JulianEraCalendar):
    """Byzantine Anno Mundi: creation 1 September 5509 BC, years from 1 September, Julian months."""

    name = "byzantine"
    aliases = ("anno-mundi-byzantine", "am-byzantine")
    era_word = "AM"
    era_words = frozenset({"am", "annomundi"})
    phrases = {"anno mundi": "AM"}
    options = {"new_year": "Julian month-day on which the year turns (default 09-01; 03-01 = March style)"}

    def __init__(self, new_year="09-01"):
        self.new_year = parse_month_day(new_year)
        super().__init__(JulianYearCount(ANNO_MUNDI_EPOCH_JDN, self.new_year))
        self.options = {"new_year": f"{self.new_year[0]:02d}-{self.new_year[1]:02d}"}

    description = ("Byzantine world era Anno Mundi: AM 1 begins 1 September 5509 BC (Julian); years from "
                   "1 September; proleptic Julian months and days")
    year_numbering = ("Anno Mundi (Byzantine): AM 1 = 1 Sep 5509 BC - 31 Aug 5508 BC; AM = AD + 5508 (Jan-Aug), "
                      "AD + 5509 (Sep-Dec); AM 0, -1, ... before (proleptic)")

    @property
    def label(self):
        if self.new_year == (9, 1):
            return self.name
        return f"{self.name}[new_year={self.new_year[0]:02d}-{self.new_year[1]:02d}]"

    def with_options(self, **options):
        extra = set(options) - {"new_year"}
        if extra:
            raise ParameterError(f"calendar byzantine takes option new_year, not {', '.join(sorted(extra))}")
        return AnnoMundiCalendar(options.get("new_year", self.new_year))


def indiction_of(jdn, start="greek") -> np.ndarray:
    """Return the indiction number (1..15) of day numbers ``jdn``.

    Parameters
    ----------
    jdn : int or array_like
        Day numbers (civil days).
    start : str
        ``greek`` (1 September, default), ``bedan`` (24 September),
        ``pontifical`` (1 January) or a Julian ``MM-DD``.
    """
    cal = IndictionCalendar(start)
    return cal.from_jdn(jdn)["indiction"]


class IndictionCalendar(Calendar):
    """Dates by indiction: fields cycle, indiction (1..15), Julian month, Julian day.

    Cycle 1 is the 15 indiction years beginning 1 September AD 312 (Greek
    start); cycles before it are numbered 0, -1, ... (a convention of this
    package that makes the dates unique).  Month and day are proleptic
    Julian, midnight to midnight.
    """

    name = "indiction"
    aliases = ("indictions",)
    fields = ("cycle", "indiction", "month", "day")
    day_start = "midnight"
    options = {"start": "greek (1 September, default), bedan (24 September), pontifical (1 January), or MM-DD"}

    def __init__(self, start="greek"):
        key = str(start).strip().lower() if not isinstance(start, tuple) else start
        if isinstance(key, str) and key in INDICTION_STARTS:
            self.start_name = key
            new_year = INDICTION_STARTS[key]
        else:
            new_year = parse_month_day(start, "start")
            self.start_name = f"{new_year[0]:02d}-{new_year[1]:02d}"
        self.new_year = new_year
        self.count = JulianYearCount(INDICTION_EPOCH_JDN, new_year)
        self.options = {"start": self.start_name}

    @property
    def description(self):  # type: ignore[override]
        return (f"Indiction (15-year cycle), indiction years from {self.new_year[1]} "
                f"{MONTH_NAMES[self.new_year[0] - 1]} (Julian); cycle 1 begins in AD 312; Julian months and days")

    year_numbering = ("indiction 1..15 within cycles of 15 years; cycle 1 = the cycle beginning 1 September AD 312 "
                      "(cycle 0, -1, ... before; the cycle number is a convention, the indiction is historical)")

    @property
    def epoch_jdn(self):  # type: ignore[override]
        return int(self.count.year_start_jdn(1))

    @property
    def label(self):
        return self.name if self.new_year == (9, 1) else f"{self.name}[start={self.start_name}]"

    def with_options(self, **options):
        extra = set(options) - {"start"}
        if extra:
            raise ParameterError(f"calendar indiction takes option start, not {', '.join(sorted(extra))}")
        return IndictionCalendar(options.get("start", self.start_name))

    def month_name(self, month, year=None) -> str:
        """Name of the second field, the indiction (``"indiction 3"``); Julian months are in MONTH_NAMES."""
        return f"indiction {month}"

    # running indiction year: 15 * (cycle - 1) + indiction
    @staticmethod
    def _running(cycle, indiction):
        return 15 * (as_int_array(cycle) - 1) + as_int_array(indiction)

    def months_in_year(self, year):
        return np.full(np.shape(year), 12, dtype=np.int64)

    def month_length(self, year, month):
        """Days of Julian ``month`` in running indiction year ``year`` (= 15 (cycle - 1) + indiction)."""
        return self.count.month_length(year, month)

    def is_valid(self, cycle, indiction, month, day):
        i = as_int_array(indiction)
        ok = (i >= 1) & (i <= 15)
        return ok & self.count.is_valid(self._running(cycle, np.where(ok, i, 1)), month, day)

    def _invalid_reason(self, cycle, indiction, month, day):
        if not 1 <= indiction <= 15:
            return f"indiction {indiction} does not exist (indictions are numbered 1..15)"
        return self.count.invalid_reason(f"indiction {indiction} of cycle {cycle}",
                                         int(self._running(cycle, indiction)), month, day)

    def _to_jdn(self, cycle, indiction, month, day):
        return self.count.to_jdn(self._running(cycle, indiction), month, day)

    def _from_jdn(self, jdn):
        y, m, d = self.count.from_jdn(jdn)
        cycle = (y - 1) // 15 + 1
        return cycle, y - 15 * (cycle - 1), m, d

    def year_start_jdn(self, cycle, indiction=1):
        """Day number of the first day of ``indiction`` (default 1) of ``cycle``."""
        return self.count.year_start_jdn(self._running(cycle, indiction))

    def format(self, cycle, indiction, month, day, style: str = "iso") -> str:
        c, i, m, d = (int(v) for v in (cycle, indiction, month, day))
        if style == "iso":
            return f"cycle {c} ind. {i} {m:02d}-{d:02d}"
        if style == "long":
            jy = int(self.count.julian_year(self._running(c, i), m, d))
            return f"{d} {MONTH_NAMES[m - 1]} {historical_year(jy)}, indiction {i} (cycle {c})"
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def parse(self, text: str):
        reader = Reader(normalize_phrases(text, {"indictio": "indiction"}), self.name)
        ind = reader.take_keyword_number(("indiction", "ind", "indictione", "indictionis"))
        cycle = reader.take_keyword_number(("cycle", "cyc"))
        if ind is None or cycle is None:
            raise reader.fail("write e.g. 'cycle 1 ind. 1 09-01' (the cycle makes an indiction date unique; "
                              "use indiction_of() for the indiction of a known date)")
        check_year = reader.take_era_year()
        _, month, day = reader.read_ymd(JULIAN_MONTH, need_year=False)
        if check_year is not None and 1 <= ind <= 15 and 1 <= month <= 12:
            jy = int(self.count.julian_year(self._running(cycle, ind), month, day))
            if jy != check_year:
                raise reader.fail(f"indiction {ind} of cycle {cycle}, {MONTH_NAMES[month - 1]} {day} falls in "
                                  f"{historical_year(jy)}, not {historical_year(check_year)}")
        return cycle, ind, int(month), int(day)

