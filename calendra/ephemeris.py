"""The JPL DE406 ephemeris as a standard SPK kernel for skyfield.

The ``de406`` Python package ships DE406 as NumPy arrays of Chebyshev
coefficients (km, ICRF/J2000 equatorial, one array per body, already split
into equal sub-intervals spanning JD 625360.5 to 2816848.5 TDB).  On first use
this module converts them into an SPK type 2 kernel (see
:mod:`calendra.spk_writer`) in the user's cache directory and loads it with
skyfield, so that ``eph['earth']``, ``eph['moon']``, ``eph['sun']``,
``eph['mars barycenter']`` ... work as with any JPL kernel.  Nothing is ever
downloaded.

Segments of the full kernel (NAIF codes; center -> target):

* 0 -> 1..9: Mercury ... Pluto system barycentres, 0 -> 10: Sun
  (the package's arrays, unchanged);
* 3 -> 301: Moon from the Earth-Moon barycentre, the package's geocentric
  Moon times EMRAT / (1 + EMRAT);
* 3 -> 399: Earth from the Earth-Moon barycentre, the geocentric Moon times
  -1 / (1 + EMRAT);
* 1 -> 199 and 2 -> 299: Mercury and Venus from their barycentres, zero
  (they have no moons), so that ``eph['mercury']`` and ``eph['venus']`` work.

Chebyshev series are linear in their coefficients, so the scaled series are
the same functions (up to one rounding per coefficient).  The lunar series
are stored twice (Earth and Moon), so the kernel is 287 MiB against the
package's 190 MB; building it takes about 1-1.5 s.

Cache and verification
----------------------
The kernel lives in :func:`cache_dir` (``$CALENDRA_CACHE`` or the
platform's user cache directory) beside a JSON sidecar recording its size,
SHA-256, format version and the ``de406`` package version.  Conversion holds
a :class:`filelock.FileLock` on a lock file beside the kernel, writes to a
temporary file in the same directory, fsyncs it and publishes it with
``os.replace``, so a reader sees either no kernel or a complete one and a
second process started at the same time waits and then finds the finished
kernel.

On load the size is compared with the sidecar on every call (one ``stat``),
and the full SHA-256 is computed the first time per process (about 0.2 s
for the 287 MiB kernel); the result is remembered for the file's (device, inode, size,
mtime), so later calls in the process are free and any replacement or
rewrite of the file is hashed again.  A size-and-mtime check alone was
rejected: a kernel damaged in place without a change of mtime (disk errors,
a restored backup) would silently give wrong positions, and one hash per
process is cheap next to any sky search.  A kernel that is missing, fails
either check or has a missing or stale sidecar is rebuilt, never used.
"""

from __future__ import annotations

import functools
import os
import threading
from pathlib import Path

from .errors import EphemerisError, EphemerisRangeError, UnknownNameError

#: Span of DE406 in the ``de406`` package, (jalpha, jomega) as TDB Julian Days.
#: :func:`build_kernel` checks it against the package's own constants.
SPAN_JD = (625360.5, 2816848.5)
#: Version of the kernel layout and sidecar; a change forces a rebuild.
FORMAT_VERSION = 1
#: File name of the full kernel in :func:`cache_dir`.
KERNEL_NAME = "de406.bsp"

_EPHEMERIS_NAME = "DE406"
_SEGMENT_NAME = "DE-0406LE-0406"

#: Selectable segments: target name -> (target code, center code, de406 array
#: or None for a zero offset, scale rule).  The order is the kernel's order.
BODIES = {
    "mercury barycenter": (1, 0, "mercury", None),
    "venus barycenter": (2, 0, "venus", None),
    "earth barycenter": (3, 0, "earthmoon", None),
    "mars barycenter": (4, 0, "mars", None),
    "jupiter barycenter": (5, 0, "jupiter", None),
    "saturn barycenter": (6, 0, "saturn", None),
    "uranus barycenter": (7, 0, "uranus", None),
    "neptune barycenter": (8, 0, "neptune", None),
    "pluto barycenter": (9, 0, "pluto", None),
    "sun": (10, 0, "sun", None),
    "moon": (301, 3, "moon", "moon_share"),
    "earth": (399, 3, "moon", "minus_earth_share"),
    "mercury": (199, 1, None, None),
    "venus": (299, 2, None, None),
}

_state_lock = threading.Lock()
_kernel = None
_verified: dict = {}


# ---------------------------------------------------------------- source data

