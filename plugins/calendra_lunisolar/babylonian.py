"""The Babylonian lunisolar calendar: months from the first crescent at Babylon, Seleucid-era years.

Months
------
A month begins on the evening the new crescent is first seen at Babylon:
day 1 begins at that sunset (the day is labelled with the next civil date,
:mod:`calendra.daybounds`).  Visibility is decided by a criterion of
:mod:`calendra.crescent` (option ``criterion``):

* ``lag`` (default): the moonset lag after sunset at least ``lag_min``
  (48 minutes, i.e. 12 time degrees) and the Moon at least ``age_min``
  (24 hours) old at sunset -- the simplified criterion of modern summaries
  of Babylonian month beginnings (check_values section 5.3, from memory);
  empirical, fitted at Babylon's latitude.
* ``yallop`` / ``odeh``: the modern criteria (naked-eye thresholds).

A month has 29 or 30 days: if the crescent is not (computed to be) seen on
the evening ending day 30, the next month begins anyway, and a month never
ends before its 29th day.  Attested month lengths (a historian's table)
override the computed ones (:func:`load_attestations`); :func:`check_attested`
reports where the two disagree.

Each month start carries its **margin**: how far the test value of the
decisive evenings lay from the threshold (the first evening of visibility
above it, the evening before below it), in the criterion's units (minutes
of lag, Yallop's q, Odeh's V).  Starts with a margin below
:data:`calendra_lunisolar.sky.FRAGILE_MARGIN` are *fragile*: a small change
of delta T, of the horizon or of the criterion moves them by a day.

Years
-----
Years are counted in the Seleucid era, Babylonian reckoning: SE 1 began on
1 Nisannu = 3 April 311 BC (Julian -310; Parker & Dubberstein, *Babylonian
Chronology 626 BC - AD 75*, as quoted in check_values section 8, from
memory); SE 0, -1, ... precede it (so SE = astronomical Julian year of
Nisannu + 311).  Years begin with Nisannu and have 12 or 13 months.

Intercalation:

* from SE ``cycle_from`` (default -112 = 424/3 BC) the **19-year cycle** of
  the Saros Canon: a second Addaru (XII2) in cycle years 3, 6, 8, 11, 14
  and 19 and a second Ululu (VI2) in year 17, year 1 of the cycle being
  424/3, 405/4, ..., 310/9 BC, ... (S. Stern, *Calendars in Antiquity*,
  Oxford 2012, Table 2.5, read in a stored copy; the VI2 of year 17 was
  first used probably in 408/7, under Darius II).  In SE years: a leap year
  when SE mod 19 is 1, 4, 7, 9, 12, 15 or 18; Ululu II when it is 18.
  Stern notes deviations (385/4, perhaps 382/1, 266/5, sources
  inconsistent): give them as attested intercalations.
* before it, **attested intercalations** from the user's table, and for
  the years the table does not cover a reconstruction (option ``before``):
  ``equinox`` (default) -- Nisannu is the first month whose conjunction
  falls no earlier than ``equinox_days`` (default 2) days before the spring
  equinox, which continues the placement of the cycle's Nisannu (computed:
  from 424/3 BC to AD 1 the cycle's Nisannu conjunctions fall 2 days before
  to 27 days after the equinox); it is a reconstruction and matches the
  intercalated years attested for 624/3-537/6 BC (Stern 2012, Table 2.1,
  shipped as ``attested=stern2012``) in only about half of the years;
  ``cycle`` -- the cycle extended backwards (as Calendrical
  Calculations does).  Neither is history: before about 500 BC the
  intercalations were decreed year by year, and the output says which rule
  made each year.

Attested intercalations may be given for any year, also within the cycle.
"""

from __future__ import annotations

import os
from pathlib import Path

import numpy as np

from calendra import julian_gregorian as jg
from calendra.calendar import iso_year
from calendra.errors import ParameterError

from . import sky
from .base import LunationCalendar, bool_option

MONTH_NAMES = ("Nisannu", "Ayyaru", "Simanu", "Du'uzu", "Abu", "Ululu", "Tashritu", "Arahsamnu", "Kislimu",
               "Tebetu", "Shabatu", "Addaru")
