"""Reading and checking a record file (TOML) into :class:`Record` objects.

The schema is documented in the package docstring (:mod:`calendra_solver`)
and in ``SCHEMA.md`` beside this module.  Every problem in a file raises
:class:`RecordError` with one line naming the file, the table and the key.
Nothing here runs a detector: names of detectors, calendars and sites are
checked against the installed ones, values against the detectors' declared
parameters, and the relations against the observations they name.
"""

from __future__ import annotations

import os
import re
import sys
from dataclasses import dataclass, field

from calendra.errors import CalendraError, ParameterError

from .filters import parse_where
from .relations import Relation, parse_relation

__all__ = ["DateInfo", "Observation", "Record", "RecordError", "Relation", "Require", "Sweep", "load_record",
           "record_from_dict", "split_window"]

if sys.version_info >= (3, 11):
    import tomllib
else:  # pragma: no cover - Python 3.10
    import tomli as tomllib

_ID_RE = re.compile(r"^[A-Za-z][A-Za-z0-9_\-]*$")

RECORD_KEYS = {"title", "source", "note", "window", "site", "delta_t", "eras", "lunisolar", "top",
               "delta_t_sweep"}
SWEEP_KEYS = {"mode", "n_sigma", "steps", "match_days"}
SWEEP_MODES = ("near", "full", "off")
OBS_KEYS = {"id", "text", "detector", "params", "site", "kind", "where", "require", "date", "margin",
            "chunk_years", "weight"}
REQUIRE_KEYS = {"column", "min", "max", "target", "tolerance", "equals", "one_of"}
DATE_KEYS = {"calendar", "ruler", "tolerance_days", "not_before", "not_after"}
MARGIN_KEYS = {"column", "scale"}


class RecordError(ParameterError):
    """A record file that cannot be used: one line naming the file, the place in it and the problem.

    Attributes
    ----------
    path : str
    where : str
        The table and key, e.g. ``[[observation]] 'eclipse', key 'params.kind'``.
    """

    def __init__(self, path, where: str, problem: str):
        self.path = str(path)
        self.where = where
        super().__init__(f"record {self.path}: {where}: {problem}")


@dataclass
class Require:
    """A condition on one output column of a detector (see SCHEMA.md, ``[[observation.require]]``).

    ``min``/``max`` bound the value; ``target`` asks for a value with
    ``tolerance`` either side; ``tolerance`` with ``min``/``max`` lets a value
    lie that far outside and scores the excess.  ``equals``/``one_of``
    compare text or numbers exactly.  Units are those of the column.
    """

    column: str
    min: float | None = None
    max: float | None = None
    target: float | None = None
    tolerance: float | None = None
    equals: object = None
    one_of: tuple | None = None


@dataclass
class DateInfo:
    """What a record says of an observation's date in one calendar.

    Attributes
    ----------
    calendar : str
        Calendar name (``NAME[opt=value]`` allowed; a calendar of the record's era files).
    fields : dict of str -> int
        The fields that are known (``{"month": 2, "day": 14}``: year unknown).
    ruler : str or None
        For a reign-list calendar (fields reign, year, ...): the ruler's name or key.
    tolerance_days : int
        The event's day may differ by this many days from a day that matches.
    not_before, not_after : str or None
        Absolute bounds (date texts in any calendar); the event's instant must lie between them.
    """

    calendar: str | None = None
    fields: dict = field(default_factory=dict)
    ruler: str | None = None
    tolerance_days: int = 0
    not_before: str | None = None
    not_after: str | None = None


@dataclass
class Observation:
    """One recorded sky observation: a detector, its parameters, filters and date information."""

    id: str
    detector: str
    params: dict
    text: str = ""
    site: str | None = None          # "record", "none" or a site text
    kinds: tuple = ()
    where: tuple = ()                # tuple of Clause lists (or-groups of and-clauses)
    where_text: str = ""
    require: list = field(default_factory=list)
    date: DateInfo | None = None
    margin: tuple | None = None      # (column, scale)
    chunk_years: float = 300.0
    weight: float = 1.0


@dataclass
class Sweep:
    """How the delta-T sensitivity is examined (``[record.delta_t_sweep]``)."""

    mode: str = "near"
    n_sigma: float = 2.0
    steps: int = 5
    match_days: float = 3.0


@dataclass
class Record:
    """A record: observations, relations, a search window and defaults."""

    path: str
    title: str
    window: tuple                    # (text_from, text_to)
    observations: list
    relations: list
    site: str | None = None
    delta_t: str | None = None
    eras: tuple = ()
    lunisolar: tuple = ()            # lunisolar calendar files (absolute paths)
    top: int = 5
    sweep: Sweep = field(default_factory=Sweep)
    source: str = ""
    note: str = ""

    def observation(self, oid: str) -> Observation:
        for o in self.observations:
            if o.id == oid:
                return o
        raise KeyError(oid)

    @property
    def ids(self) -> list[str]:
        return [o.id for o in self.observations]


