"""Reference stars: the Babylonian Normal Stars, bright ecliptic stars, and their apparent places.

The Normal Stars
----------------
The astronomical diaries of Babylon (from the 7th century BC) place the Moon
and the planets against a set of about thirty stars near the ecliptic, the
"Normal Stars" (a modern name).  :data:`NORMAL_STARS` lists the 32 of the
usual modern list (A. Sachs & H. Hunger, *Astronomical Diaries and Related
Texts from Babylonia* I, 1988, introduction; the Babylonian names as
transliterated there, from memory -- two whose names were not recalled are
left without one).  Each is identified by its Bayer designation and
resolved through the stars plugin (:func:`calendra_stars.names.resolve`),
whose names table carries the five that the IAU has not named.

Distances "in front of / behind" and "above / below"
----------------------------------------------------
The diaries give the position of the Moon or a planet as so many cubits
(KÙŠ) and fingers (ŠU.SI, 1/24 cubit) "above" (north of) or "below"
(south of), "in front of" (west of: ahead in the daily motion) or "behind"
(east of) a Normal Star.  The cubit is taken as :data:`CUBIT_DEG` = 2
degrees and the finger as 1/24 cubit = 5 arcminutes (Sachs & Hunger 1988,
introduction, from memory; values of 2 to 2.5 degrees are found in the
literature for the cubit of the earlier texts), and may be changed.

Apparent places
---------------
A star's barycentric position moves linearly (space motion from the
Hipparcos new reduction at J1991.25, :func:`calendra_stars.positions.star_state`);
its geocentric direction is that position minus the Earth's (DE406; annual
parallax), aberrated by the Earth's barycentric velocity
(:func:`calendra_stars.positions.aberrate`, relativistic).  These are the
GCRS directions that the planets' apparent places of :mod:`.states` live in.
"""

from __future__ import annotations

import functools
from dataclasses import dataclass

import numpy as np

#: Degrees in a Babylonian cubit (KÙŠ) by default (see the module docstring).
CUBIT_DEG = 2.0
#: Fingers (ŠU.SI) in a cubit.
FINGERS_PER_CUBIT = 24

#: The Normal Stars: (Bayer designation, Babylonian name, translation).  [names from memory]
NORMAL_STARS = (
    ("eta Psc", "DUR nu-nu", "the ribbon of the Fishes"),
    ("beta Ari", "MUL IGI šá SAG HUN", "the front star of the head of the Hired Man"),
    ("alpha Ari", "MUL ár šá SAG HUN", "the rear star of the head of the Hired Man"),
    ("eta Tau", "MUL.MUL", "the Bristle (the Pleiades)"),
    ("alpha Tau", "is le-e", "the Jaw of the Bull"),
    ("beta Tau", "SI šá SI", "the northern horn"),
    ("zeta Tau", "SI šá ULÙ", "the southern horn"),
    ("eta Gem", "MUL IGI šá še-ep MAŠ.MAŠ", "the front star of the feet of the Twins"),
    ("mu Gem", "MUL ár šá še-ep MAŠ.MAŠ", "the rear star of the feet of the Twins"),
    ("gamma Gem", "", ""),
    ("alpha Gem", "MAŠ.MAŠ IGI", "the front Twin"),
    ("beta Gem", "MAŠ.MAŠ ár", "the rear Twin"),
    ("eta Cnc", "MUL IGI šá ALLA šá SI", "the northern front star of the Crab"),
    ("theta Cnc", "MUL IGI šá ALLA šá ULÙ", "the southern front star of the Crab"),
    ("gamma Cnc", "MUL ár šá ALLA šá SI", "the northern rear star of the Crab"),
    ("delta Cnc", "MUL ár šá ALLA šá ULÙ", "the southern rear star of the Crab"),
    ("epsilon Leo", "SAG A", "the head of the Lion"),
    ("alpha Leo", "LUGAL", "the King"),
    ("rho Leo", "MUL TUR šá 4 KÙŠ ár LUGAL", "the small star 4 cubits behind the King"),
    ("theta Leo", "GIŠ.KUN A", "the rump of the Lion"),
    ("beta Vir", "DELE šá IGI ABSIN", "the single star in front of the Furrow"),
    ("gamma Vir", "", ""),
    ("alpha Vir", "SA4 šá ABSIN", "the bright star of the Furrow"),
    ("alpha2 Lib", "RÍN šá ULÙ", "the southern part of the Scales"),
    ("beta Lib", "RÍN šá SI", "the northern part of the Scales"),
    ("delta Sco", "MUL MURUB4 šá SAG GÍR.TAB", "the middle star of the head of the Scorpion"),
    ("beta Sco", "MUL e šá SAG GÍR.TAB", "the upper star of the head of the Scorpion"),
    ("alpha Sco", "GABA GÍR.TAB", "the breast of the Scorpion"),
    ("theta Oph", "", ""),
    ("beta1 Cap", "SI MÁŠ", "the horn of the Goat-fish"),
    ("gamma Cap", "MUL IGI šá SUHUR.MÁŠ", "the front star of the Goat-fish"),
    ("delta Cap", "MUL ár šá SUHUR.MÁŠ", "the rear star of the Goat-fish"),
)