#: The same names with the diacritics of the usual transliteration.
MONTH_NAMES_TRANSLIT = ("Nisannu", "Ayyāru", "Simānu", "Duʾūzu", "Abu", "Ulūlu", "Tašrītu", "Araḫsamnu",
                        "Kislīmu", "Ṭebētu", "Šabāṭu", "Addaru")
MONTH_ALIASES = {1: ("Nisanu", "Nisan", "BAR"), 2: ("Aiaru", "Ajaru", "Ayaru", "Iyyar", "GU4"),
                 3: ("Simannu", "Siwan", "SIG"), 4: ("Duzu", "Duuzu", "Tammuz", "SU"), 5: ("Ab", "IZI", "NE"),
                 6: ("Elulu", "Ulul", "KIN"), 7: ("Tashritu", "Tasritu", "Teshritu", "Tishri", "DU6"),
                 8: ("Arahsamna", "Marcheshvan", "APIN"), 9: ("Kislev", "Kislimu", "GAN"),
                 10: ("Tebitu", "Tebeth", "AB"), 11: ("Sabatu", "Shebat", "ZIZ"), 12: ("Adaru", "Adar", "SE")}
for _i, _n in enumerate(MONTH_NAMES_TRANSLIT):
    MONTH_ALIASES[_i + 1] = MONTH_ALIASES[_i + 1] + (_n,)

#: Day number of 1 Nisannu SE 1: 3 April 311 BC, Julian (Parker & Dubberstein, from memory).
SE1_NISANNU_JDN = int(jg.julian_to_jdn(-310, 4, 3))
#: Lunation (Meeus' number) of the conjunction before 1 Nisannu SE 1 (about -310 April 1).
SE1_LUNATION = int(round((float(jg.julian_to_jdn(-310, 4, 1)) - 2451550.09766) / 29.530588861))
#: SE years mod 19 that are leap years, and the one with a second Ululu (Stern 2012, Table 2.5).
CYCLE_LEAP_RESIDUES = (1, 4, 7, 9, 12, 15, 18)
CYCLE_ULULU_RESIDUE = 18
#: First SE year of the cycle by default: Nisannu 424/3 BC (year 1 of a cycle in Stern's Table 2.5).
DEFAULT_CYCLE_FROM = -112
#: Default of the equinox rule: Nisannu's conjunction no earlier than this many days before the equinox.
DEFAULT_EQUINOX_DAYS = 2.0
#: Positions (0-based) of the intercalary months in a 13-month year.
ULULU_II, ADDARU_II = 6, 12
#: Environment variable naming attestation files (os.pathsep-separated).
ENV_VAR = "CALENDRA_BABYLONIAN"
#: Attestation tables shipped with the plugin, by name (option ``attested=NAME``).
BUILTIN_ATTESTATIONS = {"stern2012": Path(__file__).with_name("data") / "stern2012_neo_babylonian.toml"}

_CUM = np.array([sum(1 for t in range(1, r + 1) if t % 19 in CYCLE_LEAP_RESIDUES) for r in range(19)])


def se_year_of_julian(year):
    """SE year (Babylonian reckoning) whose Nisannu falls in astronomical Julian ``year``."""
    return np.asarray(year) + 311


def cycle_is_leap(se_year) -> np.ndarray:
    """True where the 19-year cycle makes SE year ``se_year`` a 13-month year."""
    return np.isin(np.mod(np.asarray(se_year, dtype=np.int64), 19), CYCLE_LEAP_RESIDUES)


def cycle_leap_position(se_year) -> np.ndarray:
    """Position of the cycle's intercalary month: 6 (Ululu II) or 12 (Addaru II); -1 in common years."""
    y = np.asarray(se_year, dtype=np.int64)
    return np.where(cycle_is_leap(y), np.where(np.mod(y, 19) == CYCLE_ULULU_RESIDUE, ULULU_II, ADDARU_II), -1)


def cycle_first_lunation(se_year) -> np.ndarray:
    """Lunation of 1 Nisannu of ``se_year`` if the cycle ran unbroken from SE 1 (arithmetic)."""
    y = np.asarray(se_year, dtype=np.int64)
    q, r = np.divmod(y - 1, 19)
    return SE1_LUNATION + 12 * (y - 1) + 7 * q + _CUM[r]


# ------------------------------------------------------------------ attestations

