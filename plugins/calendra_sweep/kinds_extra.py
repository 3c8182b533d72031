"""Job kinds resting on other plugins: the alignment survey and the record solver's chronology sweep.

Each kind is registered only when its plugin can be imported.  Both use the
plugins' public functions as they are; the sweep adds the grid, the chunks
and the cluster.

``alignment-batch`` (plugin calendra_alignments)
------------------------------------------------
A survey of structures (the CSV of :mod:`calendra_alignments.batch`)
matched against every target at every grid epoch, cut into blocks of
structures, over a grid of options::

    [job]
    kind = "alignment-batch"
    structures = "invented_stone_rows.csv"   # relative to the spec
    step = 100                  # years between grid epochs (default 100)
    epochs = [-3000, 0]         # optional [FROM, TO] of the epoch grid (default: the structures' ranges)
    delta_t = "smh2016"

    [job.parameters]            # fixed options of calendra_alignments.batch.run
    targets = "sun,moon,stars,venus"   # groups and/or star names
    limb = "upper"              # upper, centre, lower
    moon_distance = "range"     # range, mean, perigee, apogee
    extinction_deg = 0.0        # degrees above the skyline at which stars are seen
    level = 2.0                 # interval half-width, standard errors
    method = "analytic"         # analytic, montecarlo
    obliquity_model = "vondrak2011"    # vondrak2011, laskar1986, iau2006
    refraction_model = "bennett"       # bennett, none

    [grid]
    structures_per_chunk = 200  # structures per chunk (both directions of a structure stay together)
    [grid.parameters]           # swept options, a list of values each
    extinction_deg = [0.0, 0.5, 1.0]

Every chunk uses the epoch grid and the target longitude of the whole
survey, so a block's matches are those of one run over all structures (with
``method = "analytic"``; Monte Carlo draws depend on the block, though serial
and cluster runs still agree).  Rows: one per (direction, target) match, the
columns of :data:`calendra_alignments.batch.MATCH_COLUMNS`.

``chronology`` (plugin calendra_solver)
---------------------------------------
A record (the solver's TOML) dated in every span of candidate epochs, for
every delta-T variant (and site)::

    [job]
    kind = "chronology"
    record = "record_kesh_ammat.toml"
    overlap_years = 20          # each window is widened by this on both sides (> the record's span)
    top = 1000                  # most solutions kept per window
    delta_t_sweep = "off"       # the solver's own delta-T sweep: near, full, off (default: the record's)
    delta_t = "smh2016"         # default: the record's model

    [grid]
    years = [-900, -600]
    chunk_years = 100
    delta_t_offset_s = [-1200, 0, 1200]
    sites = ["Babylon"]         # optional: replaces the record's default site

A solution belongs to the chunk in whose span its earliest event falls, so
with ``overlap_years`` longer than the record's span no solution is lost or
counted twice.  Rows: one per (solution, observation), the columns of the
solver's CSV output plus ``first_jd_tt`` (earliest event of the solution);
``rank`` is the rank within the chunk.  The record and its era files are
read by the workers: on a remote cluster they must be at the same path there.
"""

from __future__ import annotations

import copy
import itertools
import math
from dataclasses import fields as dc_fields

import numpy as np

from calendra.errors import CalendraError

from .jobs import Chunk, JobKind, _grid_values, delta_t_model, register_job_kind
from .spec import Where, year_bounds_jd_tt, year_spans
from .store import chunk_key


class Rows:
    """A table of rows with named columns (what a chunk returns when it is not an event table).

    Parameters
    ----------
    columns : list of str
    rows : list of dict
    provenance : dict, optional
    """

    def __init__(self, columns, rows, provenance=None):
        self.names = list(columns)
        self.columns = {}
        for c in self.names:
            col = np.empty(len(rows), dtype=object)     # one value per row, whatever its type
            for i, r in enumerate(rows):
                col[i] = r.get(c)
            self.columns[c] = col
        self.provenance = dict(provenance or {})
        self._n = len(rows)

    def __len__(self):
        return self._n


