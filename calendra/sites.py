"""Observing sites: where an observer stood, the horizon they saw, the air they looked through.

A :class:`Site` is a place on the Earth -- geodetic (WGS84) latitude and
longitude in degrees, north and east positive, and elevation in metres above
sea level -- with

* the weather used for refraction: temperature (degrees C) and pressure
  (mbar), by default 10 C and 1010 mbar, the conditions of the standard
  34' horizontal refraction;
* the visible horizon: either a surveyed *horizon profile* (a list of
  azimuth, altitude pairs in degrees) or, without one, a flat horizon that
  lies ``eye_height_m`` below the eye (a sea horizon or a plain seen from a
  tower or a hill), depressed by the dip ``1.76' * sqrt(eye_height_m)``;
* the rule for its civil time: a fixed offset from UT in hours, or local
  mean time (the default: UT + longitude / 15 h).

Horizon profiles
----------------
A profile gives the *apparent* altitude of the skyline (as a theodolite or a
photograph measures it, refraction included) at a set of azimuths (degrees
from north through east).  Between the given azimuths the altitude is
interpolated **linearly in azimuth**, and the profile is **periodic**: the
segment between the largest azimuth and the smallest one + 360 closes the
circle, so a profile may start anywhere and need not repeat its first point
at 360.  A single point gives a constant horizon.  When a profile is given,
it replaces the dip (the surveyed skyline already contains it).

Profiles are read from CSV files with two columns, ``azimuth, altitude``
(degrees); a header line, blank lines and ``#`` comments are skipped, and
commas, semicolons or blanks separate the fields.

Naming a site
-------------
Everywhere a site is asked for, the user writes plain coordinates
``LAT,LON[,ELEVATION_M]`` or a name from the gazetteer.  The gazetteer is the
package's list of historical sites (``calendra/data/gazetteer.toml``, each
entry naming where its coordinates come from) merged with the user's own
TOML files: the file (or ``os.pathsep``-separated files) named by the
environment variable ``CALENDRA_SITES`` and any file passed as
``sites_file`` (the ``--sites-file`` option).  A user entry with the name of
a built-in one replaces it.  Names are matched without regard to case,
blanks and punctuation (``Xi'an``, ``xian`` and ``XI-AN`` are one name).

A TOML site file holds one table per site::

    [babylon-esagila]
    name = "Babylon, Esagila"           # shown in output (default: the key)
    latitude = 32.536                   # degrees, north positive
    longitude = 44.421                  # degrees, east positive
    elevation = 35                      # metres above sea level (default 0)
    time = "lmt"                        # or utc_offset_hours = 3
    temperature = 25                    # C, for refraction (default 10)
    pressure = 1005                     # mbar (default 1010)
    eye_height = 0                      # m above the visible horizon, for the dip
    horizon = "babylon_horizon.csv"     # CSV path (relative to this file) or [[az, alt], ...]
    aliases = ["esagila"]
    source = "where the coordinates come from"
    region = "Iraq"

The long key names of :class:`Site` (``latitude_deg``, ``elevation_m``,
``temperature_C``, ...) are accepted as well; any other key is an error.
"""

from __future__ import annotations

import math
import numbers
import os
import re
from dataclasses import dataclass, field, replace
from pathlib import Path

import numpy as np

from .errors import ParameterError

_COORD_RE = re.compile(r"^\s*([+-]?\d+(?:\.\d*)?)\s*,\s*([+-]?\d+(?:\.\d*)?)\s*(?:,\s*([+-]?\d+(?:\.\d*)?)\s*)?$")

#: Dip of the horizon per square root of the eye's height: 1.76' * sqrt(h / m).  The
#: Nautical Almanac's dip formula for a sea horizon, with the usual terrestrial refraction.
DIP_ARCMIN_PER_SQRT_M = 1.76

#: Environment variable naming the user's site file(s), separated by os.pathsep.
SITES_ENV = "CALENDRA_SITES"

_GAZETTEER_FILE = Path(__file__).with_name("data") / "gazetteer.toml"


