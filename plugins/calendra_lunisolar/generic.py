"""Sky-defined lunisolar calendars configured in TOML, so that a local calendar can be modelled without code.

A file holds one ``[calendar]`` table or several ``[[calendar]]`` tables::

    [calendar]
    name = "kesh-moons"                 # registry name: lower case, no spaces
    description = "what the calendar is and whose reconstruction"
    month_names = ["...", ...]          # 12 names, month 1 first
    leap_name = "{name} II"             # name of the leap month ({name}: the month it repeats)

    # Month start: "conjunction" (the local day of the new moon, or the day after) or
    # "crescent" (the day after the evening of first visibility at the site, by a criterion).
    month_start = "crescent"
    site = "Babylon"                    # gazetteer name or "LAT,LON[,ELEV]"
    criterion = "yallop"                # crescent: yallop, odeh, lag (or a plugin's)
    criterion_options = { }             # e.g. { lag_min = 40, age_min = 20 } for lag
    threshold = -0.014                  # optional: test value counted as visible
    conjunction_day = "same"            # conjunction: "same" day or "next" day begins the month
    zone = "UTC+2"                      # conjunction: meridian or UT offset of the day count
                                        # (default: the site's civil time)
    day_start = "sunset"                # label only: sunset (default for crescent) or midnight
    month_days = [29, 30]               # bounds on a month's length (default [29, 30] for crescent)
    deltat = "smh2016"

    # Years
    intercalation = "astronomical"      # or "cycle"
    leap_month = 12                     # a leap month follows month 12 (or 6: a second month 6)
    year_offset = 0                     # astronomical: year number = Gregorian year of the start + offset

    [calendar.year_start]               # astronomical years
    longitude = 0                       # apparent solar longitude, degrees (0 = March equinox)
    rule = "following"                  # "following": first month beginning on or after the day of the
                                        # crossing; "containing": the month containing that day

    [calendar.cycle]                    # intercalation = "cycle"
    length = 19
    leap_years = [3, 6, 8, 11, 14, 17, 19]   # positions in the cycle (1 = first year)
    first_year = 1                      # a year at position 1 of the cycle
    anchor_year = 1                     # the year containing anchor_date in its first month
    anchor_date = "0622-03-21"          # a Gregorian date (proleptic, astronomical years) in month 1

Files are read from the environment variable ``CALENDRA_LUNISOLAR``
(``os.pathsep``-separated) by the plugin, or by :func:`load_lunisolar`.
Errors name the file, the calendar and the key.

Time scales and day boundary as for every calendar of this plugin: instants
TT, local days from UT1 through delta T; a month start is the day number of
its day 1.
"""

from __future__ import annotations

import os
import re
from pathlib import Path

import numpy as np

from calendra import julian_gregorian as jg
from calendra.errors import ParameterError

from . import sky
from .base import LunationCalendar

ENV_VAR = "CALENDRA_LUNISOLAR"
_KEYS = {"name", "description", "aliases", "month_names", "leap_name", "month_start", "site", "criterion",
         "criterion_options", "threshold", "conjunction_day", "zone", "day_start", "month_days", "deltat",
         "intercalation", "leap_month", "year_offset", "year_start", "cycle", "year_numbering", "source"}