def _choice(where, table, key, value, choices):
    if not isinstance(value, str) or value not in choices:
        raise where.fail(table, key, f"must be one of {', '.join(choices)}, got {value!r}")
    return value


def _float(where, table, key, value, lo=-math.inf, hi=math.inf):
    if isinstance(value, bool) or not isinstance(value, (int, float)) or not math.isfinite(value) \
            or not lo <= value <= hi:
        raise where.fail(table, key, f"must be a number within {lo:g}..{hi:g}, got {value!r}")
    return float(value)


def _delta_t(where, job, grid, default=None):
    """Delta-T models (job or swept) and offsets of a spec, checked."""
    from calendra.deltat import get_model

    if "delta_t" in job and "delta_t" in grid:
        raise where.fail("grid", "delta_t", "given both in [job] and in [grid]")
    if "delta_t" in grid:
        models, table, swept = [str(v) for v in _grid_values(where, grid["delta_t"], "grid", "delta_t")], "grid", True
    else:
        models, table, swept = [where.string(job, "delta_t", "job", default)], "job", False
    for m in models:
        if m is not None:
            try:
                get_model(m)
            except CalendraError as exc:
                raise where.fail(table, "delta_t", str(exc)) from None
    offsets, swept_off = [0.0], False
    if "delta_t_offset_s" in grid:
        offsets = [_float(where, "grid", "delta_t_offset_s", v)
                   for v in _grid_values(where, grid["delta_t_offset_s"], "grid", "delta_t_offset_s")]
        swept_off = True
    return models, swept, offsets, swept_off


# ------------------------------------------------------------ alignment batch

try:
    from calendra_alignments import batch as _batch
    from calendra_alignments import targets as _targets
except ImportError:  # pragma: no cover - the alignment plugin is not installed
    _batch = None


_ALIGN_OPTIONS = {
    # name: (checker, default)
    "targets": ("targets", "sun,moon,stars,venus"),
    "limb": (("upper", "centre", "lower"), "upper"),
    "moon_distance": (("range", "mean", "perigee", "apogee"), "range"),
    "extinction_deg": ((0.0, 10.0), 0.0),
    "level": ((0.1, 10.0), 2.0),
    "method": (("analytic", "montecarlo"), "analytic"),
    "obliquity_model": (("vondrak2011", "laskar1986", "iau2006"), "vondrak2011"),
    "refraction_model": (("bennett", "none"), "bennett"),
}


def _align_option(where, table, key, value):
    check, _ = _ALIGN_OPTIONS[key]
    if check == "targets":
        if not isinstance(value, str):
            raise where.fail(table, key, f"a list such as 'sun,moon,stars' or star names, got {value!r}")
        try:
            _targets.parse_groups(value)
        except CalendraError as exc:
            raise where.fail(table, key, str(exc)) from None
        return value
    if isinstance(check[0], str):
        return _choice(where, table, key, value, check)
    return _float(where, table, key, value, *check)


def _subset(alignments, idx):
    """The alignments at positions ``idx`` (arrays indexed, lists picked)."""
    kw = {}
    for f in dc_fields(alignments):
        v = getattr(alignments, f.name)
        kw[f.name] = v[idx] if isinstance(v, np.ndarray) else [v[i] for i in idx]
    return type(alignments)(**kw)


