"""The summary of a finished sweep and its map-like plot, read back from the chunk files.

Both are computed from the files on disk, so they describe every chunk of
the plan whether it was computed by this run or an earlier one
(``--resume``), and they are the same for a serial and a cluster run.

``summary.csv`` has one row per grid point (site x swept values): the grid
columns, ``chunks``, ``rows``, ``first_jd_ut`` and ``last_jd_ut`` (Julian
Days, UT), ``kinds`` (count of each event kind) and, when ``[output.plot]``
names a value, that value's statistic over the point's rows.

The plot (PNG, matplotlib with the Agg backend, imported only here) shows a
statistic of one value per raster cell: ``axes = "map"`` latitude against
longitude; ``axes = "latitude-epoch"`` latitude against the middle year of
each chunk, pooled over longitudes.  One panel per combination of the other
swept values (at most :data:`MAX_PANELS`).
"""

from __future__ import annotations

import math
from collections import Counter, OrderedDict
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from .spec import PlotSpec
from .store import chunk_path, read_chunk, write_atomic

SUMMARY = "summary.csv"
MAX_PANELS = 6
_SITE_COLUMNS = ("grid_site", "grid_latitude_deg", "grid_longitude_deg", "grid_elevation_m")


@dataclass
class Summary:
    """The summary table of a sweep.

    Attributes
    ----------
    columns : list of str
    rows : list of dict
    path : pathlib.Path
        The ``summary.csv`` written.
    missing : int
        Chunks of the plan without a file (a run that stopped early).
    """

    columns: list
    rows: list
    path: Path
    missing: int = 0
    cells: dict = field(default_factory=dict, repr=False)
    notes: list = field(default_factory=list)

    def text(self, most: int = 30) -> str:
        """Return the summary as an aligned text table (at most ``most`` rows shown)."""
        from calendra.output import render_table

        shown = self.rows[:most]
        title = f"sweep summary: {len(self.rows)} grid points"
        if len(self.rows) > most:
            title += f" (first {most} shown; all in {self.path})"
        if self.missing:
            title += f"; {self.missing} chunks missing"
        return render_table(shown, self.columns, title=title)


def _floats(texts) -> np.ndarray:
    out = np.full(len(texts), np.nan)
    for i, t in enumerate(texts):
        try:
            out[i] = float(t)
        except ValueError:
            pass
    return out


def day_of_year(jd_ut: np.ndarray, longitude_deg: np.ndarray) -> np.ndarray:
    """Return the local (mean time) civil day of the year of instants, western calendar, 1 = 1 January.

    Parameters
    ----------
    jd_ut : numpy.ndarray
        Julian Days (UT).
    longitude_deg : numpy.ndarray
        East longitude of the site, degrees (local mean time = UT + longitude / 15 h).
    """
    from calendra.pluginmanager import get_host

    western = get_host().calendars.get("western")
    ok = np.isfinite(jd_ut) & np.isfinite(longitude_deg)
    out = np.full(jd_ut.shape, np.nan)
    if ok.any():
        lon = np.where(longitude_deg[ok] > 180, longitude_deg[ok] - 360, longitude_deg[ok])
        jdn = np.floor(jd_ut[ok] + 0.5 + lon / 360.0).astype(np.int64)
        year = western.from_jdn(jdn)["year"]
        out[ok] = jdn - np.asarray(western.year_start_jdn(year)) + 1
    return out


def _values(header, rows, plot: PlotSpec | None):
    """Values of the plot's column in the rows of one chunk (after its ``where``), or None."""
    if plot is None:
        return None
    idx = {c: i for i, c in enumerate(header)}
    keep = [r for r in rows if all(c in idx and r[idx[c]] == _text(v) for c, v in plot.where.items())]
    if plot.value == "count":
        return np.ones(len(keep))
    if plot.value == "day_of_year":
        if "jd_ut" not in idx or "grid_longitude_deg" not in idx:
            return np.full(len(keep), np.nan)
        return day_of_year(_floats([r[idx["jd_ut"]] for r in keep]),
                           _floats([r[idx["grid_longitude_deg"]] for r in keep]))
    if plot.value not in idx:
        return np.full(len(keep), np.nan)
    return _floats([r[idx[plot.value]] for r in keep])


def _text(v) -> str:
    from .store import cell

    return cell(v)


def statistic(values: np.ndarray, name: str, value: str = "") -> float:
    """Return ``name`` (mean, median, min, max, count) of the finite ``values`` (NaN when none)."""
    v = values[np.isfinite(values)]
    if name == "count" or value == "count":
        return float(v.size)
    if v.size == 0:
        return math.nan
    return float({"mean": np.mean, "median": np.median, "min": np.min, "max": np.max}[name](v))