def dip_deg(eye_height_m):
    """Return the dip of a flat (sea) horizon seen from ``eye_height_m`` above it, in degrees.

    ``dip = 1.76' * sqrt(h)`` with ``h`` in metres: the geometric dip
    ``sqrt(2 h / R)`` reduced by terrestrial refraction, the formula of the
    nautical almanacs.  Heights at or below zero give 0.

    Parameters
    ----------
    eye_height_m : float or array_like
        Height of the eye above the visible horizon, metres.
    """
    h = np.maximum(np.asarray(eye_height_m, dtype=float), 0.0)
    return DIP_ARCMIN_PER_SQRT_M * np.sqrt(h) / 60.0


def _key(text: str) -> str:
    """Normalised look-up key of a site name: lower case letters and digits only."""
    return re.sub(r"[^0-9a-z]", "", text.lower())


def _check_profile(points, where: str) -> tuple:
    try:
        pts = [(float(a), float(b)) for a, b in points]
    except (TypeError, ValueError):
        raise ParameterError(f"{where}: a horizon profile is a list of (azimuth, altitude) pairs in degrees") from None
    if not pts:
        return ()
    arr = np.array(pts)
    if not np.all(np.isfinite(arr)):
        raise ParameterError(f"{where}: horizon profile values must be finite numbers")
    if np.any(np.abs(arr[:, 1]) > 60.0):
        raise ParameterError(f"{where}: horizon altitudes must lie within -60..60 degrees")
    az = arr[:, 0] % 360.0
    if len(np.unique(az)) != len(az):
        raise ParameterError(f"{where}: the horizon profile gives one azimuth (mod 360) twice")
    order = np.argsort(az)
    return tuple((float(az[i]), float(arr[i, 1])) for i in order)


