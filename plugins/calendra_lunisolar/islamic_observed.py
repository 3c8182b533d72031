"""The Islamic (Hijri) calendar by predicted first sighting of the crescent at a site.

A month begins at the sunset of the evening on which the crescent is first
visible at the chosen site by the chosen criterion (option ``criterion``:
``yallop`` by default -- q > -0.014, Yallop's categories A and B, visible to
the naked eye in good conditions --, ``odeh`` V >= 5.65, or ``lag``); the
day is labelled with the next civil date (the calendar's day begins at
sunset, :mod:`calendra.daybounds`).  A month has 29 or 30 days: when the
crescent is not predicted to be seen on the evening that ends day 30, the
month is completed at 30 days and the next begins anyway; a month never ends
before its 29th day.

Months are counted from the Hijra: month ``m`` of year ``y`` belongs to the
lunation ``12 (y - 1) + (m - 1) + HIJRA_LUNATION``, Meeus' lunation number
of the conjunction before 1 Muharram AH 1 (about 622 July 14, Julian).  The
count is continuous: years before AH 1 are AH 0, -1, ... (as in
Calendrical Calculations' tables).

These are **predictions under a stated criterion**, not the calendar of any
community: where a month begins by sighting, the community's own
authority decides, weather decides, and the criteria are empirical fits to
modern sightings.  Each month start carries the criterion's margin (how
far the decisive evenings lay from the threshold); a small margin is a
month start that can go either way.  The Umm al-Qura calendar of Saudi
Arabia follows published rules of its own (conjunction before sunset and
moonset after sunset at Mecca, in its recent form; from memory) and is not
this calendar.
"""

from __future__ import annotations

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import iso_year
from calendra.errors import ParameterError

from . import sky
from .base import LunationCalendar

MONTH_NAMES = ("Muharram", "Safar", "Rabi' al-Awwal", "Rabi' al-Thani", "Jumada al-Ula", "Jumada al-Akhira",
               "Rajab", "Sha'ban", "Ramadan", "Shawwal", "Dhu al-Qa'da", "Dhu al-Hijja")
MONTH_ALIASES = {3: ("Rabi I", "Rabi al-Awwal"), 4: ("Rabi II", "Rabi al-Akhir"), 5: ("Jumada I",),
                 6: ("Jumada II",), 8: ("Shaban",), 11: ("Dhu al-Qada", "Dhul Qada"), 12: ("Dhu al-Hijjah", "Dhul Hijja")}
#: Meeus lunation number of the conjunction that begins the Hijri era (1 Muharram AH 1 follows it).
HIJRA_LUNATION = -17037