@functools.lru_cache(maxsize=1)
def _source():
    """Return (directory, constants dict, version) of the installed de406 package."""
    import importlib.metadata

    import numpy as np

    try:
        import de406
        version = importlib.metadata.version("de406")
    except (ImportError, importlib.metadata.PackageNotFoundError):
        raise EphemerisError("the de406 package is not installed (pip install de406)") from None
    directory = Path(de406.__file__).parent
    try:
        constants = {name.decode("ascii"): float(value)
                     for name, value in np.load(directory / "constants.npy")}
    except (OSError, ValueError) as exc:
        raise EphemerisError(f"cannot read the de406 constants: {exc}") from None
    return directory, constants, version


def _julian_label(jd) -> str:
    """Return 'julian YYYY-MM-DD' (astronomical years) of the civil day containing ``jd``."""
    from .daylib import split_jd
    from .julian_gregorian import julian_from_jdn

    jdn, _ = split_jd(jd)
    year, month, day = (int(v) for v in julian_from_jdn(jdn))
    sign = "-" if year < 0 else ""
    return f"julian {sign}{abs(year):04d}-{month:02d}-{day:02d}"


def _span_text() -> str:
    lo, hi = SPAN_JD
    return (f"{_EPHEMERIS_NAME} covers JD {lo} to {hi} ({_julian_label(lo)} to "
            f"{_julian_label(hi)}, astronomical year numbering)")


def check_span(jd_tt) -> None:
    """Raise if any moment lies outside the span of DE406.

    Parameters
    ----------
    jd_tt : float or array_like
        Julian Days, TT (or TDB: the two differ by under 2 ms, which this
        check ignores).  NaN and infinities count as outside.

    Raises
    ------
    EphemerisRangeError
        With ``jd_min, jd_max = SPAN_JD`` and ``mask`` True where a value is
        outside (a 0-d array for scalar input).
    """
    import numpy as np

    jd = np.asarray(jd_tt, dtype=np.float64)
    lo, hi = SPAN_JD
    outside = ~((jd >= lo) & (jd <= hi))
    if not outside.any():
        return
    bad = jd[outside] if jd.ndim else jd.reshape(1)
    first = float(bad[0])
    got = f"JD {first}" + (f" ({_julian_label(first)})" if abs(first) < 1e12 else "")
    if jd.ndim:
        got = f"{bad.size} of {jd.size} values outside, first {got}"
    raise EphemerisRangeError(f"{_span_text()}; got {got}", lo, hi, outside)


# ------------------------------------------------------------------ building

def _selection(bodies, jd_start, jd_end):
    """Normalise a selection of segments and a TDB span; validate both."""
    if bodies is None:
        bodies = list(BODIES)
    else:
        bodies = [bodies] if isinstance(bodies, str) else list(bodies)
        for name in bodies:
            if name not in BODIES:
                raise UnknownNameError("ephemeris body", name, BODIES)
        bodies = [name for name in BODIES if name in bodies]
    if not bodies:
        raise EphemerisError("no ephemeris body selected")
    lo, hi = SPAN_JD
    jd_start = lo if jd_start is None else float(jd_start)
    jd_end = hi if jd_end is None else float(jd_end)
    check_span([jd_start, jd_end])
    if not jd_start < jd_end:
        raise EphemerisError(f"kernel span is empty: JD {jd_start} to {jd_end}")
    return bodies, jd_start, jd_end


def _sidecar_path(path: Path) -> Path:
    return path.with_name(path.name + ".json")


