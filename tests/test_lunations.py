"""Lunar phases and lunation numbers: published examples, other libraries, invariants, the detector."""

import json
import warnings

import numpy as np
import pytest

from calendra.ephemeris import SPAN_JD, load_ephemeris
from calendra.errors import EphemerisRangeError, ParameterError
from calendra.lunations import (BROWN_OFFSET, PHASE_NAMES, lunar_phases, mean_phase_jde,
                                moon_sun_elongation, predicted_phase_jde)

ONE_SECOND = 1.0 / 86400.0
J2000 = 2451545.0


def year_start(year):
    """Approximate TT Julian Day of the start of an astronomical year (Julian years from J2000)."""
    return J2000 + (year - 2000) * 365.25


@pytest.fixture(scope="module")
def all_phases():
    """Every phase of the span of DE406, in one call."""
    return lunar_phases(*SPAN_JD)


# ------------------------------------------------------------ published examples

def test_meeus_example_49a_new_moon_1977_february():
    # Source: Meeus, Astronomical Algorithms 2nd ed., Ex. 49.a: k = -283, mean phase
    # JDE 2443192.94102, true new moon JDE 2443192.65118 (1977 Feb 18, 3h37m42s TD).
    assert float(mean_phase_jde(-283)) == pytest.approx(2443192.94102, abs=1e-5)
    found = lunar_phases(2443180.5, 2443200.5, "new")
    assert found.lunation.tolist() == [-283]
    # Meeus' true phase is a truncated series (errors of seconds, rarely tens of seconds,
    # against a full lunar theory); DE406 is the reference here.
    assert abs(found.jd_tt[0] - 2443192.65118) < 60 * ONE_SECOND


def test_meeus_example_49b_last_quarter_2044_january():
    # Source: Meeus, Astronomical Algorithms 2nd ed., Ex. 49.b: k = 544.75, mean phase
    # JDE 2467636.88597, true last quarter JDE 2467636.49186.
    assert float(mean_phase_jde(544.75)) == pytest.approx(2467636.88597, abs=1e-5)
    found = lunar_phases(2467630.5, 2467640.5, "last-quarter")
    assert found.k.tolist() == [544.75]
    assert abs(found.jd_tt[0] - 2467636.49186) < 60 * ONE_SECOND


def test_lunation_number_conventions():
    # Convention (Meeus ch. 49): k = 0 is the new moon of 2000 January 6 (JDE 2451550.26).
    new = lunar_phases(2451545.0, 2451560.0, "new")
    assert new.lunation.tolist() == [0]
    assert 2451550.0 < new.jd_tt[0] < 2451551.0
    # Convention (E. W. Brown, 1933): Brown lunation 1 began with the new moon of 1923 January 17
    # (JD 2423436.6).  Brown = Meeus + 953.
    new = lunar_phases(2423430.5, 2423445.5, "new")
    assert new.brown_lunation.tolist() == [1]
    assert 2423436.5 < new.jd_tt[0] < 2423437.5
    assert BROWN_OFFSET == 953


def test_predictor_is_close_and_refinement_lands_on_the_predicted_phase(all_phases):
    # Meeus' mean phase with the leading corrections is within about an hour of DE406
    # everywhere in the span; Newton refinement must not wander to a neighbouring phase.
    guess = predicted_phase_jde(all_phases.k)
    assert np.max(np.abs(guess - all_phases.jd_tt)) < 2.0 / 24.0
    assert np.all(all_phases.residual_s < 0.1)


# ------------------------------------------------------------ skyfield, same kernel

@pytest.mark.parametrize("year", [-1000, 0, 1000, 2000, 2900])
def test_skyfield_moon_phases_with_de406(skyfield_tools, year):
    # Source: skyfield almanac.moon_phases + find_discrete (full apparent positions,
    # IAU 2006 precession with nutation) on the same DE406 kernel.  Nutation cancels in the
    # elongation; the Vondrák and P03 ecliptic poles differ by under 1.4 arcsec after -1000,
    # under 0.3 s in a phase.
    almanac, ts, find_discrete = skyfield_tools
    a = year_start(year)
    t, y = find_discrete(ts.tt_jd(a), ts.tt_jd(a + 365.25), almanac.moon_phases(load_ephemeris()))
    ours = lunar_phases(a, a + 365.25)
    assert ours.phase.tolist() == y.tolist()
    assert np.max(np.abs(ours.jd_tt - t.tt)) < 1.0 * ONE_SECOND


