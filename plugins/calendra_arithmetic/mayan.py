"""The Maya Long Count, Haab and Tzolkin, with a selectable correlation constant.

* Long Count: days since the creation date, in the mixed radix
  baktun (144000 days) . katun (7200) . tun (360) . uinal (20) . kin (1);
  katun, tun and kin run 0..19, uinal 0..17, the baktun is any integer
  (negative before the creation date).  The creation date is 0.0.0.0.0 in
  this count; inscriptions write it 13.0.0.0.0, which here is the end of
  the 13th baktun, Gregorian 2012-12-21 with the GMT correlation.
* Haab: the 365-day year of 18 months of 20 days (days 0..19) and Uayeb
  (month 19, days 0..4); the creation date is 8 Cumku.
* Tzolkin: the 260-day count, a number 1..13 with one of 20 day names; the
  creation date is 4 Ahau.

The *correlation* (option ``correlation``) is the day number (chronological
JDN) of the creation date: 584283 (Goodman-Martinez-Thompson, default),
584285 (the "Lounsbury" variant) or any integer.

Haab and Tzolkin dates repeat (every 365 and 260 days), so a date alone
names no single day: these calendars name days (``from_jdn``) but turn a
date back into a day only when given the option ``on_or_before`` (a day
number), and then return the latest day on or before it with that date.
Without it, ``to_jdn`` raises :class:`calendra.errors.ParameterError` saying
so.  The Long Count names every day once and converts both ways.

The Maya day boundary is not known; days are taken to run from midnight.

References
----------
E. M. Reingold and N. Dershowitz, *Calendrical Calculations*, 3rd ed.
(Cambridge University Press, 2008), ch. 11 (``fixed-from-mayan-long-count``,
``mayan-haab-from-fixed``, ``mayan-tzolkin-from-fixed``,
``mayan-haab-on-or-before``, ``mayan-tzolkin-on-or-before``).
"""

from __future__ import annotations

import re

import numpy as np

from calendra.calendar import Calendar
from calendra.daylib import as_int_array
from calendra.errors import DateParseError, ParameterError

from .base import BlockwiseMixin, OptionsMixin, below, floor_divmod, parse_int_option, umax
from .textforms import NameTable, normalize

#: Goodman-Martinez-Thompson correlation: day number of 0.0.0.0.0 (Julian -3113-09-06).
GMT_CORRELATION = 584283
LOUNSBURY_CORRELATION = 584285

HAAB_MONTHS = ("Pop", "Uo", "Zip", "Zotz", "Tzec", "Xul", "Yaxkin", "Mol", "Chen", "Yax", "Zac", "Ceh",
               "Mac", "Kankin", "Muan", "Pax", "Kayab", "Cumku", "Uayeb")
_HAAB_VARIANTS = {"Wo": 2, "Uo'": 2, "Sip": 3, "Sotz": 4, "Zotz'": 4, "Sek": 5, "Tzek": 5, "Yaxk'in": 7,
                  "Ch'en": 9, "Sak": 11, "Sak'": 11, "Keh": 12, "Mak": 13, "K'ank'in": 14, "Kankin": 14,
                  "Muwan": 15, "K'ayab": 17, "Kumk'u": 18, "Kumku": 18, "Wayeb": 19, "Wayeb'": 19}
TZOLKIN_NAMES = ("Imix", "Ik", "Akbal", "Kan", "Chicchan", "Cimi", "Manik", "Lamat", "Muluc", "Oc",
                 "Chuen", "Eb", "Ben", "Ix", "Men", "Cib", "Caban", "Etznab", "Cauac", "Ahau")
_TZOLKIN_VARIANTS = {"Ik'": 2, "Ak'bal": 3, "K'an": 4, "Chikchan": 5, "Kimi": 6, "Manik'": 7, "Muluk": 9,
                     "Ok": 10, "Chuwen": 11, "Eb'": 12, "B'en": 13, "Men": 15, "Kib": 16, "Kaban": 17,
                     "Etz'nab": 18, "Kawak": 19, "Ajaw": 20, "Ahaw": 20}
HAAB_TABLE = NameTable(HAAB_MONTHS, _HAAB_VARIANTS)
TZOLKIN_TABLE = NameTable(TZOLKIN_NAMES, _TZOLKIN_VARIANTS)