if _batch is not None:

    @register_job_kind
    class AlignmentBatchJob(JobKind):
        """A structures survey against all targets over the epochs, in blocks of structures."""

        name = "alignment-batch"
        title = "a survey of structures against every target over many epochs (calendra_alignments)"

        def __init__(self, survey, source, fixed, swept, epochs, model, offset, per_chunk, longitude):
            self.survey = survey
            self.source = source
            self.fixed = dict(fixed)
            self.swept = tuple(swept)
            self.epochs = epochs
            self.model = model
            self.offset = offset
            self.per_chunk = per_chunk
            self.longitude = longitude

        @classmethod
        def from_spec(cls, doc, where: Where):
            job, grid = doc["job"], doc["grid"]
            where.check_keys(job, {"kind", "structures", "step", "epochs", "delta_t", "parameters"}, "job")
            where.check_keys(grid, {"structures_per_chunk", "parameters", "delta_t_offset_s"}, "grid")
            path = where.string(job, "structures", "job")
            if path is None:
                raise where.fail("job", "structures", "missing: the structures CSV of the survey")
            try:
                survey = _batch.read_structures(where.resolve(path))
            except CalendraError as exc:
                raise where.fail("job", "structures", str(exc)) from None
            step = where.number(job, "step", "job", 100.0, positive=True)
            al = survey.alignments
            if "epochs" in job:
                pair = job["epochs"]
                if not (isinstance(pair, list) and len(pair) == 2 and
                        all(not isinstance(v, bool) and isinstance(v, (int, float)) for v in pair)
                        and pair[0] < pair[1]):
                    raise where.fail("job", "epochs", f"must be [FROM, TO] in years, FROM < TO, got {pair!r}")
                lo, hi = float(pair[0]), float(pair[1])
            else:
                lo, hi = float(np.min(al.epoch_from)), float(np.max(al.epoch_to))
            try:
                epochs = _batch.epoch_grid(lo, hi, step)
            except CalendraError as exc:
                raise where.fail("job", "epochs", str(exc)) from None
            fixed_table = job.get("parameters", {})
            where.check_keys(fixed_table, set(_ALIGN_OPTIONS), "job.parameters")
            fixed = {k: _align_option(where, "job.parameters", k, v) for k, v in fixed_table.items()}
            params = grid.get("parameters", {})
            where.check_keys(params, set(_ALIGN_OPTIONS), "grid.parameters")
            swept = []
            for k, values in params.items():
                if k in fixed:
                    raise where.fail("grid.parameters", k, "given both as a fixed [job.parameters] value and swept")
                swept.append((k, tuple(_align_option(where, "grid.parameters", k, v)
                                       for v in _grid_values(where, values, "grid.parameters", k))))
            models, _, offsets, _ = _delta_t(where, job, {k: v for k, v in grid.items() if k != "delta_t"},
                                             "smh2016")
            if len(offsets) > 1:
                raise where.fail("grid", "delta_t_offset_s", "the alignment batch takes one delta T (it sets "
                                                             "civil days only); sweep epochs instead")
            per_chunk = where.number(grid, "structures_per_chunk", "grid", 200, integer=True, positive=True)
            return cls(survey, str(where.resolve(path)), fixed, swept, epochs, models[0], offsets[0], per_chunk,
                       float(np.median(al.longitude_deg)))

        def describe(self):
            return {"kind": self.name, "structures": self.source, "directions": len(self.survey.alignments),
                    "fixed": self.fixed, "swept": {k: list(v) for k, v in self.swept},
                    "epochs": [float(self.epochs[0]), float(self.epochs[-1]), int(self.epochs.size)],
                    "delta_t": self.model, "structures_per_chunk": self.per_chunk}

        def chunks(self):
            sv = self.survey
            order = list(dict.fromkeys(sv.structure))
            blocks = [order[i:i + self.per_chunk] for i in range(0, len(order), self.per_chunk)]
            names = [k for k, _ in self.swept]
            combos = list(itertools.product(*[v for _, v in self.swept])) or [()]
            y0, y1 = int(math.floor(self.epochs[0])), int(math.ceil(self.epochs[-1]))
            out = []
            for b, block in enumerate(blocks):
                wanted = set(block)
                idx = [i for i, s in enumerate(sv.structure) if s in wanted]
                sub = _batch.Survey(_subset(sv.alignments, np.array(idx)), [sv.structure[i] for i in idx],
                                    [sv.direction[i] for i in idx], [sv.notes[i] for i in idx], dict(sv.assumed),
                                    sv.source)
                al = sub.alignments
                rows = [[al.ids[i], float(al.latitude_deg[i]), float(al.longitude_deg[i]), float(al.azimuth_deg[i]),
                         float(al.azimuth_sigma_deg[i]), float(al.altitude_deg[i]), float(al.altitude_sigma_deg[i]),
                         float(al.epoch_from[i]), float(al.epoch_to[i])] for i in range(len(al))]
                for combo in combos:
                    values = tuple(zip(names, combo))
                    point = (("grid_block", f"{block[0]}..{block[-1]}"),) + tuple((f"grid_{k}", v) for k, v in values)
                    identity = [self.name, self.fixed, values, rows, self.epochs.tolist(), self.model,
                                self.longitude]
                    key = chunk_key([f"block{b + 1}"] + [f"{k}-{v}" for k, v in values], identity)
                    out.append(Chunk(key, point, y0, y1, year_bounds_jd_tt(max(y0, -3000)),
                                     year_bounds_jd_tt(min(y1, 3000)), (sub, values)))
            return out

        def light(self):
            """The job without the survey: each task carries its own block."""
            return AlignmentBatchJob(None, self.source, self.fixed, (), self.epochs, self.model, self.offset,
                                     self.per_chunk, self.longitude)

        def run(self, chunk):
            from calendra.deltat import get_model

            sub, values = chunk.task
            opts = {k: v for k, (_, v) in _ALIGN_OPTIONS.items()}
            opts.update(self.fixed)
            opts.update(dict(values))
            groups, stars = _targets.parse_groups(opts.pop("targets"))
            res = _batch.run(sub, groups=groups, stars=stars, epochs=self.epochs, deltat=get_model(self.model),
                             longitude_deg=self.longitude, **opts)
            return Rows(_batch.MATCH_COLUMNS, _batch.match_rows(res),
                        {"models": {"alignments": "calendra_alignments.batch", "delta_t": self.model}})


