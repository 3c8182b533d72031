"""Surveys of many structures: a CSV in, declinations and matching targets out, as one array job.

The structures file
-------------------
A CSV file with a header line; ``#`` comment lines and blank lines are
skipped; column names are case-insensitive.  One row per structure:

=====================  ====================================================================
column                 meaning
=====================  ====================================================================
``id``                 identifier (required, unique)
``name``               description (optional)
``lat``, ``lon``       site latitude and longitude, degrees north and east (``latitude``,
                       ``longitude`` accepted)
``elevation``          height above sea level, metres (default 0): the standard-atmosphere
                       pressure for refraction, and the dip of a ``sea`` horizon
``azimuth``            azimuth of the alignment, degrees from true north through east; a
                       compass bearing when ``magnetic_declination`` is given
``azimuth_sigma``      standard error of the azimuth, degrees (blank: 0.5 assumed)
``altitude``           apparent altitude of the skyline at the azimuth, degrees; ``sea`` for a
                       sea horizon seen from ``elevation`` (altitude = -dip); blank when
                       ``horizon_file`` gives a profile
``altitude_sigma``     standard error of the altitude, degrees (blank: 0.2 assumed)
``horizon_file``       horizon profile CSV (``azimuth, altitude``), relative to this file
                       (optional; used where ``altitude`` is blank, and for the back direction)
``epoch_from``,        range of epochs (astronomical years) the structure may date from
``epoch_to``           (default -3000 .. 3000; a range reaching beyond is clipped to it, noted)
``magnetic_declination``  magnetic declination at the survey, degrees east (optional)
``magnetic_declination_sigma``  its standard error, degrees (optional)
``bidirectional``      ``yes`` to test the opposite direction too (azimuth + 180)
``back_altitude``      apparent skyline altitude of the opposite direction, degrees (default:
                       the profile, else the same as ``altitude``, which is then noted)
``temperature``,       weather for refraction (default 10 C and the standard atmosphere at
``pressure``           ``elevation``)
=====================  ====================================================================

The grid of epochs is every ``step`` years (multiples of the step) across
the union of the ranges; each structure is tested at the grid epochs inside
its own range (the nearest grid epoch when its range holds none).
"""

from __future__ import annotations

import csv
import math
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np

from calendra.errors import ParameterError

from . import geometry as G
from . import targets as T
from .matching import Alignments, Matches, alignment_intervals, match
from .uncertainty import true_azimuth

#: Errors assumed when a structure gives none, degrees.
DEFAULT_AZIMUTH_SIGMA = 0.5
DEFAULT_ALTITUDE_SIGMA = 0.2

_ALIASES = {"latitude": "lat", "longitude": "lon", "elevation_m": "elevation", "az": "azimuth",
            "azimuth_error": "azimuth_sigma", "altitude_error": "altitude_sigma", "alt": "altitude",
            "horizon": "horizon_file", "profile": "horizon_file"}
_KNOWN = {"id", "name", "lat", "lon", "elevation", "azimuth", "azimuth_sigma", "altitude", "altitude_sigma",
          "horizon_file", "epoch_from", "epoch_to", "magnetic_declination", "magnetic_declination_sigma",
          "bidirectional", "back_altitude", "temperature", "pressure"}
_TRUE = {"yes", "y", "true", "1", "both"}
_FALSE = {"no", "n", "false", "0", ""}


@dataclass
class Survey:
    """Alignments read from a structures file (two rows for a bidirectional structure).

    Attributes
    ----------
    alignments : Alignments
    structure : list of str
        The structure id of each alignment.
    direction : list of str
        ``forward`` or ``back``.
    notes : list of str
        Per alignment: what was assumed.
    assumed : dict
        Counts of assumed values (for the provenance).
    """

    alignments: Alignments
    structure: list
    direction: list
    notes: list
    assumed: dict = field(default_factory=dict)
    source: str = ""


def _num(row, key, where, default=None, lo=-math.inf, hi=math.inf):
    text = (row.get(key) or "").strip()
    if text == "":
        if default is None:
            raise ParameterError(f"{where}: column {key!r} is required")
        return default
    try:
        v = float(text)
    except ValueError:
        raise ParameterError(f"{where}: {key} must be a number, got {text!r}") from None
    if not (math.isfinite(v) and lo <= v <= hi):
        raise ParameterError(f"{where}: {key} = {v:g} is outside {lo:g}..{hi:g}")
    return v