class ObservedIslamicCalendar(LunationCalendar):
    """Hijri months from the predicted first crescent at a site (options site, criterion, threshold, deltat)."""

    name = "islamic-observed"
    aliases = ("hijri-observed", "islamic-sighting")
    fields = ("year", "month", "day")
    has_leap = False
    description = ("Islamic calendar by predicted first visibility of the crescent (Yallop q > -0.014 at Mecca "
                   "by default); a prediction, not a community's calendar; DE406")
    day_start = "sunset"
    year_numbering = "years of the Hijra (AH), continuous: AH 0, -1, ... before AH 1"
    month_names = MONTH_NAMES
    month_aliases = MONTH_ALIASES
    min_month, max_month = 29, 30
    year_epoch = (1, 1948440)
    year_days = 354.367
    months_per_year = 12.0
    epoch_lunation_year = (1, HIJRA_LUNATION)
    options = {"site": "observer (Mecca)", "criterion": "yallop (default), odeh, lag",
               "threshold": "test value counted as visible", "lag_min": "lag rule, minutes",
               "age_min": "lag rule, hours", "elongation_min": "lag rule, degrees", "deltat": "delta-T model"}
    _DEFAULTS = {"site": "Mecca", "criterion": "yallop", "threshold": None, "lag_min": None, "age_min": None,
                 "elongation_min": None, "deltat": None}

    def __init__(self, **options):
        super().__init__()
        from calendra.deltat import get_model
        from calendra.sites import parse_site

        unknown = set(options) - set(self._DEFAULTS)
        if unknown:
            raise ParameterError(f"calendar islamic-observed takes options {', '.join(self._DEFAULTS)}, "
                                 f"not {', '.join(sorted(unknown))}")
        spec = dict(self._DEFAULTS)
        spec.update({k: v for k, v in options.items() if v is not None})
        self._spec = spec
        self.site = parse_site(spec["site"])
        self.deltat = get_model(spec["deltat"])
        crit = str(spec["criterion"]).lower()
        params = {}
        for key in ("lag_min", "age_min", "elongation_min"):
            if spec[key] is not None:
                if crit != "lag":
                    raise ParameterError(f"islamic-observed: {key} belongs to criterion=lag")
                params[key] = float(spec[key])
        thr = None if spec["threshold"] is None else float(spec["threshold"])
        self.crescents = sky.CrescentSource(self.site, crit, params, thr, self.deltat)
        self.options = {k: str(v) for k, v in spec.items() if v is not None}

    def with_options(self, **options):
        spec = dict(self._spec)
        spec.update(options)
        return ObservedIslamicCalendar(**spec)

    @property
    def label(self):
        diff = [f"{k}={v}" for k, v in self._spec.items() if v is not None and self._DEFAULTS.get(k) != v]
        return self.name + (f"[{','.join(diff)}]" if diff else "")

    def _raw_starts(self, k):
        return self.crescents.starts(k)

    def prefetch(self, k_first, k_last):
        self.crescents.values(np.arange(k_first - 20, k_last + 40), "evening")

    def _year_first_lunation_block(self, y0, y1):
        years = np.arange(y0, y1 + 1)
        return HIJRA_LUNATION + 12 * (years - 1), np.full(years.size, -1)

    def year_label(self, year: int) -> str:
        return f"AH {year}"

    def month_name(self, month: int, year: int | None = None, leap: bool = False) -> str:
        return MONTH_NAMES[month - 1] if 1 <= month <= 12 else str(month)

    def year_rows(self, year: int) -> list[dict]:
        rows = super().year_rows(year)
        k = np.array([r["lunation"] for r in rows])
        c = self.crescents
        value, margin, cat, found = (c.values(k, key) for key in ("value", "margin", "category", "found"))
        fragile = c.fragile(k)
        for i, r in enumerate(rows):
            r.pop("leap", None)
            ey, em, ed = (int(v) for v in jg.gregorian_from_jdn(r["first_jdn"] - 1))
            r["evening_gregorian"] = f"{iso_year(ey)}-{em:02d}-{ed:02d}"
            r["seen"] = bool(found[i])
            r[c.criterion.value_name] = round(float(value[i]), 3) if np.isfinite(value[i]) else float("nan")
            r["category"] = str(cat[i])
            r["margin"] = round(float(margin[i]), 3) if np.isfinite(margin[i]) else float("nan")
            r["fragile"] = bool(fragile[i])
        return rows

    def describe(self):
        d = super().describe()
        d["month_starts"] = self.crescents.describe()
        return d


def compare_with_tabular(observed: ObservedIslamicCalendar, year: int, tabular=None) -> list[dict]:
    """Months of AH ``year`` by sighting prediction next to the tabular calendar.

    Parameters
    ----------
    observed : ObservedIslamicCalendar
    year : int
        AH year.
    tabular : Calendar, optional
        Default: the registered ``islamic`` calendar (the arithmetic plugin's tabular calendar).

    Returns
    -------
    list of dict
        Per month: the observed and tabular first days (Gregorian, day numbers), the difference in days
        (observed - tabular), the criterion's value, margin and category.
    """
    if tabular is None:
        from calendra.pluginmanager import get_host

        tabular = get_host().calendars.get("islamic")
    rows = observed.year_rows(year)
    for r in rows:
        t0 = int(tabular.to_jdn(year, r["month"], 1))
        gy, gm, gd = (int(v) for v in jg.gregorian_from_jdn(t0))
        r["tabular_jdn"] = t0
        r["tabular_gregorian"] = f"{iso_year(gy)}-{gm:02d}-{gd:02d}"
        r["difference_days"] = r["first_jdn"] - t0
        r["tabular"] = tabular.label
    return rows
