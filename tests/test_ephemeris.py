"""Tests of calendra.ephemeris and calendra.spk_writer.

The full kernel (all bodies, whole span) is built at most once per session,
in the default cache (``$CALENDRA_CACHE`` if the environment sets it), by the
module-scoped fixture ``full_kernel``.  Tests of building, verification,
corruption and concurrency use a small kernel (few bodies, ~3 years) in a
``tmp_path`` cache.
"""

from __future__ import annotations

import importlib.metadata
import json
import os
import subprocess
import sys
import time
import warnings
from pathlib import Path

import numpy as np
import pytest

from calendra import ephemeris
from calendra.errors import EphemerisError, EphemerisRangeError, UnknownNameError
from calendra.spk_writer import sha256_file

ROOT = Path(__file__).resolve().parents[1]

#: A small kernel: enough for geocentric Sun and Moon, 1998-07 to 2001-04.
SMALL = dict(bodies=["earth barycenter", "sun", "moon", "earth"],
             jd_start=2451000.5, jd_end=2452000.5)


# ------------------------------------------------------------------ helpers

def _de406_package():
    import de406
    from jplephem.ephem import Ephemeris

    return Ephemeris(de406)


def _timescale():
    from skyfield.api import load

    return load.timescale(builtin=True)


def _angle_arcsec(u, v):
    """Angle between vectors (3, n) in arcseconds, robust for tiny angles."""
    cross = np.linalg.norm(np.cross(u, v, axis=0), axis=0)
    dot = np.sum(u * v, axis=0)
    return np.degrees(np.arctan2(cross, dot)) * 3600.0


def _meeus_julian_date(jd):
    """Julian-calendar (year, month, day) of a JD; Meeus, Astronomical Algorithms, ch. 7 (A = Z)."""
    z = int(jd + 0.5)
    f = jd + 0.5 - z
    b = z + 1524
    c = int((b - 122.1) / 365.25)
    d = int(365.25 * c)
    e = int((b - d) / 30.6001)
    day = b - d - int(30.6001 * e) + f
    month = e - 1 if e < 14 else e - 13
    year = c - 4716 if month > 2 else c - 4715
    return year, month, int(day)


class _Recorder:
    def __init__(self):
        self.calls = []

    def __call__(self, done, total, label):
        self.calls.append((done, total, label))


@pytest.fixture(scope="module")
def full_kernel():
    """The full kernel from the default cache, opened with skyfield (built if needed)."""
    from skyfield.jpllib import SpiceKernel

    path = ephemeris.ensure_kernel()
    kernel = SpiceKernel(str(path))
    yield kernel
    kernel.close()


@pytest.fixture(scope="module")
def de421():
    import skyfield_data
    from skyfield.api import load_file

    with warnings.catch_warnings():
        # The package warns that its Earth-orientation file (not used here) is out of date.
        warnings.filterwarnings("ignore", message=".*finals2000A.*", category=RuntimeWarning)
        directory = skyfield_data.get_skyfield_data_path()
    kernel = load_file(os.path.join(directory, "de421.bsp"))
    yield kernel
    kernel.close()


@pytest.fixture
def small_cache(tmp_path, monkeypatch):
    """An empty cache directory and a fresh per-process verification memory."""
    cache = tmp_path / "cache"
    monkeypatch.setenv("CALENDRA_CACHE", str(cache))
    monkeypatch.setattr(ephemeris, "_verified", {})
    return cache


def _forget_verification(monkeypatch):
    """Make the next ensure_kernel behave as in a new process."""
    monkeypatch.setattr(ephemeris, "_verified", {})


def _temporaries(directory):
    return sorted(p.name for p in Path(directory).glob("*.tmp"))


# ---------------------------------------------------------- span and errors

def test_span_is_the_package_span():
    # Reference: the de406 package's constants.npy (jalpha, jomega).
    directory, constants, version = ephemeris._source()
    assert ephemeris.SPAN_JD == (constants["jalpha"], constants["jomega"])
    assert version == importlib.metadata.version("de406")