@pytest.mark.parametrize("year", [-2900, -2000, 1500])
def test_skyfield_moon_phases_same_precession(skyfield_tools, year):
    # Source: skyfield almanac.moon_phases + find_discrete on DE406.  With skyfield's own
    # precession (P03) the two pipelines differ only by second-order aberration terms and
    # find_discrete's 1 ms resolution.
    almanac, ts, find_discrete = skyfield_tools
    a = year_start(year)
    t, y = find_discrete(ts.tt_jd(a), ts.tt_jd(a + 365.25), almanac.moon_phases(load_ephemeris()))
    ours = lunar_phases(a, a + 365.25, precession="iau2006")
    assert ours.phase.tolist() == y.tolist()
    assert np.max(np.abs(ours.jd_tt - t.tt)) < 0.05 * ONE_SECOND


def test_precession_model_moves_ancient_phases_by_seconds():
    # At -2900 the P03 ecliptic pole is 28 arcsec from Vondrák's; with the Moon up to 5 deg
    # from the ecliptic that moves the elongation by up to ~2.5 arcsec, ~5 s of lunar motion.
    a = year_start(-2900)
    v = lunar_phases(a, a + 365.25)
    p = lunar_phases(a, a + 365.25, precession="iau2006")
    diff = np.abs(v.jd_tt - p.jd_tt) / ONE_SECOND
    assert 1.0 < diff.max() < 10.0


@pytest.fixture(scope="module")
def de421():
    """DE421 from the skyfield-data package, closed after the module."""
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")    # skyfield-data warns that its IERS file is old
        skyfield_data = pytest.importorskip("skyfield_data")
        path = skyfield_data.get_skyfield_data_path()
    from skyfield.api import load_file

    kernel = load_file(f"{path}/de421.bsp")
    yield kernel
    kernel.close()


@pytest.mark.parametrize("year", [1900, 1975, 2040])
def test_skyfield_moon_phases_with_de421(skyfield_tools, de421, year):
    # Source: skyfield almanac.moon_phases + find_discrete on DE421 (skyfield-data, 1900-2053).
    # DE406 and DE421 were fitted to lunar laser ranging up to 1997 and 2008: their Moons
    # differ by well under a kilometre here (1 km along the orbit ~ 1 s); measured < 0.1 s.
    almanac, ts, find_discrete = skyfield_tools
    a = year_start(year)
    t, y = find_discrete(ts.tt_jd(a), ts.tt_jd(a + 365.25), almanac.moon_phases(de421))
    ours = lunar_phases(a, a + 365.25)
    assert ours.phase.tolist() == y.tolist()
    assert np.max(np.abs(ours.jd_tt - t.tt)) < 2.0 * ONE_SECOND


# ------------------------------------------------------------ independent libraries

DUBLIN_JD = 2415020.0  # PyEphem dates count days from 1899 December 31.5


def _pyephem_phases(ephem, a, b):
    """All four phases from PyEphem's next-phase functions, as TT Julian Days and phase index."""
    def tt(d):
        return float(d) + DUBLIN_JD + ephem.delta_t(d) / 86400.0   # PyEphem returns UT
    found = []
    funcs = (ephem.next_new_moon, ephem.next_first_quarter_moon, ephem.next_full_moon,
             ephem.next_last_quarter_moon)
    for index, func in enumerate(funcs):
        d = ephem.Date(a - DUBLIN_JD - 1.0)
        while tt(d := func(d)) < b:
            if tt(d) >= a:
                found.append((tt(d), index))
    found.sort()
    return np.array([f[0] for f in found]), np.array([f[1] for f in found])


