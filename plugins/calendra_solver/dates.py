"""Date information of a record, evaluated on arrays of candidate days.

A candidate event is placed on a day of the named calendar (the day that
calendar gives the instant: a sunset calendar counts the evening with the
next day, see :func:`calendra.daybounds.calendar_day`); the day's fields
come from one ``from_jdn`` call over all candidates (and their neighbours
within the tolerance) and are compared with the fields the record states.

Reign lists with an uncertain accession are calendars with *free epochs*.
The solver knows them only through two attributes, so any calendar plugin
may offer them: ``free_epochs`` (objects with ``name`` = ``CALENDAR.KEY``,
``lo_jdn``, ``hi_jdn``: inclusive day-number bounds) and
``with_options(KEY=jdn)`` returning the calendar with that epoch fixed (the
reign lists of :mod:`calendra_eras.user_eras` work this way).  A free epoch
is sampled every ``step_days`` over its bounds; observations dated by it
share the sampled value in every solution.
"""

from __future__ import annotations

import itertools
from dataclasses import dataclass

import numpy as np

from calendra.errors import CalendraError

#: Most epoch combinations examined (product over all free epochs).
MAX_EPOCH_SAMPLES = 20000


class CalendarBook:
    """Calendars a record may name: those of its lunisolar and era files first, then the installed ones.

    Lunisolar calendar files (``[record]`` key ``lunisolar``) are read by the
    lunisolar plugin's public :func:`calendra_lunisolar.generic.load_lunisolar`,
    imported only when a record names such a file.
    """

    def __init__(self, host, era_files=(), fail=None, lunisolar_files=()):
        self.host = host
        self.local = {}
        lunisolar = []
        for path in lunisolar_files:
            for cal in _load_lunisolar(path, fail):
                self._add(cal)
                lunisolar.append(cal)
        for path in era_files:
            try:
                from calendra_eras.user_eras import load_eras
            except ImportError:  # pragma: no cover - the eras plugin is part of calendra
                raise fail("[record], key 'eras'", "era files need the calendra_eras plugin") from None
            try:
                cals = load_eras(path, calendars=lunisolar)   # a reign list may count years in them
            except CalendraError as exc:
                raise fail("[record], key 'eras'", str(exc)) from None
            for cal in cals:
                self._add(cal)
        self._cache = {}

    def _add(self, cal):
        self.local[cal.name.lower()] = cal
        for a in getattr(cal, "aliases", ()):
            self.local[a.lower()] = cal

    def get(self, spec: str):
        """Return the calendar named ``spec`` (``NAME[opt=value]`` allowed)."""
        if spec in self._cache:
            return self._cache[spec]
        from calendra.registry import parse_spec

        name, options = parse_spec(spec)
        if name in self.local:
            cal = self.local[name]
            cal = cal.with_options(**options) if options else cal
        else:
            cal = self.host.calendars.get(spec)
        self._cache[spec] = cal
        return cal

    def calendars(self):
        return list(self._cache.values())


def _load_lunisolar(path, fail):
    """Calendars of one lunisolar calendar file, through the lunisolar plugin (imported here, on demand)."""
    where = "[record], key 'lunisolar'"
    try:
        from calendra_lunisolar.generic import load_lunisolar
    except ImportError:
        raise fail(where, f"{path}: lunisolar calendar files need the calendra_lunisolar plugin, "
                          "which is not installed") from None
    try:
        return load_lunisolar(path)
    except CalendraError as exc:
        raise fail(where, str(exc)) from None


@dataclass
class FreeEpoch:
    """A free epoch as the solver samples it.

    Attributes
    ----------
    calendar : str
        The calendar name as written in the record.
    key : str
        The option that fixes it (``with_options(key=jdn)``).
    lo_jdn, hi_jdn : int
        Bounds (inclusive day numbers).
    step_days : float
    """

    calendar: str
    key: str
    lo_jdn: int
    hi_jdn: int
    step_days: float = 30.0

    @property
    def name(self) -> str:
        return f"{self.calendar}.{self.key}"

    def samples(self) -> np.ndarray:
        """Day numbers at which the epoch is tried: every ``step_days`` from the lower bound, and the upper."""
        s = np.arange(self.lo_jdn, self.hi_jdn + 1, self.step_days).astype(np.int64)
        if s.size == 0 or s[-1] != self.hi_jdn:
            s = np.append(s, self.hi_jdn)
        return s