class GenericLunisolarCalendar(LunationCalendar):
    """A lunisolar calendar defined by a TOML table (see the module notes)."""

    def __init__(self, config: dict, where: str = "calendar"):
        super().__init__()
        from calendra.deltat import get_model
        from calendra.sites import parse_site

        def fail(key, msg):
            return ParameterError(f"{where}: {key}: {msg}")

        unknown = set(config) - _KEYS
        if unknown:
            raise fail(", ".join(sorted(unknown)), f"unknown key(s); known: {', '.join(sorted(_KEYS))}")
        name = config.get("name")
        if not isinstance(name, str) or not re.fullmatch(r"[a-z0-9][a-z0-9_.\-]*", name):
            raise fail("name", "a lower-case name without spaces is needed")
        self.name = name
        self.aliases = tuple(config.get("aliases", ()))
        names = config.get("month_names")
        if not isinstance(names, list) or len(names) != 12 or not all(isinstance(n, str) and n for n in names):
            raise fail("month_names", "give a list of 12 names")
        self.month_names = tuple(names)
        self.leap_name = str(config.get("leap_name", "{name} II"))
        if "{name}" not in self.leap_name:
            raise fail("leap_name", "must contain {name}")
        self.deltat = get_model(config.get("deltat"))
        kind = config.get("month_start", "crescent")
        self.site = parse_site(config["site"]) if "site" in config else None
        if kind == "crescent":
            if self.site is None:
                raise fail("site", "a crescent calendar needs the site of its observers")
            params = config.get("criterion_options", {})
            if not isinstance(params, dict):
                raise fail("criterion_options", "a table of criterion parameters")
            thr = config.get("threshold")
            try:
                self.source = sky.CrescentSource(self.site, str(config.get("criterion", "yallop")), params,
                                                 None if thr is None else float(thr), self.deltat)
            except TypeError as exc:
                raise fail("criterion_options", str(exc)) from None
            default_start, default_days = "sunset", [29, 30]
        elif kind == "conjunction":
            if "zone" in config:
                local = sky.parse_local_time(config["zone"])
            elif self.site is not None:
                local = sky.LocalTime(self.site.offset_days * 24.0, False, self.site.time_rule)
            else:
                raise fail("zone", "a conjunction calendar needs a zone (UTC+H or a meridian) or a site")
            day = config.get("conjunction_day", "same")
            if day not in ("same", "next"):
                raise fail("conjunction_day", "same or next")
            self.source = sky.ConjunctionSource(local, self.deltat, day_after=(day == "next"))
            default_start, default_days = "midnight", None
        else:
            raise fail("month_start", f"crescent or conjunction, got {kind!r}")
        self.day_start = config.get("day_start", default_start)
        if self.day_start not in ("sunset", "midnight", "sunrise", "noon"):
            raise fail("day_start", "sunset, midnight, sunrise or noon")
        bounds = config.get("month_days", default_days)
        if bounds is not None:
            if not (isinstance(bounds, list) and len(bounds) == 2 and all(isinstance(b, int) for b in bounds)
                    and 27 <= bounds[0] <= bounds[1] <= 31):
                raise fail("month_days", "a pair [shortest, longest], e.g. [29, 30]")
            self.min_month, self.max_month = bounds
        lm = config.get("leap_month", 12)
        if not isinstance(lm, int) or not 1 <= lm <= 12:
            raise fail("leap_month", "the month (1..12) that the leap month follows and repeats")
        self.leap_position = lm
        self.intercalation = config.get("intercalation", "astronomical")
        if self.intercalation == "astronomical":
            ys = config.get("year_start", {})
            if not isinstance(ys, dict) or set(ys) - {"longitude", "rule"}:
                raise fail("year_start", "a table with longitude and rule")
            self.year_longitude = float(ys.get("longitude", 0.0)) % 360.0
            self.year_rule = ys.get("rule", "following")
            if self.year_rule not in ("following", "containing"):
                raise fail("year_start.rule", "following or containing")
            self.year_offset = int(config.get("year_offset", 0))
            self.solar = sky.SolarSource([self.year_longitude])
            # The year starts near the crossing: estimate from it.
            g = 2000
            j = int(jg.gregorian_to_jdn(g, 3, 21)) + int(round((self.year_longitude / 360.0) * 365.2422))
            self.year_epoch = (g + self.year_offset, j)
            self.epoch_lunation_year = (g + self.year_offset, int(sky.lunation_of_jd(j)))
            numbering = (f"years begin with the month {self.year_rule} the day the Sun reaches longitude "
                         f"{self.year_longitude:g}; number = Gregorian year of that day + {self.year_offset}")
        elif self.intercalation == "cycle":
            cy = config.get("cycle")
            if not isinstance(cy, dict):
                raise fail("cycle", "intercalation = 'cycle' needs a [calendar.cycle] table")
            try:
                self.cycle_length = int(cy["length"])
                self.cycle_leaps = tuple(int(v) for v in cy["leap_years"])
                self.cycle_first = int(cy.get("first_year", 1))
                self.anchor_year = int(cy["anchor_year"])
                anchor = str(cy["anchor_date"])
            except KeyError as exc:
                raise fail(f"cycle.{exc.args[0]}", "missing") from None
            except (TypeError, ValueError):
                raise fail("cycle", "length, leap_years, first_year and anchor_year are integers") from None
            if not all(1 <= p <= self.cycle_length for p in self.cycle_leaps):
                raise fail("cycle.leap_years", f"positions 1..{self.cycle_length}")
            m = re.fullmatch(r"([+-]?\d+)-(\d{1,2})-(\d{1,2})", anchor.strip())
            if not m:
                raise fail("cycle.anchor_date", "a Gregorian date YYYY-MM-DD (astronomical years)")
            self.anchor_jdn = int(jg.gregorian_to_jdn(int(m.group(1)), int(m.group(2)), int(m.group(3))))
            self._anchor_k = None
            self.year_epoch = (self.anchor_year, self.anchor_jdn)
            self.epoch_lunation_year = (self.anchor_year, int(sky.lunation_of_jd(self.anchor_jdn)))
            numbering = (f"years of a {self.cycle_length}-year cycle, leap in positions "
                         f"{', '.join(map(str, self.cycle_leaps))}; year {self.anchor_year} contains {anchor}")
        else:
            raise fail("intercalation", f"astronomical or cycle, got {self.intercalation!r}")
        self.year_numbering = str(config.get("year_numbering", numbering))
        self.description = str(config.get("description", f"user lunisolar calendar {name}"))
        self.source_note = str(config.get("source", ""))
        self.config = dict(config)
        self.where = where

    # ------------------------------------------------------------ sky
    def _raw_starts(self, k):
        return self.source.starts(k)

    def _first_lunation_astronomical(self, years):
        """First lunation of each year: the month containing (or the first beginning on or after) the local
        day of the year's solar-longitude crossing; one array job for all the years."""
        g = np.asarray(years) - self.year_offset
        a = float(jg.gregorian_to_jdn(int(g.min()), 1, 1)) - 0.5
        b = float(jg.gregorian_to_jdn(int(g.max()) + 1, 1, 1)) - 0.5
        jd, _ = self.solar.crossings(a, b)
        cy = jg.gregorian_from_jdn(np.floor(jd + 0.5).astype(np.int64))[0]
        idx = np.searchsorted(cy, g)
        if np.any(idx >= cy.size) or np.any(cy[np.minimum(idx, cy.size - 1)] != g) or cy.size != np.unique(cy).size:
            raise ParameterError(f"{self.where}: the Sun must cross {self.year_longitude:g} deg once in every "
                                 f"Gregorian year {int(g.min())}..{int(g.max())}")
        ut = np.asarray(self.deltat.ut_from_tt(jd[idx]), dtype=float)
        day = self._crossing_day(ut)
        k = self.lunation_of_day(day)
        if self.year_rule == "following":
            k = k + (self.month_starts(k) < day)
        return k

    def _crossing_day(self, jd_ut):
        """Local civil day numbers of instants ``jd_ut`` (UT1): the zone of a conjunction calendar, else the site's."""
        if isinstance(self.source, sky.ConjunctionSource):
            return self.source.local.days(jd_ut, self.deltat)
        return np.floor(np.asarray(jd_ut) + self.site.offset_days + 0.5).astype(np.int64)

    def _anchor_lunation(self):
        if self._anchor_k is None:
            self._anchor_k = int(self.lunation_of_day(self.anchor_jdn))
        return self._anchor_k

    def _cycle_leap(self, years):
        pos = np.mod(np.asarray(years) - self.cycle_first, self.cycle_length) + 1
        return np.isin(pos, self.cycle_leaps)

    def _year_first_lunation_block(self, y0, y1):
        years = np.arange(y0, y1 + 1)
        if self.intercalation == "astronomical":
            nk = self._first_lunation_astronomical(years)
        else:
            base = self._anchor_lunation()
            a = min(y0, self.anchor_year)
            b = max(y1, self.anchor_year)
            span = np.arange(a, b + 1)
            months = np.where(self._cycle_leap(span), 13, 12)
            cum = np.concatenate([[0], np.cumsum(months)])
            nk = base + cum[years - a] - cum[self.anchor_year - a]
        months = np.diff(nk)
        lp = np.where(np.r_[months, 12] == 13, self.leap_position, -1)
        return nk, lp

    def month_name(self, month: int, year: int | None = None, leap: bool = False) -> str:
        base = self.month_names[month - 1] if 1 <= month <= 12 else str(month)
        return self.leap_name.format(name=base) if leap else base

    def describe(self):
        d = super().describe()
        d["month_starts"] = self.source.describe()
        if self.source_note:
            d["source"] = self.source_note
        return d