#: Position of the creation date in the Haab year (8 Cumku: 17 months of 20 days + 8) and
#: in the Tzolkin count (4 Ahau) - Reingold & Dershowitz' haab and tzolkin epochs.
_HAAB_AT_CREATION = 17 * 20 + 8
_TZOLKIN_AT_CREATION = 159   # (4 - 1 + 39 (4 - 20)) mod 260

_I20, _I18 = np.int64(20), np.int64(18)
_RADIX = (("baktun", None), ("katun", 20), ("tun", 20), ("uinal", 18), ("kin", 20))


class _Correlated(BlockwiseMixin, OptionsMixin, Calendar):
    """Shared correlation option of the Maya calendars."""

    day_start = "midnight"
    option_defaults = {"correlation": GMT_CORRELATION}
    option_help = {"correlation": "day number (JDN) of the creation date 0.0.0.0.0: 584283 (GMT, default), "
                                  "584285, or any integer"}

    def __init__(self, correlation=GMT_CORRELATION):
        self.options = {"correlation": parse_int_option("correlation", correlation, self.name)}
        self.epoch_jdn = self.options["correlation"]


def _haab_count(jdn, correlation):
    # Days since the start of the Haab year (0 Pop) of each day.
    _, count = floor_divmod(jdn - correlation + _HAAB_AT_CREATION, 365)
    return count


def _tzolkin_count(jdn, correlation):
    # Position 0..259 in the Tzolkin (0 = 1 Imix).
    _, count = floor_divmod(jdn - correlation + _TZOLKIN_AT_CREATION, 260)
    return count


