"""The Chinese lunisolar calendar by the modern (true new moon, true solar term) rules.

Rules (those of the calendar computed since the Shixian reform of 1645 and
written down as the Chinese national standard GB/T 33661-2017, "Calculation
and promulgation of the Chinese calendar"; the standard's text was not at
hand, the rules below are stated from memory):

1. **Days** run from midnight to midnight in the mean time of the 120th
   meridian east (UTC+8; option ``meridian``: e.g. ``116.4`` for the
   meridian of Beijing, in use before 1929, or ``UTC+9``; ``solar_time=
   apparent`` counts days in local apparent solar time of that meridian, as
   historical Chinese astronomy did).
2. **Months** begin on the day that contains the geocentric conjunction
   (new moon) of the Moon and the Sun.
3. **Solar terms**: the 24 moments the Sun's apparent longitude is a
   multiple of 15 degrees; those at multiples of 30 degrees are the
   *principal terms* (zhongqi).  Terms are assigned **by day**: a month
   contains a principal term when the term's local date lies in the month,
   whatever the hour.
4. **Winter-solstice rule**: the month containing the day of the December
   solstice (longitude 270, dongzhi) is month 11.
5. **Leap-month rule**: a *sui* runs from month 11 (inclusive) to the next
   month 11 (exclusive).  If it holds 13 months, the first month of it that
   contains no principal term is the leap month; it bears the number of the
   month before it.  Otherwise months are numbered on from 11, 12, 1, 2, ...
6. The **year** begins with month 1 (Spring Festival).  Year numbers here
   are the astronomical (proleptic Gregorian) year in which month 1 of the
   Chinese year begins; the sexagenary name of the year follows the same
   count, ``(year - 4) mod 60`` (0 = jiazi; AD 1984 was a jiazi year).

The **sexagenary day** of day number ``jdn`` is ``(jdn + 49) mod 60``
(0 = jiazi): 1949 October 1 was a jiazi day (from memory), and the day
count has run without a break since at least the Chunqiu period: the solar
eclipse of Chunqiu, Duke Yin year 3, month 2, day jisi (index 5) is the
eclipse of -719 February 22 (Julian; from memory).  Tests check both.

Applied before 1645 these are *modern rules extended backwards*: the
historical calendars of China used mean terms (pingqi), mean or other new
moons and local apparent time, and were set by the astronomical bureau of
each dynasty; this calendar does not reproduce them.

Fragility: a month start depends on which side of local midnight the new
moon falls, a leap month on which side of midnight a principal term falls;
:meth:`ChineseCalendar.year_rows` shows both distances (minutes), so that a
result that hangs on minutes of delta T or of the meridian shows itself.
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.errors import ParameterError
from calendra.solarterms import SOLAR_TERM_NAMES

from . import sky
from .base import LunationCalendar

STEMS = ("jia", "yi", "bing", "ding", "wu", "ji", "geng", "xin", "ren", "gui")
BRANCHES = ("zi", "chou", "yin", "mao", "chen", "si", "wu", "wei", "shen", "you", "xu", "hai")
ANIMALS = ("Rat", "Ox", "Tiger", "Rabbit", "Dragon", "Snake", "Horse", "Goat", "Monkey", "Rooster", "Dog", "Pig")
MONTH_NAMES = ("Zhengyue", "Eryue", "Sanyue", "Siyue", "Wuyue", "Liuyue", "Qiyue", "Bayue", "Jiuyue",
               "Shiyue", "Dongyue", "Layue")
#: Longitudes (degrees) of the principal terms.
PRINCIPAL_LONGITUDES = tuple(range(0, 360, 30))
#: Longitude of the December solstice.
WINTER_SOLSTICE = 270.0
#: Offset of the sexagenary day count: index = (jdn + 49) mod 60.
DAY_CYCLE_OFFSET = 49


def sexagenary_name(index) -> str:
    """Return the stem-branch name of a sexagenary index (0 = jiazi ... 59 = guihai)."""
    i = int(index) % 60
    return STEMS[i % 10] + BRANCHES[i % 12]


def year_cycle_index(year) -> np.ndarray:
    """Return the sexagenary index (0 = jiazi) of Chinese year ``year`` (astronomical numbering)."""
    return np.mod(np.asarray(year, dtype=np.int64) - 4, 60)


def day_cycle_index(jdn) -> np.ndarray:
    """Return the sexagenary index (0 = jiazi) of day number ``jdn``."""
    return np.mod(np.asarray(jdn, dtype=np.int64) + DAY_CYCLE_OFFSET, 60)


def term_name(longitude_deg) -> str:
    """Pinyin name of the solar term at ``longitude_deg`` (a multiple of 15)."""
    return SOLAR_TERM_NAMES[int(round(float(longitude_deg))) % 360]


class ChineseCalendar(LunationCalendar):
    """The Chinese lunisolar calendar, modern rules (see the module notes); options meridian, solar_time, deltat."""

    name = "chinese"
    aliases = ("nongli", "chinese-lunisolar")
    description = ("Chinese lunisolar calendar by the modern rules (true new moons and true solar terms, "
                   "principal terms by day, winter solstice in month 11, first month without a principal term "
                   "leap in a 13-month sui), days of the 120E meridian; computed from DE406")
    day_start = "midnight"
    year_numbering = ("the astronomical (proleptic Gregorian) year in which month 1 begins; sexagenary name "
                      "(year - 4) mod 60; a leap month bears the number before it (leap = 1)")
    month_names = MONTH_NAMES
    year_epoch = (2000, 2451580)             # 2000-02-05, Spring Festival of 2000
    epoch_lunation_year = (2000, 1)          # lunation 1: the new moon of 2000 February 5
    options = {"meridian": "meridian of the day count: degrees east (120 default, 116.4 Beijing) or UTC+H",
               "solar_time": "mean (default) or apparent: mean or apparent solar time of that meridian",
               "deltat": "delta-T model (default smh2016)"}

    def __init__(self, meridian="120", solar_time="mean", deltat=None):
        super().__init__()
        from calendra.deltat import get_model

        if solar_time not in ("mean", "apparent"):
            raise ParameterError(f"chinese: solar_time is mean or apparent, got {solar_time!r}")
        self._spec = {"meridian": str(meridian), "solar_time": solar_time, "deltat": deltat}
        self.local = sky.parse_local_time(meridian, apparent=(solar_time == "apparent"))
        self.deltat = get_model(deltat)
        self.moons = sky.ConjunctionSource(self.local, self.deltat)
        self.principal = sky.SolarSource(PRINCIPAL_LONGITUDES)
        self.terms = sky.SolarSource(range(0, 360, 15))
        shown = {k: v for k, v in self._spec.items() if v is not None}
        self.options = dict(shown)

    # ------------------------------------------------------------ options
    def with_options(self, **options):
        extra = set(options) - set(self._spec)
        if extra:
            raise ParameterError(f"calendar chinese takes options {', '.join(self._spec)}, not {', '.join(sorted(extra))}")
        spec = dict(self._spec)
        spec.update(options)
        return ChineseCalendar(**spec)

    @property
    def label(self):
        parts = []
        if self._spec["meridian"] not in ("120", "120E", "120.0", "UTC+8"):
            parts.append(f"meridian={self._spec['meridian']}")
        if self._spec["solar_time"] != "mean":
            parts.append("solar_time=apparent")
        if self._spec["deltat"]:
            parts.append(f"deltat={self._spec['deltat']}")
        return self.name + (f"[{','.join(parts)}]" if parts else "")

    # ------------------------------------------------------------ sky
    def _raw_starts(self, k):
        return self.moons.starts(k)

    def _local_days(self, jd_tt):
        ut = np.asarray(self.deltat.ut_from_tt(jd_tt), dtype=float)
        return self.local.days(ut, self.deltat), self.local.fraction(ut, self.deltat)

    def _months_and_terms(self, y0, y1):
        """New-moon months and principal terms covering the sui that end at the solstices of y0-1..y1+1."""
        start_tt = float(jg.gregorian_to_jdn(y0 - 1, 10, 1)) - 0.5
        end_tt = float(jg.gregorian_to_jdn(y1 + 2, 2, 15)) - 0.5
        k = np.arange(int(sky.lunation_of_jd(start_tt)) - 1, int(sky.lunation_of_jd(end_tt)) + 2)
        starts = self.moons.starts(k)
        jd, lon = self.principal.crossings(start_tt, end_tt)
        days, _ = self._local_days(jd)
        return k, starts, jd, lon, days

    def sui_structure(self, y0: int, y1: int) -> dict:
        """Month numbering of every sui ending at the December solstices of Gregorian years y0..y1.

        Returns a dict of arrays over the months from month 11 of the first
        sui on: ``lunation``, ``start`` (day number), ``month``, ``leap``,
        ``terms`` (principal terms in the month, by day), ``sui`` (the
        Gregorian year of the solstice that ends the month's sui).
        """
        k, starts, jd, lon, days = self._months_and_terms(y0, y1)
        midx = np.searchsorted(starts, days, side="right") - 1
        inside = (midx >= 0) & (midx < starts.size - 1)
        counts = np.bincount(midx[inside], minlength=starts.size)
        ws = inside & (np.abs(lon - WINTER_SOLSTICE) < 1e-6)
        ws_month = midx[ws]
        ws_year = jg.gregorian_from_jdn(days[ws])[0]
        n = starts.size
        month = np.zeros(n, dtype=np.int64)
        leap = np.zeros(n, dtype=np.int64)
        sui = np.zeros(n, dtype=np.int64)
        first_month = {}
        leap_index = {}
        for a, b, year in zip(ws_month[:-1], ws_month[1:], ws_year[1:]):
            a, b, year = int(a), int(b), int(year)
            lp = None
            if b - a == 13:
                no_term = np.flatnonzero(counts[a + 1:b] == 0)
                lp = a + 1 + int(no_term[0])
            elif b - a != 12:
                from calendra.errors import CalendraError

                raise CalendraError(f"chinese: the sui ending at the solstice of {year} has {b - a} months")
            i = np.arange(a, b)
            j = (i - a) - ((i >= lp) if lp is not None else 0)
            month[a:b] = (10 + j) % 12 + 1
            if lp is not None:
                leap[lp] = 1
                leap_index[year] = lp
            sui[a:b] = year
            first_month[year] = a + 2 + (1 if lp is not None and lp <= a + 2 else 0)
        return {"lunation": k, "start": starts, "month": month, "leap": leap, "terms": counts, "sui": sui,
                "first_month": first_month, "leap_index": leap_index}

    def _year_first_lunation_block(self, y0, y1):
        st = self.sui_structure(y0, y1 + 1)
        k, fm, li = st["lunation"], st["first_month"], st["leap_index"]
        years = range(y0, y1 + 1)
        nk = np.array([k[fm[y]] for y in years], dtype=np.int64)
        lp = []
        for y in years:
            pos = -1
            m1 = fm[y]
            if y in li and li[y] > m1:                     # leap 1..10 in the sui ending in December y
                pos = li[y] - m1
            elif y + 1 in li and li[y + 1] < fm[y + 1]:    # leap 11 or 12 of the next sui
                pos = li[y + 1] - m1
            lp.append(pos)
        return nk, np.array(lp, dtype=np.int64)

    # ------------------------------------------------------------ names
    def month_name(self, month: int, year: int | None = None, leap: bool = False) -> str:
        base = MONTH_NAMES[month - 1] if 1 <= month <= 12 else str(month)
        return f"leap {base}" if leap else base

    def year_label(self, year: int) -> str:
        i = int(year_cycle_index(year))
        return f"{year} ({sexagenary_name(i)}, {ANIMALS[i % 12]})"

    def format(self, *fields, style: str = "iso") -> str:
        if style == "long":
            y, m, lf, d = (int(np.asarray(v)) for v in self._split(fields))
            return f"{self.year_label(y)}, {'leap ' if lf else ''}month {m}, day {d}"
        return super().format(*fields, style=style)

    def parse(self, text):
        import re

        m = re.fullmatch(r"\s*([+-]?\d+)(?:\s*\([^)]*\))?,?\s*(leap\s+)?month\s+(\d{1,2}),?\s*day\s+(\d{1,2})\s*",
                         text, re.I)
        if m:
            return (int(m.group(1)), int(m.group(3)), 1 if m.group(2) else 0, int(m.group(4)))
        return super().parse(text)

    def _parse_named(self, s):
        import re

        t = re.sub(r"\bleap\s+", "", s, flags=re.I)
        y, mo, lf, d = super()._parse_named(t)
        return y, mo, 1 if t != s else lf, d

    # ------------------------------------------------------------ tables
    def day_cycle(self, jdn) -> np.ndarray:
        """Stem-branch names of day numbers ``jdn``."""
        idx = day_cycle_index(jdn)
        return np.array([sexagenary_name(i) for i in np.ravel(idx)]).reshape(np.shape(idx))

    def solar_terms(self, year: int) -> list[dict]:
        """The 24 solar terms of Gregorian ``year``: longitude, name, instant (UT) and local date.

        ``margin_min`` is the distance of the instant from the nearest local
        midnight, minutes: a term that close can change its date with delta T.
        """
        a = float(jg.gregorian_to_jdn(year, 1, 1)) - 0.5
        b = float(jg.gregorian_to_jdn(year + 1, 1, 1)) - 0.5
        jd, lon = self.terms.crossings(a, b)
        days, frac = self._local_days(jd)
        ut = np.asarray(self.deltat.ut_from_tt(jd), dtype=float)
        rows = []
        for i in range(jd.size):
            gy, gm, gd = (int(v) for v in jg.gregorian_from_jdn(days[i]))
            rows.append({"longitude": int(round(lon[i])), "name": term_name(lon[i]),
                         "principal": int(round(lon[i])) % 30 == 0, "jd_tt": float(jd[i]), "jd_ut": float(ut[i]),
                         "local_date": f"{gy:04d}-{gm:02d}-{gd:02d}" if gy > 0 else f"{gy}-{gm:02d}-{gd:02d}",
                         "local_time": f"{int(frac[i] * 24):02d}:{int(frac[i] * 1440) % 60:02d}",
                         "margin_min": round(float(min(frac[i], 1 - frac[i]) * 1440.0), 1)})
        return rows

    def year_rows(self, year: int) -> list[dict]:
        rows = super().year_rows(year)
        k = np.array([r["lunation"] for r in rows])
        margins = self.moons.margin(k)
        jd_ut = self.moons.values(k, "jd_ut")
        s0 = np.array([r["first_jdn"] for r in rows])
        s1 = s0 + np.array([r["days"] for r in rows])
        jd, lon = self.principal.crossings(float(jd_ut[0]) - 40, float(jd_ut[-1]) + 70)
        days, frac = self._local_days(jd)
        for i, r in enumerate(rows):
            frac_nm = self.local.fraction(jd_ut[i:i + 1], self.deltat)[0]
            r["new_moon_local"] = f"{int(frac_nm * 24):02d}:{int(frac_nm * 1440) % 60:02d}"
            r["new_moon_margin_min"] = round(float(margins[i]), 1)
            sel = (days >= s0[i]) & (days < s1[i])
            r["principal_terms"] = ", ".join(term_name(x) for x in lon[sel]) or "-"
            tm = np.minimum(frac[sel], 1 - frac[sel]) * 1440.0
            r["term_margin_min"] = round(float(tm.min()), 1) if tm.size else float("nan")
            r["day_cycle"] = sexagenary_name(int(day_cycle_index(s0[i])))
        return rows

    def describe(self):
        d = super().describe()
        d["month_starts"] = self.moons.describe()
        d["delta_t"] = self.deltat.name if hasattr(self.deltat, "name") else str(self.deltat)
        return d