def load_lunisolar(path) -> list[GenericLunisolarCalendar]:
    """Read the calendars of a TOML file (see the module notes).

    Raises
    ------
    ParameterError
        The file cannot be read, or a table is not a valid calendar (the
        message names the file, the calendar and the key).
    """
    import tomllib

    path = Path(path).expanduser()
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except OSError as exc:
        raise ParameterError(f"cannot read lunisolar calendar file {path}: {exc.strerror or exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise ParameterError(f"{path}: not valid TOML: {exc}") from None
    tables = data.get("calendar")
    if isinstance(tables, dict):
        tables = [tables]
    if not isinstance(tables, list) or not tables:
        raise ParameterError(f"{path}: no [calendar] table")
    out = []
    for i, t in enumerate(tables):
        label = t.get("name", f"#{i + 1}") if isinstance(t, dict) else f"#{i + 1}"
        out.append(GenericLunisolarCalendar(t, where=f"{path}: calendar {label}"))
    return out


def calendars_from_environment() -> tuple[list, list]:
    """Calendars of the files in ``CALENDRA_LUNISOLAR`` and the problems met (messages)."""
    cals, problems = [], []
    for p in [p for p in os.environ.get(ENV_VAR, "").split(os.pathsep) if p.strip()]:
        try:
            cals.extend(load_lunisolar(p))
        except ParameterError as exc:
            problems.append(str(exc))
    return cals, problems