def read_structures(path) -> Survey:
    """Read a structures CSV (see the module notes) into alignments.

    Raises
    ------
    ParameterError
        A file that cannot be read, a missing column, or a bad value (file and line named).
    """
    path = Path(path).expanduser()
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise ParameterError(f"cannot read structures file {path}: {exc.strerror or exc}") from None
    lines = [(n, ln) for n, ln in enumerate(text.splitlines(), 1) if ln.strip() and not ln.lstrip().startswith("#")]
    if not lines:
        raise ParameterError(f"structures file {path} is empty")
    reader = csv.reader([ln for _, ln in lines], skipinitialspace=True)
    rows = list(reader)
    header = [_ALIASES.get(h.strip().lower(), h.strip().lower()) for h in rows[0]]
    unknown = [h for h in header if h not in _KNOWN]
    if unknown:
        raise ParameterError(f"{path}:{lines[0][0]}: unknown column(s) {', '.join(unknown)} "
                             f"(known: {', '.join(sorted(_KNOWN))})")
    for need in ("id", "lat", "lon", "azimuth"):
        if need not in header:
            raise ParameterError(f"{path}: column {need!r} is required")
    profiles: dict = {}
    cols = {k: [] for k in ("lat", "lon", "elev", "az", "saz", "alt", "salt", "slope", "e0", "e1", "t", "p")}
    ids, names, hzs, structure, direction, notes = [], [], [], [], [], []
    assumed = {"azimuth_sigma": 0, "altitude_sigma": 0, "back_altitude": 0}
    seen = set()
    for (lineno, _), r in zip(lines[1:], rows[1:]):
        where = f"{path}:{lineno}"
        if len(r) > len(header):
            raise ParameterError(f"{where}: {len(r)} fields for {len(header)} columns")
        row = dict(zip(header, r))
        sid = (row.get("id") or "").strip()
        if not sid:
            raise ParameterError(f"{where}: the id is empty")
        if sid in seen:
            raise ParameterError(f"{where}: id {sid!r} appears twice")
        seen.add(sid)
        lat = _num(row, "lat", where, lo=-89.0, hi=89.0)
        lon = _num(row, "lon", where, lo=-180.0, hi=360.0)
        elev = _num(row, "elevation", where, 0.0, -500.0, 9000.0)
        az_in = _num(row, "azimuth", where, lo=-360.0, hi=720.0)
        note = []
        saz = _num(row, "azimuth_sigma", where, math.nan, 0.0, 90.0)
        if math.isnan(saz):
            saz = DEFAULT_AZIMUTH_SIGMA
            assumed["azimuth_sigma"] += 1
            note.append(f"azimuth error {DEFAULT_AZIMUTH_SIGMA} assumed")
        md = _num(row, "magnetic_declination", where, math.nan, -90.0, 90.0)
        if not math.isnan(md):
            smd = _num(row, "magnetic_declination_sigma", where, 0.0, 0.0, 30.0)
            az = float(true_azimuth(az_in, md))
            saz = math.hypot(saz, smd)
            note.append(f"compass bearing + magnetic declination {md:+g}")
        else:
            az = az_in % 360.0
        hfile = (row.get("horizon_file") or "").strip()
        hz = None
        if hfile:
            hp = Path(hfile).expanduser()
            hp = hp if hp.is_absolute() else path.parent / hp
            if hp not in profiles:
                profiles[hp] = G.Horizon.from_csv(hp)
            hz = profiles[hp]
        alt_text = (row.get("altitude") or "").strip().lower()
        if alt_text == "sea":
            hz_fwd = G.Horizon.sea(elev)
        elif alt_text:
            hz_fwd = G.Horizon.constant(_num(row, "altitude", where, lo=-10.0, hi=60.0))
        elif hz is not None:
            hz_fwd = hz
        else:
            raise ParameterError(f"{where}: give an altitude (degrees or 'sea') or a horizon_file")
        salt = _num(row, "altitude_sigma", where, math.nan, 0.0, 30.0)
        if math.isnan(salt):
            salt = DEFAULT_ALTITUDE_SIGMA
            assumed["altitude_sigma"] += 1
            note.append(f"altitude error {DEFAULT_ALTITUDE_SIGMA} assumed")
        e0 = _num(row, "epoch_from", where, T.EPOCH_RANGE[0], -100000.0, 100000.0)
        e1 = _num(row, "epoch_to", where, T.EPOCH_RANGE[1], -100000.0, 100000.0)
        if e1 < e0:
            raise ParameterError(f"{where}: epoch_to {e1:g} is before epoch_from {e0:g}")
        if e1 < T.EPOCH_RANGE[0] or e0 > T.EPOCH_RANGE[1]:
            raise ParameterError(f"{where}: epochs {e0:g}..{e1:g} lie outside {T.EPOCH_RANGE[0]:g}.."
                                 f"{T.EPOCH_RANGE[1]:g} (the span of DE406)")
        if e0 < T.EPOCH_RANGE[0] or e1 > T.EPOCH_RANGE[1]:
            note.append(f"epochs {e0:g}..{e1:g} clipped to the span of DE406")
            e0, e1 = max(e0, T.EPOCH_RANGE[0]), min(e1, T.EPOCH_RANGE[1])
        temp = _num(row, "temperature", where, G.STANDARD_TEMPERATURE_C, -60.0, 60.0)
        pres = _num(row, "pressure", where, float(G.standard_pressure(elev)), 100.0, 1100.0)
        bid = (row.get("bidirectional") or "").strip().lower()
        if bid not in _TRUE | _FALSE:
            raise ParameterError(f"{where}: bidirectional must be yes or no, got {bid!r}")
        dirs = [("forward", az, hz_fwd)]
        if bid in _TRUE:
            back_text = (row.get("back_altitude") or "").strip().lower()
            if back_text == "sea":
                hz_back = G.Horizon.sea(elev)
            elif back_text:
                hz_back = G.Horizon.constant(_num(row, "back_altitude", where, lo=-10.0, hi=60.0))
            elif hz is not None:
                hz_back = hz
            else:
                hz_back = hz_fwd
                assumed["back_altitude"] += 1
            dirs.append(("back", (az + 180.0) % 360.0, hz_back))
        for dname, a, h in dirs:
            ids.append(sid if dname == "forward" else f"{sid}:back")
            names.append((row.get("name") or "").strip())
            structure.append(sid)
            direction.append(dname)
            n = list(note)
            if dname == "back" and h is hz_fwd and hz is None and not (row.get("back_altitude") or "").strip():
                n.append("back altitude taken equal to the forward one")
            notes.append("; ".join(n))
            hzs.append(h)
            for k, v in (("lat", lat), ("lon", lon), ("elev", elev), ("az", a), ("saz", saz),
                         ("alt", float(h.altitude(a))), ("salt", salt), ("slope", float(h.slope(a))),
                         ("e0", e0), ("e1", e1), ("t", temp), ("p", pres)):
                cols[k].append(v)
    if not ids:
        raise ParameterError(f"structures file {path} holds a header but no structure")
    c = {k: np.array(v, dtype=float) for k, v in cols.items()}
    al = Alignments(ids, c["lat"], c["lon"], c["elev"], c["az"], c["saz"], c["alt"], c["salt"], c["slope"], hzs,
                    c["e0"], c["e1"], c["t"], c["p"], names)
    return Survey(al, structure, direction, notes, assumed, str(path))


