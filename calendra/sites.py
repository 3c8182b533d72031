"""Observing sites.

A site is a place on the Earth (geodetic latitude and longitude in degrees,
north and east positive, elevation in metres above sea level) with the
weather used for refraction (temperature in degrees C, pressure in mbar) and
the rule for its civil time: a fixed offset from UT in hours, or local mean
time (``"lmt"``, the default: UT + longitude / 15 hours).

Users give a site as plain coordinates ``LAT,LON[,ELEVATION_M]`` or as a name
from the gazetteer (see :func:`parse_site`).
"""

from __future__ import annotations

import re
from dataclasses import dataclass

from .errors import ParameterError

_COORD_RE = re.compile(r"^\s*([+-]?\d+(?:\.\d*)?)\s*,\s*([+-]?\d+(?:\.\d*)?)\s*(?:,\s*([+-]?\d+(?:\.\d*)?)\s*)?$")


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
        Height above sea level, metres.
    temperature_C, pressure_mbar : float
        Weather for refraction.
    utc_offset_hours : float or None
        Civil time = UT + this offset; None means local mean time at the site.
    source : str
        Where the coordinates come from.
    """

    name: str
    latitude_deg: float
    longitude_deg: float
    elevation_m: float = 0.0
    temperature_C: float = 10.0
    pressure_mbar: float = 1010.0
    utc_offset_hours: float | None = None
    source: str = ""

    def __post_init__(self):
        if not -90.0 <= self.latitude_deg <= 90.0:
            raise ParameterError(f"site {self.name}: latitude {self.latitude_deg} is outside -90..90 degrees")
        if not -180.0 <= self.longitude_deg <= 360.0:
            raise ParameterError(f"site {self.name}: longitude {self.longitude_deg} is outside -180..360 degrees")
        if not -500.0 <= self.elevation_m <= 9000.0:
            raise ParameterError(f"site {self.name}: elevation {self.elevation_m} m is outside -500..9000 m")

    @property
    def offset_days(self) -> float:
        """Civil time minus UT, in days (local mean time when no zone is set)."""
        if self.utc_offset_hours is None:
            lon = self.longitude_deg - 360.0 if self.longitude_deg > 180.0 else self.longitude_deg
            return lon / 360.0
        return self.utc_offset_hours / 24.0

    @property
    def time_rule(self) -> str:
        """Text naming the site's civil time."""
        if self.utc_offset_hours is None:
            return "local mean time (UT + longitude/15 h)"
        return f"UT{self.utc_offset_hours:+g} h"

    def describe(self) -> dict:
        return {
            "name": self.name, "latitude_deg": self.latitude_deg, "longitude_deg": self.longitude_deg,
            "elevation_m": self.elevation_m, "temperature_C": self.temperature_C,
            "pressure_mbar": self.pressure_mbar, "time": self.time_rule, "source": self.source,
        }


def parse_coordinates(text: str) -> Site | None:
    """Return a Site for ``LAT,LON[,ELEVATION_M]`` text, or None if the text is not coordinates."""
    m = _COORD_RE.match(text)
    if not m:
        return None
    lat, lon = float(m.group(1)), float(m.group(2))
    elev = float(m.group(3)) if m.group(3) else 0.0
    return Site(f"{lat:g},{lon:g}" + (f",{elev:g}" if m.group(3) else ""), lat, lon, elev, source="given")


def parse_site(text: str, gazetteer=None) -> Site:
    """Return the site named by ``text``: coordinates ``LAT,LON[,ELEVATION_M]`` or a gazetteer name.

    Raises
    ------
    ParameterError
        Malformed coordinates; UnknownNameError for a name not in the gazetteer.
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

    gaz = gazetteer if gazetteer is not None else load_gazetteer()
    key = text.strip().lower()
    if key in gaz:
        return gaz[key]
    raise UnknownNameError("site", text, list(gaz) or ["(no gazetteer loaded; give LAT,LON)"])


def load_gazetteer() -> dict:
    """Return the sites known by name (empty until a gazetteer is installed)."""
    return {}
