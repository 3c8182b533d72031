"""Job kinds of a sweep: what one chunk computes, and how a spec's grid is cut into chunks.

A job kind is a class registered with :func:`register_job_kind` under the
name used in ``[job] kind``.  It reads and checks its part of the spec
(:meth:`JobKind.from_spec`), cuts its grid into :class:`Chunk` objects
(:meth:`JobKind.chunks`) and computes one chunk as one array job
(:meth:`JobKind.run`, called on a Dask worker or in-process).  Job objects
and chunks hold plain data only, so they travel to workers by pickling.

Kinds
-----
``detector``
    Any installed event detector over sites (gazetteer names, coordinates or
    a latitude/longitude raster) x swept parameter values x delta-T
    variants x year spans.  One chunk is one call of the detector's
    ``search`` over its span (plus a margin), i.e. one vectorized job.
"""

from __future__ import annotations

import itertools
import math
import os
import socket
import time
from dataclasses import asdict, dataclass, field
from typing import Any, ClassVar

import numpy as np

from calendra.deltat import DeltaTModel
from calendra.errors import CalendraError, UnknownNameError

from .spec import Where, year_spans
from .store import chunk_key, table_csv

_KINDS: dict[str, type] = {}


def register_job_kind(cls):
    """Class decorator: make ``cls`` available as ``[job] kind = cls.name``."""
    if not cls.name:
        raise ValueError("a job kind needs a name")
    _KINDS[cls.name] = cls
    return cls


def job_kind(name: str):
    """Return the job-kind class registered as ``name``.

    Raises
    ------
    calendra.errors.UnknownNameError
        For a name that is not registered (the message lists the known ones).
    """
    _load_optional_kinds()
    try:
        return _KINDS[name]
    except KeyError:
        raise UnknownNameError("job kind", name, list(_KINDS)) from None


def job_kinds() -> dict[str, str]:
    """Return the registered job kinds: name -> title."""
    _load_optional_kinds()
    return {n: c.title for n, c in _KINDS.items()}


def _load_optional_kinds():
    """Import the modules of job kinds that rest on other plugins (each registers itself if usable)."""
    import importlib

    try:
        importlib.import_module(f"{__package__}.kinds_extra")
    except ModuleNotFoundError as exc:
        if exc.name != f"{__package__}.kinds_extra":
            raise


@dataclass(frozen=True)
class Chunk:
    """One unit of work: one grid point over one span of years.

    Attributes
    ----------
    key : str
        Stable name of the chunk (its file is ``chunks/KEY.csv``).
    point : tuple of (str, value)
        The grid point's columns, written in front of every row.
    year_from, year_to : int
        Span, astronomical years (``year_to`` exclusive).
    jd_tt_start, jd_tt_end : float
        The same span as Julian Days (TT); rows are kept when
        ``jd_tt_start <= jd_tt < jd_tt_end``.
    task : Any
        What the job kind needs to compute the chunk (plain, picklable data).
    """

    key: str
    point: tuple
    year_from: int
    year_to: int
    jd_tt_start: float
    jd_tt_end: float
    task: Any = None

    def point_dict(self) -> dict:
        """The grid point's columns as a dict."""
        return dict(self.point)


@dataclass
class ChunkResult:
    """What a worker sends back for one chunk.

    Attributes
    ----------
    key : str
    text : str
        The chunk's CSV text (header and rows), written by the client.
    rows : int
    seconds : float
        Wall time of the computation on the worker, s.
    worker : str
        ``host:pid`` of the process that computed it.
    provenance : dict
        Provenance of the chunk's table (models, ephemeris, warnings).
    error : str or None
        A user error (:class:`calendra.errors.CalendraError`) raised by the
        job; such a chunk is not retried.
    """

    key: str
    text: str = ""
    rows: int = 0
    seconds: float = 0.0
    worker: str = ""
    provenance: dict = field(default_factory=dict)
    error: str | None = None