class Attestations:
    """A historian's table: attested intercalations and month lengths.

    Attributes
    ----------
    intercalations : dict
        SE year -> (leap position or -1, source text).
    lengths : dict
        (SE year, month, leap) -> (days, source text).
    files : list of str
    """

    def __init__(self):
        self.intercalations: dict[int, tuple] = {}
        self.lengths: dict[tuple, tuple] = {}
        self.files: list[str] = []

    def __bool__(self):
        return bool(self.intercalations or self.lengths)


def _month_number(value, where):
    if isinstance(value, bool):
        raise ParameterError(f"{where}: month must be a name or a number 1..12")
    if isinstance(value, int):
        if 1 <= value <= 12:
            return value, False
        raise ParameterError(f"{where}: month {value} is not 1..12")
    text = str(value).strip()
    leap = False
    for suffix in (" II", " 2", "2"):
        if text.upper().endswith(suffix.upper()) and len(text) > len(suffix):
            text, leap = text[: -len(suffix)].strip(), True
            break
    key = text.lower().replace("'", "").replace("ʾ", "")
    for i, name in enumerate(MONTH_NAMES):
        names = (name,) + MONTH_ALIASES[i + 1]
        if any(key == n.lower().replace("'", "").replace("ʾ", "") for n in names):
            return i + 1, leap
    raise ParameterError(f"{where}: unknown month {value!r} (one of {', '.join(MONTH_NAMES)})")


def _se_year(entry, where):
    if "year" in entry and "julian_year" in entry:
        raise ParameterError(f"{where}: give year (SE) or julian_year, not both")
    if "year" in entry:
        y = entry["year"]
    elif "julian_year" in entry:
        y = entry["julian_year"]
        if not isinstance(y, int) or isinstance(y, bool):
            raise ParameterError(f"{where}: julian_year must be an integer (astronomical: -310 = 311 BC)")
        return int(y) + 311
    else:
        raise ParameterError(f"{where}: needs year (SE, Babylonian reckoning) or julian_year (astronomical "
                             "Julian year of its Nisannu)")
    if not isinstance(y, int) or isinstance(y, bool):
        raise ParameterError(f"{where}: year must be an integer SE year")
    return int(y)


def load_attestations(paths, into: Attestations | None = None) -> Attestations:
    """Read attestation TOML files.

    Format::

        [[intercalation]]
        year = -250              # SE year, Babylonian reckoning (or julian_year = -560)
        month = "Ululu II"       # "Addaru II", "Ululu II" or "none" (a 12-month year)
        source = "text, tablet"

        [[month_length]]
        year = 100
        month = "Nisannu"        # a name (with " II" for the intercalary month) or 1..12
        leap = false             # or write the name with " II"
        days = 30                # 29 or 30
        source = "..."

    Raises
    ------
    ParameterError
        A file that cannot be read, or an entry that is not of this form
        (the message names the file and the entry).
    """
    import tomllib

    att = into or Attestations()
    if isinstance(paths, (str, os.PathLike)):
        paths = [paths]
    for path in paths:
        path = Path(path).expanduser()
        try:
            with open(path, "rb") as fh:
                data = tomllib.load(fh)
        except OSError as exc:
            raise ParameterError(f"cannot read Babylonian attestations {path}: {exc.strerror or exc}") from None
        except tomllib.TOMLDecodeError as exc:
            raise ParameterError(f"{path}: not valid TOML: {exc}") from None
        unknown = set(data) - {"intercalation", "month_length", "source", "title", "description"}
        if unknown:
            raise ParameterError(f"{path}: unknown table(s) {', '.join(sorted(unknown))} "
                                 "(expected [[intercalation]] and [[month_length]])")
        for i, e in enumerate(data.get("intercalation", [])):
            where = f"{path}: intercalation #{i + 1}"
            extra = set(e) - {"year", "julian_year", "month", "source", "note"}
            if extra:
                raise ParameterError(f"{where}: unknown key(s) {', '.join(sorted(extra))}")
            y = _se_year(e, where)
            text = str(e.get("month", "")).strip().lower()
            if text in ("none", "common", "no", ""):
                pos = -1
            else:
                m, _ = _month_number(e["month"], where)     # "Ululu" or "Ululu II": the second Ululu
                if m == 6:
                    pos = ULULU_II
                elif m == 12:
                    pos = ADDARU_II
                else:
                    raise ParameterError(f"{where}: the intercalary month is Ululu II or Addaru II, got {e['month']!r}")
            att.intercalations[y] = (pos, str(e.get("source", "")))
        for i, e in enumerate(data.get("month_length", [])):
            where = f"{path}: month_length #{i + 1}"
            extra = set(e) - {"year", "julian_year", "month", "leap", "days", "source", "note"}
            if extra:
                raise ParameterError(f"{where}: unknown key(s) {', '.join(sorted(extra))}")
            y = _se_year(e, where)
            if "month" not in e or "days" not in e:
                raise ParameterError(f"{where}: needs month and days")
            m, leap = _month_number(e["month"], where)
            leap = leap or bool_option(e.get("leap", False), "leap")
            days = e["days"]
            if days not in (29, 30) or isinstance(days, bool):
                raise ParameterError(f"{where}: days must be 29 or 30, got {days!r}")
            att.lengths[(y, m, int(leap))] = (int(days), str(e.get("source", "")))
        att.files.append(str(path))
    return att