class MayanLongCountCalendar(_Correlated):
    """The Maya Long Count: baktun.katun.tun.uinal.kin days since the creation date.

    Option ``correlation`` (default 584283, GMT).  Fields baktun (any
    integer), katun 0..19, tun 0..19, uinal 0..17, kin 0..19.  No years: the
    count is continuous.  Text: ``9.12.11.5.18``; the long form adds the
    Tzolkin and Haab dates, ``9.12.11.5.18 6 Etznab 11 Yax``, and reading such
    a text checks that they agree.
    """

    name = "mayan-long-count"
    aliases = ("long-count", "mayan")
    fields = tuple(f for f, _ in _RADIX)
    year_numbering = "none: a continuous count of days (baktun of 144000 days, may be negative)"

    @property
    def description(self):  # type: ignore[override]
        return (f"Maya Long Count (baktun.katun.tun.uinal.kin), creation date 0.0.0.0.0 = JDN "
                f"{self.epoch_jdn}; Reingold & Dershowitz ch. 11")

    def is_valid(self, baktun, katun, tun, uinal, kin):
        """True where katun, tun, kin are 0..19 and uinal 0..17 (the baktun is unbounded)."""
        values = np.broadcast_arrays(*(as_int_array(v) for v in (baktun, katun, tun, uinal, kin)))
        return self._checked_to_jdn(*values)[1]

    @property
    def _jdn_offset(self):
        return self.epoch_jdn

    def _checked_to_jdn(self, baktun, katun, tun, uinal, kin):
        # Days since the creation date (the correlation is added by to_jdn), and the radix checks.
        ok = below(katun, 20)
        ok &= below(tun, 20)
        ok &= below(uinal, 18)
        ok &= below(kin, 20)
        days = baktun * 20 + katun
        days *= 20
        days += tun
        days *= 18
        days += uinal
        days *= 20
        days += kin
        return days, ok

    def _to_jdn_block(self, out, baktun, katun, tun, uinal, kin):
        # The mixed-radix sum written in place into ``out``; each digit's range is checked by one
        # reduction just before it is added, while the digit is still in cache.
        np.multiply(baktun, _I20, out=out)
        for value, limit, radix in ((katun, 20, _I20), (tun, 20, _I18), (uinal, 18, _I20)):
            if umax(value) >= limit:
                return False
            np.add(out, value, out=out)
            np.multiply(out, radix, out=out)
        if umax(kin) >= 20:
            return False
        np.add(out, kin, out=out)
        np.add(out, np.int64(self.epoch_jdn), out=out)
        return True

    def _invalid_reason(self, baktun, katun, tun, uinal, kin):
        for (name, radix), value in zip(_RADIX[1:], (katun, tun, uinal, kin)):
            if not 0 <= value < radix:
                unit = {"katun": "20 katuns = 1 baktun", "tun": "20 tuns = 1 katun",
                        "uinal": "18 uinals = 1 tun of 360 days", "kin": "20 kins = 1 uinal"}[name]
                return f"{name} {value} does not exist in the long count: {name} runs 0..{radix - 1} ({unit})"
        return None

    def _to_jdn(self, baktun, katun, tun, uinal, kin):
        return self._checked_to_jdn(baktun, katun, tun, uinal, kin)[0] + self.epoch_jdn

    def _from_jdn(self, jdn):
        days = jdn - self.epoch_jdn
        baktun, rest = floor_divmod(days, 144000)
        katun, rest = floor_divmod(rest, 7200)
        tun, rest = floor_divmod(rest, 360)
        uinal, kin = floor_divmod(rest, 20)
        return baktun, katun, tun, uinal, kin

    def year_start_jdn(self, baktun):
        """Return the day number of the first day of ``baktun`` (its x.0.0.0.0)."""
        return as_int_array(baktun) * 144000 + self.epoch_jdn

    def calendar_round(self, jdn) -> str:
        """Return the Tzolkin and Haab dates of day ``jdn``: ``6 Etznab 11 Yax``."""
        tz = MayanTzolkinCalendar(self.epoch_jdn)
        hb = MayanHaabCalendar(self.epoch_jdn)
        t = tz.from_jdn(jdn)
        h = hb.from_jdn(jdn)
        return f"{tz.format(t['number'], t['name'], style='long')} {hb.format(h['month'], h['day'], style='long')}"

    def format(self, baktun, katun, tun, uinal, kin, style="iso"):
        """Write ``9.12.11.5.18`` (``iso``) or ``9.12.11.5.18 6 Etznab 11 Yax`` (``long``)."""
        text = ".".join(str(int(v)) for v in (baktun, katun, tun, uinal, kin))
        if style == "iso":
            return text
        if style == "long":
            return f"{text} {self.calendar_round(self._to_jdn(*(np.int64(v) for v in (baktun, katun, tun, uinal, kin))))}"
        raise ParameterError(f"unknown date style {style!r} for {self.name} (iso, long)")

    def parse(self, text):
        """Read ``9.12.11.5.18`` (or with spaces/commas), optionally followed by a Tzolkin and Haab date to check."""
        m = re.match(r"^\s*([+-]?\d+)\s*[.,\s]\s*(\d+)\s*[.,\s]\s*(\d+)\s*[.,\s]\s*(\d+)\s*[.,\s]\s*(\d+)\s*(.*)$", text)
        if not m:
            raise DateParseError(f"cannot read {text!r} as a long count: write baktun.katun.tun.uinal.kin, "
                                 "e.g. 9.12.11.5.18")
        fields = tuple(int(g) for g in m.groups()[:5])
        rest = m.group(6).strip()
        if rest:
            if not bool(self.is_valid(*fields)):
                raise DateParseError(f"{text!r}: {self._invalid_reason(*fields)}")
            expected = self.calendar_round(self._to_jdn(*(np.int64(v) for v in fields)))
            if normalize(rest) != normalize(expected):
                tz_number, tz_name, hb_month, hb_day = _read_calendar_round(rest, text)
                jdn = self._to_jdn(*(np.int64(v) for v in fields))
                tz = MayanTzolkinCalendar(self.epoch_jdn).from_jdn(jdn)
                hb = MayanHaabCalendar(self.epoch_jdn).from_jdn(jdn)
                if (tz_number, tz_name, hb_month, hb_day) != (int(tz["number"]), int(tz["name"]),
                                                             int(hb["month"]), int(hb["day"])):
                    raise DateParseError(f"{text!r}: the long count {'.'.join(map(str, fields))} falls on "
                                         f"{expected} (correlation {self.epoch_jdn}), not {rest}")
        return fields