def open_epochs(cal) -> list:
    """Return the free epochs of ``cal`` that are not fixed by its options (``(key, lo, hi)``)."""
    out = []
    for fe in getattr(cal, "free_epochs", None) or []:
        key = fe.name.split(".", 1)[1] if "." in fe.name else fe.name
        fixed = getattr(cal, "_fixes", {}) or {}
        if key in fixed:
            continue
        out.append((key, int(fe.lo_jdn), int(fe.hi_jdn)))
    return out


def epoch_grid(epochs: list) -> list:
    """All combinations of the epochs' samples: a list of dicts ``{epoch name: jdn}``."""
    if not epochs:
        return [{}]
    samples = [e.samples() for e in epochs]
    total = int(np.prod([len(s) for s in samples]))
    if total > MAX_EPOCH_SAMPLES:
        from calendra.errors import ParameterError

        raise ParameterError(f"the free epochs {', '.join(e.name for e in epochs)} give {total} combinations "
                             f"(at most {MAX_EPOCH_SAMPLES}); narrow their bounds (regnal relation 'between') "
                             "or raise step_days")
    return [dict(zip((e.name for e in epochs), (int(v) for v in combo)))
            for combo in itertools.product(*samples)]


class Variants:
    """Calendar variants with the free epochs fixed at one sample, cached."""

    def __init__(self, book: CalendarBook, epochs: list):
        self.book = book
        self.by_cal = {}
        for e in epochs:
            self.by_cal.setdefault(e.calendar, []).append(e)
        self._cache = {}

    def get(self, spec: str, assignment: dict):
        mine = self.by_cal.get(spec, [])
        key = (spec,) + tuple(assignment[e.name] for e in mine)
        if key not in self._cache:
            cal = self.book.get(spec)
            if mine:
                cal = cal.with_options(**{e.key: assignment[e.name] for e in mine})
            self._cache[key] = cal
        return self._cache[key]

    def depends(self, spec: str) -> bool:
        return bool(self.by_cal.get(spec))


def event_days(jd_ut, day_start: str, site, deltat) -> np.ndarray:
    """Day numbers (labels) of instants ``jd_ut`` (UT1) in a calendar whose day begins at ``day_start``."""
    from calendra.daybounds import calendar_day

    jd_ut = np.asarray(jd_ut, dtype=float)
    if jd_ut.size == 0:
        return np.zeros(0, dtype=np.int64)
    return np.asarray(calendar_day(jd_ut, day_start, site, deltat), dtype=np.int64)


def _fields(cal, days: np.ndarray):
    """``cal.from_jdn`` over the days the calendar covers; a validity mask for the others."""
    lo, hi = cal.valid_jdn
    inside = (days >= lo) & (days <= hi)
    out = {f: np.full(days.shape, np.iinfo(np.int64).min, dtype=np.int64) for f in cal.fields}
    if inside.any():
        got = cal.from_jdn(days[inside])
        for f in cal.fields:
            out[f][inside] = np.asarray(got[f], dtype=np.int64)
    return out, inside


def wanted_fields(cal, info) -> dict:
    """The fields a DateInfo asks for in ``cal`` (the ruler turned into the reign number)."""
    want = dict(info.fields)
    if info.ruler is not None:
        if not hasattr(cal, "reign_index"):
            from calendra.errors import ParameterError

            raise ParameterError(f"calendar {cal.label} is not a reign list: 'ruler' needs one")
        want["reign"] = int(cal.reign_index(info.ruler))
    unknown = [k for k in want if k not in cal.fields]
    if unknown:
        from calendra.errors import ParameterError

        raise ParameterError(f"calendar {cal.label} has no field {unknown[0]!r} (fields: {', '.join(cal.fields)})")
    return want