def build_kernel(path, bodies=None, jd_start=None, jd_end=None, progress=None) -> dict:
    """Convert DE406 into an SPK type 2 kernel at ``path`` and write its sidecar.

    The kernel is written to a temporary file in the same directory, checked
    by opening it as an SPK file, fsynced and renamed over ``path``; then the
    sidecar ``path + '.json'`` is written the same way.  On any failure
    nothing is left at ``path`` that was not there before.

    Parameters
    ----------
    path : str or os.PathLike
        Destination of the kernel.
    bodies : iterable of str, optional
        Target names of the segments to include, keys of :data:`BODIES`
        (``'earth'`` and ``'moon'`` are relative to ``'earth barycenter'``,
        ``'mercury'``/``'venus'`` to their barycentres); default all.
    jd_start, jd_end : float, optional
        Span to cover, TDB Julian Days within :data:`SPAN_JD`; default the
        whole span.  Whole Chebyshev intervals covering it are copied; the
        segment summaries claim exactly ``[jd_start, jd_end]`` (stored as
        seconds past J2000 TDB).
    progress : callable, optional
        ``progress(done, total, label)``: records written so far, records in
        total, and the segment being written.  An exception it raises aborts
        the build (the temporary file is removed) and propagates unchanged.

    Returns
    -------
    dict
        The sidecar's content: ``size`` (bytes), ``sha256``, versions,
        ``bodies`` and the span ``jd_start``/``jd_end`` (TDB).

    Raises
    ------
    EphemerisError
        If the source cannot be read or the kernel cannot be written.
    EphemerisRangeError
        If the requested span leaves :data:`SPAN_JD`.
    UnknownNameError
        For a body not in :data:`BODIES`.
    """
    import json

    import numpy as np
    from jplephem.spk import SPK

    from .spk_writer import chebyshev_segments, sha256_file, write_atomic, write_spk

    path = Path(path)
    bodies, jd_start, jd_end = _selection(bodies, jd_start, jd_end)
    directory, constants, version = _source()
    if (constants.get("jalpha"), constants.get("jomega")) != SPAN_JD:
        raise EphemerisError(f"de406 package {version} spans JD {constants.get('jalpha')} to "
                             f"{constants.get('jomega')}, expected {SPAN_JD[0]} to {SPAN_JD[1]}")
    comment = (f"{_EPHEMERIS_NAME} converted by calendra from the de406 Python package "
               f"{version}.\nSpan JD {jd_start} to {jd_end} TDB.\nPositions in km, frame "
               f"J2000 (ICRF), times in seconds past J2000 TDB.\nEarth and Moon relative to "
               f"the Earth-Moon barycentre with EMRAT = {constants['EMRAT']!r}.\n"
               f"Kernel format version {FORMAT_VERSION}.\n")
    meta = {"format_version": FORMAT_VERSION, "ephemeris": _EPHEMERIS_NAME,
            "source_package": "de406", "source_version": version,
            "bodies": bodies, "jd_start": jd_start, "jd_end": jd_end}

    earth_share = 1.0 / (1.0 + constants["EMRAT"])
    scales = {None: 1.0, "moon_share": constants["EMRAT"] * earth_share,
              "minus_earth_share": -earth_share}

    def write_kernel(file, tmp):
        arrays, sources = {}, []
        for name in bodies:
            target, center, source, rule = BODIES[name]
            if source is not None and source not in arrays:
                arrays[source] = np.load(directory / f"jpl-{source}.npy", mmap_mode="r")
            sources.append((name, target, center, arrays.get(source), scales[rule]))
        segments = chebyshev_segments(sources, SPAN_JD, jd_start, jd_end, _SEGMENT_NAME)
        write_spk(file, segments, internal_name=f"{_EPHEMERIS_NAME} (calendra)",
                  comment=comment, progress=progress)
        file.flush()
        spk = SPK.open(str(tmp))
        try:
            found = [(s.center, s.target) for s in spk.segments]
        finally:
            spk.close()
        if found != [BODIES[name][1::-1] for name in bodies]:
            raise EphemerisError(f"kernel written to {tmp} reads back wrong segments {found}")
        meta["size"] = os.fstat(file.fileno()).st_size
        meta["sha256"] = sha256_file(tmp)

    try:
        write_atomic(path, write_kernel)
        write_atomic(_sidecar_path(path),
                     lambda file, tmp: file.write(json.dumps(meta, indent=1).encode("ascii")))
    except (OSError, ValueError) as exc:
        raise EphemerisError(f"cannot build the DE406 kernel {path}: {exc}") from None
    return meta


# -------------------------------------------------------- cache and loading

def cache_dir() -> Path:
    """Return the cache directory, creating it: ``$CALENDRA_CACHE`` or the user cache dir."""
    env = os.environ.get("CALENDRA_CACHE")
    if env:
        directory = Path(env).expanduser()
    else:
        import platformdirs
        directory = Path(platformdirs.user_cache_dir("calendra"))
    try:
        directory.mkdir(parents=True, exist_ok=True)
    except OSError as exc:
        raise EphemerisError(f"cannot create the cache directory {directory}: {exc}") from None
    return directory


def _kernel_path(bodies, jd_start, jd_end) -> Path:
    if bodies == list(BODIES) and (jd_start, jd_end) == SPAN_JD:
        return cache_dir() / KERNEL_NAME
    import hashlib
    tag = hashlib.sha256(repr((bodies, jd_start, jd_end)).encode()).hexdigest()[:12]
    return cache_dir() / f"de406-{tag}.bsp"


def _problem(path: Path, bodies, jd_start, jd_end, version):
    """Return why the kernel at ``path`` cannot be used, or None if it is good."""
    import json

    try:
        stat = path.stat()
    except FileNotFoundError:
        return "missing"
    try:
        meta = json.loads(_sidecar_path(path).read_text("ascii"))
    except (OSError, ValueError):
        return "no readable sidecar"
    wanted = {"format_version": FORMAT_VERSION, "source_version": version,
              "bodies": bodies, "jd_start": jd_start, "jd_end": jd_end}
    if not isinstance(meta, dict) or any(meta.get(k) != v for k, v in wanted.items()):
        return "stale sidecar"
    if meta.get("size") != stat.st_size:
        return f"size {stat.st_size} bytes instead of {meta.get('size')}"
    key = (str(path), stat.st_dev, stat.st_ino, stat.st_size, stat.st_mtime_ns, meta.get("sha256"))
    if _verified.get(str(path)) == key:
        return None
    from .spk_writer import sha256_file

    try:
        if sha256_file(path) != meta.get("sha256"):
            return "checksum mismatch"
    except OSError as exc:
        return f"unreadable ({exc})"
    _verified[str(path)] = key
    return None