def epoch_grid(epoch_from, epoch_to, step: float = 100.0) -> np.ndarray:
    """Return the grid epochs: multiples of ``step`` across the ranges, with both outer ends.

    Parameters
    ----------
    epoch_from, epoch_to : array_like
        Ranges (Julian epochs).
    step : float
        Years between grid epochs (> 0).
    """
    if not step > 0:
        raise ParameterError(f"the epoch step must be positive, got {step!r}")
    lo = float(np.min(epoch_from))
    hi = float(np.max(epoch_to))
    inner = np.arange(math.ceil(lo / step) * step, hi + 1e-9, step)
    return T.check_epochs(np.unique(np.concatenate([[lo], inner, [hi]])))


@dataclass
class BatchResult:
    """Everything a batch run computed (see :func:`run`)."""

    survey: Survey
    targets: T.Targets
    intervals: dict
    matches: Matches
    options: dict


def run(survey: Survey, *, step: float = 100.0, groups=T.DEFAULT_GROUPS, stars=None, limb: str = "upper",
        moon_distance: str = "range", extinction_deg: float = 0.0, level: float = 2.0, method: str = "analytic",
        obliquity_model: str = T.DEFAULT_OBLIQUITY, refraction_model: str = "bennett", epochs=None,
        deltat=None, longitude_deg=None) -> BatchResult:
    """Compute the declinations of all alignments and match them with all targets over their epochs.

    Parameters
    ----------
    survey : Survey
        From :func:`read_structures` (or built by hand).
    step : float
        Years between grid epochs (ignored when ``epochs`` is given).
    groups, stars, obliquity_model, deltat, longitude_deg
        Target selection, see :func:`calendra_alignments.targets.build_targets`.
    limb, moon_distance, extinction_deg, level, method, refraction_model
        See :func:`calendra_alignments.matching.alignment_intervals`.
    epochs : array_like, optional
        The epoch grid itself.

    Returns
    -------
    BatchResult
    """
    al = survey.alignments
    grid = epoch_grid(al.epoch_from, al.epoch_to, step) if epochs is None else T.check_epochs(epochs)
    if longitude_deg is None and len(al):
        longitude_deg = float(np.median(al.longitude_deg))
    tg = T.build_targets(grid, groups, stars, obliquity_model=obliquity_model, longitude_deg=longitude_deg,
                         deltat=deltat)
    kinds = sorted({"star" if k in ("star", "planet") else str(k) for k in tg.kinds})
    iv = alignment_intervals(al, limb=limb, moon_distance=moon_distance, extinction_deg=extinction_deg,
                             level=level, method=method, refraction_model=refraction_model, kinds=kinds)
    m = match(iv, tg, al.epoch_from, al.epoch_to)
    opts = dict(step=step, limb=limb, moon_distance=moon_distance, extinction_deg=extinction_deg, level=level,
                method=method, obliquity_model=obliquity_model, refraction_model=refraction_model)
    return BatchResult(survey, tg, iv, m, opts)