def date_match(cal, days: np.ndarray, info) -> tuple[np.ndarray, np.ndarray]:
    """Compare candidate days with a record's date information.

    Parameters
    ----------
    cal : Calendar
    days : int64 array
        Day numbers of the candidates in ``cal``'s day reckoning.
    info : calendra_solver.schema.DateInfo

    Returns
    -------
    ok : bool array
        A day within ``tolerance_days`` of the candidate's day has the stated fields.
    residual_days : float array
        Signed days from the candidate's day to the nearest matching day (NaN where none).

    Notes
    -----
    When only the year (and the reign) is stated, the search for the
    nearest matching day bisects over the tolerance, assuming that year
    keys do not decrease with time (true of eras and of reign lists in
    order of succession); otherwise every day within the tolerance is
    converted, all in one ``from_jdn`` call.
    """
    want = wanted_fields(cal, info)
    tol = int(info.tolerance_days)
    if tol > 2 and set(want) <= {"reign", "year"} and "year" in want:
        return _year_match(cal, days, want, tol)
    k = np.arange(-tol, tol + 1)
    order = np.argsort(np.abs(k), kind="stable")     # nearest offsets first
    k = k[order]
    grid = (days[np.newaxis, :] + k[:, np.newaxis]).ravel()
    fields, inside = _fields(cal, grid)
    match = inside.copy()
    for name, value in want.items():
        match &= fields[name] == value
    match = match.reshape(len(k), len(days))
    ok = match.any(axis=0)
    first = np.argmax(match, axis=0)
    residual = np.where(ok, -k[first].astype(float), np.nan)   # candidate day minus matching day
    return ok, residual


def _keys(cal, days):
    fields, inside = _fields(cal, days)
    key = fields["year"].astype(np.int64)
    if "reign" in fields:
        key = fields["reign"] * 1_000_000 + key
    return key, inside


def _year_match(cal, days, want, tol):
    """Year-only date information: bisection over the tolerance on monotonic year keys."""
    target = want["year"] + (want.get("reign", 0) * 1_000_000 if "reign" in cal.fields else 0)
    if "reign" in cal.fields and "reign" not in want:
        return _year_match_any_reign(cal, days, want, tol)
    key, inside = _keys(cal, days)
    ok = inside & (key == target)
    residual = np.where(ok, 0.0, np.nan)
    for sign in (1, -1):
        todo = np.flatnonzero(~ok & ((key < target) if sign > 0 else (key > target)))
        if not todo.size:
            continue
        far, far_in = _keys(cal, days[todo] + sign * tol)
        reach = far_in & ((far >= target) if sign > 0 else (far <= target))
        todo = todo[reach]
        lo = np.zeros(todo.size, dtype=np.int64)
        hi = np.full(todo.size, tol, dtype=np.int64)
        while todo.size and np.any(hi - lo > 1):
            mid = (lo + hi) // 2
            km, _ = _keys(cal, days[todo] + sign * mid)
            past = (km >= target) if sign > 0 else (km <= target)
            hi = np.where(past, mid, hi)
            lo = np.where(past, lo, mid)
        if todo.size:
            kh, kin = _keys(cal, days[todo] + sign * hi)
            hit = kin & (kh == target)
            ok[todo[hit]] = True
            residual[todo[hit]] = -sign * hi[hit].astype(float)
    return ok, residual


def _year_match_any_reign(cal, days, want, tol):
    k = np.arange(-tol, tol + 1)
    k = k[np.argsort(np.abs(k), kind="stable")]
    grid = (days[np.newaxis, :] + k[:, np.newaxis]).ravel()
    fields, inside = _fields(cal, grid)
    match = (inside & (fields["year"] == want["year"])).reshape(len(k), len(days))
    ok = match.any(axis=0)
    return ok, np.where(ok, -k[np.argmax(match, axis=0)].astype(float), np.nan)


def year_key(cal, days: np.ndarray) -> np.ndarray:
    """Year keys of days in ``cal`` for same-year relations: the year field (times 10^6 plus the reign when
    the calendar has a reign field); a day outside the calendar gets a key no other day shares."""
    fields, inside = _fields(cal, days)
    if "year" in fields:
        key = fields["year"].copy()
    else:
        key = fields[cal.fields[0]].copy()
    if "reign" in fields:
        key = fields["reign"] * 1_000_000 + key
    bad = ~inside
    key[bad] = np.iinfo(np.int64).min // 2 - np.arange(bad.sum())
    return key