#: Star-set names accepted where a list of reference stars is asked for.
STAR_SETS = ("normal", "bright", "both")
#: Defaults of the bright set: V at most, |ecliptic latitude| at most (degrees, J2000).
BRIGHT_V_MAX = 3.5
BRIGHT_LAT_MAX_DEG = 10.0


@dataclass(frozen=True)
class StarSet:
    """Stars with their space motion, ready for apparent places.

    Attributes
    ----------
    names : tuple of str
        Labels (proper name, or Bayer designation, with the HIP number).
    hips : ndarray of int
    v : ndarray of float
        V magnitudes.
    r0_au : ndarray, shape (S, 3)
        Barycentric positions at J1991.25, au, ICRS.
    vel_au_day : ndarray, shape (S, 3)
        Barycentric velocities, au/day.
    babylonian : tuple of str
        Babylonian names ('' when none).
    """

    names: tuple
    hips: np.ndarray
    v: np.ndarray
    r0_au: np.ndarray
    vel_au_day: np.ndarray
    babylonian: tuple

    def __len__(self):
        return len(self.names)

    def directions(self, index, jd_tt, earth=None):
        """Apparent geocentric directions of stars, unit vectors in the GCRS, shape (3, N).

        Parameters
        ----------
        index : int or ndarray of int
            Which star at each instant (broadcast against ``jd_tt``).
        jd_tt : ndarray
            Julian Days, TT.
        earth : tuple or None
            Barycentric position (km) and velocity (km/day) of the geocentre at
            ``jd_tt``, shape (3, N), if already known.
        """
        from calendra_stars.catalogue import HIP_EPOCH_JD
        from calendra_stars.positions import aberrate

        from .states import AU_KM, earth_barycentric

        jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
        idx = np.broadcast_to(np.asarray(index, dtype=np.int64), jd.shape)
        pe, ve = earth_barycentric(jd) if earth is None else earth
        pos = self.r0_au[idx] + self.vel_au_day[idx] * (jd - HIP_EPOCH_JD)[:, None]
        d = pos - (pe / AU_KM).T
        u = d / np.linalg.norm(d, axis=1, keepdims=True)
        return aberrate(u, (ve / AU_KM).T).T


def _star_set(hips, names, babylonian) -> StarSet:
    from calendra_stars.catalogue import load_catalogue
    from calendra_stars.positions import star_state

    cat = load_catalogue()
    r0, vel, vmag = [], [], []
    for hip in hips:                     # a loop over stars, not over instants
        rec = cat.star(int(hip))
        a, b = star_state(rec)
        r0.append(a)
        vel.append(b)
        vmag.append(rec.v)
    return StarSet(tuple(names), np.asarray(hips, dtype=np.int64), np.asarray(vmag), np.asarray(r0),
                   np.asarray(vel), tuple(babylonian))


@functools.lru_cache(maxsize=1)
def normal_stars() -> StarSet:
    """The Babylonian Normal Stars (:data:`NORMAL_STARS`) as a :class:`StarSet`."""
    from calendra_stars.names import entry_for_hip, resolve

    hips, names, bab = [], [], []
    for bayer, name, gloss in NORMAL_STARS:
        _, hip, label = resolve(bayer)
        hips.append(hip)
        entry = entry_for_hip(hip)
        named = entry is not None and entry.source == "iau"
        names.append(f"{entry.name} ({bayer})" if named else bayer)
        bab.append(name)
    return _star_set(hips, names, bab)