def _stderr_progress():
    import sys
    import time

    start = time.monotonic()
    shown = [-1]
    tty = sys.stderr.isatty()

    def report(done, total, label):
        percent = 100 * done // max(total, 1)
        if percent == shown[0] or (not tty and shown[0] >= 0 and percent < 100):
            return  # on a terminal every percent, in a log only the first and last line
        shown[0] = percent
        end = "\n" if percent == 100 else ("\r" if tty else "\n")
        sys.stderr.write(f"calendra: building DE406 kernel {percent:3d}% ({label}, "
                         f"{time.monotonic() - start:.1f} s){end}")
        sys.stderr.flush()
    return report


def ensure_kernel(progress=None, *, bodies=None, jd_start=None, jd_end=None) -> Path:
    """Return the path of a verified kernel in the cache, building it if needed.

    Parameters
    ----------
    progress : callable, optional
        ``progress(done: int, total: int, label: str)``, called only while
        building; by default a progress line is written to standard error.
    bodies, jd_start, jd_end
        A smaller kernel (segments and TDB Julian-Day span) as for
        :func:`build_kernel`; the default, the full kernel, is
        ``cache_dir() / KERNEL_NAME``.  Other selections get their own file.

    Returns
    -------
    pathlib.Path

    Raises
    ------
    EphemerisError
        If the kernel cannot be built or the lock cannot be taken.
    """
    bodies, jd_start, jd_end = _selection(bodies, jd_start, jd_end)
    version = _source()[2]
    path = _kernel_path(bodies, jd_start, jd_end)
    if _verified.get(str(path)) is not None and _problem(path, bodies, jd_start, jd_end, version) is None:
        return path
    import filelock

    lock = filelock.FileLock(str(path.with_name(path.name + ".lock")), timeout=1800)
    try:
        with lock:
            if _problem(path, bodies, jd_start, jd_end, version) is None:
                return path
            _verified.pop(str(path), None)
            for stale in path.parent.glob(f".{path.name}*.tmp"):
                stale.unlink(missing_ok=True)  # left by a build that died; we hold the lock
            build_kernel(path, bodies, jd_start, jd_end,
                         progress=progress if progress is not None else _stderr_progress())
            problem = _problem(path, bodies, jd_start, jd_end, version)
            if problem is not None:
                raise EphemerisError(f"kernel {path} failed verification right after building: {problem}")
    except filelock.Timeout:
        raise EphemerisError(f"timed out waiting for the lock {lock.lock_file}") from None
    return path


def load_ephemeris():
    """Return DE406 as a :class:`skyfield.jpllib.SpiceKernel`, loaded once per process.

    Positions are in km, ICRF; skyfield evaluates the segments at TDB.
    The kernel is built (a few seconds) on first use; see :func:`ensure_kernel`.
    """
    global _kernel
    with _state_lock:
        if _kernel is None:
            path = ensure_kernel()
            from skyfield.jpllib import SpiceKernel
            try:
                _kernel = SpiceKernel(str(path))
            except (OSError, ValueError) as exc:
                raise EphemerisError(f"cannot open the DE406 kernel {path}: {exc}") from None
        return _kernel


def reset_cache() -> None:
    """Close and forget the loaded kernel and the per-process verification results.

    Meant for tests.  Positions can no longer be computed from the closed
    kernel; the next :func:`load_ephemeris` opens (and verifies) it again.
    """
    global _kernel
    with _state_lock:
        if _kernel is not None:
            _kernel.close()
        _kernel = None
        _verified.clear()


def provenance() -> dict:
    """Describe the ephemeris: name, TDB span as JD and Julian dates, kernel path, source version.

    Does not build the kernel; ``kernel_sha256`` is None until it is built.
    """
    import json

    lo, hi = SPAN_JD
    path = cache_dir() / KERNEL_NAME
    try:
        sha = json.loads(_sidecar_path(path).read_text("ascii")).get("sha256")
    except (OSError, ValueError, AttributeError):
        sha = None
    return {
        "ephemeris": _EPHEMERIS_NAME,
        "span_jd": [lo, hi],
        "time_scale": "TDB",
        "span_dates": [_julian_label(lo), _julian_label(hi)],
        "year_numbering": "astronomical (year 0 = 1 BC)",
        "kernel_path": str(path),
        "kernel_sha256": sha,
        "format_version": FORMAT_VERSION,
        "source_package": "de406",
        "source_version": _source()[2],
    }