# ------------------------------------------------------------------ calendar

class BabylonianCalendar(LunationCalendar):
    """Babylonian lunisolar calendar at Babylon (see the module notes for options and sources)."""

    name = "babylonian"
    aliases = ("babylon", "mesopotamian")
    description = ("Babylonian lunisolar calendar: months from the computed first crescent at Babylon "
                   "(lag >= 48 min and age >= 24 h by default), Seleucid-era years from Nisannu, 19-year cycle "
                   "from 424/3 BC, attested or reconstructed intercalations before; DE406")
    day_start = "sunset"
    year_numbering = ("Seleucid era, Babylonian reckoning: SE 1 began 1 Nisannu 311 BC; SE 0, -1, ... before "
                      "(SE = astronomical Julian year of Nisannu + 311)")
    month_names = MONTH_NAMES
    month_aliases = MONTH_ALIASES
    min_month, max_month = 29, 30
    year_epoch = (1, SE1_NISANNU_JDN)
    epoch_lunation_year = (1, SE1_LUNATION)
    options = {"criterion": "lag (default), yallop, odeh or a plugin's", "lag_min": "lag rule, minutes (48)",
               "age_min": "lag rule, hours (24)", "elongation_min": "lag rule, degrees (0)",
               "threshold": "test value counted as visible", "site": "observer (Babylon)",
               "cycle_from": "first SE year of the 19-year cycle (-112 = 424/3 BC)",
               "before": "equinox (default) or cycle: years before the cycle without attestation",
               "equinox_days": "equinox rule: days before the equinox (2)",
               "attested": "attestation TOML file(s), os.pathsep-separated (also env CALENDRA_BABYLONIAN)",
               "deltat": "delta-T model"}
    _DEFAULTS = {"criterion": "lag", "lag_min": None, "age_min": None, "elongation_min": None, "threshold": None,
                 "site": "Babylon", "cycle_from": DEFAULT_CYCLE_FROM, "before": "equinox",
                 "equinox_days": DEFAULT_EQUINOX_DAYS, "attested": None, "deltat": None}

    def __init__(self, **options):
        super().__init__()
        from calendra.deltat import get_model
        from calendra.sites import parse_site

        unknown = set(options) - set(self._DEFAULTS)
        if unknown:
            raise ParameterError(f"calendar babylonian takes options {', '.join(self._DEFAULTS)}, "
                                 f"not {', '.join(sorted(unknown))}")
        spec = dict(self._DEFAULTS)
        spec.update({k: v for k, v in options.items() if v is not None})
        self._spec = spec
        self.site = parse_site(spec["site"])
        self.deltat = get_model(spec["deltat"])
        crit = str(spec["criterion"]).lower()
        params = {}
        if crit == "lag":
            params = {"lag_min": float(spec["lag_min"] if spec["lag_min"] is not None else 48.0),
                      "age_min": float(spec["age_min"] if spec["age_min"] is not None else 24.0),
                      "elongation_min": float(spec["elongation_min"] if spec["elongation_min"] is not None else 0.0)}
        elif any(spec[k] is not None for k in ("lag_min", "age_min", "elongation_min")):
            raise ParameterError("babylonian: lag_min, age_min and elongation_min belong to criterion=lag")
        thr = None if spec["threshold"] is None else float(spec["threshold"])
        self.crescents = sky.CrescentSource(self.site, crit, params, thr, self.deltat)
        try:
            self.cycle_from = int(spec["cycle_from"])
            self.equinox_days = float(spec["equinox_days"])
        except (TypeError, ValueError):
            raise ParameterError("babylonian: cycle_from is an SE year and equinox_days a number of days") from None
        if spec["before"] not in ("equinox", "cycle"):
            raise ParameterError(f"babylonian: before is equinox or cycle, got {spec['before']!r}")
        self.before = spec["before"]
        files = []
        if spec["attested"]:
            files += [p for p in str(spec["attested"]).split(os.pathsep) if p]
        elif os.environ.get(ENV_VAR):
            files += [p for p in os.environ[ENV_VAR].split(os.pathsep) if p]
        files = [str(BUILTIN_ATTESTATIONS.get(f.strip().lower(), f)) for f in files]
        self.attestations = load_attestations(files) if files else Attestations()
        self._table = None
        self.options = {k: str(v) for k, v in spec.items() if v is not None}

    def with_options(self, **options):
        spec = {k: v for k, v in self._spec.items()}
        unknown = set(options) - set(self._DEFAULTS)
        if unknown:
            raise ParameterError(f"calendar babylonian takes options {', '.join(self._DEFAULTS)}, "
                                 f"not {', '.join(sorted(unknown))}")
        if "criterion" in options and options["criterion"] != "lag":
            for key in ("lag_min", "age_min", "elongation_min"):
                if spec.get(key) is not None and key not in options:
                    spec[key] = None
        spec.update(options)
        return BabylonianCalendar(**spec)

    @property
    def label(self):
        diff = [f"{k}={v}" for k, v in self._spec.items() if v is not None and self._DEFAULTS.get(k) != v
                and not (k in ("cycle_from", "equinox_days") and float(v) == float(self._DEFAULTS[k]))]
        return self.name + (f"[{','.join(diff)}]" if diff else "")

    # ------------------------------------------------------------ sky
    def _raw_starts(self, k):
        return self.crescents.starts(k)

    def prefetch(self, k_first, k_last):
        from .base import CHAIN_MARGIN

        self.crescents.values(np.arange(k_first - CHAIN_MARGIN - 40, k_last + 40), "evening")

    # ------------------------------------------------------------ years
    def _full_table(self):
        """First lunation and leap position of every SE year of the span, and the rule that made each."""
        if self._table is not None:
            return self._table
        from calendra.ephemeris import SPAN_JD

        y_lo = int(self._estimate_year(SPAN_JD[0] + 100)) + 1
        y_hi = int(self._estimate_year(SPAN_JD[1] - 100)) - 1
        years = np.arange(y_lo, y_hi + 2)
        n = years.size
        months = np.zeros(n, dtype=np.int64)
        lpos = np.full(n, -1, dtype=np.int64)
        rule = np.empty(n, dtype=object)
        fixed = np.zeros(n, dtype=bool)
        in_cycle = (years >= self.cycle_from) | (self.before == "cycle")
        months[in_cycle] = np.where(cycle_is_leap(years[in_cycle]), 13, 12)
        lpos[in_cycle] = cycle_leap_position(years[in_cycle])
        rule[in_cycle] = "19-year cycle"
        if self.before == "cycle":
            rule[years < self.cycle_from] = "19-year cycle extended backwards (proleptic)"
        fixed[in_cycle] = True
        for y, (pos, src) in self.attestations.intercalations.items():
            i = y - y_lo
            if 0 <= i < n:
                months[i] = 13 if pos >= 0 else 12
                lpos[i] = pos
                rule[i] = "attested" + (f" ({src})" if src else "")
                fixed[i] = True
        nk = np.zeros(n + 1, dtype=np.int64)
        i1 = 1 - y_lo                                   # index of SE 1
        nk[i1] = SE1_LUNATION
        need_rule = not fixed.all()
        if need_rule:
            conj, eq = self._rule_sky(years)
        for i in range(i1, n):                          # forward from SE 1
            if not fixed[i]:
                cand = nk[i] + 12
                too_early = conj(cand) < eq[i + 1] - self.equinox_days if i + 1 < n else False
                months[i] = 13 if too_early else 12
                lpos[i] = ADDARU_II if too_early else -1
                rule[i] = "equinox rule (reconstruction)"
            nk[i + 1] = nk[i] + months[i]
        for i in range(i1 - 1, -1, -1):                 # backward from SE 1
            if not fixed[i]:
                cand = nk[i + 1] - 13
                ok = conj(cand) >= eq[i] - self.equinox_days
                months[i] = 13 if ok else 12
                lpos[i] = ADDARU_II if ok else -1
                rule[i] = "equinox rule (reconstruction)"
            nk[i] = nk[i + 1] - months[i]
        self._table = {"y_lo": y_lo, "years": years, "nk": nk, "months": months, "lp": lpos, "rule": rule}
        self._attest_lengths()
        return self._table

    def _rule_sky(self, years):
        """Conjunction instants by lunation and the spring equinox (TT) of each SE year, for the equinox rule."""
        from calendra.ephemeris import SPAN_JD
        from calendra.lunations import lunar_phases, predicted_phase_jde
        from calendra.solarterms import solar_longitude_crossings

        a, b = SPAN_JD[0] + 1.0, SPAN_JD[1] - 1.0
        moons = lunar_phases(a, b, "new")
        eqx = solar_longitude_crossings(a, b, 0.0)
        jy = years - 311
        ey = np.asarray(jg.julian_from_jdn(np.floor(eqx.jd_tt + 0.5).astype(np.int64))[0])
        eq = np.full(years.size, np.nan)
        idx = np.searchsorted(ey, jy)
        ok = (idx < ey.size) & (ey[np.minimum(idx, ey.size - 1)] == jy)
        eq[ok] = eqx.jd_tt[idx[ok]]
        # Years whose equinox lies beyond DE406: the mean tropical year from the nearest computed one.
        good = np.flatnonzero(ok)
        for i in np.flatnonzero(~ok):
            j = good[np.argmin(np.abs(good - i))]
            eq[i] = eq[j] + (i - j) * 365.2422
        lun, jd = moons.lunation, moons.jd_tt

        def conj(k):
            i = np.searchsorted(lun, k)
            if 0 <= i < lun.size and lun[i] == k:
                return float(jd[i])
            return float(predicted_phase_jde(k))

        return conj, eq

    def _attest_lengths(self):
        t = self._table
        self.attested_lengths = {}
        for (y, m, lf), (days, src) in self.attestations.lengths.items():
            i = y - t["y_lo"]
            if not 0 <= i < t["years"].size:
                continue
            lp = t["lp"][i] if t["months"][i] == 13 else -1
            if lf and lp != m:
                raise ParameterError(f"attested length of {MONTH_NAMES[m - 1]} II SE {y}: that year has no "
                                     f"{MONTH_NAMES[m - 1]} II in this calendar")
            p = int(self._position(np.int64(m), np.int64(lf), np.int64(lp)))
            self.attested_lengths[int(t["nk"][i] + p)] = (days, src)

    def _year_first_lunation_block(self, y0, y1):
        t = self._full_table()
        lo = y0 - t["y_lo"]
        hi = y1 - t["y_lo"]
        return t["nk"][lo:hi + 1], np.where(t["months"][lo:hi + 1] == 13, t["lp"][lo:hi + 1], -1)

    def computable_years(self):
        t = self._full_table()
        return int(t["years"][0]) + 1, int(t["years"][-1]) - 2

    def intercalation_rule(self, year: int) -> str:
        """Which rule made ``year`` 12 or 13 months long (cycle, attested, reconstruction)."""
        t = self._full_table()
        return str(t["rule"][year - t["y_lo"]])

    # ------------------------------------------------------------ names
    def month_name(self, month: int, year: int | None = None, leap: bool = False) -> str:
        base = MONTH_NAMES[month - 1] if 1 <= month <= 12 else str(month)
        return f"{base} II" if leap else base

    def year_label(self, year: int) -> str:
        return f"SE {year}"

    # ------------------------------------------------------------ tables
    def year_rows(self, year: int) -> list[dict]:
        """Months of SE ``year`` with the evening of first visibility and its margin (criterion units)."""
        rows = super().year_rows(year)
        k = np.array([r["lunation"] for r in rows])
        c = self.crescents
        evening = c.values(k, "evening")
        found = c.values(k, "found")
        value = c.values(k, "value")
        margin = c.values(k, "margin")
        fragile = c.fragile(k)
        conj = c.values(k, "conjunction_tt")
        conj_ut = np.asarray(self.deltat.ut_from_tt(conj), dtype=float)
        starts = np.array([r["first_jdn"] for r in rows])
        for i, r in enumerate(rows):
            cy, cm, cd = (int(v) for v in jg.julian_from_jdn(np.floor(conj_ut[i] + 0.5)))
            r["conjunction_ut_julian"] = f"{iso_year(cy)}-{cm:02d}-{cd:02d}"
            computed_start = int(evening[i]) + 1
            r["sky_start_agrees"] = bool(computed_start == starts[i])
            ey, em, ed = (int(v) for v in jg.julian_from_jdn(starts[i] - 1))
            r["evening_julian"] = f"{iso_year(ey)}-{em:02d}-{ed:02d}"
            r["seen"] = bool(found[i])
            r[c.criterion.value_name] = round(float(value[i]), 3) if np.isfinite(value[i]) else float("nan")
            r["margin"] = round(float(margin[i]), 3) if np.isfinite(margin[i]) else float("nan")
            r["fragile"] = bool(fragile[i])
            r["attested_days"] = self.attested_lengths.get(int(k[i]), (None, ""))[0]
        rule = self.intercalation_rule(year)
        for r in rows:
            r["intercalation"] = rule
        return rows

    def describe(self):
        d = super().describe()
        d["month_starts"] = self.crescents.describe()
        d["intercalation"] = (f"19-year cycle from SE {self.cycle_from}; before: "
                              + ("attested, else the cycle backwards" if self.before == "cycle" else
                                 f"attested, else Nisannu's conjunction >= {self.equinox_days:g} d before the equinox"))
        if self.attestations.files:
            d["attestations"] = list(self.attestations.files)
        return d