# ------------------------------------------------------------------ loading
def load_record(path, host=None) -> Record:
    """Read and check a record file.

    Parameters
    ----------
    path : str or path-like
        A TOML file in the schema of SCHEMA.md.
    host : calendra.pluginmanager.Host, optional
        Where detectors and calendars are looked up (default: the process host).

    Returns
    -------
    Record

    Raises
    ------
    RecordError
        One line naming the file, the table and the key at fault.
    """
    path = os.fspath(path)
    try:
        with open(path, "rb") as fh:
            doc = tomllib.load(fh)
    except FileNotFoundError:
        raise RecordError(path, "file", "not found") from None
    except OSError as exc:
        raise RecordError(path, "file", f"cannot be read: {exc.strerror or exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise RecordError(path, "TOML syntax", str(exc)) from None
    return record_from_dict(doc, path, host)


def record_from_dict(doc: dict, path: str = "<record>", host=None) -> Record:
    """Check a record given as a dict (as read from TOML); see :func:`load_record`."""
    from calendra.pluginmanager import get_host

    host = host or get_host()
    fail = _Fail(path)
    extra = set(doc) - {"record", "observation", "relation", "about"}
    if extra:
        raise fail("top level", f"unknown table or key {sorted(extra)[0]!r} (allowed: record, observation, "
                                "relation, about)")
    rec = doc.get("record")
    if not isinstance(rec, dict):
        raise fail("top level", "missing [record] table (with at least window = [FROM, TO])")
    _check_keys(rec, RECORD_KEYS, fail, "[record]")
    window = _window(rec.get("window"), fail)
    sweep = _sweep(rec.get("delta_t_sweep", {}), fail)
    base = os.path.dirname(os.path.abspath(path)) if path != "<record>" else os.getcwd()
    eras = _paths(rec, "eras", "era-file", base, fail)
    lunisolar = _paths(rec, "lunisolar", "lunisolar-calendar-file", base, fail)
    top = rec.get("top", 5)
    if not isinstance(top, int) or isinstance(top, bool) or top < 1:
        raise fail("[record], key 'top'", f"{top!r}: a whole number >= 1")
    for key in ("site", "delta_t", "title", "source", "note"):
        if key in rec and not isinstance(rec[key], str):
            raise fail(f"[record], key {key!r}", "must be a string")
    obs_tables = doc.get("observation")
    if not isinstance(obs_tables, list) or not obs_tables:
        raise fail("top level", "no [[observation]] tables: a record needs at least one observation")
    observations = []
    for i, table in enumerate(obs_tables, start=1):
        observations.append(_observation(table, i, fail, host))
    ids = [o.id for o in observations]
    dup = sorted({x for x in ids if ids.count(x) > 1})
    if dup:
        raise fail(f"[[observation]] {dup[0]!r}, key 'id'", "used twice")
    relations = []
    rel_tables = doc.get("relation", [])
    if not isinstance(rel_tables, list):
        raise fail("relation", "write [[relation]] (an array of tables)")
    for i, table in enumerate(rel_tables, start=1):
        relations.append(parse_relation(table, i, fail, set(ids)))
    site = rec.get("site")
    for o in observations:
        det = host.detectors.get(o.detector)
        if o.site is None:
            o.site = "record" if det.needs_site else "none"
        if det.needs_site and o.site == "none":
            raise fail(f"[[observation]] {o.id!r}, key 'site'", f"detector {o.detector} needs a site")
        if o.site == "record" and not site:
            raise fail(f"[[observation]] {o.id!r}", f"detector {o.detector} needs a site: set site in [record] "
                                                    "or in the observation (or give --site)")
    return Record(path=path, title=rec.get("title", os.path.basename(path)), window=window,
                  observations=observations, relations=relations, site=site, delta_t=rec.get("delta_t"),
                  eras=eras, lunisolar=lunisolar, top=top, sweep=sweep, source=rec.get("source", ""), note=rec.get("note", ""))


def _paths(rec, key, what, base, fail) -> tuple:
    """A ``[record]`` list of file paths (one path allowed), made absolute relative to the record."""
    items = rec.get(key, [])
    if isinstance(items, str):
        items = [items]
    if not isinstance(items, list) or not all(isinstance(e, str) and e.strip() for e in items):
        raise fail(f"[record], key {key!r}", f"a list of {what} paths (relative to the record)")
    return tuple(e if os.path.isabs(e) else os.path.join(base, e) for e in items)


class _Fail:
    def __init__(self, path):
        self.path = path

    def __call__(self, where, problem):
        return RecordError(self.path, where, problem)


def _check_keys(table, allowed, fail, where):
    if not isinstance(table, dict):
        raise fail(where, "must be a table")
    extra = sorted(set(table) - set(allowed))
    if extra:
        raise fail(where, f"unknown key {extra[0]!r} (allowed: {', '.join(sorted(allowed))})")


def _window(value, fail):
    where = "[record], key 'window'"
    if value is None:
        raise fail(where, "missing: give the search window, e.g. window = [\"-1500\", \"-300\"] or \"-1500..-300\"")
    if isinstance(value, str):
        parts = split_window(value)
        if parts is None:
            raise fail(where, f"{value!r}: write FROM..TO, e.g. \"-1500..-300\"")
        value = list(parts)
    if not isinstance(value, list) or len(value) != 2:
        raise fail(where, "a list of two dates or years [FROM, TO]")
    return tuple(str(v) for v in value)


def split_window(text: str):
    """Split ``FROM..TO`` into two texts (None when the text has no ``..``)."""
    if ".." not in text:
        return None
    a, b = text.split("..", 1)
    if not a.strip() or not b.strip():
        return None
    return a.strip(), b.strip()


def _sweep(table, fail):
    where = "[record.delta_t_sweep]"
    _check_keys(table, SWEEP_KEYS, fail, where)
    out = Sweep()
    if "mode" in table:
        if table["mode"] not in SWEEP_MODES:
            raise fail(f"{where}, key 'mode'", f"{table['mode']!r}: one of {', '.join(SWEEP_MODES)}")
        out.mode = table["mode"]
    out.n_sigma = _number(table, "n_sigma", out.n_sigma, fail, where, lo=0.0)
    steps = table.get("steps", out.steps)
    if not isinstance(steps, int) or isinstance(steps, bool) or steps < 1:
        raise fail(f"{where}, key 'steps'", f"{steps!r}: a whole number >= 1 (odd includes the nominal value)")
    out.steps = steps
    out.match_days = _number(table, "match_days", out.match_days, fail, where, lo=0.0)
    return out


def _number(table, key, default, fail, where, lo=None):
    if key not in table:
        return default
    v = table[key]
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise fail(f"{where}, key {key!r}", f"{v!r}: must be a number")
    if lo is not None and v < lo:
        raise fail(f"{where}, key {key!r}", f"{v!r}: must be >= {lo:g}")
    return float(v)


def _observation(table, i, fail, host) -> Observation:
    where0 = f"[[observation]] #{i}"
    _check_keys(table, OBS_KEYS, fail, where0)
    oid = table.get("id")
    if not isinstance(oid, str) or not _ID_RE.match(oid):
        raise fail(f"{where0}, key 'id'", f"{oid!r}: an identifier (letters, digits, - and _; a letter first)")
    where = f"[[observation]] {oid!r}"
    name = table.get("detector")
    if not isinstance(name, str):
        raise fail(f"{where}, key 'detector'", "missing: name an installed detector (see 'calendra events')")
    try:
        det = host.detectors.get(name)
    except CalendraError as exc:
        raise fail(f"{where}, key 'detector'", str(exc)) from None
    params = table.get("params", {})
    if not isinstance(params, dict):
        raise fail(f"{where}, key 'params'", "must be a table of the detector's parameters")
    try:
        params = det.resolve_parameters(params)
    except CalendraError as exc:
        raise fail(f"{where}, key 'params'", str(exc)) from None
    obs = Observation(id=oid, detector=det.name, params=params, text=str(table.get("text", "")))
    if "site" in table:
        if not isinstance(table["site"], str) or not table["site"].strip():
            raise fail(f"{where}, key 'site'", "a site name, LAT,LON[,ELEV], \"record\" or \"none\"")
        obs.site = table["site"].strip()
        if obs.site not in ("record", "none"):
            from calendra.sites import parse_site

            try:
                parse_site(obs.site)
            except CalendraError as exc:
                raise fail(f"{where}, key 'site'", str(exc)) from None
    kinds = table.get("kind", ())
    if isinstance(kinds, str):
        kinds = (kinds,)
    if not isinstance(kinds, (list, tuple)) or not all(isinstance(k, str) for k in kinds):
        raise fail(f"{where}, key 'kind'", "a kind name or a list of them")
    obs.kinds = tuple(kinds)
    if "where" in table:
        text = table["where"]
        if not isinstance(text, str):
            raise fail(f"{where}, key 'where'", "must be a string such as \"umbral_mag >= 0.5 and seen == 'yes'\"")
        try:
            obs.where = parse_where(text)
        except ValueError as exc:
            raise fail(f"{where}, key 'where'", str(exc)) from None
        obs.where_text = text
    reqs = table.get("require", [])
    if isinstance(reqs, dict):
        reqs = [reqs]
    if not isinstance(reqs, list):
        raise fail(f"{where}, key 'require'", "write [[observation.require]] tables")
    for k, r in enumerate(reqs, start=1):
        obs.require.append(_require(r, fail, f"{where}, require #{k}"))
    if "date" in table:
        obs.date = _date(table["date"], fail, f"{where}, [observation.date]", host)
    if "margin" in table:
        m = table["margin"]
        if isinstance(m, str):
            obs.margin = (m, 1.0)
        else:
            _check_keys(m, MARGIN_KEYS, fail, f"{where}, key 'margin'")
            if not isinstance(m.get("column"), str):
                raise fail(f"{where}, key 'margin.column'", "name the column holding the visibility margin")
            scale = _number(m, "scale", 1.0, fail, f"{where}, key 'margin'", lo=0.0)
            if scale <= 0:
                raise fail(f"{where}, key 'margin.scale'", "must be > 0")
            obs.margin = (m["column"], scale)
    obs.chunk_years = _number(table, "chunk_years", obs.chunk_years, fail, where, lo=1.0)
    obs.weight = _number(table, "weight", 1.0, fail, where, lo=0.0)
    return obs


def _require(r, fail, where) -> Require:
    _check_keys(r, REQUIRE_KEYS, fail, where)
    col = r.get("column")
    if not isinstance(col, str) or not col:
        raise fail(f"{where}, key 'column'", "name one of the detector's output columns")
    out = Require(column=col)
    for key in ("min", "max", "target", "tolerance"):
        if key in r:
            setattr(out, key, _number(r, key, None, fail, where))
    if out.tolerance is not None and out.tolerance < 0:
        raise fail(f"{where}, key 'tolerance'", "must be >= 0")
    if "equals" in r:
        out.equals = r["equals"]
    if "one_of" in r:
        if not isinstance(r["one_of"], list) or not r["one_of"]:
            raise fail(f"{where}, key 'one_of'", "a non-empty list of values")
        out.one_of = tuple(r["one_of"])
    kinds = sum(x is not None for x in (out.equals, out.one_of)) + (out.target is not None) + \
        (out.min is not None or out.max is not None)
    if kinds == 0:
        raise fail(where, "say what the column must be: min/max, target (with tolerance), equals or one_of")
    if kinds > 1:
        raise fail(where, "use one form only: min/max, target, equals or one_of")
    if out.target is not None and out.tolerance is None:
        raise fail(f"{where}, key 'tolerance'", "a target needs a tolerance (in the column's unit)")
    if out.min is not None and out.max is not None and out.min > out.max:
        raise fail(f"{where}, key 'min'", f"min {out.min:g} is above max {out.max:g}")
    return out


def _date(d, fail, where, host) -> DateInfo:
    if not isinstance(d, dict):
        raise fail(where, "must be a table")
    out = DateInfo()
    for key in ("not_before", "not_after"):
        if key in d:
            if not isinstance(d[key], str):
                raise fail(f"{where}, key {key!r}", "a date text, e.g. \"-0700\" or \"julian:-0650-03-01\"")
            setattr(out, key, d[key])
    tol = d.get("tolerance_days", 0)
    if not isinstance(tol, int) or isinstance(tol, bool) or not 0 <= tol <= 30:
        raise fail(f"{where}, key 'tolerance_days'", f"{tol!r}: a whole number of days, 0..30")
    out.tolerance_days = tol
    fields = {k: v for k, v in d.items() if k not in DATE_KEYS}
    if "calendar" not in d:
        if fields or "ruler" in d:
            raise fail(f"{where}, key 'calendar'", "date fields need the calendar they are written in")
        return out
    if not isinstance(d["calendar"], str):
        raise fail(f"{where}, key 'calendar'", "must be a calendar name")
    out.calendar = d["calendar"]
    for k, v in fields.items():
        if isinstance(v, bool) or not isinstance(v, int):
            raise fail(f"{where}, key {k!r}", f"{v!r}: a date field is a whole number")
    out.fields = fields
    if "ruler" in d:
        if not isinstance(d["ruler"], (str, int)) or isinstance(d["ruler"], bool):
            raise fail(f"{where}, key 'ruler'", "the ruler's name, key or reign number")
        out.ruler = d["ruler"]
    if not fields and out.ruler is None:
        raise fail(where, "give at least one date field (e.g. month = 2, day = 14) or a ruler")
    return out
