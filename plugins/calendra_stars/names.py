"""Proper names of stars, their Bayer/Flamsteed aliases, and planets.

The table ``data/star_names.csv`` maps the names approved by the IAU Working
Group on Star Names (IAU Catalog of Star Names, IAU-CSN) to Hipparcos numbers,
for every IAU-CSN entry with a HIP number and V <= 6.5, plus five ecliptic
reference stars of the Babylonian astronomical diaries ("Normal Stars") that
the WGSN has not named (eta and theta Cancri, epsilon and rho Leonis, theta
Ophiuchi), listed under their Bayer designations.

A star can be named by

* its proper name: ``Sirius``, ``Rigil Kentaurus`` (case and spaces ignored);
* its Bayer designation in any of the forms ``alpha CMa``, ``alf CMa``,
  ``α CMa``, ``alpha1 Her``, ``alf01 Her`` (only for stars in the table);
* its Flamsteed number ``80 UMa`` (only for stars in the table);
* its HR or HD number as listed (``HR 2491``);
* any Hipparcos number: ``HIP 32349`` or plain ``32349``.

Planets (``Mercury`` ... ``Saturn``) are resolved to :class:`Planet` objects.
"""

from __future__ import annotations

import csv
import functools
import re
import unicodedata
from dataclasses import dataclass
from pathlib import Path

DATA_FILE = Path(__file__).parent / "data" / "star_names.csv"

#: Greek letters: three-letter abbreviation (as in IAU-CSN) -> (full name, symbol).
GREEK = {
    "alf": ("alpha", "α"), "bet": ("beta", "β"), "gam": ("gamma", "γ"), "del": ("delta", "δ"),
    "eps": ("epsilon", "ε"), "zet": ("zeta", "ζ"), "eta": ("eta", "η"), "tet": ("theta", "θ"),
    "iot": ("iota", "ι"), "kap": ("kappa", "κ"), "lam": ("lambda", "λ"), "mu": ("mu", "μ"),
    "nu": ("nu", "ν"), "ksi": ("xi", "ξ"), "omi": ("omicron", "ο"), "pi": ("pi", "π"),
    "rho": ("rho", "ρ"), "sig": ("sigma", "σ"), "tau": ("tau", "τ"), "ups": ("upsilon", "υ"),
    "phi": ("phi", "φ"), "chi": ("chi", "χ"), "psi": ("psi", "ψ"), "ome": ("omega", "ω"),
}
_ALT_GREEK = {"the": "tet", "theta": "tet", "xi": "ksi", "omega": "ome", "ups": "ups", "kappa": "kap"}

#: Planets with the DE406 kernel target used for them.
PLANETS = {
    "mercury": "mercury", "venus": "venus", "mars": "mars barycenter",
    "jupiter": "jupiter barycenter", "saturn": "saturn barycenter",
}


@dataclass(frozen=True)
class NameEntry:
    """One row of the names table."""

    name: str
    hip: int
    designation: str
    bayer_id: str
    constellation: str
    component: str
    v: float | None
    source: str

    @property
    def bayer(self) -> str:
        """The Bayer or Flamsteed designation, e.g. ``alpha CMa`` or ``80 UMa`` ('' if none)."""
        if self.bayer_id in ("", "_"):
            return ""
        m = re.match(r"^([a-z]+)(\d*)$", self.bayer_id)
        if m and m.group(1) in GREEK:
            sup = str(int(m.group(2))) if m.group(2) else ""
            return f"{GREEK[m.group(1)][0]}{sup} {self.constellation}"
        return f"{self.bayer_id} {self.constellation}"

    def aliases(self) -> list[str]:
        """All accepted spellings of this star except its proper name."""
        out = [f"HIP {self.hip}"]
        if self.designation not in ("", "_"):
            out.append(self.designation)
        if self.bayer_id not in ("", "_"):
            m = re.match(r"^([a-z]+)(\d*)$", self.bayer_id)
            con = self.constellation
            if m and m.group(1) in GREEK:
                abbr, digits = m.group(1), m.group(2)
                full, sym = GREEK[abbr]
                sup = str(int(digits)) if digits else ""
                out += [f"{full}{sup} {con}", f"{abbr}{digits} {con}", f"{sym}{sup} {con}"]
                if digits:
                    out += [f"{abbr}{sup} {con}"]
            else:
                out.append(f"{self.bayer_id} {con}")
        return out