@functools.lru_cache(maxsize=4)
def bright_stars(v_max: float = BRIGHT_V_MAX, lat_max_deg: float = BRIGHT_LAT_MAX_DEG) -> StarSet:
    """Catalogue stars with V <= ``v_max`` within ``lat_max_deg`` of the J2000 ecliptic."""
    from calendra_stars.catalogue import load_catalogue
    from calendra_stars.names import entry_for_hip

    cat = load_catalogue()
    eps = np.radians(23.4392911)                     # J2000 mean obliquity (IAU 1980 value)
    ra, dec = cat.arrays["ra_rad"], cat.arrays["dec_rad"]
    sin_beta = np.sin(dec) * np.cos(eps) - np.cos(dec) * np.sin(eps) * np.sin(ra)
    pick = (cat.arrays["v"] <= v_max) & (np.abs(np.degrees(np.arcsin(sin_beta))) <= lat_max_deg)
    hips = cat.hip[pick]
    names = []
    for hip in hips:
        e = entry_for_hip(int(hip))
        names.append(e.name if e is not None else f"HIP {int(hip)}")
    return _star_set(hips, names, [""] * len(hips))


def star_set(kind: str = "normal") -> StarSet:
    """A named set of reference stars: ``normal``, ``bright`` or ``both``."""
    from calendra.errors import ParameterError

    if kind == "normal":
        return normal_stars()
    if kind == "bright":
        return bright_stars()
    if kind == "both":
        a, b = normal_stars(), bright_stars()
        extra = ~np.isin(b.hips, a.hips)
        return StarSet(a.names + tuple(np.asarray(b.names, dtype=object)[extra]),
                       np.concatenate([a.hips, b.hips[extra]]), np.concatenate([a.v, b.v[extra]]),
                       np.concatenate([a.r0_au, b.r0_au[extra]]),
                       np.concatenate([a.vel_au_day, b.vel_au_day[extra]]),
                       a.babylonian + ("",) * int(extra.sum()))
    raise ParameterError(f"star set {kind!r} is not one of {', '.join(STAR_SETS)}")


def stars_from_names(names) -> StarSet:
    """A :class:`StarSet` of stars named by the user (anything :func:`calendra_stars.names.resolve` takes)."""
    from calendra.errors import ParameterError
    from calendra_stars.names import resolve

    hips, labels = [], []
    for text in names:
        kind, value, label = resolve(text)
        if kind != "star":
            raise ParameterError(f"{text!r} is a planet, not a star")
        hips.append(value)
        labels.append(label.split(" (HIP")[0])
    return _star_set(hips, labels, [""] * len(hips))


def cubits_and_fingers(deg, cubit_deg: float = CUBIT_DEG):
    """Split angles into whole cubits and fingers (rounded to the nearest finger).

    Parameters
    ----------
    deg : array_like
        Angles, degrees (the sign is dropped).
    cubit_deg : float
        Degrees in a cubit.

    Returns
    -------
    cubits, fingers : ndarray of int
    """
    total = np.rint(np.abs(np.asarray(deg, dtype=np.float64)) / cubit_deg * FINGERS_PER_CUBIT).astype(np.int64)
    return total // FINGERS_PER_CUBIT, total % FINGERS_PER_CUBIT


def nearest_stars(stars: StarSet, jd_tt, u_body, chunk: int = 4096):
    """The star of a set nearest to each body direction.

    Parameters
    ----------
    stars : StarSet
    jd_tt : ndarray
        Julian Days, TT.
    u_body : ndarray, shape (3, N)
        Apparent directions of the body (GCRS unit vectors).
    chunk : int
        Instants handled at once (memory: 24 bytes per instant and star).

    Returns
    -------
    index : ndarray of int
        Index into ``stars`` of the nearest star.
    separation_deg : ndarray
    """
    from calendra_stars.catalogue import HIP_EPOCH_JD
    from calendra_stars.positions import aberrate

    from .states import AU_KM, earth_barycentric

    jd = np.asarray(jd_tt, dtype=np.float64).reshape(-1)
    best = np.zeros(jd.size, dtype=np.int64)
    sep = np.zeros(jd.size)
    for i in range(0, jd.size, chunk):
        t = jd[i:i + chunk]
        pe, ve = earth_barycentric(t)
        pos = stars.r0_au[None] + stars.vel_au_day[None] * (t - HIP_EPOCH_JD)[:, None, None]
        d = pos - (pe / AU_KM).T[:, None, :]
        u = d / np.linalg.norm(d, axis=2, keepdims=True)
        u = aberrate(u, (ve / AU_KM).T[:, None, :])                  # (n, S, 3)
        cosines = np.einsum("nsi,in->ns", u, u_body[:, i:i + chunk])
        k = np.argmax(cosines, axis=1)
        best[i:i + chunk] = k
        c = np.clip(cosines[np.arange(t.size), k], -1.0, 1.0)
        sep[i:i + chunk] = np.degrees(np.arccos(c))
    return best, sep