def test_check_span_accepts_the_span():
    lo, hi = ephemeris.SPAN_JD
    ephemeris.check_span(lo)
    ephemeris.check_span(hi)
    ephemeris.check_span(np.linspace(lo, hi, 101))
    ephemeris.check_span(2451545.0)


@pytest.mark.parametrize("jd", [625360.4, 2816848.6, 1e7, -1e20, float("nan"), float("inf")])
def test_check_span_rejects_scalar(jd):
    with pytest.raises(EphemerisRangeError) as info:
        ephemeris.check_span(jd)
    err = info.value
    # Reference dates: Meeus, Astronomical Algorithms, ch. 7, Julian calendar branch.
    y0, m0, d0 = _meeus_julian_date(625360.5)
    y1, m1, d1 = _meeus_julian_date(2816848.5)
    message = str(err)
    assert "JD 625360.5 to 2816848.5" in message
    assert f"julian {y0:05d}-{m0:02d}-{d0:02d}" in message  # -3000-02-23
    assert f"julian {y1:04d}-{m1:02d}-{d1:02d}" in message  # 3000-02-11
    assert "astronomical year numbering" in message
    assert f"got JD {float(jd)}" in message
    assert (err.jd_min, err.jd_max) == ephemeris.SPAN_JD
    assert bool(err.mask)
    assert "\n" not in message


def test_check_span_rejects_array_with_mask():
    jd = np.array([[2451545.0, 600000.0], [3e6, 2816848.5]])
    with pytest.raises(EphemerisRangeError) as info:
        ephemeris.check_span(jd)
    np.testing.assert_array_equal(info.value.mask, [[False, True], [True, False]])
    assert "2 of 4 values outside, first JD 600000.0" in str(info.value)
    # Reference: Meeus ch. 7 gives julian -3070-03-27 for JD 600000.0.
    y, m, d = _meeus_julian_date(600000.0)
    assert f"(julian {y:05d}-{m:02d}-{d:02d})" in str(info.value)


def test_provenance_describes_the_ephemeris():
    info = ephemeris.provenance()
    assert info["ephemeris"] == "DE406"
    assert info["span_jd"] == list(ephemeris.SPAN_JD)
    assert info["time_scale"] == "TDB"
    y0, m0, d0 = _meeus_julian_date(ephemeris.SPAN_JD[0])  # Meeus ch. 7
    assert info["span_dates"][0] == f"julian {y0:05d}-{m0:02d}-{d0:02d}"
    assert info["kernel_path"] == str(ephemeris.cache_dir() / ephemeris.KERNEL_NAME)
    assert info["source_version"] == importlib.metadata.version("de406")
    json.dumps(info)


def test_cache_dir_from_environment(tmp_path, monkeypatch):
    target = tmp_path / "a" / "b"
    monkeypatch.setenv("CALENDRA_CACHE", str(target))
    assert ephemeris.cache_dir() == target
    assert target.is_dir()


def test_cache_dir_default(monkeypatch):
    import platformdirs

    monkeypatch.delenv("CALENDRA_CACHE", raising=False)
    assert ephemeris.cache_dir() == Path(platformdirs.user_cache_dir("calendra"))


def test_import_is_cheap():
    code = ("import sys, calendra.ephemeris; "
            "print([m for m in ('skyfield', 'jplephem', 'numpy', 'filelock', 'platformdirs') "
            "if m in sys.modules])")
    out = subprocess.run([sys.executable, "-c", code], cwd=ROOT, capture_output=True, text=True,
                         env={**os.environ, "PYTHONPATH": str(ROOT)}, check=True)
    assert out.stdout.strip() == "[]"


# ----------------------------------------------------------- full kernel

def test_full_kernel_structure(full_kernel):
    from jplephem.spk import SPK

    spk = SPK.open(full_kernel.path)
    try:
        pairs = [(s.center, s.target) for s in spk.segments]
        assert pairs == [(0, t) for t in range(1, 11)] + [(3, 301), (3, 399), (1, 199), (2, 299)]
        for s in spk.segments:
            assert (s.frame, s.data_type) == (1, 2)
            assert (s.start_jd, s.end_jd) == ephemeris.SPAN_JD
        assert "de406 Python package " + importlib.metadata.version("de406") in spk.comments()
    finally:
        spk.close()
    meta = json.loads(Path(full_kernel.path + ".json").read_text())
    assert meta["size"] == os.path.getsize(full_kernel.path)
    assert meta["format_version"] == ephemeris.FORMAT_VERSION