class JobKind:
    """Base class of job kinds (see the module notes)."""

    name: ClassVar[str] = ""
    title: ClassVar[str] = ""
    #: True when the grid is a latitude/longitude raster (enables the map plot).
    has_latlon: bool = False

    @classmethod
    def from_spec(cls, doc: dict, where: Where) -> "JobKind":  # pragma: no cover - abstract
        """Read and check the ``[job]`` and ``[grid]`` tables of a spec; raise SpecError."""
        raise NotImplementedError

    def chunks(self) -> list[Chunk]:  # pragma: no cover - abstract
        """Return every chunk of the grid, in a fixed order."""
        raise NotImplementedError

    def run(self, chunk: Chunk):  # pragma: no cover - abstract
        """Compute one chunk and return an :class:`calendra.events.EventTable`."""
        raise NotImplementedError

    def describe(self) -> dict:
        """Return the job's settings as plain values (for the manifest)."""
        return {"kind": self.name}

    def light(self) -> "JobKind":
        """Return the job without what only cutting the grid needs (sent with every task)."""
        return self


def execute_chunk(job: JobKind, chunk: Chunk) -> ChunkResult:
    """Compute ``chunk`` with ``job`` and return its CSV text: the function sent to Dask workers.

    A :class:`calendra.errors.CalendraError` (a user error: a bad star name,
    a range the detector refuses) is returned in :attr:`ChunkResult.error`
    rather than raised, so that it is reported once instead of retried; any
    other exception propagates and Dask retries the chunk.
    """
    start = time.perf_counter()
    worker = f"{socket.gethostname()}:{os.getpid()}"
    try:
        table = job.run(chunk)
    except CalendraError as exc:
        return ChunkResult(chunk.key, worker=worker, error=str(exc))
    text, rows = table_csv(chunk.point, table)
    return ChunkResult(chunk.key, text=text, rows=rows, seconds=time.perf_counter() - start,
                       worker=worker, provenance=dict(table.provenance))


# ---------------------------------------------------------------- delta T

class OffsetDeltaT(DeltaTModel):
    """A delta-T model moved by a constant: ΔT' = ΔT + ``offset_s`` (seconds); σ unchanged.

    Parameters
    ----------
    base : DeltaTModel
    offset_s : float
        Seconds added to the base model's ΔT at every epoch.
    """

    def __init__(self, base: DeltaTModel, offset_s: float):
        self.base = base
        self.offset_s = float(offset_s)
        self.name = f"{base.name}{self.offset_s:+g}s"
        self.title = f"{base.title or base.name}, {self.offset_s:+g} s"
        self.reference = base.reference
        self.note = base.note

    @property
    def valid_span(self):
        return self.base.valid_span

    def _seconds(self, jd_tt):
        return np.asarray(self.base.seconds(jd_tt)) + self.offset_s

    def _sigma(self, jd_tt):
        return np.asarray(self.base.sigma(jd_tt))


def delta_t_model(spec: str, offset_s: float = 0.0) -> DeltaTModel:
    """Return the delta-T model ``spec`` (see :func:`calendra.deltat.get_model`) moved by ``offset_s`` seconds."""
    from calendra.deltat import get_model

    base = get_model(spec)
    return base if offset_s == 0.0 else OffsetDeltaT(base, offset_s)


# --------------------------------------------------------- typed values

def toml_value(where: Where, table: str, key: str, param, value):
    """Check a TOML value against a declared detector parameter and return it converted.

    TOML carries types, so a float parameter takes an integer or a float (not
    a boolean or a string), an int parameter an integer, a bool parameter a
    boolean, str and choice parameters a string (a choice one of its values).
    """
    ok = {
        "float": not isinstance(value, bool) and isinstance(value, (int, float)),
        "int": not isinstance(value, bool) and isinstance(value, int),
        "bool": isinstance(value, bool),
        "str": isinstance(value, str),
        "choice": isinstance(value, str),
    }[param.type]
    if ok and param.type == "float" and not math.isfinite(value):
        ok = False
    if not ok:
        kind = {"float": "a number", "int": "a whole number", "bool": "true or false",
                "str": "a string", "choice": "a string"}[param.type]
        unit = f" ({param.help})" if param.help else ""
        raise where.fail(table, key, f"parameter {param.name}{unit} must be {kind}, got {value!r}")
    if param.type == "choice" and value not in param.choices:
        raise where.fail(table, key, f"parameter {param.name} must be one of {', '.join(param.choices)}, "
                                     f"got {value!r}")
    return param.convert(value)


def _grid_values(where: Where, value, table: str, key: str) -> list:
    if not isinstance(value, list):
        value = [value]
    if not value:
        raise where.fail(table, key, "the list is empty (an empty grid has nothing to run)")
    return value


