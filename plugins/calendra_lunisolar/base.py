"""The machinery shared by the sky-defined calendars: years of lunations, month starts by lookup.

A calendar here is described by three things:

* **month starts**: the day number on which the month of lunation ``k``
  begins (Meeus' lunation number: ``k = 0`` is the new moon of 2000 January
  6), from a sky source of :mod:`.sky` (the local day of the conjunction, or
  the day after the evening of first crescent visibility);
* **years**: the lunation whose month is the first of each year
  (:meth:`LunationCalendar._year_first_lunation`); a year has 12 or 13
  months, the difference of consecutive first lunations;
* **the leap month**: its 0-based position in a 13-month year; it bears the
  number of the month before it, with ``leap = 1`` (the second Addaru, the
  Chinese "leap fourth month", ...).

Conversions are array lookups: a day number finds its lunation by
``np.searchsorted`` into the starts of the few lunations around it, a date
finds its lunation by arithmetic on the year's first lunation.  The starts
are computed lazily, a block of lunations at a time, and kept in memory.

Some calendars bound the length of a month to 29 or 30 days (a month whose
crescent was not seen on its 30th evening ends anyway, and a month never
ends before its 29th day) and accept attested month lengths that override
the computed ones; both rules act on consecutive months, so the starts of a
block are recomputed from :data:`CHAIN_MARGIN` lunations before it.

Day boundary: the calendar's ``day_start``; a month start is the day
number (civil date at midnight) whose calendar day is day 1.  For calendars
whose day begins at sunset, day 1 of a month begins at sunset of the civil
day before that number (:mod:`calendra.daybounds`).
"""

from __future__ import annotations

import re

import numpy as np

from calendra.calendar import Calendar, iso_year
from calendra.daylib import as_int_array
from calendra.errors import DateParseError, DateRangeError, ParameterError

from . import sky

#: Lunations recomputed before a block when month lengths depend on the previous months.
CHAIN_MARGIN = 8
#: Years per cached block of year structure.
YEAR_BLOCK = 16
#: Mean months per year (19-year cycle: 235/19).
MONTHS_PER_YEAR = 235.0 / 19.0


def bool_option(value, name) -> bool:
    """Read a boolean option given as text (``true``/``false``/``yes``/``no``/``1``/``0``) or bool."""
    if isinstance(value, bool):
        return value
    text = str(value).strip().lower()
    if text in ("1", "true", "yes", "on"):
        return True
    if text in ("0", "false", "no", "off"):
        return False
    raise ParameterError(f"option {name}: expected true or false, got {value!r}")