# ------------------------------------------------------------------ chronology

try:
    from calendra_solver import engine as _engine
    from calendra_solver import report as _report
    from calendra_solver import schema as _schema
except ImportError:  # pragma: no cover - the solver plugin is not installed
    _engine = None

_CHRONO_COLUMNS = ["rank", "score", "delta_t", "observation", "kind", "jd_tt", "jd_ut", "date_ut", "time_ut",
                   "local", "stated_date", "residuals", "margin", "holds", "first_jd_tt"]


if _engine is not None:

    @register_job_kind
    class ChronologyJob(JobKind):
        """A record dated over spans of candidate epochs x delta-T variants x sites."""

        name = "chronology"
        title = "a record dated over candidate epochs and delta-T variants (calendra_solver)"

        def __init__(self, record_path, record, overlap, top, sweep, models, swept_dt, offsets, swept_off,
                     sites, spans):
            self.record_path = record_path
            self.record = record
            self.overlap = overlap
            self.top = top
            self.sweep = sweep
            self.models = tuple(models)
            self.swept_dt = swept_dt
            self.offsets = tuple(offsets)
            self.swept_off = swept_off
            self.sites = tuple(sites)
            self.spans = tuple(spans)

        @classmethod
        def from_spec(cls, doc, where: Where):
            from calendra.sites import parse_site

            job, grid = doc["job"], doc["grid"]
            where.check_keys(job, {"kind", "record", "overlap_years", "top", "delta_t_sweep", "delta_t"}, "job")
            where.check_keys(grid, {"years", "chunk_years", "delta_t", "delta_t_offset_s", "sites"}, "grid")
            path = where.string(job, "record", "job")
            if path is None:
                raise where.fail("job", "record", "missing: the record (TOML) to date")
            record_path = where.resolve(path)
            try:
                record = _schema.load_record(record_path)
            except CalendraError as exc:
                raise where.fail("job", "record", str(exc)) from None
            overlap = where.number(job, "overlap_years", "job", 20, integer=True, lo=0, hi=1000)
            top = where.number(job, "top", "job", 1000, integer=True, positive=True)
            sweep = where.string(job, "delta_t_sweep", "job", None, ("near", "full", "off"))
            models, swept_dt, offsets, swept_off = _delta_t(where, job, grid, record.delta_t)
            sites = [None]
            if "sites" in grid:
                sites = []
                for i, text in enumerate(_grid_values(where, grid["sites"], "grid", "sites")):
                    if not isinstance(text, str):
                        raise where.fail("grid", "sites", f"item {i + 1}: a gazetteer name or LAT,LON, got {text!r}")
                    try:
                        parse_site(text)
                    except CalendraError as exc:
                        raise where.fail("grid", "sites", f"item {i + 1}: {exc}") from None
                    sites.append(text)
            spans = year_spans(where, grid)
            return cls(str(record_path), record, overlap, top, sweep, models, swept_dt, offsets, swept_off,
                       sites, spans)

        def describe(self):
            return {"kind": self.name, "record": self.record_path, "overlap_years": self.overlap, "top": self.top,
                    "delta_t_sweep": self.sweep, "delta_t": list(self.models),
                    "delta_t_offset_s": list(self.offsets), "sites": list(self.sites),
                    "spans": [[s.year_from, s.year_to] for s in self.spans]}

        def chunks(self):
            out = []
            with open(self.record_path, "rb") as fh:
                record_bytes = fh.read()
            for site in self.sites:
                for model in self.models:
                    for offset in self.offsets:
                        point, label = (), []
                        if site is not None:
                            point += (("grid_site", site),)
                            label.append(site)
                        if self.swept_dt:
                            point += (("grid_delta_t", model),)
                            label.append(model)
                        if self.swept_off:
                            point += (("grid_delta_t_offset_s", offset),)
                            label.append(f"dt{offset:+g}s")
                        for s in self.spans:
                            identity = [self.name, record_bytes.decode("utf-8", "replace"), self.overlap, self.top,
                                        self.sweep, site, model, offset, [s.year_from, s.year_to]]
                            key = chunk_key(label + [f"y{s.year_from}to{s.year_to}"], identity)
                            out.append(Chunk(key, point, s.year_from, s.year_to, s.jd_tt_start, s.jd_tt_end,
                                             (site, model, offset)))
            return out

        def light(self):
            return ChronologyJob(self.record_path, None, self.overlap, self.top, self.sweep, (), False, (), False,
                                 (), ())

        def run(self, chunk):
            site, model, offset = chunk.task
            record = _schema.load_record(self.record_path)
            a = max(chunk.year_from - self.overlap, -3000)
            b = min(chunk.year_to + self.overlap, 3000)
            deltat = delta_t_model(model, offset) if model is not None else None
            if deltat is None and offset:
                from calendra.deltat import DEFAULT_MODEL

                deltat = delta_t_model(record.delta_t or DEFAULT_MODEL, offset)
            result = _engine.date_record(copy.deepcopy(record), top=self.top, window=f"{a}..{b}", site=site,
                                         deltat=deltat, sweep=self.sweep)
            keep = []
            for sol in result.solutions:
                jds = [ev["jd_tt"] for ev in sol.events if ev.get("jd_tt") is not None]
                if jds and chunk.jd_tt_start <= min(jds) < chunk.jd_tt_end:
                    keep.append((sol, min(jds)))
            rows = []
            for sol, first in keep:
                for r in _report.event_rows([sol]):
                    r["first_jd_tt"] = first
                    rows.append(r)
            return Rows(_CHRONO_COLUMNS, rows, result.provenance)