@pytest.mark.parametrize("year", [1900, 2000, 2095])
def test_pyephem_phases_1900_2100(year):
    # Source: PyEphem (libastro) next_new_moon ... next_last_quarter_moon.  Its Moon is a
    # truncated analytic theory (arcsecond-level), its times UT through its own delta T, which
    # we undo; a minute covers the theory (measured: under 3 s).
    ephem = pytest.importorskip("ephem")
    a = year_start(year)
    b = a + 5 * 365.25
    t, q = _pyephem_phases(ephem, a, b)
    ours = lunar_phases(a, b)
    assert ours.phase.tolist() == q.tolist()
    assert np.max(np.abs(ours.jd_tt - t)) < 60 * ONE_SECOND


@pytest.mark.parametrize("year", [1900, 2000, 2095])
def test_astronomy_engine_phases_1900_2100(year):
    # Source: astronomy-engine SearchMoonQuarter/NextMoonQuarter.  Its lunar theory is the 1954
    # Improved Lunar Ephemeris (Brown), and its phase angle (PairLongitude) uses geocentric
    # vectors without aberration: the Sun's 20.5 arcsec of aberration at the Moon's elongation
    # rate (about 0.51 arcsec/s) makes its phases run ~40 s late.  Tolerance: 90 s, and the
    # mean offset must be that of the aberration.
    astronomy = pytest.importorskip("astronomy")
    a = year_start(year)
    b = a + 5 * 365.25
    times, quarters = [], []
    mq = astronomy.SearchMoonQuarter(astronomy.Time.FromTerrestrialTime(a - J2000))
    while mq.time.tt + J2000 < b:
        times.append(mq.time.tt + J2000)
        quarters.append(mq.quarter)
        mq = astronomy.NextMoonQuarter(mq)
    ours = lunar_phases(a, b)
    assert ours.phase.tolist() == quarters
    diff = (np.array(times) - ours.jd_tt) / ONE_SECOND
    assert np.max(np.abs(diff)) < 90
    assert 20 < diff.mean() < 60


# ------------------------------------------------------------ invariants over the span

def test_phases_alternate_and_increase(all_phases):
    p = all_phases
    assert len(p.jd_tt) > 296000          # 4 phases x 12.37 lunations x 6000 years
    assert np.all(np.diff(p.jd_tt) > 0)
    assert np.all(np.diff(p.phase) % 4 == 1)
    gaps = np.diff(p.jd_tt)
    assert gaps.min() > 6.0 and gaps.max() < 8.5   # a quarter lunation, 6.5-8.3 days
    assert p.jd_tt[0] >= SPAN_JD[0] and p.jd_tt[-1] < SPAN_JD[1]


def test_synodic_month_lengths(all_phases):
    new = all_phases.jd_tt[all_phases.phase == 0]
    months = np.diff(new)
    # 1900-2100: the lunations run from 29.27 to 29.83 days (Meeus, Astronomical Algorithms ch. 49).
    modern = (new[:-1] > year_start(1900)) & (new[:-1] < year_start(2100))
    assert 29.27 < months[modern].min() < 29.28 and 29.82 < months[modern].max() < 29.835
    # Over the span the Earth's larger eccentricity of the past widens the range a little.
    assert 29.25 < months.min() and months.max() < 29.86
    assert abs(months.mean() - 29.530589) < 1e-4


def test_lunation_numbers_are_consecutive(all_phases):
    p = all_phases
    new = p.phase == 0
    assert np.all(np.diff(p.lunation[new]) == 1)
    # Every phase belongs to the lunation begun by the last new moon before it.
    last_new = np.maximum.accumulate(np.where(new, np.arange(len(p.phase)), -1))
    has = last_new >= 0
    assert np.all(p.lunation[has] == p.lunation[last_new[has]])
    assert np.all(p.k == p.lunation + p.phase / 4.0)


def test_elongation_at_the_phases(all_phases):
    # Independent of the Newton bookkeeping: evaluate the elongation at every 97th phase.
    sample = slice(None, None, 97)
    elong = moon_sun_elongation(all_phases.jd_tt[sample])
    off = (elong - 90.0 * all_phases.phase[sample] + 180.0) % 360.0 - 180.0
    # 0.1 s at the fastest elongation rate (15.5 deg/day) is 1.8e-5 deg.
    assert np.max(np.abs(off)) < 1.8e-5