@dataclass(frozen=True)
class Site:
    """An observer on the Earth.

    Attributes
    ----------
    name : str
        Label shown in output.
    latitude_deg, longitude_deg : float
        Geodetic (WGS84) latitude and longitude, degrees, north and east positive.
    elevation_m : float
        Height above sea level, metres (used for the topocentric position).
    temperature_C, pressure_mbar : float
        Weather for refraction (defaults: 10 C and 1010 mbar).
    utc_offset_hours : float or None
        Civil time = UT + this offset; None means local mean time at the site.
    source : str
        Where the coordinates come from.
    horizon : tuple of (float, float)
        Horizon profile: (azimuth, apparent altitude) pairs in degrees,
        sorted by azimuth in 0..360; empty for a flat horizon.
    eye_height_m : float
        Height of the eye above a flat visible horizon, metres (for the dip;
        ignored when a profile is given).  0 for an observer standing on a
        plain.
    aliases : tuple of str
        Other names in the gazetteer.
    region : str
        Modern country or region, for listings.
    """

    name: str
    latitude_deg: float
    longitude_deg: float
    elevation_m: float = 0.0
    temperature_C: float = 10.0
    pressure_mbar: float = 1010.0
    utc_offset_hours: float | None = None
    source: str = ""
    horizon: tuple = field(default=(), compare=True)
    eye_height_m: float = 0.0
    aliases: tuple = ()
    region: str = ""

    def __post_init__(self):
        for attr in ("latitude_deg", "longitude_deg", "elevation_m", "temperature_C", "pressure_mbar",
                     "eye_height_m"):
            value = getattr(self, attr)
            if isinstance(value, bool) or not isinstance(value, numbers.Real) or not math.isfinite(value):
                raise ParameterError(f"site {self.name}: {attr} must be a finite number, got {value!r}")
        if not -90.0 <= self.latitude_deg <= 90.0:
            raise ParameterError(f"site {self.name}: latitude {self.latitude_deg} is outside -90..90 degrees")
        if not -180.0 <= self.longitude_deg <= 360.0:
            raise ParameterError(f"site {self.name}: longitude {self.longitude_deg} is outside -180..360 degrees")
        if not -500.0 <= self.elevation_m <= 9000.0:
            raise ParameterError(f"site {self.name}: elevation {self.elevation_m} m is outside -500..9000 m")
        if not -60.0 <= self.temperature_C <= 60.0:
            raise ParameterError(f"site {self.name}: temperature {self.temperature_C} C is outside -60..60 C")
        if not 100.0 <= self.pressure_mbar <= 1100.0:
            raise ParameterError(f"site {self.name}: pressure {self.pressure_mbar} mbar is outside 100..1100 mbar")
        if not 0.0 <= self.eye_height_m <= 9000.0:
            raise ParameterError(f"site {self.name}: eye height {self.eye_height_m} m is outside 0..9000 m")
        if self.utc_offset_hours is not None and not -14.0 <= self.utc_offset_hours <= 14.0:
            raise ParameterError(f"site {self.name}: UT offset {self.utc_offset_hours} h is outside -14..14 h")
        object.__setattr__(self, "horizon", _check_profile(self.horizon, f"site {self.name}"))
        object.__setattr__(self, "aliases", tuple(self.aliases))

    # ------------------------------------------------------------- time
    @property
    def east_longitude_deg(self) -> float:
        """Longitude in -180..180 degrees, east positive."""
        return self.longitude_deg - 360.0 if self.longitude_deg > 180.0 else self.longitude_deg

    @property
    def offset_days(self) -> float:
        """Civil time minus UT, in days (local mean time when no zone is set)."""
        if self.utc_offset_hours is None:
            return self.east_longitude_deg / 360.0
        return self.utc_offset_hours / 24.0

    @property
    def time_rule(self) -> str:
        """Text naming the site's civil time."""
        if self.utc_offset_hours is None:
            return "local mean time (UT + longitude/15 h)"
        return f"UT{self.utc_offset_hours:+g} h"

    # ---------------------------------------------------------- horizon
    @property
    def dip_deg(self) -> float:
        """Dip of the flat horizon below the astronomical horizon, degrees (0 with a profile)."""
        return 0.0 if self.horizon else float(dip_deg(self.eye_height_m))

    def horizon_altitude(self, azimuth_deg):
        """Return the apparent altitude of the visible horizon at ``azimuth_deg``, degrees.

        With a profile: linear interpolation in azimuth, periodic over 360
        degrees (see the module notes).  Without one: ``-dip``, the same in
        every direction.

        Parameters
        ----------
        azimuth_deg : float or array_like
            Azimuth, degrees from north through east (any real value; taken mod 360).

        Returns
        -------
        numpy.ndarray or numpy.float64
            Same shape as the input.
        """
        az = np.asarray(azimuth_deg, dtype=float)
        if not self.horizon:
            return np.full(az.shape, -self.dip_deg)[()]
        xp = np.array([p[0] for p in self.horizon])
        fp = np.array([p[1] for p in self.horizon])
        xp = np.concatenate([[xp[-1] - 360.0], xp, [xp[0] + 360.0]])
        fp = np.concatenate([[fp[-1]], fp, [fp[0]]])
        return np.interp(az % 360.0, xp, fp)[()]

    def with_horizon(self, profile) -> "Site":
        """Return a copy with a horizon profile: (azimuth, altitude) pairs or a CSV file path."""
        if isinstance(profile, (str, os.PathLike)):
            profile = read_horizon_csv(profile)
        return replace(self, horizon=tuple(profile))

    # ------------------------------------------------------------- text
    def describe(self) -> dict:
        """Return the site as a dict of plain values (for output and provenance)."""
        if self.horizon:
            alts = [p[1] for p in self.horizon]
            horizon = f"profile of {len(self.horizon)} points, {min(alts):+.2f}..{max(alts):+.2f} deg"
        elif self.eye_height_m > 0:
            horizon = f"flat, eye {self.eye_height_m:g} m above it (dip {self.dip_deg * 60:.1f}')"
        else:
            horizon = "flat (astronomical horizon)"
        return {
            "name": self.name, "latitude_deg": self.latitude_deg, "longitude_deg": self.longitude_deg,
            "elevation_m": self.elevation_m, "temperature_C": self.temperature_C,
            "pressure_mbar": self.pressure_mbar, "time": self.time_rule, "horizon": horizon,
            "region": self.region, "aliases": list(self.aliases), "source": self.source,
        }


# ------------------------------------------------------------------ reading