# ---------------------------------------------------------------- rows for output

SUMMARY_COLUMNS = ["id", "structure", "direction", "event", "latitude", "azimuth", "azimuth_sigma", "altitude",
                   "altitude_sigma", "dec_star", "sigma", "dec_lo", "dec_hi", "dec_sun", "dec_moon", "epoch_from",
                   "epoch_to", "n_matches", "matches", "notes"]
MATCH_COLUMNS = ["id", "structure", "direction", "event", "azimuth", "target", "kind", "epoch_first", "epoch_last",
                 "epoch_best", "dec_target", "dec_alignment", "sigma", "offset_deg", "offset_sigma", "margin_deg",
                 "label"]


def summary_rows(res: BatchResult) -> list:
    """One row per alignment: its declinations (point, Sun, Moon), interval and matched targets."""
    al, iv, m, tg = res.survey.alignments, res.intervals, res.matches, res.targets
    events = al.direction()
    by_al: dict = {}
    for k in range(len(m)):
        by_al.setdefault(int(m.alignment[k]), []).append(
            f"{tg.ids[m.target[k]]}@{m.epoch_best[k]:g}({m.offset_sigma[k]:+.1f} sigma)")
    rows = []
    st = iv.get("star")
    for i in range(len(al)):
        r = {"id": al.ids[i], "structure": res.survey.structure[i], "direction": res.survey.direction[i],
             "event": str(events[i]), "latitude": round(float(al.latitude_deg[i]), 4),
             "azimuth": round(float(al.azimuth_deg[i]), 3), "azimuth_sigma": round(float(al.azimuth_sigma_deg[i]), 3),
             "altitude": round(float(al.altitude_deg[i]), 3),
             "altitude_sigma": round(float(al.altitude_sigma_deg[i]), 3),
             "epoch_from": float(al.epoch_from[i]), "epoch_to": float(al.epoch_to[i]),
             "n_matches": len(by_al.get(i, [])), "matches": ";".join(by_al.get(i, [])),
             "notes": res.survey.notes[i]}
        if st is not None:
            r.update(dec_star=round(float(st.dec[i]), 3), sigma=round(float(st.sigma[i]), 3),
                     dec_lo=round(float(st.lo[i]), 3), dec_hi=round(float(st.hi[i]), 3))
        for kind in ("sun", "moon"):
            if kind in iv:
                r[f"dec_{kind}"] = round(float(iv[kind].dec[i]), 3)
        rows.append(r)
    return rows


def match_rows(res: BatchResult) -> list:
    """One row per matching (alignment, target) pair."""
    al, m, tg = res.survey.alignments, res.matches, res.targets
    events = al.direction()
    rows = []
    for k in range(len(m)):
        i, j = int(m.alignment[k]), int(m.target[k])
        rows.append({"id": al.ids[i], "structure": res.survey.structure[i], "direction": res.survey.direction[i],
                     "event": str(events[i]), "azimuth": round(float(al.azimuth_deg[i]), 3), "target": tg.ids[j],
                     "kind": str(tg.kinds[j]), "label": tg.labels[j], "epoch_first": float(m.epoch_first[k]),
                     "epoch_last": float(m.epoch_last[k]), "epoch_best": float(m.epoch_best[k]),
                     "dec_target": round(float(m.dec_target[k]), 3),
                     "dec_alignment": round(float(m.dec_alignment[k]), 3), "sigma": round(float(m.sigma[k]), 3),
                     "offset_deg": round(float(m.offset_deg[k]), 3), "offset_sigma": round(float(m.offset_sigma[k]), 2),
                     "margin_deg": round(float(m.margin_deg[k]), 3)})
    return rows
