"""Reading and checking a sweep spec (TOML) before any work starts.

The schema is documented in the package docstring (:mod:`calendra_sweep`).
:func:`load_spec` reads the file, hands the ``[job]`` and ``[grid]`` tables
to the job kind named by ``[job] kind`` (see :mod:`calendra_sweep.jobs`),
reads ``[output]`` and checks that the output folder can be written.  Every
problem is one :class:`SpecError` line naming the file and the key::

    sweep.toml: [grid] sites: the list is empty (give at least one site)
"""

from __future__ import annotations

import math
import os
import tempfile
from dataclasses import dataclass, field
from pathlib import Path

from calendra.errors import CalendraError, ParameterError

#: Statistics a plot or summary may take of a column over a grid point's rows.
STATISTICS = ("mean", "median", "min", "max", "count")
#: Layouts of the plot: latitude against longitude, or latitude against epoch.
PLOT_AXES = ("map", "latitude-epoch")
#: Output formats of the chunk files.
FORMATS = ("csv",)


class SpecError(ParameterError):
    """A sweep spec that cannot be run; the message names the file and the key."""


@dataclass
class Where:
    """Formats errors as ``FILE: [TABLE] KEY: message`` and resolves relative paths.

    Attributes
    ----------
    path : pathlib.Path
        The spec file.
    """

    path: Path

    @property
    def base(self) -> Path:
        """Folder of the spec; relative paths in the spec are taken from here."""
        return self.path.parent

    def fail(self, table: str, key: str | None, message: str) -> SpecError:
        """Return (not raise) the error for ``[table] key``."""
        where = f"[{table}]" + (f" {key}" if key else "")
        return SpecError(f"{self.path}: {where}: {message}")

    def check_keys(self, table: dict, allowed, name: str) -> None:
        """Raise for any key of ``table`` not in ``allowed``."""
        if not isinstance(table, dict):
            raise self.fail(name, None, "must be a table")
        for key in table:
            if key not in allowed:
                raise self.fail(name, key, f"unknown key (allowed: {', '.join(sorted(allowed))})")

    def resolve(self, text) -> Path:
        """Return a path of the spec, relative ones taken from the spec's folder."""
        p = Path(os.path.expanduser(str(text)))
        return p if p.is_absolute() else self.base / p

    # ----------------------------------------------------- typed values
    def number(self, table: dict, key: str, name: str, default=None, *, integer=False,
               positive=False, lo=-math.inf, hi=math.inf):
        """Return ``table[key]`` as a float (an int with ``integer``), checked; ``default`` if absent."""
        if key not in table:
            return default
        value = table[key]
        kind = "a whole number" if integer else "a number"
        if isinstance(value, bool) or not isinstance(value, (int, float)) or \
                (integer and not isinstance(value, int)) or not math.isfinite(value):
            raise self.fail(name, key, f"must be {kind}, got {value!r}")
        if positive and value <= 0:
            raise self.fail(name, key, f"must be positive, got {value!r}")
        if not lo <= value <= hi:
            raise self.fail(name, key, f"must lie within {lo:g}..{hi:g}, got {value!r}")
        return int(value) if integer else float(value)

    def string(self, table: dict, key: str, name: str, default=None, choices=None):
        """Return ``table[key]`` as a non-empty string (one of ``choices`` if given)."""
        if key not in table:
            return default
        value = table[key]
        if not isinstance(value, str) or not value.strip():
            raise self.fail(name, key, f"must be a non-empty string, got {value!r}")
        if choices is not None and value not in choices:
            raise self.fail(name, key, f"must be one of {', '.join(choices)}, got {value!r}")
        return value

    def nonempty_list(self, table: dict, key: str, name: str) -> list | None:
        """Return ``table[key]`` as a list with at least one item (a single value counts as one)."""
        if key not in table:
            return None
        value = table[key]
        if not isinstance(value, list):
            value = [value]
        if not value:
            raise self.fail(name, key, "the list is empty (an empty grid has nothing to run)")
        return value


# ------------------------------------------------------------------- years

@dataclass(frozen=True)
class YearSpan:
    """One chunk's span of years: ``year_from`` (inclusive) to ``year_to`` (exclusive).

    Attributes
    ----------
    year_from, year_to : int
        Astronomical years (0 = 1 BC) of the western calendar (Julian before
        the 1582 reform, Gregorian from it).
    jd_tt_start, jd_tt_end : float
        0h TT on 1 January of those years, Julian Days (TT), trimmed to the
        span of the ephemeris.
    """

    year_from: int
    year_to: int
    jd_tt_start: float
    jd_tt_end: float