def _read_calendar_round(rest: str, text: str):
    m = re.match(r"^\s*(\d+)\s+(.+?)\s+(\d+)\s+(.+?)\s*$", rest)
    if not m:
        raise DateParseError(f"{text!r}: after the long count write the Tzolkin and Haab dates, e.g. '6 Etznab 11 Yax'")
    name = TZOLKIN_TABLE.lookup(m.group(2))
    month = HAAB_TABLE.lookup(m.group(4))
    if name is None or month is None:
        raise DateParseError(f"{text!r}: unknown Tzolkin day name or Haab month in {rest!r}")
    return int(m.group(1)), name, month, int(m.group(3))


class _CyclicMayan(_Correlated):
    """Shared behaviour of the Haab and Tzolkin: from_jdn everywhere, to_jdn only with a reference day.

    Subclasses give ``cycle_days``, ``_position(jdn)`` (place 0 .. cycle_days - 1 of a day in the
    cycle) and ``_position_of(*fields)`` (the same for a date).
    """

    year_numbering = ""
    cycle_days = 0
    option_defaults = {**_Correlated.option_defaults, "on_or_before": None}
    option_help = {**_Correlated.option_help,
                   "on_or_before": "day number (JDN): to_jdn gives the latest day on or before it with the date "
                                   "(without it, dates are not turned into days: they recur)"}

    def __init__(self, correlation=GMT_CORRELATION, on_or_before=None):
        super().__init__(correlation)
        ref = None if on_or_before in (None, "", "none") else parse_int_option("on_or_before", on_or_before, self.name)
        self.options["on_or_before"] = ref

    @property
    def invertible(self) -> bool:
        """True when a reference day is set (``on_or_before``): only then does a date name one day."""
        return self.options["on_or_before"] is not None

    def _to_jdn(self, *fields):
        ref = self.options["on_or_before"]
        if ref is None:
            raise ParameterError(
                f"a {self.name} date recurs every {self.cycle_days} days and names no single day: give a reference "
                f"day, e.g. {self.name}[on_or_before=2460000] (the latest such day on or before JDN 2460000), "
                "or use mayan-long-count")
        ref = np.int64(ref)
        _, back = floor_divmod(self._position(ref) - self._position_of(*fields), self.cycle_days)
        return ref - back


class MayanHaabCalendar(_CyclicMayan):
    """The Haab, the Maya 365-day year: month 1..19 (19 = Uayeb, 5 days), day 0..19.

    Options ``correlation`` and ``on_or_before`` (see the module docstring).
    """

    name = "mayan-haab"
    aliases = ("haab",)
    fields = ("month", "day")
    cycle_days = 365
    month_names = HAAB_MONTHS

    @property
    def description(self):  # type: ignore[override]
        return (f"Maya Haab (365-day year: 18 months x 20 days + Uayeb 5), creation date 8 Cumku = JDN "
                f"{self.epoch_jdn}; cyclic: to_jdn needs on_or_before; Reingold & Dershowitz ch. 11")

    def is_valid(self, month, day):
        m, d = np.broadcast_arrays(as_int_array(month), as_int_array(day))
        return (m >= 1) & (m <= 19) & (d >= 0) & (d < 20 - 15 * (m == 19))

    def _invalid_reason(self, month, day):
        if not 1 <= month <= 19:
            return f"Haab month {month} does not exist: months are 1 = Pop ... 18 = Cumku, 19 = Uayeb"
        if month == 19 and not 0 <= day <= 4:
            return f"Uayeb {day} does not exist: Uayeb has the 5 days 0..4"
        if not 0 <= day <= 19:
            return f"{HAAB_MONTHS[month - 1]} {day} does not exist: Haab days run 0..19"
        return None

    def _position(self, jdn):
        return _haab_count(jdn, self.epoch_jdn)

    def _position_of(self, month, day):
        return 20 * (month - 1) + day

    def _from_jdn(self, jdn):
        month, day = floor_divmod(_haab_count(jdn, self.epoch_jdn), 20)
        return month + 1, day

    def format(self, month, day, style="iso"):
        """Write ``18-08`` (``iso``: month-day) or ``8 Cumku`` (``long``)."""
        m, d = int(month), int(day)
        if style == "iso":
            return f"{m:02d}-{d:02d}"
        if style == "long":
            return f"{d} {HAAB_MONTHS[m - 1]}"
        raise ParameterError(f"unknown date style {style!r} for {self.name} (iso, long)")

    def parse(self, text):
        """Read ``18-08`` (month-day) or ``8 Cumku`` / ``Cumku 8``; returns (month, day)."""
        m = re.fullmatch(r"\s*(\d{1,2})\s*-\s*(\d{1,2})\s*", text)
        if m:
            return int(m.group(1)), int(m.group(2))
        m = re.fullmatch(r"\s*(\d{1,2})\s+(.+?)\s*", text) or re.fullmatch(r"\s*(.+?)\s+(\d{1,2})\s*", text)
        if m:
            day_text, name_text = (m.group(1), m.group(2)) if m.group(1).isdigit() else (m.group(2), m.group(1))
            month = HAAB_TABLE.lookup(name_text)
            if month is not None:
                return month, int(day_text)
        raise DateParseError(f"cannot read {text!r} as a Haab date: write e.g. '8 Cumku' or '18-08' "
                             f"(months: {HAAB_TABLE.listing()})")


