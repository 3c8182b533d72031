"""The sky behind the lunisolar calendars: new moons, solar longitudes and first crescents, cached by block.

Every calendar of this plugin numbers its months by **lunation**: the
integer ``k`` of Meeus' lunation number (``k = 0`` for the new moon of 2000
January 6, :mod:`calendra.lunations`).  A month labelled by lunation ``k``
begins with (or after) the conjunction ``k``.  The sources here turn
lunation numbers into the civil day on which such a month begins, and cache
the answers in blocks of :data:`LUNATION_BLOCK` lunations, each block
computed once by one array call (all new moons or all crescent evenings of
the block at once; many missing blocks in one call).

Time scales: conjunction and solar-longitude instants are TT Julian Days;
local days come from UT1 = TT - delta T (the calendar's delta-T model) plus
the offset of the local time (a fixed meridian, a site's civil time, or
local apparent time).

Day numbers are chronological Julian Day Numbers (:mod:`calendra.daylib`):
the civil day ``jdn`` runs from local midnight ``jdn - 0.5`` to ``jdn + 0.5``.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from calendra.lunations import MEAN_SYNODIC_MONTH, MEEUS_EPOCH_JDE, predicted_phase_jde

#: Lunations per cached block.
LUNATION_BLOCK = 16
#: Days per cached window of solar-longitude crossings (16 Julian years).
SOLAR_WINDOW_DAYS = 16 * 365.25
#: Margin kept between the computations and the ends of DE406, days.
SPAN_MARGIN_DAYS = 1200


def span_jdn() -> tuple[int, int]:
    """Return the day numbers the sky calendars are defined for: DE406 less :data:`SPAN_MARGIN_DAYS` each side.

    The margin leaves room for what a day's label depends on (the winter
    solstice before a Chinese year, the spring equinox of a Babylonian year,
    the new moons around a month).
    """
    from calendra.ephemeris import SPAN_JD

    return int(math.ceil(SPAN_JD[0])) + SPAN_MARGIN_DAYS, int(math.floor(SPAN_JD[1])) - SPAN_MARGIN_DAYS


def lunation_of_jd(jd) -> np.ndarray:
    """Return the lunation number of the mean new moon at or before ``jd`` (days), as int64."""
    return np.floor((np.asarray(jd, dtype=float) - MEEUS_EPOCH_JDE) / MEAN_SYNODIC_MONTH).astype(np.int64)


def _blocks(k) -> np.ndarray:
    return np.unique(np.floor_divide(np.asarray(k, dtype=np.int64), LUNATION_BLOCK))


def _runs(blocks):
    """Split sorted block numbers into runs of consecutive numbers: [(first, last), ...]."""
    runs = []
    for b in blocks:
        b = int(b)
        if runs and b == runs[-1][1] + 1:
            runs[-1][1] = b
        else:
            runs.append([b, b])
    return runs


#: Days kept clear of the ends of DE406 by the sky computations.
EDGE_DAYS = 30.0


def _lunation_span_tt(k_first, k_last):
    """TT range [a, b) holding exactly the conjunctions of lunations k_first..k_last, within DE406.

    Returns None when the range lies wholly outside (less :data:`EDGE_DAYS`).
    """
    from calendra.ephemeris import SPAN_JD

    a = float(predicted_phase_jde(k_first)) - 0.5 * MEAN_SYNODIC_MONTH
    b = float(predicted_phase_jde(k_last)) + 0.5 * MEAN_SYNODIC_MONTH
    a, b = max(a, SPAN_JD[0] + EDGE_DAYS), min(b, SPAN_JD[1] - EDGE_DAYS)
    return (a, b) if b > a + 1.0 else None


def _place(found_k, want):
    """Index of each wanted lunation in ``found_k`` (sorted) and whether it is there."""
    idx = np.searchsorted(found_k, want)
    idx_c = np.minimum(idx, max(found_k.size - 1, 0))
    have = (idx < found_k.size) & (found_k[idx_c] == want) if found_k.size else np.zeros(want.shape, bool)
    return idx_c, have


class _BlockCache:
    """Per-lunation values, computed by blocks and kept in memory."""

    def __init__(self):
        self.blocks: dict[int, dict] = {}

    def ensure(self, k, compute):
        """Make sure every block holding a lunation of ``k`` is computed (runs of missing blocks at once)."""
        missing = [b for b in _blocks(k) if int(b) not in self.blocks]
        for first, last in _runs(missing):
            values = compute(first * LUNATION_BLOCK, (last + 1) * LUNATION_BLOCK - 1)
            for b in range(first, last + 1):
                lo = (b - first) * LUNATION_BLOCK
                self.blocks[b] = {key: arr[lo:lo + LUNATION_BLOCK] for key, arr in values.items()}

    def get(self, k, key):
        k = np.asarray(k, dtype=np.int64)
        out = None
        flat = k.reshape(-1)
        b = np.floor_divide(flat, LUNATION_BLOCK)
        for blk in np.unique(b):
            sel = b == blk
            arr = self.blocks[int(blk)][key]
            if out is None:
                out = np.empty(flat.shape + arr.shape[1:], dtype=arr.dtype)
            out[sel] = arr[flat[sel] - int(blk) * LUNATION_BLOCK]
        if out is None:
            return np.zeros(k.shape, dtype=np.int64)
        return out.reshape(k.shape + out.shape[1:])


# ------------------------------------------------------------------ local time

@dataclass(frozen=True)
class LocalTime:
    """How an instant is placed on a local civil day.

    Attributes
    ----------
    offset_hours : float
        Local time - UT1 in hours for mean time (east positive): 8 for the
        120th meridian east, ``longitude / 15`` for local mean time.
    apparent : bool
        True: local *apparent* solar time (the sundial's), i.e. the mean time
        of the meridian ``15 * offset_hours`` plus the equation of time.
    label : str
        Text shown in output.
    """

    offset_hours: float
    apparent: bool = False
    label: str = ""

    def days(self, jd_ut, deltat=None) -> np.ndarray:
        """Return the local civil day numbers (int64) of instants ``jd_ut`` (UT1 Julian Days)."""
        jd = np.asarray(jd_ut, dtype=float) + self.offset_hours / 24.0
        if self.apparent:
            from calendra.solartime import equation_of_time_days

            jd = jd + equation_of_time_days(np.asarray(jd_ut, dtype=float), deltat)
        return np.floor(jd + 0.5).astype(np.int64)

    def fraction(self, jd_ut, deltat=None) -> np.ndarray:
        """Return the fraction of the local day elapsed at ``jd_ut`` (0 = local midnight)."""
        jd = np.asarray(jd_ut, dtype=float) + self.offset_hours / 24.0
        if self.apparent:
            from calendra.solartime import equation_of_time_days

            jd = jd + equation_of_time_days(np.asarray(jd_ut, dtype=float), deltat)
        shifted = jd + 0.5
        return shifted - np.floor(shifted)

    def describe(self) -> str:
        what = "apparent solar time" if self.apparent else "mean time"
        return self.label or f"{what} of UT{self.offset_hours:+g} h"


def parse_local_time(spec, apparent=False) -> LocalTime:
    """Read a meridian or zone: ``120`` / ``120E`` / ``116.4`` (degrees east), ``UTC+8``, ``UT-5:30``.

    Parameters
    ----------
    spec : str or float
        Degrees east of Greenwich (a trailing ``E``/``W`` allowed) or a UT
        offset written ``UTC+H[:MM]``.
    apparent : bool
        Local apparent solar time of that meridian instead of its mean time.

    Raises
    ------
    calendra.errors.ParameterError
        If the text is neither.
    """
    import re

    from calendra.errors import ParameterError

    if isinstance(spec, (int, float)):
        deg = float(spec)
    else:
        text = str(spec).strip().upper().replace(" ", "")
        m = re.fullmatch(r"UTC?([+-])(\d{1,2})(?::?(\d{2}))?", text)
        if m:
            hours = int(m.group(2)) + (int(m.group(3)) / 60.0 if m.group(3) else 0.0)
            deg = 15.0 * hours * (1 if m.group(1) == "+" else -1)
        else:
            m = re.fullmatch(r"([+-]?\d+(?:\.\d*)?)([EW]?)", text)
            if not m:
                raise ParameterError(f"cannot read meridian {spec!r}: write degrees east (120, 116.4E, 73W) "
                                     "or a UT offset (UTC+8)")
            deg = float(m.group(1)) * (-1 if m.group(2) == "W" else 1)
    if not -180.0 <= deg <= 180.0:
        raise ParameterError(f"meridian {spec!r} is outside -180..180 degrees")
    label = f"{'apparent' if apparent else 'mean'} solar time of meridian {abs(deg):g}{'E' if deg >= 0 else 'W'}"
    return LocalTime(deg / 15.0, apparent, label)


# ------------------------------------------------------------------ new moons

class ConjunctionSource:
    """Conjunctions (new moons) by lunation and the local day each falls on.

    Parameters
    ----------
    local : LocalTime
        Where the day of the conjunction is counted.
    deltat : delta-T model
    day_after : bool
        The month begins on the day *after* the day of the conjunction.
    """

    def __init__(self, local: LocalTime, deltat, day_after: bool = False):
        self.local = local
        self.deltat = deltat
        self.day_after = bool(day_after)
        self._cache = _BlockCache()

    def _compute(self, k_first, k_last):
        from calendra.lunations import lunar_phases

        want = np.arange(k_first, k_last + 1)
        # Beyond DE406 (never a valid day, see span_jdn): Meeus' predicted phase stands in.
        jd_tt = np.asarray(predicted_phase_jde(want), dtype=float)
        span = _lunation_span_tt(k_first, k_last)
        if span is not None:
            table = lunar_phases(span[0], span[1], "new")
            idx, have = _place(table.lunation, want)
            jd_tt = np.where(have, table.jd_tt[idx] if table.jd_tt.size else jd_tt, jd_tt)
        jd_ut = np.asarray(self.deltat.ut_from_tt(jd_tt), dtype=float)
        day = self.local.days(jd_ut, self.deltat)
        frac = self.local.fraction(jd_ut, self.deltat)
        # Minutes from the nearest local midnight: how far the instant is from changing its day.
        margin = np.minimum(frac, 1.0 - frac) * 1440.0
        return {"jd_tt": jd_tt, "jd_ut": jd_ut, "day": day, "margin_min": margin}

    def values(self, k, key):
        """Return ``key`` (``jd_tt``, ``jd_ut``, ``day``, ``margin_min``) for lunations ``k``."""
        self._cache.ensure(k, self._compute)
        return self._cache.get(k, key)

    def starts(self, k) -> np.ndarray:
        """Return the day number on which the month of each lunation in ``k`` begins."""
        return self.values(k, "day") + (1 if self.day_after else 0)

    def margin(self, k) -> np.ndarray:
        """Minutes between the conjunction and the nearest local midnight (a small value: a fragile month start)."""
        return self.values(k, "margin_min")

    def describe(self) -> str:
        return (f"the local day of the geocentric conjunction ({self.local.describe()})"
                + ("; the month begins the day after" if self.day_after else ""))


# ------------------------------------------------------------------ first crescents

#: Criterion margins below which a month start is called fragile, in the criterion's units: about
#: the spread of the published fits (Yallop's q bands are 0.06-0.2 wide; Odeh's zones 2-4 deg) and,
#: for the lag rule, the lag change from a 2-hour error in delta T (about 2 min per hour).
FRAGILE_MARGIN = {"lag": 4.0, "yallop": 0.03, "odeh": 0.3}


class CrescentSource:
    """First evening of crescent visibility after each conjunction, at a site, by a criterion.

    The month of lunation ``k`` begins on the day after the civil day whose
    evening first shows the crescent (its day 1 begins at that sunset); if no
    evening of the window (the day before to four days after the local day
    of conjunction) shows it, the month begins the day after the window's
    last evening and the calendar's 30-day rule (if any) takes over.

    Parameters
    ----------
    site : calendra.sites.Site
    criterion : str
        A registered criterion of :mod:`calendra.crescent` (``lag``, ``yallop``, ``odeh``, ...).
    params : dict
        Constructor arguments of the criterion (``lag_min``, ``age_min``, ``elongation_min`` for ``lag``).
    threshold : float or None
        Test value counted as visible (default: the criterion's).
    deltat : delta-T model
    """

    def __init__(self, site, criterion="lag", params=None, threshold=None, deltat=None):
        from calendra.crescent import get_criterion

        self.site = site
        self.criterion_name = criterion.lower()
        self.params = dict(params or {})
        self.criterion = get_criterion(self.criterion_name, **self.params)
        self.threshold = self.criterion.default_threshold if threshold is None else float(threshold)
        self.deltat = deltat
        self._cache = _BlockCache()

    def _compute(self, k_first, k_last):
        from calendra.crescent import crescent_nights

        want = np.arange(k_first, k_last + 1)
        span = _lunation_span_tt(k_first, k_last)
        if span is None:
            return self._filler(want)
        nights = crescent_nights(self.site, span[0], span[1], deltat=self.deltat, at=(self.criterion.at,))
        lun = np.rint(nights.lunation).astype(np.int64)
        idx, have = _place(lun, want)
        if not have.all():
            # Lunations beyond DE406 (never a valid day): stand-ins from the predicted conjunction.
            out = self._filler(want)
            if have.any():
                part = self._evaluate(nights, idx[have])
                for key, arr in part.items():
                    out[key][have] = arr
            return out
        return self._evaluate(nights, idx)

    def _filler(self, want):
        from calendra.crescent import EVENING_OFFSETS

        m = len(EVENING_OFFSETS)
        day = np.floor(np.asarray(predicted_phase_jde(want), dtype=float) + 0.5).astype(np.int64) + 1
        n = want.size
        return {"evening": day, "found": np.zeros(n, bool), "value": np.full(n, np.nan),
                "margin": np.full(n, np.nan), "margin_after": np.full(n, np.nan),
                "margin_before": np.full(n, np.nan), "category": np.full(n, "-", dtype="<U12"),
                "conjunction_tt": np.asarray(predicted_phase_jde(want), dtype=float),
                "days": day[:, None] + np.arange(m)[None, :], "values": np.full((n, m), np.nan),
                "visible": np.zeros((n, m), bool)}

    def _evaluate(self, nights, idx):
        from calendra.crescent import visibility

        vis = visibility(nights, self.criterion, self.threshold)
        value = vis.result.value[idx]
        visible = vis.result.visible[idx]
        days = nights.day[idx]
        first = vis.index[idx]
        n, m = days.shape
        rows = np.arange(n)
        found = first >= 0
        col = np.where(found, first, m - 1)
        evening = days[rows, col]
        thr = self.threshold
        g = nights.geometry(self.criterion.at)
        age = g["age_h"][idx]
        # Margin after: how far the first visible evening lies above the threshold.
        above = np.where(found, value[rows, col] - thr, np.nan)
        # Margin before: how far the evening before lies below it, when that evening was after
        # conjunction and decided by the test value (not by the age, a negative lag or a Danjon limit:
        # those evenings count as clearly not visible, margin infinite).
        prev = np.maximum(col - 1, 0)
        admissible = np.asarray(self.criterion.admissible(g), dtype=bool)[idx] & (g["lag_min"][idx] > 0)
        prev_ok = (found & (col >= 1) & (age[rows, prev] > 0) & np.isfinite(value[rows, prev])
                   & admissible[rows, prev])
        below = np.where(prev_ok, thr - value[rows, prev], np.inf)
        margin = np.where(found, np.minimum(above, below), np.nan)
        category = vis.result.category[idx][rows, col].astype("<U12")
        return {
            "evening": evening.astype(np.int64), "found": found, "value": value[rows, col],
            "margin": margin, "margin_after": above, "margin_before": below, "category": category,
            "conjunction_tt": nights.conjunction_tt[idx],
            "days": days.astype(np.int64), "values": value, "visible": visible,
        }

    def values(self, k, key):
        """Return per-lunation ``key``: ``evening`` (civil day of first visibility), ``found``, ``value``
        (test value that evening), ``margin``/``margin_after``/``margin_before`` (criterion units),
        ``category``, ``conjunction_tt``; ``days``/``values``/``visible`` give every evening examined."""
        self._cache.ensure(k, self._compute)
        return self._cache.get(k, key)

    def starts(self, k) -> np.ndarray:
        """Return the day number of day 1 of each lunation's month: the day after the evening of first visibility."""
        return self.values(k, "evening") + 1

    def margin(self, k) -> np.ndarray:
        return self.values(k, "margin")

    def fragile(self, k) -> np.ndarray:
        """True where the month start depends on a criterion margin below :data:`FRAGILE_MARGIN`."""
        limit = FRAGILE_MARGIN.get(self.criterion_name, 0.0)
        m = self.values(k, "margin")
        return ~np.isfinite(m) | (m < limit)

    def evening_value(self, k, evening_day):
        """Test value and visibility on the evening of civil day ``evening_day`` after conjunction ``k``.

        Returns (value, visible) arrays; NaN/False where that evening lies outside the examined window.
        """
        days = self.values(k, "days")
        vals = self.values(k, "values")
        vis = self.values(k, "visible")
        ev = np.asarray(evening_day, dtype=np.int64)
        col = ev[..., None] == days
        have = col.any(axis=-1)
        j = np.argmax(col, axis=-1)
        v = np.take_along_axis(vals, j[..., None], axis=-1)[..., 0]
        s = np.take_along_axis(vis, j[..., None], axis=-1)[..., 0]
        return np.where(have, v, np.nan), have & s

    def describe(self) -> str:
        unit = f" {self.criterion.value_unit}" if self.criterion.value_unit else ""
        return (f"first evening of crescent visibility at {self.site.name} "
                f"({self.site.latitude_deg:g}, {self.site.longitude_deg:g}) by {self.criterion.describe()}, "
                f"visible when {self.criterion.value_name} {'>' if self.criterion_name == 'yallop' else '>='} "
                f"{self.threshold:g}{unit}; day 1 begins at that sunset")


# ------------------------------------------------------------------ solar longitudes

class SolarSource:
    """Moments the apparent Sun crosses given longitudes, cached by fixed windows of TT."""

    def __init__(self, longitudes_deg):
        self.longitudes = tuple(float(x) % 360.0 for x in np.atleast_1d(longitudes_deg))
        self._windows: dict[int, tuple] = {}

    def crossings(self, jd_tt_start, jd_tt_end):
        """Return (jd_tt, longitude_deg) of every crossing in [start, end), from cached windows."""
        from calendra.ephemeris import SPAN_JD
        from calendra.solarterms import solar_longitude_crossings

        w0 = int(math.floor((jd_tt_start - SPAN_JD[0]) / SOLAR_WINDOW_DAYS))
        w1 = int(math.floor((jd_tt_end - SPAN_JD[0]) / SOLAR_WINDOW_DAYS))
        missing = [w for w in range(w0, w1 + 1) if w not in self._windows]
        for first, last in _runs(missing):
            a = max(SPAN_JD[0] + first * SOLAR_WINDOW_DAYS, SPAN_JD[0] + 0.5)
            b = min(SPAN_JD[0] + (last + 1) * SOLAR_WINDOW_DAYS, SPAN_JD[1] - 0.5)
            if b <= a:
                for w in range(first, last + 1):
                    self._windows[w] = (np.zeros(0), np.zeros(0))
                continue
            c = solar_longitude_crossings(a, b, list(self.longitudes))
            wi = np.floor((c.jd_tt - SPAN_JD[0]) / SOLAR_WINDOW_DAYS).astype(np.int64)
            for w in range(first, last + 1):
                sel = wi == w
                self._windows[w] = (c.jd_tt[sel], c.longitude_deg[sel])
        jd = np.concatenate([self._windows[w][0] for w in range(w0, w1 + 1)])
        lon = np.concatenate([self._windows[w][1] for w in range(w0, w1 + 1)])
        keep = (jd >= jd_tt_start) & (jd < jd_tt_end)
        return jd[keep], lon[keep]