def year_bounds_jd_tt(year: int) -> float:
    """Return 0h TT on 1 January of ``year`` (western calendar), as a Julian Day (TT)."""
    from calendra.pluginmanager import get_host

    western = get_host().calendars.get("western")
    return float(western.year_start_jdn(year)) - 0.5


def year_spans(where: Where, grid: dict) -> list[YearSpan]:
    """Read ``years`` and ``chunk_years`` of ``[grid]`` into the list of chunk spans.

    ``years`` is ``[FROM, TO]`` or a list of such pairs (astronomical years,
    TO exclusive); each range is cut into pieces of ``chunk_years`` years
    (the last may be shorter) and trimmed to the span of the ephemeris.
    """
    from calendra.ephemeris import SPAN_JD

    if "years" not in grid:
        raise where.fail("grid", "years", "missing: give [FROM, TO] in astronomical years (TO exclusive)")
    ranges = grid["years"]
    if isinstance(ranges, list) and ranges and all(isinstance(r, list) for r in ranges):
        pairs = ranges
    elif isinstance(ranges, list) and not ranges:
        raise where.fail("grid", "years", "the list is empty (an empty grid has nothing to run)")
    else:
        pairs = [ranges]
    chunk = where.number(grid, "chunk_years", "grid", 100, integer=True, positive=True)
    lo, hi = SPAN_JD
    spans: list[YearSpan] = []
    for pair in pairs:
        if (not isinstance(pair, list) or len(pair) != 2
                or any(isinstance(v, bool) or not isinstance(v, int) for v in pair)):
            raise where.fail("grid", "years", f"a range is [FROM, TO] in whole astronomical years, got {pair!r}")
        y0, y1 = pair
        if y1 <= y0:
            raise where.fail("grid", "years", f"range {pair!r} is empty: TO (exclusive) must exceed FROM")
        if year_bounds_jd_tt(y1) <= lo or year_bounds_jd_tt(y0) >= hi:
            raise where.fail("grid", "years", f"range {pair!r} lies outside the ephemeris (years -3000..3000)")
        for a in range(y0, y1, chunk):
            b = min(a + chunk, y1)
            start = max(year_bounds_jd_tt(a), lo + 1e-6)
            end = min(year_bounds_jd_tt(b), hi - 1e-6)
            if end > start:
                spans.append(YearSpan(a, b, start, end))
    keys = [(s.year_from, s.year_to) for s in spans]
    if len(set(keys)) != len(keys):
        raise where.fail("grid", "years", "the ranges overlap")
    return spans


# ------------------------------------------------------------------ output

@dataclass
class PlotSpec:
    """The ``[output.plot]`` table.

    Attributes
    ----------
    file : str
        PNG file name, in the output folder.
    value : str
        Column of the rows to map, ``day_of_year`` (local civil day of the
        year of the event, western calendar, 1 = 1 January) or ``count``
        (number of rows).
    statistic : str
        One of :data:`STATISTICS`, taken over a cell's rows.
    axes : str
        One of :data:`PLOT_AXES`.
    where : dict
        Keep only rows whose columns equal these values (e.g. ``{kind = "first-visible"}``).
    title : str
    """

    file: str = "map.png"
    value: str = "count"
    statistic: str = "mean"
    axes: str = "map"
    where: dict = field(default_factory=dict)
    title: str = ""


@dataclass
class OutputSpec:
    """The ``[output]`` table.

    Attributes
    ----------
    folder : pathlib.Path
        Where the chunks (``chunks/``), ``summary.csv``, ``manifest.json``
        and the plot are written.
    format : str
        One of :data:`FORMATS`.
    plot : PlotSpec or None
    """

    folder: Path
    format: str = "csv"
    plot: PlotSpec | None = None


def check_writable(folder: Path, where: Where | None = None) -> None:
    """Raise :class:`SpecError` unless ``folder`` exists as a writable folder or can be created.

    A temporary file is created and removed in the folder (or, when it does
    not exist yet, in its nearest existing parent); nothing else is written.
    """
    def fail(msg):
        if where is None:
            return SpecError(f"output folder {folder}: {msg}")
        return where.fail("output", "folder", f"{folder}: {msg}")

    probe = folder
    while not probe.exists():
        if probe.parent == probe:
            break
        probe = probe.parent
    if probe.exists() and not probe.is_dir():
        raise fail(f"{probe} is a file, not a folder")
    try:
        fd, tmp = tempfile.mkstemp(prefix=".calendra-sweep-probe-", dir=probe)
        os.close(fd)
        os.unlink(tmp)
    except OSError as exc:
        raise fail(f"cannot write there ({exc.strerror or exc})") from None


