"""The Seleucid era (SE), in Julian years, in its Macedonian and Babylonian reckonings.

The Seleucid era counts years from Seleucus I's return to Babylon.  Two
reckonings were in use:

* **Macedonian** (the Greek world, Syria; later Syriac "years of the
  Greeks", *anno Graecorum*): SE 1 began in the autumn of 312 BC.  In the
  Julianized Syro-Macedonian calendar the year begins on 1 October
  (Hyperberetaios = October; from memory), and that is the default here:
  SE 1 = 1 October 312 BC (Julian -311) to 30 September 311 BC, and SE =
  AD + 311 (January-September), AD + 312 (October-December).  The first
  lunar month Dios of SE 1 began about 7 October 312 BC (Parker &
  Dubberstein, *Babylonian Chronology 626 BC - AD 75*, as quoted in
  check_values section 8, from memory): that day lies in SE 1 here.
* **Babylonian** (cuneiform texts): SE 1 began on 1 Nisanu, 3 April 311 BC
  (Julian -310; Parker & Dubberstein as quoted there, from memory), six
  months after the Macedonian year.

The Babylonian year really begins with the lunar month Nisanu, whose first
day wanders over about a month of the Julian year.  Until the lunisolar
calendar arrives, this calendar expresses an SE year with Julian months and
days and turns the Babylonian year on a *nominal* Julian day, by default
3 April (the date of 1 Nisanu SE 1).  For days within a few weeks of the
real 1 Nisanu of a year the SE year number of this calendar can therefore
differ by one from the cuneiform reckoning; set ``new_year`` to move the
nominal day.  The Macedonian default (1 October) is the Julianized
calendar's own year start and has no such caveat after the calendar of
Antioch was Julianized; for earlier Macedonian lunar dates the same caveat
applies.

Fields: SE year, Julian month, Julian day (proleptic Julian, midnight to
midnight).  Years before SE 1 are proleptic (SE 0, -1, ...).
"""

from __future__ import annotations

from calendra import julian_gregorian as jg
from calendra.errors import ParameterError

from .julian_years import JulianEraCalendar, JulianYearCount, parse_month_day

#: Day number of 1 October 312 BC (Julian), first day of SE 1, Macedonian reckoning as Julian years.
SE_MACEDONIAN_EPOCH_JDN = int(jg.julian_to_jdn(-311, 10, 1))
#: Day number of 7 October 312 BC (Julian): 1 Dios SE 1 (Parker & Dubberstein, from memory).
SE_DIOS_1_JDN = int(jg.julian_to_jdn(-311, 10, 7))
#: Day number of 3 April 311 BC (Julian): 1 Nisanu SE 1 (Parker & Dubberstein, from memory).
SE_NISANU_1_JDN = int(jg.julian_to_jdn(-310, 4, 3))

RECKONINGS = {
    "macedonian": (SE_MACEDONIAN_EPOCH_JDN, (10, 1)),
    "babylonian": (SE_NISANU_1_JDN, (4, 3)),
}


class SeleucidCalendar(JulianEraCalendar):
    """Seleucid era years with Julian months and days (option reckoning=macedonian|babylonian)."""

    name = "seleucid"
    aliases = ("se", "seleucid-era")
    era_word = "SE"
    era_words = frozenset({"se", "ag", "seleucid", "annograecorum"})
    phrases = {"anno graecorum": "AG", "seleucid era": "SE", "year of the greeks": "AG"}
    options = {"reckoning": "macedonian (SE 1 from 1 Oct 312 BC, default) or babylonian (SE 1 from 3 Apr 311 BC)",
               "new_year": "Julian month-day on which the SE year turns (default 10-01 macedonian, 04-03 babylonian)"}

    def __init__(self, reckoning="macedonian", new_year=None):
        key = str(reckoning).strip().lower()
        if key not in RECKONINGS:
            raise ParameterError(f"unknown Seleucid reckoning {reckoning!r}: macedonian or babylonian")
        self.reckoning = key
        ref, default_new_year = RECKONINGS[key]
        self.new_year = parse_month_day(new_year) if new_year is not None else default_new_year
        self._default_new_year = default_new_year
        super().__init__(JulianYearCount(ref, self.new_year))
        self.options = {"reckoning": key, "new_year": f"{self.new_year[0]:02d}-{self.new_year[1]:02d}"}

    @property
    def description(self):  # type: ignore[override]
        if self.reckoning == "macedonian":
            return ("Seleucid era, Macedonian reckoning as Julian years from 1 October (SE 1 = 312/311 BC); "
                    "Julian months and days")
        return ("Seleucid era, Babylonian reckoning as Julian years turning on a nominal day (default 3 April, "
                "1 Nisanu SE 1 = 3 April 311 BC); Julian months and days; the lunar Nisanu comes later")

    @property
    def year_numbering(self):  # type: ignore[override]
        start = "1 Oct 312 BC" if self.reckoning == "macedonian" else "3 Apr 311 BC"
        return (f"Seleucid era, {self.reckoning} reckoning: SE 1 begins {start} (Julian), years turn on "
                f"{self.new_year[0]:02d}-{self.new_year[1]:02d}; SE 0, -1, ... before (proleptic)")

    @property
    def label(self):
        opts = []
        if self.reckoning != "macedonian":
            opts.append(f"reckoning={self.reckoning}")
        if self.new_year != self._default_new_year:
            opts.append(f"new_year={self.new_year[0]:02d}-{self.new_year[1]:02d}")
        return self.name + (f"[{','.join(opts)}]" if opts else "")

    def with_options(self, **options):
        extra = set(options) - {"reckoning", "new_year"}
        if extra:
            raise ParameterError(f"calendar seleucid takes options reckoning, new_year, not {', '.join(sorted(extra))}")
        reckoning = options.get("reckoning", self.reckoning)
        new_year = options.get("new_year")
        if new_year is None and reckoning == self.reckoning and self.new_year != self._default_new_year:
            new_year = self.new_year
        return SeleucidCalendar(reckoning, new_year)