def read_horizon_csv(path) -> tuple:
    """Read a horizon profile CSV (``azimuth, altitude`` in degrees) into sorted pairs.

    Raises
    ------
    ParameterError
        If the file cannot be read or a line holds no two numbers (the first
        non-comment line may be a header).
    """
    path = Path(path).expanduser()
    try:
        text = path.read_text(encoding="utf-8")
    except OSError as exc:
        raise ParameterError(f"cannot read horizon profile {path}: {exc.strerror or exc}") from None
    points = []
    first = True
    for lineno, line in enumerate(text.splitlines(), 1):
        line = line.split("#", 1)[0].strip()
        if not line:
            continue
        fields = [f for f in re.split(r"[,;\s]+", line) if f]
        try:
            if len(fields) < 2:
                raise ValueError
            points.append((float(fields[0]), float(fields[1])))
        except ValueError:
            if first:       # a header line
                first = False
                continue
            raise ParameterError(f"{path}:{lineno}: expected 'azimuth, altitude' in degrees, got {line!r}") from None
        first = False
    if not points:
        raise ParameterError(f"horizon profile {path} holds no (azimuth, altitude) line")
    return _check_profile(points, str(path))


_KEYS = {
    "name": "name", "latitude": "latitude_deg", "latitude_deg": "latitude_deg", "lat": "latitude_deg",
    "longitude": "longitude_deg", "longitude_deg": "longitude_deg", "lon": "longitude_deg",
    "elevation": "elevation_m", "elevation_m": "elevation_m",
    "temperature": "temperature_C", "temperature_c": "temperature_C",
    "pressure": "pressure_mbar", "pressure_mbar": "pressure_mbar",
    "utc_offset_hours": "utc_offset_hours", "utc_offset": "utc_offset_hours", "time": "time",
    "eye_height": "eye_height_m", "eye_height_m": "eye_height_m",
    "horizon": "horizon", "aliases": "aliases", "source": "source", "region": "region",
}


def _site_from_table(key: str, table: dict, path: Path) -> Site:
    where = f"{path} [{key}]"
    if not isinstance(table, dict):
        raise ParameterError(f"{where}: a site is a table of keys (latitude, longitude, ...)")
    kw: dict = {}
    for k, v in table.items():
        name = _KEYS.get(k.lower())
        if name is None:
            raise ParameterError(f"{where}: unknown key {k!r} (known: {', '.join(sorted(set(_KEYS)))})")
        kw[name] = v
    for needed in ("latitude_deg", "longitude_deg"):
        if needed not in kw:
            raise ParameterError(f"{where}: {needed.split('_')[0]} is missing")
    time = kw.pop("time", None)
    if time is not None:
        if isinstance(time, str) and time.strip().lower() == "lmt":
            kw["utc_offset_hours"] = None
        else:
            m = re.match(r"^\s*(?:UTC?)?\s*([+-]?\d+(?:\.\d*)?)\s*h?\s*$", str(time), re.IGNORECASE)
            if not m:
                raise ParameterError(f"{where}: time must be 'lmt' or an offset from UT in hours, got {time!r}")
            kw["utc_offset_hours"] = float(m.group(1))
    horizon = kw.pop("horizon", None)
    if isinstance(horizon, str):
        hp = Path(horizon).expanduser()
        kw["horizon"] = read_horizon_csv(hp if hp.is_absolute() else path.parent / hp)
    elif horizon is not None:
        kw["horizon"] = _check_profile(horizon, where)
    aliases = kw.pop("aliases", ())
    if isinstance(aliases, str):
        aliases = (aliases,)
    for num in ("latitude_deg", "longitude_deg", "elevation_m", "temperature_C", "pressure_mbar",
                "eye_height_m", "utc_offset_hours"):
        if kw.get(num) is not None:
            if isinstance(kw[num], bool) or not isinstance(kw[num], (int, float)):
                raise ParameterError(f"{where}: {num} must be a number, got {kw[num]!r}")
            kw[num] = float(kw[num])
    kw.setdefault("name", key)
    names = [str(a) for a in aliases]
    if _key(key) not in {_key(kw["name"]), *map(_key, names)}:
        names.append(key)          # the table key is a name too
    try:
        return Site(aliases=tuple(names), **kw)
    except ParameterError as exc:
        raise ParameterError(f"{where}: {exc}") from None


