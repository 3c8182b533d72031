"""The Egyptian civil calendar: the 365-day wandering year and the Alexandrian fixed year, with their eras.

The civil year has twelve months of 30 days (Thoth, Phaophi, Athyr,
Choiak, Tybi, Mechir, Phamenoth, Pharmuthi, Pachon, Payni, Epiphi,
Mesore) and five epagomenal days, counted here as month 13 (as in
Calendrical Calculations).  With no leap day, 1 Thoth recedes through the
Julian year by one day every four years: 1461 Egyptian years = 1460 Julian
years (the Sothic period).

Eras (option ``era``)
---------------------
``nabonassar`` (default)
    Era of Nabonassar, the era of Ptolemy's *Almagest*: 1 Thoth of year 1
    = 26 February 747 BC (Julian -746), day number 1448638 (the Almagest
    epoch is noon of that day, JD 1448638.0; Almagest III.7, IX.11).  This is
    the epoch of the Egyptian calendar of Calendrical Calculations (RD
    -272787).
``philip``
    Era of Philip (Arrhidaeus; Ptolemy's "years from the death of
    Alexander"): 1 Thoth of year 1 = 12 November 324 BC (Julian -323), which
    is Nabonassar 425 1 Thoth, so Philip year = Nabonassar year - 424.
``augustan`` (also ``alexandrian``, ``augustus``)
    The Alexandrian fixed year of the Augustan reform: the same months, with
    a sixth epagomenal day every fourth year so that the year keeps step
    with the Julian calendar.  1 Thoth = 29 August (Julian), 30 August in
    the Julian year before a Julian leap year; the year with six epagomenal
    days is the one ending in the Julian year before a leap year.  Years of
    the era of Augustus: year 1 begins 1 Thoth = 30 August 30 BC (Julian
    -29), the year of the conquest of Egypt (regnal years of Augustus in
    Egypt counted from 30/29 BC; from memory).  Year A is a leap year
    (six epagomenal days) when A mod 4 = 0.
``diocletian`` (also ``coptic``, ``martyrs``)
    The same fixed year numbered from the era of Diocletian (the Coptic
    "era of the Martyrs"): year 1 begins 1 Thoth = 29 August AD 284.  Year
    D is a leap year when D mod 4 = 3.  Augustan year = Diocletian year +
    313.  This is the Coptic calendar of Calendrical Calculations (epoch
    RD 103605) with the Greek month names.

The fixed year is extended proleptically before the reform (whose first
sixth epagomenal day is dated to 26 or 22 BC in the literature; from
memory) and the wandering year indefinitely in both directions.

Conventions
-----------
* Year numbering: the era's year 1 begins on its epoch; earlier years
  continue backwards as 0, -1, ... (there is a year 0; proleptic).
* Day boundary: the day is named by the civil day (midnight to midnight)
  that holds its daylight hours.  The Egyptian day itself is usually held
  to have begun at dawn (from memory) and Ptolemy counted from noon; a
  night-time observation may need the previous or next day.
* Text: ``Nabonassar 1 Thoth 1`` (era, year, month, day; the long form),
  ``Nabonassar 0001-01-01`` (the numeric form), ``Philip 5 Epagomenal 3``.
  A text naming another era than the calendar's is converted through the
  day number to the calendar's era (e.g. ``egyptian:Philip 1 Thoth 1``
  reads as Nabonassar 425 Thoth 1).

References
----------
E. M. Reingold & N. Dershowitz, *Calendrical Calculations*, 3rd ed. (2008),
ch. 1.11 ("Egyptian and Armenian calendars") and 4 ("Coptic and Ethiopic
calendars"): the arithmetic of ``fixed-from-egyptian`` and
``fixed-from-coptic``.  Ptolemy, *Almagest*, tr. G. J. Toomer (1984), the
era of Nabonassar and the era of Philip (Almagest III.7).
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from calendra.calendar import SolarCalendar, iso_year
from calendra.daylib import as_int_array
from calendra.errors import ParameterError

from ._text import Reader, month_lookup

MONTH_NAMES = ("Thoth", "Phaophi", "Athyr", "Choiak", "Tybi", "Mechir", "Phamenoth", "Pharmuthi",
               "Pachon", "Payni", "Epiphi", "Mesore", "Epagomenal")

#: Other spellings (Greek, Coptic) accepted in text.
MONTH_SPELLINGS = {
    "thout": 1, "thot": 1, "paopi": 2, "phaophi": 2, "paophi": 2, "hathor": 3, "hathyr": 3, "athyr": 3,
    "koiak": 4, "khoiak": 4, "choiak": 4, "choiach": 4, "tobi": 5, "tybi": 5, "meshir": 6, "mecheir": 6,
    "mechir": 6, "amshir": 6, "paremhat": 7, "phamenoth": 7, "baramhat": 7, "paremoude": 8,
    "parmouti": 8, "pharmouthi": 8, "pharmuthi": 8, "pashons": 9, "pachons": 9, "pachon": 9,
    "paoni": 10, "pauni": 10, "payni": 10, "epip": 11, "epeiph": 11, "epiphi": 11, "mesori": 12,
    "mesore": 12, "epagomenal": 13, "epagomenae": 13, "epagomenai": 13, "epagomene": 13, "epag": 13,
    "nesi": 13, "kouji": 13,
}
_MONTH = month_lookup(MONTH_NAMES, MONTH_SPELLINGS)

#: Day number of 1 Thoth, Nabonassar 1 (Julian -746 February 26); JD 1448638.0 is its noon.
NABONASSAR_EPOCH_JDN = 1448638
#: Egyptian years from the era of Nabonassar to the era of Philip (Philip 1 = Nabonassar 425).
PHILIP_OFFSET_YEARS = 424
#: Day number of 1 Thoth, Diocletian 1 (Julian AD 284 August 29), the Coptic epoch (RD 103605).
DIOCLETIAN_EPOCH_JDN = 1825030
#: Alexandrian years from the era of Augustus to that of Diocletian (Diocletian 1 = Augustus 314).
AUGUSTUS_OFFSET_YEARS = -313


@dataclass(frozen=True)
class EgyptianEra:
    """One era of the Egyptian calendar.

    Attributes
    ----------
    key : str
        Option value (``era=KEY``).
    word : str
        Word written before the year.
    title : str
    fixed : bool
        True for the Alexandrian fixed year (sixth epagomenal day every fourth year).
    year_offset : int
        Added to the era's year to get the base year (Nabonassar for the
        wandering year, Diocletian for the fixed year).
    words : tuple of str
        Accepted spellings in text (lower case, without dots).
    """

    key: str
    word: str
    title: str
    fixed: bool
    year_offset: int
    words: tuple


ERAS = {
    "nabonassar": EgyptianEra("nabonassar", "Nabonassar", "Era of Nabonassar", False, 0,
                              ("nabonassar", "nab", "nabonassaros", "nabonassarus")),
    "philip": EgyptianEra("philip", "Philip", "Era of Philip", False, PHILIP_OFFSET_YEARS,
                          ("philip", "phil", "philippus", "philippos")),
    "augustan": EgyptianEra("augustan", "Augustus", "Alexandrian year, era of Augustus", True,
                            AUGUSTUS_OFFSET_YEARS, ("augustus", "augustan", "alexandrian", "aug")),
    "diocletian": EgyptianEra("diocletian", "Diocletian", "Alexandrian year, era of Diocletian (Martyrs)", True,
                              0, ("diocletian", "dioc", "diocl", "martyrs")),
}
_ERA_KEYS = {"nabonassar": "nabonassar", "philip": "philip", "augustan": "augustan", "augustus": "augustan",
             "alexandrian": "augustan", "diocletian": "diocletian", "coptic": "diocletian",
             "martyrs": "diocletian"}
_ERA_WORDS = {w: key for key, era in ERAS.items() for w in era.words}


def _era(spec) -> EgyptianEra:
    key = _ERA_KEYS.get(str(spec).strip().lower())
    if key is None:
        raise ParameterError(f"unknown Egyptian era {spec!r}: nabonassar, philip, augustan (alexandrian) "
                             "or diocletian (coptic)")
    return ERAS[key]


# ---------------------------------------------------------------- arithmetic
def wandering_to_jdn(year, month, day):
    """Day number of Nabonassar (year, month, day) in the 365-day year (no validation).

    ``fixed-from-egyptian`` of Calendrical Calculations, shifted to day numbers.
    """
    y, m, d = (as_int_array(v) for v in (year, month, day))
    return NABONASSAR_EPOCH_JDN + 365 * (y - 1) + 30 * (m - 1) + d - 1


def wandering_from_jdn(jdn):
    """Nabonassar (year, month, day) of day numbers in the 365-day year."""
    n = as_int_array(jdn) - NABONASSAR_EPOCH_JDN
    year = n // 365 + 1
    doy = n - 365 * (year - 1)
    month = doy // 30 + 1
    return year, month, doy - 30 * (month - 1) + 1


def fixed_is_leap(diocletian_year):
    """True where a Diocletian year of the fixed Alexandrian year has six epagomenal days (year mod 4 = 3)."""
    return as_int_array(diocletian_year) % 4 == 3


def fixed_to_jdn(year, month, day):
    """Day number of Diocletian (year, month, day) in the fixed Alexandrian year (no validation).

    ``fixed-from-coptic`` of Calendrical Calculations: epoch - 1 + 365 (y - 1)
    + floor(y / 4) + 30 (m - 1) + d.
    """
    y, m, d = (as_int_array(v) for v in (year, month, day))
    return DIOCLETIAN_EPOCH_JDN - 1 + 365 * (y - 1) + y // 4 + 30 * (m - 1) + d


def fixed_from_jdn(jdn):
    """Diocletian (year, month, day) of day numbers in the fixed Alexandrian year (``coptic-from-fixed``)."""
    j = as_int_array(jdn)
    year = (4 * (j - DIOCLETIAN_EPOCH_JDN) + 1463) // 1461
    month = (j - fixed_to_jdn(year, 1, 1)) // 30 + 1
    day = j + 1 - fixed_to_jdn(year, month, 1)
    return year, month, day


class EgyptianCalendar(SolarCalendar):
    """The Egyptian civil calendar (option ``era``: nabonassar, philip, augustan, diocletian).

    Fields year, month (1..12, 13 = the epagomenal days), day.  See the
    module docstring for the eras, the year numbering (a year 0 exists) and
    the day boundary.
    """

    name = "egyptian"
    aliases = ("egyptian-civil",)
    month_names = MONTH_NAMES
    month_spellings = MONTH_SPELLINGS
    day_start = "midnight"
    options = {"era": "nabonassar (default; 365-day year), philip (365-day year), augustan (Alexandrian fixed "
                      "year, era of Augustus), diocletian (fixed year, Coptic numbering)"}

    def __init__(self, era="nabonassar"):
        self.era = _era(era)
        self.options = {"era": self.era.key}

    # metadata
    @property
    def description(self):  # type: ignore[override]
        e = self.era
        if not e.fixed:
            return (f"Egyptian civil calendar, 365-day wandering year (12 x 30 + 5 epagomenal days), {e.title}; "
                    "1 Thoth recedes one Julian day every 4 years")
        return (f"Egyptian calendar, {e.title}: the Augustan fixed year (sixth epagomenal day every 4th year, "
                "1 Thoth = 29/30 August Julian)")

    @property
    def year_numbering(self):  # type: ignore[override]
        first = self.format(1, 1, 1, style="long")
        from calendra.calendars_core import JulianCalendar

        j = JulianCalendar()
        jf = j.from_jdn(self.epoch_jdn)
        return (f"{self.era.title}: year 1 begins {first} = julian "
                f"{j.format(*(int(jf[f]) for f in j.fields), style='long')}; years 0, -1, ... before it "
                "(proleptic, with a year 0)")

    @property
    def epoch_jdn(self):  # type: ignore[override]
        return int(self._to_jdn(1, 1, 1))

    @property
    def label(self):
        return self.name if self.era.key == "nabonassar" else f"{self.name}[era={self.era.key}]"

    def with_options(self, **options):
        extra = set(options) - {"era"}
        if extra:
            raise ParameterError(f"calendar egyptian takes option era, not {', '.join(sorted(extra))}")
        return EgyptianCalendar(options.get("era", self.era.key))

    # arithmetic
    def is_leap(self, year) -> np.ndarray:
        """True where ``year`` has six epagomenal days (only in the fixed Alexandrian year)."""
        y = as_int_array(year)
        if not self.era.fixed:
            return np.zeros(np.shape(y), dtype=bool)
        return fixed_is_leap(y + self.era.year_offset)

    def months_in_year(self, year):
        return np.full(np.shape(year), 13, dtype=np.int64)

    def month_length(self, year, month):
        m = as_int_array(month)
        length = np.where(m == 13, 5 + self.is_leap(year), 30)
        return np.where((m >= 1) & (m <= 13), length, 0)

    def year_length(self, year) -> np.ndarray:
        """Days in ``year``: 365, or 366 in leap years of the fixed year."""
        return 365 + self.is_leap(year)

    def _to_jdn(self, year, month, day):
        y = as_int_array(year) + self.era.year_offset
        return fixed_to_jdn(y, month, day) if self.era.fixed else wandering_to_jdn(y, month, day)

    def _from_jdn(self, jdn):
        y, m, d = fixed_from_jdn(jdn) if self.era.fixed else wandering_from_jdn(jdn)
        return y - self.era.year_offset, m, d

    def _invalid_reason(self, year, month, day):
        if not 1 <= month <= 13:
            return (f"month {month} does not exist in the Egyptian calendar (months 1..12 of 30 days, "
                    "13 = the epagomenal days)")
        length = int(self.month_length(np.int64(year), np.int64(month)))
        if not 1 <= day <= length:
            if month == 13:
                if self.era.fixed:
                    why = ("a leap year of the fixed year" if length == 6 else
                           "not a leap year of the fixed year, which has a sixth epagomenal day only when "
                           + ("the Diocletian year mod 4 = 3" if self.era.key == "diocletian" else
                              "the Augustan year mod 4 = 0"))
                else:
                    why = "the wandering year has five, never a sixth"
                return (f"epagomenal day {day} does not exist in {self.era.word} {year}: {length} epagomenal days "
                        f"({why})")
            return f"{MONTH_NAMES[month - 1]} {day} does not exist: Egyptian months have 30 days"
        return None

    # text
    def format(self, year, month, day, style: str = "iso") -> str:
        y, m, d = int(year), int(month), int(day)
        if style == "iso":
            return f"{self.era.word} {iso_year(y)}-{m:02d}-{d:02d}"
        if style == "long":
            return f"{self.era.word} {y} {MONTH_NAMES[m - 1] if 1 <= m <= 13 else m} {d}"
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def parse(self, text: str):
        """Read ``[ERA] YEAR MONTH DAY`` (``Nabonassar 1 Thoth 1``), ``ERA Y-M-D`` or ``year Y, Thoth D``.

        The number after the era word is the year.  When the text names
        another era than this calendar's, the date is read in that era and
        converted through its day number (so ``Philip 1 Thoth 1`` read by the
        Nabonassar calendar gives ``(425, 1, 1)``).

        Raises
        ------
        DateParseError
            If the text is not an Egyptian date.
        InvalidDateError
            If the text names another era and the date does not exist there.
        """
        reader = Reader(text, self.name, fillers=("of", "the", "in", "on", "and", "era"))
        key, pos = reader.take_word(lambda w: _ERA_WORDS.get(w.replace(".", "")))
        year = None
        if pos >= 0:
            tok = reader.number_at(pos)
            if tok is None:
                if pos < len(reader.tokens) and reader.tokens[pos].kind == "word" and \
                        reader.tokens[pos].word == "year":
                    del reader.tokens[pos]
                    tok = reader.number_at(pos)
            if tok is not None and tok.kind == "ymd":
                fields = tok.value
                if reader.tokens:
                    raise reader.fail(f"unexpected {reader.tokens[0].raw!r} after the date")
                return self._in_own_era(key, fields)
            if tok is not None and tok.kind == "num":
                year = int(tok.value)
        if year is None:
            year = reader.take_keyword_number(("year", "yr", "regnal"))
        y, m, d = reader.read_ymd(_MONTH, year=year)
        return self._in_own_era(key, (int(y), int(m), int(d)))

    def _in_own_era(self, key, fields):
        if key is None or key == self.era.key:
            return tuple(int(v) for v in fields)
        other = EgyptianCalendar(key)
        jdn = other.to_jdn(*fields)
        return tuple(int(v) for v in self._from_jdn(jdn))


def egyptian_new_year_jdn(year, era="nabonassar") -> np.ndarray:
    """Return the day numbers of 1 Thoth of ``year`` in ``era`` (vectorized)."""
    return EgyptianCalendar(era).year_start_jdn(year)