def test_full_kernel_equals_package_evaluation(full_kernel):
    # Reference: the de406 package's own Chebyshev evaluation (jplephem.ephem.Ephemeris).
    de = _de406_package()
    ts = _timescale()
    lo, hi = ephemeris.SPAN_JD
    rng = np.random.default_rng(406)
    boundaries = lo + 64.0 * rng.integers(0, 34242, 20)  # record boundaries of every body
    jd = np.concatenate([[lo, hi], boundaries, rng.uniform(lo, hi, 3000)])
    t = ts.tdb_jd(jd)
    tolerance_km = 1e-3  # 1 m
    for name, source in [("mercury barycenter", "mercury"), ("venus barycenter", "venus"),
                         ("earth barycenter", "earthmoon"), ("mars barycenter", "mars"),
                         ("jupiter barycenter", "jupiter"), ("saturn barycenter", "saturn"),
                         ("uranus barycenter", "uranus"), ("neptune barycenter", "neptune"),
                         ("pluto barycenter", "pluto"), ("sun", "sun"), ("mercury", "mercury"),
                         ("venus", "venus")]:
        got = full_kernel[name].at(t).position.km
        assert np.max(np.abs(got - de.position(source, jd))) < tolerance_km, name
    geocentric_moon = de.position("moon", jd)
    earth = de.position("earthmoon", jd) - geocentric_moon * de.earth_share
    got = full_kernel["earth"].at(t).position.km
    assert np.max(np.abs(got - earth)) < tolerance_km
    got = (full_kernel["moon"] - full_kernel["earth"]).at(t).position.km
    assert np.max(np.abs(got - geocentric_moon)) < tolerance_km


def test_full_kernel_apparent_positions_match_de421(full_kernel, de421):
    # Reference: JPL DE421 (de421.bsp from the skyfield-data package).  The
    # Moon, Sun and Mars agree within 0.1" (measured: 0.022", 0.002", 0.003").
    # Jupiter's barycentre differs by up to ~80 km (0.13") around 1900 and under
    # 0.1" from 1950 on: DE421 fitted Jupiter's orbit to spacecraft data that
    # DE406 (1997) lacked; an error of the conversion would show as arcseconds.
    tolerance = {"moon": 0.1, "sun": 0.1, "mars barycenter": 0.1, "jupiter barycenter": 0.15}
    ts = _timescale()
    t = ts.tt(np.array([1900, 1925, 1950, 1969, 1987, 2000, 2012, 2025, 2050]),
              np.array([3, 7, 1, 7, 11, 1, 6, 2, 12]), np.array([1, 15, 10, 20, 3, 1, 6, 28, 31]))
    for body in tolerance:
        ours = full_kernel["earth"].at(t).observe(full_kernel[body]).apparent()
        ref = de421["earth"].at(t).observe(de421[body]).apparent()
        ra1, dec1, _ = ours.radec("date")
        ra2, dec2, _ = ref.radec("date")
        u = np.array([np.cos(dec1.radians) * np.cos(ra1.radians),
                      np.cos(dec1.radians) * np.sin(ra1.radians), np.sin(dec1.radians)])
        v = np.array([np.cos(dec2.radians) * np.cos(ra2.radians),
                      np.cos(dec2.radians) * np.sin(ra2.radians), np.sin(dec2.radians)])
        separation = _angle_arcsec(u, v)
        assert np.max(separation) < tolerance[body], (body, separation)
        if body == "jupiter barycenter":
            assert np.max(separation[t.J >= 1950]) < 0.1