def read_sites_file(path) -> list[Site]:
    """Read the sites of a TOML file (see the module notes for its layout)."""
    try:
        import tomllib
    except ModuleNotFoundError:  # Python < 3.11
        import tomli as tomllib
    path = Path(path).expanduser()
    try:
        with open(path, "rb") as fh:
            data = tomllib.load(fh)
    except OSError as exc:
        raise ParameterError(f"cannot read site file {path}: {exc.strerror or exc}") from None
    except tomllib.TOMLDecodeError as exc:
        raise ParameterError(f"site file {path} is not valid TOML: {exc}") from None
    return [_site_from_table(k, v, path) for k, v in data.items()]


def _user_files(sites_file=None) -> list[Path]:
    files = []
    env = os.environ.get(SITES_ENV, "")
    files += [Path(p) for p in env.split(os.pathsep) if p.strip()]
    if sites_file:
        files += [Path(p) for p in ([sites_file] if isinstance(sites_file, (str, os.PathLike)) else sites_file)]
    return files


_cache: dict = {}


def _stamp(path: Path):
    try:
        st = path.stat()
        return (str(path), st.st_mtime_ns, st.st_size)
    except OSError:
        return (str(path), None, None)


def load_gazetteer(sites_file=None, include_builtin: bool = True) -> dict:
    """Return the sites known by name: ``{normalised name or alias: Site}``.

    The package's gazetteer of historical sites, then the user's files
    (``$CALENDRA_SITES``, then ``sites_file``); a later entry with a name
    already present replaces the earlier one.  Cached until a file changes.

    Parameters
    ----------
    sites_file : str, os.PathLike or list of them, optional
        Extra TOML site files (the ``--sites-file`` option).
    include_builtin : bool
        Include the package's gazetteer (default True).

    Raises
    ------
    ParameterError
        A file that cannot be read or holds a malformed site.
    """
    files = ([_GAZETTEER_FILE] if include_builtin else []) + _user_files(sites_file)
    stamp = tuple(_stamp(f) for f in files)
    if stamp in _cache:
        return dict(_cache[stamp])
    gaz: dict = {}
    for path in files:
        for site in read_sites_file(path):
            for n in (site.name, *site.aliases):
                gaz[_key(n)] = site
    _cache.clear()
    _cache[stamp] = gaz
    return dict(gaz)


def gazetteer_sites(sites_file=None) -> list[Site]:
    """Return the distinct sites of :func:`load_gazetteer` in file order."""
    seen: dict = {}
    for site in load_gazetteer(sites_file).values():
        seen.setdefault(id(site), site)
    return list(seen.values())


def parse_coordinates(text: str) -> Site | None:
    """Return a Site for ``LAT,LON[,ELEVATION_M]`` text, or None if the text is not coordinates."""
    m = _COORD_RE.match(text)
    if not m:
        return None
    lat, lon = float(m.group(1)), float(m.group(2))
    elev = float(m.group(3)) if m.group(3) else 0.0
    return Site(f"{lat:g},{lon:g}" + (f",{elev:g}" if m.group(3) else ""), lat, lon, elev, source="given")


def parse_site(text, gazetteer=None, sites_file=None) -> Site:
    """Return the site named by ``text``: coordinates ``LAT,LON[,ELEVATION_M]`` or a gazetteer name.

    Parameters
    ----------
    text : str or Site
        ``32.54,44.43,35`` (degrees north and east, metres) or a name such as
        ``Babylon``; a Site is returned unchanged.
    gazetteer : dict, optional
        Names -> sites to look in (default :func:`load_gazetteer`).
    sites_file : str or os.PathLike, optional
        Extra TOML site file for the default gazetteer.

    Raises
    ------
    ParameterError
        Malformed coordinates.
    UnknownNameError
        A name not in the gazetteer (the message lists close names).
    """
    if isinstance(text, Site):
        return text
    site = parse_coordinates(text)
    if site is not None:
        return site
    if re.match(r"^\s*[+-]?\d", text):
        raise ParameterError(f"cannot read site {text!r}: write LAT,LON[,ELEVATION_M] in degrees "
                             "(north and east positive), e.g. 32.54,44.42,35")
    from .errors import UnknownNameError

    gaz = gazetteer if gazetteer is not None else load_gazetteer(sites_file)
    key = _key(text)
    if key in gaz:
        return gaz[key]
    names = sorted({s.name for s in gaz.values()})
    raise UnknownNameError("site", text, names or ["(no gazetteer loaded; give LAT,LON)"])