class MayanTzolkinCalendar(_CyclicMayan):
    """The Tzolkin, the Maya 260-day count: number 1..13 and day name 1..20 (1 = Imix ... 20 = Ahau).

    Options ``correlation`` and ``on_or_before`` (see the module docstring).
    """

    name = "mayan-tzolkin"
    aliases = ("tzolkin",)
    fields = ("number", "name")
    cycle_days = 260
    day_names = TZOLKIN_NAMES

    @property
    def description(self):  # type: ignore[override]
        return (f"Maya Tzolkin (260-day count: 13 numbers x 20 names), creation date 4 Ahau = JDN "
                f"{self.epoch_jdn}; cyclic: to_jdn needs on_or_before; Reingold & Dershowitz ch. 11")

    def is_valid(self, number, name):
        n, k = np.broadcast_arrays(as_int_array(number), as_int_array(name))
        return (n >= 1) & (n <= 13) & (k >= 1) & (k <= 20)

    def _invalid_reason(self, number, name):
        if not 1 <= number <= 13:
            return f"Tzolkin number {number} does not exist: numbers run 1..13"
        if not 1 <= name <= 20:
            return f"Tzolkin day name {name} does not exist: names are 1 = Imix ... 20 = Ahau"
        return None

    def _position(self, jdn):
        return _tzolkin_count(jdn, self.epoch_jdn)

    def _position_of(self, number, name):
        # The position p (0 = 1 Imix) has number p mod 13 + 1 and name p mod 20 + 1:
        # p = 40 (number - 1) - 39 (name - 1) mod 260 (40 = 1 mod 13 and 0 mod 20; -39 = 0 mod 13, 1 mod 20).
        _, p = floor_divmod(40 * (number - 1) - 39 * (name - 1), 260)
        return p

    def _from_jdn(self, jdn):
        count = _tzolkin_count(jdn, self.epoch_jdn)
        _, number = floor_divmod(count, 13)
        _, name = floor_divmod(count, 20)
        return number + 1, name + 1

    def format(self, number, name, style="iso"):
        """Write ``04-20`` (``iso``: number-name) or ``4 Ahau`` (``long``)."""
        n, k = int(number), int(name)
        if style == "iso":
            return f"{n:02d}-{k:02d}"
        if style == "long":
            return f"{n} {TZOLKIN_NAMES[k - 1]}"
        raise ParameterError(f"unknown date style {style!r} for {self.name} (iso, long)")

    def parse(self, text):
        """Read ``04-20`` (number-name) or ``4 Ahau``; returns (number, name)."""
        m = re.fullmatch(r"\s*(\d{1,2})\s*-\s*(\d{1,2})\s*", text)
        if m:
            return int(m.group(1)), int(m.group(2))
        m = re.fullmatch(r"\s*(\d{1,2})\s+(.+?)\s*", text)
        if m:
            name = TZOLKIN_TABLE.lookup(m.group(2))
            if name is not None:
                return int(m.group(1)), name
        raise DateParseError(f"cannot read {text!r} as a Tzolkin date: write e.g. '4 Ahau' or '04-20' "
                             f"(names: {TZOLKIN_TABLE.listing()})")