class LunationCalendar(Calendar):
    """Base class of calendars whose months are lunations and whose years are runs of 12 or 13 of them.

    Subclasses implement :meth:`_year_first_lunation`, :meth:`_leap_position`
    and :meth:`_raw_starts`, and set ``min_month``/``max_month`` (day bounds of
    a month, None for none) and :attr:`epoch_lunation_year` (a pair (year,
    first lunation) from which years are estimated).
    """

    fields = ("year", "month", "leap", "day")
    has_leap = True
    min_month: int | None = None
    max_month: int | None = None
    #: 12 month names (month 1 first).
    month_names: tuple = ()
    #: (year, lunation of its first month), for estimating the year of a lunation.
    epoch_lunation_year: tuple = (2000, 0)

    #: (year, day number near its first day), for estimating the year of a day.
    year_epoch: tuple = (2000, 2451580)
    #: Mean days per year.
    year_days: float = 365.2422
    #: Mean months per year (12 for a lunar calendar).
    months_per_year: float = MONTHS_PER_YEAR

    def __init__(self):
        self.valid_jdn = sky.span_jdn()
        self._adjusted: dict[int, np.ndarray] = {}
        self._years: dict[int, tuple] = {}
        self.attested_lengths: dict[int, tuple] = {}     # lunation -> (days, source)

    # ------------------------------------------------------------ to implement
    def _year_first_lunation_block(self, y0: int, y1: int):
        """Return (first lunation, leap position) arrays for years y0..y1 inclusive (y1 + 1 needed too)."""
        raise NotImplementedError

    def _raw_starts(self, k) -> np.ndarray:
        """Return the sky's start day of the month of each lunation (before length rules)."""
        raise NotImplementedError

    # ------------------------------------------------------------ years
    def _estimate_year(self, jdn):
        """Approximate year of day numbers ``jdn`` (within one year of the truth)."""
        y0, j0 = self.year_epoch
        return y0 + np.floor((np.asarray(jdn, dtype=float) - j0) / self.year_days).astype(np.int64)

    def computable_years(self) -> tuple[int, int]:
        """Years whose structure can be computed within DE406 (a little wider than :attr:`valid_jdn`)."""
        from calendra.ephemeris import SPAN_JD

        return (int(self._estimate_year(SPAN_JD[0] + 100)) + 2, int(self._estimate_year(SPAN_JD[1] - 100)) - 2)

    def _year_block(self, y0: int, y1: int):
        """First lunations of years y0..y1+1 and leap positions of y0..y1, clipped to the computable years."""
        clo, chi = self.computable_years()
        a, b = max(y0, clo), min(y1, chi)
        n = y1 - y0 + 1
        nk = np.empty(n + 1, dtype=np.int64)
        lp = np.full(n, -1, dtype=np.int64)
        if a <= b:
            part_nk, part_lp = self._year_first_lunation_block(a, b + 1)
            nk[a - y0:b - y0 + 2] = np.asarray(part_nk, dtype=np.int64)[:b - a + 2]
            lp[a - y0:b - y0 + 1] = np.asarray(part_lp, dtype=np.int64)[:b - a + 1]
            # Years outside the computable span: 12-month fillers, never valid (see is_valid).
            for i in range(a - y0 - 1, -1, -1):
                nk[i] = nk[i + 1] - 12
            for i in range(b - y0 + 2, n + 1):
                nk[i] = nk[i - 1] + 12
        else:
            k0 = self.epoch_lunation_year[1] + int(round((y0 - self.epoch_lunation_year[0]) * self.months_per_year))
            nk[:] = k0 + 12 * np.arange(n + 1)
        return nk, lp

    def _year_info(self, years):
        """Return (first lunation, months, leap position) arrays for ``years`` (leap position -1: none)."""
        y = as_int_array(years)
        flat = y.reshape(-1)
        blocks = np.unique(np.floor_divide(flat, YEAR_BLOCK))
        missing = [int(b) for b in blocks if int(b) not in self._years]
        for first, last in sky._runs(missing):
            y0, y1 = first * YEAR_BLOCK, (last + 1) * YEAR_BLOCK - 1
            nk, lp = self._year_block(y0, y1)
            for b in range(first, last + 1):
                lo = (b - first) * YEAR_BLOCK
                # first lunations of the block's years and of the year after, leap positions
                self._years[b] = (nk[lo:lo + YEAR_BLOCK + 1], lp[lo:lo + YEAR_BLOCK])
        nk = np.empty(flat.shape, dtype=np.int64)
        nxt = np.empty(flat.shape, dtype=np.int64)
        lp = np.empty(flat.shape, dtype=np.int64)
        bi = np.floor_divide(flat, YEAR_BLOCK)
        for b in np.unique(bi):
            sel = bi == b
            arr_nk, arr_lp = self._years[int(b)]
            off = flat[sel] - int(b) * YEAR_BLOCK
            nk[sel] = arr_nk[off]
            nxt[sel] = arr_nk[off + 1]
            lp[sel] = arr_lp[off]
        months = nxt - nk
        return nk.reshape(y.shape), months.reshape(y.shape), lp.reshape(y.shape)

    def _year_of_lunation(self, k):
        """Return the year whose months include lunation ``k`` (arrays)."""
        k = as_int_array(k)
        y0, k0 = self.epoch_lunation_year
        y = y0 + np.floor((k - k0) / self.months_per_year).astype(np.int64)
        for _ in range(6):
            nk, months, _ = self._year_info(y)
            low = k < nk
            high = k >= nk + months
            if not (low.any() or high.any()):
                return y
            y = y - low + high
        from calendra.errors import CalendraError

        raise CalendraError(f"{self.name}: cannot place lunation {int(k.reshape(-1)[0])} in a year")

    def months_in_year(self, year) -> np.ndarray:
        """Return the number of months (12 or 13) of ``year``."""
        return self._year_info(year)[1]

    def leap_month(self, year) -> np.ndarray:
        """Return the number of the month that is doubled in ``year`` (the leap month bears it), 0 if none."""
        _, months, lp = self._year_info(year)
        return np.where(months == 13, lp, 0)

    # ------------------------------------------------------------ month starts
    def _block_starts(self, b: int) -> np.ndarray:
        """Starts of lunations b*BLOCK .. (b+1)*BLOCK (one extra for the last length), length rules applied."""
        B = sky.LUNATION_BLOCK
        k_first, k_last = b * B, (b + 1) * B
        chained = self.min_month is not None or self.max_month is not None or bool(self.attested_lengths)
        if not chained:
            return self._raw_starts(np.arange(k_first, k_last + 1))
        k = np.arange(k_first - CHAIN_MARGIN, k_last + 1)
        raw = self._raw_starts(k)
        s = raw.copy()
        lo = self.min_month if self.min_month is not None else -10 ** 9
        hi = self.max_month if self.max_month is not None else 10 ** 9
        att = self.attested_lengths
        diffs = np.diff(raw)
        # Fast path: nothing to change in this stretch.
        if att == {} and np.all((diffs >= lo) & (diffs <= hi)):
            return raw[CHAIN_MARGIN:]
        for i in range(1, k.size):
            prev_k = int(k[i - 1])
            if prev_k in att:
                s[i] = s[i - 1] + att[prev_k][0]
            else:
                s[i] = min(max(raw[i], s[i - 1] + lo), s[i - 1] + hi)
        return s[CHAIN_MARGIN:]

    def month_starts(self, k) -> np.ndarray:
        """Return the day number of day 1 of the month of each lunation in ``k`` (rules applied)."""
        k = as_int_array(k)
        flat = k.reshape(-1)
        B = sky.LUNATION_BLOCK
        bi = np.floor_divide(flat, B)
        out = np.empty(flat.shape, dtype=np.int64)
        missing = [int(b) for b in np.unique(bi) if int(b) not in self._adjusted]
        if len(missing) > 1:
            # The sky of every missing block (and of the months before each) in as few array jobs as possible.
            need = np.unique(np.concatenate([np.arange(b * B - CHAIN_MARGIN, (b + 1) * B + 1) for b in missing]))
            self._raw_starts(need)
        for b in np.unique(bi):
            b = int(b)
            if b not in self._adjusted:
                self._adjusted[b] = self._block_starts(b)
            sel = bi == b
            out[sel] = self._adjusted[b][flat[sel] - b * B]
        return out.reshape(k.shape)

    def prefetch(self, k_first: int, k_last: int) -> None:
        """Compute the month starts of lunations k_first..k_last in one batch (speeds up long tables)."""
        margin = CHAIN_MARGIN + sky.LUNATION_BLOCK
        self._raw_starts(np.arange(k_first - margin, k_last + margin + 1))

    def _guard(self, jdn):
        lo, hi = self.valid_jdn
        j = np.asarray(jdn)
        bad = (j < lo) | (j > hi)
        if np.any(bad):
            first = int(j[bad].flat[0]) if j.ndim else int(j)
            raise DateRangeError(f"{self.name} is computed from DE406 for day numbers {lo}..{hi} "
                                 f"(JD {lo - 0.5}..{hi + 0.5}); got day {first}", lo - 0.5, hi + 0.5, bad)

    def lunation_of_day(self, jdn) -> np.ndarray:
        """Return the lunation whose month holds each day number."""
        j = as_int_array(jdn)
        flat = j.reshape(-1)
        k0 = sky.lunation_of_jd(flat - 8.0)
        cand = k0[:, None] + np.arange(-1, 4)[None, :]
        u, inv = np.unique(cand, return_inverse=True)
        starts = self.month_starts(u)[inv.reshape(cand.shape)]
        pos = (starts <= flat[:, None]).sum(axis=1) - 1
        if np.any(pos < 0) or np.any(pos >= cand.shape[1] - 1):
            from calendra.errors import CalendraError

            raise CalendraError(f"{self.name}: no month found for day {int(flat[0])}")
        return cand[np.arange(flat.size), pos].reshape(j.shape)

    # ------------------------------------------------------------ positions
    @staticmethod
    def _position(month, leap, lp):
        """0-based position in the year of (month, leap) given the leap position ``lp`` (-1: none)."""
        m = as_int_array(month)
        lf = as_int_array(leap)
        has = lp >= 0
        normal = np.where(has & (m > lp), m, m - 1)
        return np.where(lf != 0, m, normal)

    @staticmethod
    def _label(p, lp):
        """(month, leap) of 0-based position ``p`` given the leap position ``lp``."""
        has = lp >= 0
        month = np.where(has & (p >= lp), p, p + 1)
        leap = (has & (p == lp)).astype(np.int64)
        return month, leap

    # ------------------------------------------------------------ protocol
    def _split(self, fields):
        if self.has_leap:
            y, m, lf, d = fields
        else:
            y, m, d = fields
            lf = np.zeros_like(as_int_array(m))
        return as_int_array(y), as_int_array(m), as_int_array(lf), as_int_array(d)

    def _lunation_of(self, y, m, lf):
        nk, months, lp = self._year_info(y)
        lpm = np.where(months == 13, lp, -1)
        p = self._position(m, lf, lpm)
        return nk + p, months, lpm, p

    def _to_jdn(self, *fields):
        y, m, lf, d = self._split(fields)
        k, _, _, _ = self._lunation_of(y, m, lf)
        return self.month_starts(k) + d - 1

    def _from_jdn(self, jdn):
        self._guard(jdn)
        j = as_int_array(jdn)
        k = self.lunation_of_day(j)
        y = self._year_of_lunation(k)
        nk, months, lp = self._year_info(y)
        lpm = np.where(months == 13, lp, -1)
        month, leap = self._label(k - nk, lpm)
        day = j - self.month_starts(k) + 1
        if self.has_leap:
            return y, month, leap, day
        return y, month, day

    def _year_range(self):
        return self.computable_years()

    def is_valid(self, *fields):
        y, m, lf, d = self._split(fields)
        shape = np.broadcast_shapes(y.shape, m.shape, lf.shape, d.shape)
        y, m, lf, d = (np.broadcast_to(a, shape) for a in (y, m, lf, d))
        lo, hi = self._year_range()
        inside = (y >= lo) & (y <= hi)
        ok = np.zeros(shape, dtype=bool)
        if not inside.any():
            return ok
        yi = np.where(inside, y, lo)
        nk, months, lp = self._year_info(yi)
        lpm = np.where(months == 13, lp, -1)
        leap_ok = (lf == 0) | ((lf == 1) & (lpm >= 0) & (m == lpm))
        mok = (m >= 1) & (m <= 12) & leap_ok & inside
        p = self._position(np.where(mok, m, 1), np.where(mok, lf, 0), lpm)
        k = nk + p
        s0 = self.month_starts(k)
        s1 = self.month_starts(k + 1)
        vlo, vhi = self.valid_jdn
        ok = mok & (d >= 1) & (d <= s1 - s0) & (s0 + d - 1 >= vlo) & (s0 + d - 1 <= vhi)
        return ok

    def _invalid_reason(self, *fields):
        y, m, lf, d = (int(v) for v in self._split(fields))
        lo, hi = self._year_range()
        if not lo <= y <= hi:
            return f"year {y} lies outside the span {self.name} is computed for ({lo}..{hi}, from DE406)"
        nk, months, lp = (int(v) for v in self._year_info(np.int64(y)))
        if not 1 <= m <= 12:
            return f"month {m} does not exist in {self.name} (months 1..12, a leap month bears the number before it)"
        if lf not in (0, 1):
            return f"the leap field is 0 or 1, got {lf}"
        if lf == 1 and not (months == 13 and lp == m):
            have = f"its leap month is {self.month_name(lp, y, True)}" if months == 13 else "it has no leap month"
            return f"{self.name} {y} has no leap month {m}: {have}"
        k = int(self._lunation_of(np.int64(y), np.int64(m), np.int64(lf))[0])
        s0, s1 = (int(v) for v in self.month_starts(np.array([k, k + 1])))
        if not 1 <= d <= s1 - s0:
            return (f"day {d} does not exist in {self.month_name(m, y, bool(lf))} {y} of {self.name}: "
                    f"that month has {s1 - s0} days")
        vlo, vhi = self.valid_jdn
        if not vlo <= s0 + d - 1 <= vhi:
            return f"{self.name}: that day lies outside the span computed from DE406"
        return None

    def month_length(self, year, month, leap=0) -> np.ndarray:
        """Return the number of days (29 or 30) of a month."""
        y, m, lf = as_int_array(year), as_int_array(month), as_int_array(leap)
        k = self._lunation_of(y, m, lf)[0]
        return self.month_starts(k + 1) - self.month_starts(k)

    def year_start_jdn(self, year) -> np.ndarray:
        """Return the day number of day 1 of the first month of ``year``."""
        nk, _, _ = self._year_info(as_int_array(year))
        return self.month_starts(nk)

    # ------------------------------------------------------------ names and text
    def month_name(self, month: int, year: int | None = None, leap: bool = False) -> str:
        names = self.month_names
        base = names[month - 1] if names and 1 <= month <= len(names) else str(month)
        return f"{base} II" if leap else base

    def format(self, *fields, style: str = "iso") -> str:
        y, m, lf, d = (int(np.asarray(v)) for v in self._split(fields))
        if style == "iso":
            return f"{iso_year(y)}-{m:02d}{'L' if lf else ''}-{d:02d}"
        if style == "long":
            return f"{d} {self.month_name(m, y, bool(lf))} {self.year_label(y)}"
        raise ParameterError(f"unknown date style {style!r} (iso, long)")

    def year_label(self, year: int) -> str:
        return str(year)

    def parse(self, text: str):
        """Read ``Y-MM[L]-DD`` (``L``: the leap month), ``Y MM L DD`` or ``D MonthName [II] Y``."""
        s = text.strip()
        m = re.fullmatch(r"([+-]?\d+)-(\d{1,2})(L?)-(\d{1,2})", s, re.I)
        if m:
            y, mo, lf, d = int(m.group(1)), int(m.group(2)), 1 if m.group(3) else 0, int(m.group(4))
        else:
            nums = re.findall(r"[+-]?\d+", s)
            if len(nums) == (4 if self.has_leap else 3) and re.fullmatch(r"[\s+\-\d/.]+", s):
                vals = [int(n) for n in nums]
                if self.has_leap:
                    y, mo, lf, d = vals
                else:
                    (y, mo, d), lf = vals, 0
            else:
                y, mo, lf, d = self._parse_named(s)
        if self.has_leap:
            return (y, mo, lf, d)
        if lf:
            raise DateParseError(f"{self.name} has no leap months: {text!r}")
        return (y, mo, d)

    def _parse_named(self, s):
        words = s.replace(",", " ").split()
        low = [w.lower() for w in words]
        for i in range(len(words)):
            for j in range(len(words), i, -1):
                phrase = " ".join(low[i:j])
                idx = self._match_month(phrase)
                if idx is None:
                    continue
                before, after = words[:i], words[j:]
                leap = 0
                if after and after[0].upper() in ("II", "2ND"):         # "Addaru II"
                    after, leap = after[1:], 1
                else:                                                    # a leap name like "Second {name}"
                    lead = getattr(self, "leap_name", "{name} II").split("{name}")[0].split()
                    if lead and [w.lower() for w in before[-len(lead):]] == [w.lower() for w in lead]:
                        before, leap = before[:-len(lead)], 1
                rest = before + after
                nums = [w for w in rest if re.fullmatch(r"[+-]?\d+", w)]
                others = [w for w in rest if not re.fullmatch(r"[+-]?\d+", w) and w.upper() not in ("SE", "AH")]
                if len(nums) == 2 and not others:
                    d, y = int(nums[0]), int(nums[1])
                    return y, idx, leap, d
        raise DateParseError(f"cannot read {s!r} as a {self.name} date: write Y-MM-DD, Y-MML-DD for a leap "
                             f"month, or 'D MONTH [II] Y' with a month name ({', '.join(self.month_names)})")

    def _match_month(self, phrase):
        def norm(t):
            return re.sub(r"[^a-z0-9]", "", t.lower())

        p = norm(phrase)
        if not p:
            return None
        for i, name in enumerate(self.month_names):
            for alias in (name,) + tuple(getattr(self, "month_aliases", {}).get(i + 1, ())):
                if p == norm(alias):
                    return i + 1
        return None

    # ------------------------------------------------------------ tables
    def lunations_of_year(self, year: int) -> np.ndarray:
        nk, months, _ = self._year_info(np.int64(year))
        return np.arange(int(nk), int(nk) + int(months))

    def year_rows(self, year: int) -> list[dict]:
        """One row per month of ``year``: number, leap flag, name, first day, length (extra columns by subclasses)."""
        from calendra import julian_gregorian as jg

        k = self.lunations_of_year(year)
        s0 = self.month_starts(k)
        s1 = self.month_starts(k + 1)
        nk, months, lp = (int(v) for v in self._year_info(np.int64(year)))
        lpm = lp if months == 13 else -1
        month, leap = self._label(k - nk, np.int64(lpm))
        rows = []
        for i in range(k.size):
            jy, jm, jd = (int(v) for v in jg.julian_from_jdn(s0[i]))
            gy, gm, gd = (int(v) for v in jg.gregorian_from_jdn(s0[i]))
            rows.append({
                "lunation": int(k[i]), "month": int(month[i]), "leap": int(leap[i]),
                "name": self.month_name(int(month[i]), year, bool(leap[i])),
                "first_jdn": int(s0[i]), "days": int(s1[i] - s0[i]),
                "first_julian": f"{iso_year(jy)}-{jm:02d}-{jd:02d}",
                "first_gregorian": f"{iso_year(gy)}-{gm:02d}-{gd:02d}",
            })
        return rows