def test_full_kernel_covers_its_span_only(full_kernel):
    from skyfield.errors import EphemerisRangeError as SkyfieldRangeError

    ts = _timescale()
    lo, hi = ephemeris.SPAN_JD
    full_kernel["moon"].at(ts.tdb_jd(lo))
    full_kernel["moon"].at(ts.tdb_jd(hi))
    with pytest.raises(SkyfieldRangeError):
        full_kernel["moon"].at(ts.tdb_jd(lo - 30.0))
    with pytest.raises(SkyfieldRangeError):
        full_kernel["sun"].at(ts.tdb_jd(hi + 100.0))


def test_load_ephemeris_is_cached_and_resettable(full_kernel, monkeypatch):
    # Isolated from any kernel another test module holds: monkeypatch restores both.
    monkeypatch.setattr(ephemeris, "_kernel", None)
    monkeypatch.setattr(ephemeris, "_verified", {})
    first = ephemeris.load_ephemeris()
    assert ephemeris.load_ephemeris() is first
    assert Path(first.path) == Path(full_kernel.path)
    ts = _timescale()
    position = first["moon"].at(ts.tdb_jd(2451545.0)).position.km
    ephemeris.reset_cache()
    assert first.segments == []  # closed
    second = ephemeris.load_ephemeris()
    assert second is not first
    np.testing.assert_array_equal(second["moon"].at(ts.tdb_jd(2451545.0)).position.km, position)
    ephemeris.reset_cache()


# ---------------------------------------------------------- small kernels

def test_small_kernel_equals_package_evaluation(tmp_path):
    from skyfield.errors import EphemerisRangeError as SkyfieldRangeError
    from skyfield.jpllib import SpiceKernel

    path = tmp_path / "small.bsp"
    recorder = _Recorder()
    meta = ephemeris.build_kernel(path, progress=recorder, **SMALL)
    assert meta["size"] == path.stat().st_size
    assert meta["sha256"] == sha256_file(path)
    assert json.loads((tmp_path / "small.bsp.json").read_text()) == meta
    dones = [c[0] for c in recorder.calls]
    assert dones == sorted(dones) and dones[-1] == recorder.calls[-1][1]
    # Intervals overlapping JD 2451000.5-2452000.5 (counted by hand from jalpha):
    # EMB 32 d: 57051..57082, Sun 64 d: 28525..28541, Moon and Earth 8 d: 228205..228329.
    assert recorder.calls[-1][1] == 32 + 17 + 125 + 125
    assert path.stat().st_size < 200_000

    # Reference: the de406 package's own Chebyshev evaluation (jplephem.ephem.Ephemeris).
    de = _de406_package()
    ts = _timescale()
    jd = np.concatenate([[SMALL["jd_start"], SMALL["jd_end"]],
                         np.random.default_rng(7).uniform(SMALL["jd_start"], SMALL["jd_end"], 500)])
    t = ts.tdb_jd(jd)
    kernel = SpiceKernel(str(path))
    try:
        got = (kernel["moon"] - kernel["earth"]).at(t).position.km
        assert np.max(np.abs(got - de.position("moon", jd))) < 1e-3
        got = kernel["sun"].at(t).position.km
        assert np.max(np.abs(got - de.position("sun", jd))) < 1e-3
        with pytest.raises(SkyfieldRangeError):
            kernel["sun"].at(ts.tdb_jd(SMALL["jd_end"] + 400.0))
        with pytest.raises(KeyError):
            kernel["mars barycenter"]
    finally:
        kernel.close()


def test_ensure_kernel_builds_once_then_reuses(small_cache, monkeypatch):
    first = _Recorder()
    path = ephemeris.ensure_kernel(progress=first, **SMALL)
    assert path.parent == small_cache and first.calls
    mtime = path.stat().st_mtime_ns
    again = _Recorder()
    assert ephemeris.ensure_kernel(progress=again, **SMALL) == path
    _forget_verification(monkeypatch)  # as a new process: hashes, does not rebuild
    assert ephemeris.ensure_kernel(progress=again, **SMALL) == path
    assert again.calls == [] and path.stat().st_mtime_ns == mtime
    assert _temporaries(small_cache) == []
    # A different selection is a different file.
    other = ephemeris.ensure_kernel(progress=_Recorder(), bodies=["sun"],
                                    jd_start=2451000.5, jd_end=2451100.5)
    assert other != path and other.exists() and path.exists()