@dataclass(frozen=True)
class Planet:
    """A planet as an observable object (position from the DE406 kernel)."""

    name: str
    target: str

    @property
    def label(self) -> str:
        return self.name.capitalize()


def _key(text: str) -> str:
    """Normalised lookup key: lower case, accents and spaces removed."""
    text = unicodedata.normalize("NFKD", text)
    text = "".join(c for c in text if not unicodedata.combining(c) or c in "")
    return re.sub(r"[\s_\-']+", "", text.lower())


@functools.lru_cache(maxsize=1)
def load_names() -> tuple[NameEntry, ...]:
    """All rows of the names table, in file order."""
    rows = []
    with open(DATA_FILE, encoding="utf-8") as fh:
        reader = csv.reader(line for line in fh if line.strip() and not line.startswith("#"))
        for r in reader:
            name, hip, des, bid, con, comp, v, src = (x.strip() for x in r)
            rows.append(NameEntry(name, int(hip), des, bid, con, comp,
                                  float(v) if v not in ("", "_") else None, src))
    return tuple(rows)


@functools.lru_cache(maxsize=1)
def _index() -> dict:
    idx = {}
    for e in load_names():
        idx.setdefault(_key(e.name), e)
    for e in load_names():
        for a in e.aliases():
            idx.setdefault(_key(a), e)
    return idx


@functools.lru_cache(maxsize=1)
def _by_hip() -> dict:
    out = {}
    for e in load_names():
        out.setdefault(e.hip, e)
    return out


def named_v(hip: int) -> float | None:
    """Ground-based Johnson V of a star named by the IAU-CSN (None if not listed)."""
    e = _by_hip().get(int(hip))
    if e is None or e.source != "iau":
        return None
    return e.v


def entry_for_hip(hip: int) -> NameEntry | None:
    """The names-table row of a HIP number, if any."""
    return _by_hip().get(int(hip))


_HIP_RE = re.compile(r"^\s*(?:hip\s*)?(\d{1,6})\s*$", re.IGNORECASE)


def _normalise_bayer(text: str) -> str:
    """Rewrite ``Theta1 Ori`` / ``the Ori`` style input to the table's key forms."""
    m = re.match(r"^\s*([A-Za-zα-ω]+)\s*(\d*)\s+([A-Za-z]{3})\s*$", text)
    if not m:
        return text
    letter, digits, con = m.group(1).lower(), m.group(2), m.group(3)
    letter = _ALT_GREEK.get(letter, letter)
    for abbr, (full, sym) in GREEK.items():
        if letter in (abbr, full, sym):
            return f"{full}{str(int(digits)) if digits else ''} {con}"
    return text


def resolve(text):
    """Resolve a user's object name.

    Parameters
    ----------
    text : str or int
        A proper name, Bayer/Flamsteed designation, HR/HD number from the
        table, ``HIP n`` / ``n``, or a planet name.

    Returns
    -------
    (kind, value, label) : tuple
        ``("star", hip, label)`` or ``("planet", Planet, label)``.

    Raises
    ------
    calendra.errors.UnknownNameError
        With close matches from the table.
    """
    from calendra.errors import UnknownNameError

    if isinstance(text, (int,)) and not isinstance(text, bool):
        text = str(text)
    s = str(text).strip()
    if _key(s) in PLANETS:
        k = _key(s)
        return "planet", Planet(k, PLANETS[k]), k.capitalize()
    m = _HIP_RE.match(s)
    if m:
        hip = int(m.group(1))
        e = entry_for_hip(hip)
        return "star", hip, (f"{e.name} (HIP {hip})" if e else f"HIP {hip}")
    idx = _index()
    for cand in (s, _normalise_bayer(s)):
        e = idx.get(_key(cand))
        if e is not None:
            return "star", e.hip, f"{e.name} (HIP {e.hip})"
    known = [e.name for e in load_names()] + [p.capitalize() for p in PLANETS]
    raise UnknownNameError("star or planet", s, known)


def search(pattern: str = "", limit: int | None = None) -> list[NameEntry]:
    """Rows whose name or any alias contains ``pattern`` (case- and accent-insensitive)."""
    key = _key(pattern)
    out = []
    for e in load_names():
        if not key or key in _key(e.name) or any(key in _key(a) for a in e.aliases()):
            out.append(e)
    out.sort(key=lambda e: (e.v if e.v is not None else 99.0, e.name))
    return out[:limit] if limit else out
