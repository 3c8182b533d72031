"""Ab Urbe Condita: years counted from the foundation of Rome.

Conventions
-----------
* Default foundation year: Varro's, 753 BC (Julian astronomical -752), so
  AUC 754 begins on 1 January AD 1 and AUC = AD + 753 (BC years: AUC =
  754 - BC).  The count is a modern (and late-imperial) convention; Romans
  mostly named years by consuls.
* Other foundation years are selectable with the option ``foundation``:
  ``varro`` (753 BC), ``cato`` (752 BC, the "Catonian" year),
  ``polybius`` (751 BC), ``fabius`` (748 BC, Fabius Pictor), or any year
  written ``750BC`` or as an astronomical year (``-749``).  The years of
  Cato, Polybius and Fabius Pictor are given from memory, after the usual
  handbook summaries (e.g. Bickerman, *Chronology of the Ancient World*),
  not re-read in a source.
* Years begin on 1 January (Julian), the reckoning of modern tables; the
  option ``new_year`` moves the turn of the year, e.g. ``new_year=04-21``
  for years from the Parilia (21 April, the traditional foundation day).
* Months and days are those of the proleptic Julian calendar, midnight to
  midnight.  Years before AUC 1 continue backwards as AUC 0, -1, ...
  (proleptic; AUC 0 = 754 BC under Varro).
"""

from __future__ import annotations

import re

from calendra import julian_gregorian as jg
from calendra.calendar import historical_year
from calendra.errors import ParameterError

from .julian_years import JulianEraCalendar, JulianYearCount, parse_month_day

#: Foundation years (astronomical Julian years) of the named reckonings.
FOUNDATIONS = {"varro": -752, "varronian": -752, "cato": -751, "catonian": -751,
               "polybius": -750, "fabius": -747, "fabius-pictor": -747}


def parse_foundation(spec) -> int:
    """Return the astronomical Julian year of the foundation for a name, ``753BC`` or an astronomical year."""
    if isinstance(spec, int):
        return spec
    s = str(spec).strip().lower().replace(" ", "")
    if s in FOUNDATIONS:
        return FOUNDATIONS[s]
    m = re.fullmatch(r"(\d+)(bc|bce)", s)
    if m and int(m.group(1)) > 0:
        return 1 - int(m.group(1))
    m = re.fullmatch(r"[+-]?\d+", s)
    if m:
        return int(s)
    raise ParameterError(f"unknown foundation {spec!r}: give varro (753 BC), cato (752 BC), polybius (751 BC), "
                         "fabius (748 BC), a year like 750BC or an astronomical year like -749")


class AUCCalendar(JulianEraCalendar):
    """Years Ab Urbe Condita with Julian months and days (default: Varro's 753 BC, years from 1 January)."""

    name = "auc"
    aliases = ("ab-urbe-condita",)
    era_word = "AUC"
    era_words = frozenset({"auc"})          # compared without dots: AUC, A.U.C., a.u.c.
    phrases = {"ab urbe condita": "AUC", "anno urbis conditae": "AUC", "a. u. c.": "AUC"}
    options = {"foundation": "varro (753 BC, default), cato (752 BC), polybius (751 BC), fabius (748 BC), "
                             "or a year like 750BC",
               "new_year": "Julian month-day on which the AUC year turns (default 01-01; 04-21 = Parilia)"}

    def __init__(self, foundation="varro", new_year="01-01"):
        self.foundation_year = parse_foundation(foundation)
        self.new_year = parse_month_day(new_year)
        ref = int(jg.julian_to_jdn(self.foundation_year, 1, 1))
        if self.new_year != (1, 1):
            # The year of the foundation is the one that begins on the chosen day within that Julian year.
            ref = int(jg.julian_to_jdn(self.foundation_year, *self.new_year))
        super().__init__(JulianYearCount(ref, self.new_year))
        self.options = {"foundation": historical_year(self.foundation_year),
                        "new_year": f"{self.new_year[0]:02d}-{self.new_year[1]:02d}"}

    @property
    def description(self):  # type: ignore[override]
        return (f"Years Ab Urbe Condita, AUC 1 = {historical_year(self.foundation_year)} "
                f"({'Varro' if self.foundation_year == -752 else 'foundation option'}), years from "
                f"{self._new_year_text()} Julian; proleptic Julian months and days")

    @property
    def year_numbering(self):  # type: ignore[override]
        return (f"AUC years: AUC 1 begins {self._new_year_text()} {historical_year(self.foundation_year)} (Julian); "
                "AUC 0, -1, ... before it (proleptic, with a year 0)")

    def _new_year_text(self):
        from calendra.calendars_core import MONTH_NAMES

        return f"{self.new_year[1]} {MONTH_NAMES[self.new_year[0] - 1]}"

    @property
    def label(self):
        opts = []
        if self.foundation_year != -752:
            opts.append(f"foundation={1 - self.foundation_year}BC" if self.foundation_year <= 0
                        else f"foundation={self.foundation_year}")
        if self.new_year != (1, 1):
            opts.append(f"new_year={self.new_year[0]:02d}-{self.new_year[1]:02d}")
        return self.name + (f"[{','.join(opts)}]" if opts else "")

    def with_options(self, **options):
        extra = set(options) - {"foundation", "new_year"}
        if extra:
            raise ParameterError(f"calendar auc takes options foundation, new_year, not {', '.join(sorted(extra))}")
        return AUCCalendar(options.get("foundation", self.foundation_year),
                           options.get("new_year", self.new_year))