def test_default_progress_goes_to_stderr_only_while_building(small_cache, capfd):
    ephemeris.ensure_kernel(**SMALL)
    err = capfd.readouterr().err
    assert "building DE406 kernel" in err and "100%" in err
    ephemeris.ensure_kernel(**SMALL)
    assert capfd.readouterr().err == ""


def _assert_good(path):
    meta = json.loads(Path(str(path) + ".json").read_text())
    assert meta["size"] == path.stat().st_size
    assert meta["sha256"] == sha256_file(path)


def test_flipped_bytes_are_detected_and_rebuilt(small_cache, monkeypatch):
    path = ephemeris.ensure_kernel(progress=_Recorder(), **SMALL)
    original = path.read_bytes()
    stat = path.stat()
    data = bytearray(original)
    for offset in (5000, 60000):  # inside coefficient records
        data[offset] ^= 0xFF
    path.write_bytes(bytes(data))
    os.utime(path, ns=(stat.st_atime_ns, stat.st_mtime_ns))  # same size and mtime: only the hash sees it
    _forget_verification(monkeypatch)
    rebuild = _Recorder()
    assert ephemeris.ensure_kernel(progress=rebuild, **SMALL) == path
    assert rebuild.calls
    assert path.read_bytes() == original  # the build is deterministic
    _assert_good(path)