def read_output(where: Where, doc: dict, override=None, latlon: bool = False) -> OutputSpec:
    """Read ``[output]``; ``override`` (the ``--output`` option) replaces its folder."""
    out = doc.get("output", {})
    where.check_keys(out, {"folder", "format", "plot"}, "output")
    if override is not None:
        folder = Path(os.path.expanduser(str(override))).absolute()
    elif "folder" in out:
        folder = where.resolve(where.string(out, "folder", "output")).absolute()
    else:
        raise where.fail("output", "folder", "missing: name the folder for the chunks (or pass --output DIR)")
    fmt = where.string(out, "format", "output", "csv")
    if fmt == "parquet":
        raise where.fail("output", "format", "parquet is not offered; chunks are written as csv")
    if fmt not in FORMATS:
        raise where.fail("output", "format", f"must be one of {', '.join(FORMATS)}, got {fmt!r}")
    plot = PlotSpec() if latlon else None      # a raster gets a map of the rows per cell by default
    if out.get("plot") is False:
        plot = None
    elif "plot" in out:
        table = out["plot"]
        where.check_keys(table, {"file", "value", "statistic", "axes", "where", "title"}, "output.plot")
        plot = PlotSpec(
            file=where.string(table, "file", "output.plot", "map.png"),
            value=where.string(table, "value", "output.plot", "count"),
            statistic=where.string(table, "statistic", "output.plot", "mean", STATISTICS),
            axes=where.string(table, "axes", "output.plot", "map", PLOT_AXES),
            title=where.string(table, "title", "output.plot", ""),
        )
        if "/" in plot.file or "\\" in plot.file or not plot.file.lower().endswith(".png"):
            raise where.fail("output.plot", "file", f"a PNG file name in the output folder, got {plot.file!r}")
        cond = table.get("where", {})
        if not isinstance(cond, dict) or any(isinstance(v, (dict, list)) for v in cond.values()):
            raise where.fail("output.plot", "where", "a table of column = value")
        plot.where = dict(cond)
        if not latlon:
            raise where.fail("output.plot", None, "a plot needs a latitude/longitude grid ([grid.latlon])")
    check_writable(folder, where)
    return OutputSpec(folder=folder, format=fmt, plot=plot)


# -------------------------------------------------------------------- spec

@dataclass
class SweepSpec:
    """A checked sweep spec.

    Attributes
    ----------
    path : pathlib.Path
        The spec file.
    title : str
    job : calendra_sweep.jobs.JobKind
        The job, with its grid, ready to cut into chunks.
    output : OutputSpec
    """

    path: Path
    title: str
    job: object
    output: OutputSpec


def read_toml(path: Path) -> dict:
    """Return the TOML document at ``path``; unreadable or malformed files raise :class:`SpecError`."""
    try:
        import tomllib
    except ModuleNotFoundError:  # Python < 3.11
        import tomli as tomllib
    try:
        with open(path, "rb") as fh:
            return tomllib.load(fh)
    except OSError as exc:
        raise SpecError(f"cannot read sweep spec {path}: {exc.strerror or exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise SpecError(f"{path}: not valid TOML: {exc}") from None


def load_spec(path, output=None) -> SweepSpec:
    """Read and check a sweep spec; nothing is computed or written.

    Parameters
    ----------
    path : str or os.PathLike
        The TOML file.
    output : str or os.PathLike, optional
        Output folder replacing the spec's ``[output] folder`` (relative to
        the working directory).

    Returns
    -------
    SweepSpec

    Raises
    ------
    SpecError
        One line naming the file and the key: an unknown job kind or
        detector, an empty grid, an unwritable output folder, a parameter of
        the wrong type, an unknown key...
    """
    from .jobs import job_kind

    path = Path(path)
    doc = read_toml(path)
    where = Where(path)
    where.check_keys(doc, {"title", "job", "grid", "output"}, "top level")
    title = where.string(doc, "title", "top level", path.stem)
    for name in ("job", "grid"):
        if name not in doc:
            raise where.fail(name, None, "missing table")
        if not isinstance(doc[name], dict):
            raise where.fail(name, None, "must be a table")
    kind = where.string(doc["job"], "kind", "job", "detector")
    try:
        cls = job_kind(kind)
    except CalendraError as exc:
        raise where.fail("job", "kind", str(exc)) from None
    job = cls.from_spec(doc, where)
    out = read_output(where, doc, output, latlon=getattr(job, "has_latlon", False))
    return SweepSpec(path=path, title=title, job=job, output=out)