def _axis(where: Where, table: dict, key: str, step: float) -> list[float]:
    """Values of one raster axis: ``[FROM, TO]`` inclusive, every ``step`` degrees."""
    if key not in table:
        raise where.fail("grid.latlon", key, "missing: give [FROM, TO] in degrees")
    pair = table[key]
    if not (isinstance(pair, list) and len(pair) == 2
            and all(not isinstance(v, bool) and isinstance(v, (int, float)) for v in pair)):
        raise where.fail("grid.latlon", key, f"must be [FROM, TO] in degrees, got {pair!r}")
    a, b = float(pair[0]), float(pair[1])
    if b < a:
        raise where.fail("grid.latlon", key, f"range {pair!r} is empty (TO below FROM)")
    n = int(math.floor((b - a) / step + 1e-9)) + 1
    return [round(a + i * step, 9) for i in range(n)]


# ------------------------------------------------------------ detector job

_OBJECT_PARAMETERS = ("object", "body", "planet", "targets")


@register_job_kind
class DetectorJob(JobKind):
    """Any installed detector over a grid of sites x parameter values x delta-T variants x year spans.

    Attributes
    ----------
    detector : str
        Registered name of the detector.
    fixed : dict
        Fixed detector parameters (checked and converted).
    swept : tuple of (str, tuple)
        Swept detector parameters and their values, in grid order.
    sites : tuple of calendra.sites.Site or (None,)
        Sites of the grid; ``(None,)`` for a detector that takes no site.
    delta_t : tuple of str
        Delta-T model specs (swept when more than one is given in ``[grid]``).
    offsets_s : tuple of float
        Delta-T offsets, seconds added to the model.
    spans : tuple of YearSpan
    margin_days : float
        Days searched beyond each chunk's span on both sides; rows are kept
        only inside the span, so that events near a chunk edge come out the
        same as in one long search.
    defaults : dict
        The detector's defaults of the parameters neither fixed nor swept
        (part of each chunk's identity).
    """

    name = "detector"
    title = "an installed event detector over sites x parameters x year spans"

    def __init__(self, detector, fixed, swept, sites, delta_t, offsets_s, spans, margin_days,
                 has_latlon=False, sweep_delta_t=False, sweep_offsets=False, defaults=None):
        self.detector = detector
        self.fixed = dict(fixed)
        self.swept = tuple(swept)
        self.sites = tuple(sites)
        self.delta_t = tuple(delta_t)
        self.offsets_s = tuple(offsets_s)
        self.spans = tuple(spans)
        self.margin_days = float(margin_days)
        self.has_latlon = has_latlon
        self.sweep_delta_t = sweep_delta_t
        self.sweep_offsets = sweep_offsets
        self.defaults = dict(defaults or {})

    # -------------------------------------------------------------- spec
    @classmethod
    def from_spec(cls, doc: dict, where: Where) -> "DetectorJob":
        from calendra.deltat import DEFAULT_MODEL, get_model
        from calendra.pluginmanager import get_host
        from calendra.sites import parse_site

        job, grid = doc["job"], doc["grid"]
        where.check_keys(job, {"kind", "detector", "parameters", "delta_t", "margin_days", "sites_file"}, "job")
        where.check_keys(grid, {"sites", "latlon", "objects", "object_parameter", "years", "chunk_years",
                                "parameters", "delta_t", "delta_t_offset_s"}, "grid")
        name = where.string(job, "detector", "job")
        if name is None:
            raise where.fail("job", "detector", "missing: name an installed detector (see 'calendra events --list')")
        host = get_host()
        try:
            det = host.detectors.get(name)
        except CalendraError as exc:
            raise where.fail("job", "detector", str(exc)) from None
        declared = {p.name: p for p in det.parameters}

        fixed_table = job.get("parameters", {})
        where.check_keys(fixed_table, set(declared), "job.parameters")
        fixed = {k: toml_value(where, "job.parameters", k, declared[k], v) for k, v in fixed_table.items()}

        swept: dict[str, list] = {}
        if "objects" in grid:
            objects = _grid_values(where, grid["objects"], "grid", "objects")
            pname = where.string(grid, "object_parameter", "grid")
            if pname is None:
                pname = next((p for p in _OBJECT_PARAMETERS if p in declared), None)
                if pname is None:
                    raise where.fail("grid", "objects", f"detector {det.name} has no object parameter "
                                                        f"(parameters: {', '.join(declared) or 'none'})")
            elif pname not in declared:
                raise where.fail("grid", "object_parameter", f"detector {det.name} has no parameter {pname!r} "
                                                             f"(parameters: {', '.join(declared) or 'none'})")
            swept[pname] = [toml_value(where, "grid", "objects", declared[pname], v) for v in objects]
        params = grid.get("parameters", {})
        where.check_keys(params, set(declared), "grid.parameters")
        for k, values in params.items():
            if k in swept:
                raise where.fail("grid.parameters", k, "given twice (also as grid objects)")
            swept[k] = [toml_value(where, "grid.parameters", k, declared[k], v)
                        for v in _grid_values(where, values, "grid.parameters", k)]
        for k in swept:
            if k in fixed:
                raise where.fail("grid.parameters", k, "given both as a fixed [job.parameters] value and swept")
            if len(set(map(repr, swept[k]))) != len(swept[k]):
                raise where.fail("grid.parameters", k, "a value is given twice")
        for p in det.parameters:
            if p.required and p.name not in fixed and p.name not in swept:
                raise where.fail("job.parameters", p.name, f"detector {det.name} needs parameter {p.name} "
                                                           f"({p.help}); set it here or sweep it in [grid]")

        # delta T
        if "delta_t" in job and "delta_t" in grid:
            raise where.fail("grid", "delta_t", "given both in [job] and in [grid]")
        if "delta_t" in grid:
            models = [str(v) for v in _grid_values(where, grid["delta_t"], "grid", "delta_t")]
            table, sweep_dt = "grid", True
        else:
            models = [where.string(job, "delta_t", "job", DEFAULT_MODEL)]
            table, sweep_dt = "job", False
        for m in models:
            try:
                get_model(m)
            except CalendraError as exc:
                raise where.fail(table, "delta_t", str(exc)) from None
        if "delta_t_offset_s" in grid:
            offsets = []
            for v in _grid_values(where, grid["delta_t_offset_s"], "grid", "delta_t_offset_s"):
                if isinstance(v, bool) or not isinstance(v, (int, float)) or not math.isfinite(v):
                    raise where.fail("grid", "delta_t_offset_s", f"offsets are numbers of seconds, got {v!r}")
                offsets.append(float(v))
            sweep_off = True
        else:
            offsets, sweep_off = [0.0], False

        # sites
        sites_file = None
        if "sites_file" in job:
            sites_file = where.resolve(where.string(job, "sites_file", "job"))
        sites = []
        if "sites" in grid:
            for i, text in enumerate(_grid_values(where, grid["sites"], "grid", "sites")):
                if not isinstance(text, str):
                    raise where.fail("grid", "sites", f"item {i + 1}: a site is a gazetteer name or "
                                                      f"'LAT,LON[,ELEVATION_M]', got {text!r}")
                try:
                    sites.append(parse_site(text, sites_file=sites_file))
                except CalendraError as exc:
                    raise where.fail("grid", "sites", f"item {i + 1}: {exc}") from None
        has_latlon = "latlon" in grid
        if has_latlon:
            sites += cls._raster(where, grid["latlon"])
        if det.needs_site and not sites:
            raise where.fail("grid", "sites", f"detector {det.name} needs sites: give sites = [...] "
                                              "or a [grid.latlon] raster")
        if not det.needs_site and sites:
            raise where.fail("grid", "sites" if "sites" in grid else "latlon",
                             f"detector {det.name} takes no site; remove the sites from the grid")
        names = [(s.name, s.latitude_deg, s.longitude_deg, s.elevation_m) for s in sites]
        if len(set(names)) != len(names):
            raise where.fail("grid", "sites", "a site is given twice")

        margin = where.number(job, "margin_days", "job", 45.0, lo=0.0, hi=400.0)
        spans = year_spans(where, grid)
        self = cls(det.name, fixed, [(k, tuple(v)) for k, v in swept.items()], sites or [None], models,
                   offsets, spans, margin, has_latlon=has_latlon, sweep_delta_t=sweep_dt, sweep_offsets=sweep_off)
        # A last check of one whole parameter set through the detector's own resolution; the
        # defaults it fills in become part of every chunk's identity (a changed default is a new chunk).
        try:
            resolved = det.resolve_parameters({**fixed, **{k: v[0] for k, v in swept.items()}})
        except CalendraError as exc:
            raise where.fail("job.parameters", None, str(exc)) from None
        self.defaults = {k: v for k, v in resolved.items() if k not in swept and k not in fixed}
        return self

    @staticmethod
    def _raster(where: Where, table: dict) -> list:
        from calendra.sites import Site

        where.check_keys(table, {"latitude", "longitude", "step", "latitude_step", "longitude_step",
                                 "elevation"}, "grid.latlon")
        step = where.number(table, "step", "grid.latlon", None, positive=True)
        lat_step = where.number(table, "latitude_step", "grid.latlon", step, positive=True)
        lon_step = where.number(table, "longitude_step", "grid.latlon", step, positive=True)
        if lat_step is None or lon_step is None:
            raise where.fail("grid.latlon", "step", "missing: give step (or latitude_step and longitude_step) "
                                                    "in degrees")
        elevation = where.number(table, "elevation", "grid.latlon", 0.0, lo=-500.0, hi=9000.0)
        lats = _axis(where, table, "latitude", lat_step)
        lons = _axis(where, table, "longitude", lon_step)
        if any(abs(v) > 90 for v in lats):
            raise where.fail("grid.latlon", "latitude", "latitudes lie within -90..90 degrees")
        if any(not -180 <= v <= 360 for v in lons):
            raise where.fail("grid.latlon", "longitude", "longitudes lie within -180..360 degrees")
        return [Site(f"{lat:g},{lon:g}", lat, lon, elevation, source="sweep raster")
                for lat in lats for lon in lons]

    # ------------------------------------------------------------ chunks
    def describe(self) -> dict:
        return {"kind": self.name, "detector": self.detector, "fixed": self.fixed,
                "swept": {k: list(v) for k, v in self.swept},
                "delta_t": list(self.delta_t), "delta_t_offset_s": list(self.offsets_s),
                "sites": len([s for s in self.sites if s is not None]),
                "spans": [[s.year_from, s.year_to] for s in self.spans], "margin_days": self.margin_days}

    def _identity(self) -> dict:
        return {"kind": self.name, "detector": self.detector, "fixed": self.fixed,
                "defaults": self.defaults, "margin_days": self.margin_days}

    def chunks(self) -> list[Chunk]:
        out = []
        combos = list(itertools.product(*[v for _, v in self.swept])) or [()]
        names = [k for k, _ in self.swept]
        ident = self._identity()
        for site in self.sites:
            site_cols = () if site is None else (
                ("grid_site", site.name), ("grid_latitude_deg", site.latitude_deg),
                ("grid_longitude_deg", site.longitude_deg), ("grid_elevation_m", site.elevation_m))
            site_id = None if site is None else asdict(site)
            site_label = [] if site is None else [site.name]
            for model in self.delta_t:
                for offset in self.offsets_s:
                    for combo in combos:
                        values = tuple(zip(names, combo))
                        point = site_cols + tuple((f"grid_{k}", v) for k, v in values)
                        label = site_label + [f"{k}-{v}" for k, v in values]
                        if self.sweep_delta_t:
                            point += (("grid_delta_t", model),)
                            label.append(model)
                        if self.sweep_offsets:
                            point += (("grid_delta_t_offset_s", offset),)
                            label.append(f"dt{offset:+g}s")
                        for span in self.spans:
                            identity = [ident, site_id, values, model, offset,
                                        [span.year_from, span.year_to, span.jd_tt_start, span.jd_tt_end]]
                            key = chunk_key(label + [f"y{span.year_from}to{span.year_to}"], identity)
                            out.append(Chunk(key, point, span.year_from, span.year_to, span.jd_tt_start,
                                             span.jd_tt_end, (site, values, model, offset)))
        return out

    def light(self) -> "DetectorJob":
        return DetectorJob(self.detector, self.fixed, (), (), (), (), (), self.margin_days,
                           has_latlon=self.has_latlon)

    # --------------------------------------------------------------- run
    def run(self, chunk: Chunk):
        from calendra.ephemeris import SPAN_JD
        from calendra.pluginmanager import get_host

        site, values, model, offset = chunk.task
        det = get_host().detectors.get(self.detector)
        lo, hi = SPAN_JD
        start = max(chunk.jd_tt_start - self.margin_days, lo + 1e-6)
        end = min(chunk.jd_tt_end + self.margin_days, hi - 1e-6)
        table = det.search(start, end, site=site, deltat=delta_t_model(model, offset),
                           **{**self.fixed, **dict(values)})
        jd = np.asarray(table["jd_tt"], dtype=float)
        return table.select((jd >= chunk.jd_tt_start) & (jd < chunk.jd_tt_end))