def test_rewritten_kernel_is_rechecked_in_the_same_process(small_cache):
    path = ephemeris.ensure_kernel(progress=_Recorder(), **SMALL)
    original = path.read_bytes()
    data = bytearray(original)
    data[len(data) // 2] ^= 0x01
    time.sleep(0.01)
    path.write_bytes(bytes(data))  # new mtime: the per-process memory no longer applies
    rebuild = _Recorder()
    ephemeris.ensure_kernel(progress=rebuild, **SMALL)
    assert rebuild.calls and path.read_bytes() == original


def test_truncated_kernel_is_rebuilt(small_cache):
    path = ephemeris.ensure_kernel(progress=_Recorder(), **SMALL)
    original = path.read_bytes()
    with open(path, "r+b") as file:
        file.truncate(len(original) // 2)
    rebuild = _Recorder()
    ephemeris.ensure_kernel(progress=rebuild, **SMALL)
    assert rebuild.calls and path.read_bytes() == original


@pytest.mark.parametrize("damage", ["delete", "garbage", "stale_version", "wrong_bodies"])
def test_missing_or_stale_sidecar_forces_rebuild(small_cache, monkeypatch, damage):
    path = ephemeris.ensure_kernel(progress=_Recorder(), **SMALL)
    sidecar = Path(str(path) + ".json")
    meta = json.loads(sidecar.read_text())
    if damage == "delete":
        sidecar.unlink()
    elif damage == "garbage":
        sidecar.write_text("{not json")
    elif damage == "stale_version":
        sidecar.write_text(json.dumps({**meta, "source_version": "0.0"}))
    else:
        sidecar.write_text(json.dumps({**meta, "bodies": ["sun"]}))
    _forget_verification(monkeypatch)
    rebuild = _Recorder()
    ephemeris.ensure_kernel(progress=rebuild, **SMALL)
    assert rebuild.calls
    assert json.loads(sidecar.read_text()) == meta


def test_leftover_temporary_files_are_removed(small_cache):
    small_cache.mkdir(parents=True)
    path = ephemeris._kernel_path(*ephemeris._selection(SMALL["bodies"], SMALL["jd_start"],
                                                         SMALL["jd_end"]))
    stale = small_cache / f".{path.name}.k3j4h5.tmp"
    stale.write_bytes(b"half a kernel")
    unrelated = small_cache / "notes.tmp"
    unrelated.write_bytes(b"not ours")
    ephemeris.ensure_kernel(progress=_Recorder(), **SMALL)
    assert not stale.exists() and unrelated.exists()


def test_failed_build_leaves_nothing(small_cache):
    small_cache.mkdir(parents=True)

    def explode(done, total, label):
        raise RuntimeError("stop")

    with pytest.raises(RuntimeError, match="stop"):
        ephemeris.ensure_kernel(progress=explode, **SMALL)
    assert list(small_cache.glob("*.bsp")) == [] and list(small_cache.glob("*.json")) == []
    assert list(small_cache.glob(".*")) == []


def test_failed_rebuild_keeps_the_old_file_whole(tmp_path):
    path = tmp_path / "k.bsp"
    ephemeris.build_kernel(path, **SMALL)
    before = path.read_bytes()

    def explode(done, total, label):
        if done > total // 2:
            raise KeyboardInterrupt

    with pytest.raises(KeyboardInterrupt):
        ephemeris.build_kernel(path, progress=explode, **SMALL)
    assert path.read_bytes() == before
    assert _temporaries(tmp_path) == [] and list(tmp_path.glob(".*")) == []


def test_build_errors_are_one_line_ephemeris_errors(tmp_path):
    with pytest.raises(EphemerisError) as info:
        ephemeris.build_kernel(tmp_path / "missing-dir" / "k.bsp", **SMALL)
    assert "\n" not in str(info.value) and "missing-dir" in str(info.value)
    with pytest.raises(UnknownNameError):
        ephemeris.build_kernel(tmp_path / "k.bsp", bodies=["vulcan"])
    with pytest.raises(EphemerisRangeError):
        ephemeris.build_kernel(tmp_path / "k.bsp", jd_start=600000.5, jd_end=700000.5)
    with pytest.raises(EphemerisError):
        ephemeris.build_kernel(tmp_path / "k.bsp", jd_start=2451000.5, jd_end=2451000.5)
    assert list(tmp_path.iterdir()) == []


_CHILD = r"""
import json, sys, time
from pathlib import Path
from calendra import ephemeris
from calendra.spk_writer import sha256_file

sync = Path(sys.argv[1])
(sync / ("ready-" + sys.argv[2])).touch()
deadline = time.monotonic() + 60
while not (sync / "go").exists():
    if time.monotonic() > deadline:
        sys.exit("no go signal")
    time.sleep(0.002)
calls = []
def progress(done, total, label):
    if not calls:
        time.sleep(0.5)  # hold the lock long enough for the other process to wait on it
    calls.append(done)
path = ephemeris.ensure_kernel(progress=progress, bodies=json.loads(sys.argv[3]),
                               jd_start=float(sys.argv[4]), jd_end=float(sys.argv[5]))
print(json.dumps({"built": bool(calls), "path": str(path), "sha256": sha256_file(path)}))
"""


def test_two_processes_on_an_empty_cache_build_once(tmp_path):
    cache = tmp_path / "cache"
    sync = tmp_path / "sync"
    sync.mkdir()
    env = {**os.environ, "CALENDRA_CACHE": str(cache), "PYTHONPATH": str(ROOT)}
    args = [json.dumps(SMALL["bodies"]), str(SMALL["jd_start"]), str(SMALL["jd_end"])]
    children = [subprocess.Popen([sys.executable, "-c", _CHILD, str(sync), str(i), *args],
                                 env=env, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True)
                for i in range(2)]
    try:
        deadline = time.monotonic() + 60
        while len(list(sync.glob("ready-*"))) < 2:
            assert time.monotonic() < deadline, "children did not start"
            assert all(c.poll() is None for c in children), [c.communicate() for c in children]
            time.sleep(0.005)
        (sync / "go").touch()
        outputs = [c.communicate(timeout=120) for c in children]
    finally:
        for c in children:
            if c.poll() is None:
                c.kill()
    assert [c.returncode for c in children] == [0, 0], outputs
    results = [json.loads(out) for out, err in outputs]
    assert sorted(r["built"] for r in results) == [False, True]
    assert results[0]["path"] == results[1]["path"]
    path = Path(results[0]["path"])
    meta = json.loads(Path(str(path) + ".json").read_text())
    assert results[0]["sha256"] == results[1]["sha256"] == meta["sha256"]
    _assert_good(path)
    assert _temporaries(cache) == []
    assert sorted(p.name for p in cache.iterdir()) == sorted(
        [path.name, path.name + ".json", path.name + ".lock"])