def summarize(plan, write: bool = True) -> Summary:
    """Read the plan's chunk files and return (and write) the summary per grid point."""
    plot = plan.spec.output.plot
    points: "OrderedDict[tuple, dict]" = OrderedDict()
    cells: dict = {}
    missing = 0
    columns_seen: set = set()
    for chunk in plan.chunks:
        path = chunk_path(plan.folder, chunk.key)
        acc = points.setdefault(chunk.point, {"chunks": 0, "rows": 0, "first": math.inf, "last": -math.inf,
                                              "kinds": Counter(), "values": []})
        if not path.exists():
            missing += 1
            continue
        header, rows = read_chunk(path)
        columns_seen.update(header)
        idx = {c: i for i, c in enumerate(header)}
        acc["chunks"] += 1
        acc["rows"] += len(rows)
        if rows and "jd_ut" in idx:
            jd = _floats([r[idx["jd_ut"]] for r in rows])
            if np.isfinite(jd).any():
                acc["first"] = min(acc["first"], float(np.nanmin(jd)))
                acc["last"] = max(acc["last"], float(np.nanmax(jd)))
        if "kind" in idx:
            acc["kinds"].update(r[idx["kind"]] for r in rows)
        vals = _values(header, rows, plot)
        if vals is not None:
            acc["values"].append(vals)
            cells[(chunk.point, chunk.year_from, chunk.year_to)] = vals
    point_cols: list = []
    for point in points:
        for c, _ in point:
            if c not in point_cols:
                point_cols.append(c)
    stat_col = f"{plot.statistic}_{plot.value}" if plot is not None else None
    columns = point_cols + ["chunks", "rows", "first_jd_ut", "last_jd_ut", "kinds"] + ([stat_col] if stat_col else [])
    out = []
    for point, acc in points.items():
        row = dict(point)
        row.update(chunks=acc["chunks"], rows=acc["rows"],
                   first_jd_ut=acc["first"] if math.isfinite(acc["first"]) else None,
                   last_jd_ut=acc["last"] if math.isfinite(acc["last"]) else None,
                   kinds=" ".join(f"{k}:{n}" for k, n in sorted(acc["kinds"].items())))
        if stat_col:
            vals = np.concatenate(acc["values"]) if acc["values"] else np.array([])
            row[stat_col] = statistic(vals, plot.statistic, plot.value)
        out.append(row)
    summary = Summary(columns, out, plan.folder / SUMMARY, missing, cells)
    if plot is not None and columns_seen:
        needed = {"count": set(), "day_of_year": {"jd_ut", "grid_longitude_deg"}}.get(plot.value, {plot.value})
        absent = sorted((needed | set(plot.where)) - columns_seen)
        if absent:
            summary.notes.append(f"the plot asks for column(s) {', '.join(absent)} that no chunk has "
                                 f"(columns: {', '.join(sorted(columns_seen))})")
    if write:
        import csv
        import io

        from .store import cell

        buf = io.StringIO()
        w = csv.writer(buf, lineterminator="\n")
        w.writerow(columns)
        for row in out:
            w.writerow([cell(row.get(c)) for c in columns])
        write_atomic(summary.path, buf.getvalue())
    return summary


# ------------------------------------------------------------------- plot

def raster(plan, plot: PlotSpec, summary: Summary | None = None):
    """Return the plot's data: ``{panel label: (y values, x values, 2-d array)}``.

    ``y`` are latitudes (degrees); ``x`` longitudes (degrees east, ``map``)
    or the middle years of the chunks (``latitude-epoch``); the array holds
    the statistic of the value per cell (NaN where no row).
    """
    if summary is None:
        summary = summarize(plan, write=False)
    pools: dict = {}
    for (point, y0, y1), vals in summary.cells.items():
        d = dict(point)
        if "grid_latitude_deg" not in d:
            continue
        panel = tuple((k, v) for k, v in point if k not in _SITE_COLUMNS)
        x = d["grid_longitude_deg"] if plot.axes == "map" else 0.5 * (y0 + y1)
        pools.setdefault(panel, {}).setdefault((d["grid_latitude_deg"], x), []).append(vals)
    out = {}
    for panel, cellmap in list(pools.items())[:MAX_PANELS]:
        ys = sorted({k[0] for k in cellmap})
        xs = sorted({k[1] for k in cellmap})
        grid = np.full((len(ys), len(xs)), np.nan)
        for (y, x), parts in cellmap.items():
            grid[ys.index(y), xs.index(x)] = statistic(np.concatenate(parts), plot.statistic, plot.value)
        label = ", ".join(f"{k.removeprefix('grid_')}={v}" for k, v in panel) or "all"
        out[label] = (np.array(ys), np.array(xs), grid)
    return out


def _edges(centres: np.ndarray) -> np.ndarray:
    if len(centres) == 1:
        return np.array([centres[0] - 0.5, centres[0] + 0.5])
    mid = 0.5 * (centres[1:] + centres[:-1])
    return np.concatenate([[2 * centres[0] - mid[0]], mid, [2 * centres[-1] - mid[-1]]])


def make_plot(plan, plot: PlotSpec, summary: Summary | None = None) -> Path:
    """Draw the plot of ``[output.plot]`` into the output folder and return its path."""
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    panels = raster(plan, plot, summary)
    n = max(1, len(panels))
    cols = min(n, 3)
    rows = math.ceil(n / cols)
    fig, axes = plt.subplots(rows, cols, figsize=(5.2 * cols, 4.2 * rows), squeeze=False)
    what = "rows" if plot.value == "count" else f"{plot.statistic} {plot.value}"
    cond = ", ".join(f"{k}={v}" for k, v in plot.where.items())
    for ax, (label, (ys, xs, grid)) in zip(axes.flat, panels.items()):
        mesh = ax.pcolormesh(_edges(xs), _edges(ys), np.ma.masked_invalid(grid), shading="flat", cmap="viridis")
        fig.colorbar(mesh, ax=ax, label=what)
        ax.set_ylabel("latitude (deg N)")
        ax.set_xlabel("longitude (deg E)" if plot.axes == "map" else "epoch (astronomical year)")
        ax.set_title(label if len(panels) > 1 else (cond or label), fontsize=9)
    for ax in list(axes.flat)[len(panels):]:
        ax.set_visible(False)
    import textwrap

    title = plot.title or f"{plan.spec.title}: {what}" + (f" ({cond})" if cond else "")
    fig.suptitle(textwrap.fill(title, width=int(55 * cols)), fontsize=11)
    fig.tight_layout()
    path = plan.folder / plot.file
    tmp = path.with_name(f".{path.name}.tmp.png")
    fig.savefig(tmp, dpi=110)
    plt.close(fig)
    tmp.replace(path)
    return path