def check_attested(cal: BabylonianCalendar, attestations: Attestations | None = None) -> list[dict]:
    """Compare attested month lengths with the computed ones.

    For every attested month: the attested length, the length the sky gives
    (the computed start of the next month minus this month's start, bounded
    to 29..30), the criterion's value on the evening that decides between 29
    and 30 days (the evening of day 29), and whether they agree.

    The computed length starts from the month's start in ``cal`` (where
    earlier attested lengths have moved it) and ends at the start the sky
    gives to the next month.

    Parameters
    ----------
    cal : BabylonianCalendar
        The calendar whose criterion decides.
    attestations : Attestations, optional
        Default: the calendar's own.

    Returns
    -------
    list of dict
        One row per attested month, in time order.
    """
    att = attestations if attestations is not None else cal.attestations
    cal._full_table()
    rows = []
    crit = cal.crescents
    for (y, m, lf), (days, src) in sorted(att.lengths.items()):
        lo, hi = cal.computable_years()
        if not lo <= y <= hi:
            continue
        k = int(cal._lunation_of(np.int64(y), np.int64(m), np.int64(lf))[0])
        s0 = int(cal.month_starts(np.int64(k)))
        raw_next = int(cal._raw_starts(np.array([k + 1]))[0])
        computed = int(min(max(raw_next - s0, 29), 30))
        # The evening that ends day 29 is civil day s0 + 28 (day 30 begins at its sunset).
        value, visible = crit.evening_value(np.array([k + 1]), np.array([s0 + 28]))
        thr = crit.threshold
        jy, jm, jd = (int(v) for v in jg.julian_from_jdn(s0))
        v = float(value[0])
        rows.append({
            "year": y, "month": cal.month_name(m, y, bool(lf)), "first_julian": f"{iso_year(jy)}-{jm:02d}-{jd:02d}",
            "attested_days": days, "computed_days": computed, "agree": days == computed,
            "day29_evening_value": round(v, 3) if np.isfinite(v) else float("nan"),
            "threshold": thr, "margin": round(abs(v - thr), 3) if np.isfinite(v) else float("nan"),
            "fragile": bool(np.isfinite(v) and abs(v - thr) < sky.FRAGILE_MARGIN.get(crit.criterion_name, 0.0)),
            "source": src,
        })
    return rows