def test_range_is_half_open_and_phases_selectable():
    a, b = year_start(1000), year_start(1001)
    every = lunar_phases(a, b)
    fulls = lunar_phases(a, b, "full")
    assert np.array_equal(fulls.jd_tt, every.jd_tt[every.phase == 2])
    quarters = lunar_phases(a, b, ["first-quarter", 3])
    assert set(quarters.phase.tolist()) == {1, 3}
    edge = lunar_phases(every.jd_tt[0], every.jd_tt[1])
    assert edge.jd_tt.tolist() == [every.jd_tt[0]]


def test_whole_span_edges_and_errors():
    lo, hi = SPAN_JD
    first = lunar_phases(lo, lo + 30)
    last = lunar_phases(hi - 30, hi)
    assert len(first.jd_tt) >= 4 and len(last.jd_tt) >= 4
    with pytest.raises(EphemerisRangeError):
        lunar_phases(lo - 10, lo + 10)
    with pytest.raises(ParameterError):
        lunar_phases(2451545.0, 2451540.0)
    with pytest.raises(ParameterError):
        lunar_phases(2451545.0, 2451600.0, "gibbous")
    with pytest.raises(ParameterError):
        lunar_phases(2451545.0, 2451600.0, precession="newcomb")


def test_elongation_shape_and_range():
    jd = np.linspace(2451545.0, 2451575.0, 12).reshape(3, 4)
    elong = moon_sun_elongation(jd)
    assert elong.shape == (3, 4) and np.all((elong >= 0) & (elong < 360))
    assert np.ndim(moon_sun_elongation(2451545.0)) == 0


# ------------------------------------------------------------ the detector

def test_lunar_phases_detector(host, default_deltat):
    from calendra.sites import parse_site

    det = host.detectors.get("lunar-phases")
    a = year_start(-1000)
    table = det.search(a, a + 365.25, site=parse_site("32.54,44.42"), deltat=default_deltat, phase="new")
    assert set(table["kind"].tolist()) == {"new"}
    assert 12 <= len(table) <= 13
    assert np.allclose(table["jd_ut"], table["jd_tt"] - default_deltat.seconds(table["jd_tt"]) / 86400.0)
    assert np.allclose(table["delta_t_sigma_s"], default_deltat.sigma(table["jd_tt"]), atol=0.05)
    assert np.all(table["delta_t_sigma_s"] > 60)        # delta T at -1000 is uncertain by minutes
    assert np.all(np.diff(table["lunation"]) == 1)
    assert np.all(table["brown_lunation"] == table["lunation"] + 953)
    # Local mean time at 44.42 E is UT + 2 h 57.7 min.
    local = table["jd_ut"] + 44.42 / 360.0
    assert np.array_equal(table["local_jdn"], np.floor(local + 0.5).astype(np.int64))
    assert all(d.startswith("-1000-") or d.startswith("-0999-") for d in table["local_date"])
    assert table.meta["delta_t_sigma_s"].unit == "s"
    prov = table.provenance
    assert "nutation" in prov["models"] and "precession" in prov["models"]
    assert prov["delta_t"]["model"] == default_deltat.name and "ephemeris" in prov


def test_lunar_phases_command_line():
    from click.testing import CliRunner

    from calendra.cli import main

    result = CliRunner().invoke(main, ["events", "lunar-phases", "--from", "-1000", "--to", "-999",
                                       "--phase", "full", "--format", "json"], catch_exceptions=False)
    assert result.exit_code == 0, result.output
    data = json.loads(result.output)
    assert len(data["events"]) in (12, 13)
    assert {e["kind"] for e in data["events"]} == {"full"}
    assert {"lunation", "brown_lunation", "delta_t_sigma_s"} <= set(data["events"][0])
    assert PHASE_NAMES[2] == "full"


def test_progress_reports_evaluated_instants():
    calls = []
    a = year_start(1500)
    lunar_phases(a, a + 3 * 365.25, chunk=50, progress=lambda done, total, label: calls.append((done, total, label)))
    assert calls and all(0 < d <= t for d, t, _ in calls)
    assert [d for d, _, _ in calls] == sorted(d for d, _, _ in calls)
    assert calls[-1][0] == calls[-1][1] and calls[-1][2] == "lunar phases"
