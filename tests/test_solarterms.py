"""Solar longitude, equinoxes, solstices and solar terms: published values, libraries, invariants."""

import json
import warnings

import numpy as np
import pytest

from calendra.ephemeris import SPAN_JD, load_ephemeris
from calendra.errors import EphemerisRangeError, ParameterError
from calendra.julian_gregorian import gregorian_to_jdn
from calendra.solarterms import (SEASON_NAMES, ecliptic_axes, equinoxes_solstices,
                                 nutation_in_longitude, solar_longitude_crossings, solar_term_names,
                                 sun_apparent_longitude)

ONE_SECOND = 1.0 / 86400.0
ARCSEC_DEG = 1.0 / 3600.0
J2000 = 2451545.0


def year_start(year):
    """Approximate TT Julian Day of the start of an astronomical year (Julian years from J2000)."""
    return J2000 + (year - 2000) * 365.25


@pytest.fixture(scope="module")
def all_seasons():
    return equinoxes_solstices(*SPAN_JD)


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


# ------------------------------------------------------------ precession and nutation

@pytest.mark.parametrize("year", [-3000, -1500, 0, 1000, 2000, 3000])
def test_vondrak_ecliptic_matches_erfa(year):
    # Source: ERFA (pyerfa) eraLtecm, the Vondrák, Capitaine & Wallace (2011) long-term
    # ecliptic matrix with the IERS 2003 frame bias.
    erfa = pytest.importorskip("erfa")
    jd = year_start(year)
    ours = np.array(ecliptic_axes(jd))
    assert np.max(np.abs(ours - erfa.ltecm(2000.0 + (jd - J2000) / 365.25))) < 1e-11


def test_long_term_and_p03_ecliptics_part_before_1000():
    # Vondrák et al. (2011) show the P03 polynomials departing from the long-term solution away
    # from 2000; ours must agree with P03 near 2000 and differ by arcseconds at -3000.
    def angle_arcsec(u, v):
        return np.degrees(np.arctan2(np.linalg.norm(np.cross(u, v)), np.dot(u, v))) * 3600
    for year, lo, hi in [(2000, 0.0, 0.001), (1500, 0.0, 0.05), (-1000, 0.5, 3.0), (-3000, 5.0, 60.0)]:
        v, p = ecliptic_axes(year_start(year)), ecliptic_axes(year_start(year), "iau2006")
        assert lo <= angle_arcsec(v[0], p[0]) <= hi


def test_nutation_truncation_is_at_the_milliarcsecond():
    # Source: IAU 2000A series as tabulated in skyfield (all 687 luni-solar terms, no planetary
    # terms); the 77-term truncation (the IAU 2000B selection) is within ~1 mas of it.
    jd = np.linspace(SPAN_JD[0] + 1, SPAN_JD[1] - 1, 2001)
    full = nutation_in_longitude(jd, 687)
    short = nutation_in_longitude(jd)
    assert np.max(np.abs(full - short)) < np.radians(3e-3 * ARCSEC_DEG)
    assert np.max(np.abs(full)) > np.radians(15 * ARCSEC_DEG)    # the 18.6-year term, 17.2"
    with pytest.raises(ParameterError):
        nutation_in_longitude(jd, 0)


@pytest.mark.parametrize("year", [-2999, -1000, 0, 1000, 2000, 2999])
def test_apparent_longitude_matches_skyfield_pipeline(year):
    # Source: skyfield earth.at(t).observe(sun).apparent().frame_latlon(ecliptic_frame) on DE406
    # (exact light time, relativistic aberration, deflection, P03 precession, full IAU 2000A
    # nutation).  With the same precession and all 687 luni-solar terms we agree to a few mas
    # (0.1 s of solar motion is 4 mas).
    from skyfield.api import load
    from skyfield.framelib import ecliptic_frame

    eph = load_ephemeris()
    ts = load.timescale(builtin=True)
    jd = year_start(year) + np.linspace(0.0, 365.0, 37)
    _, lon, _ = eph["earth"].at(ts.tt_jd(jd)).observe(eph["sun"]).apparent().frame_latlon(ecliptic_frame)
    ours = sun_apparent_longitude(jd, precession="iau2006", nutation_terms=687)
    diff = (ours - lon.degrees + 180.0) % 360.0 - 180.0
    assert np.max(np.abs(diff)) < 0.004 * ARCSEC_DEG


# ------------------------------------------------------------ published examples

def test_meeus_example_27a_june_solstice_1962():
    # Source: Meeus, Astronomical Algorithms 2nd ed., Ex. 27.a: June solstice 1962, approximate
    # method JDE 2437837.39245; the VSOP87 iteration (PyMeeus) gives 2437837.39215.
    found = solar_longitude_crossings(2437800.5, 2437900.5, 90.0)
    assert found.longitude_deg.tolist() == [90.0]
    # The approximate method (Table 27.B polynomial + periodic terms) is good to about a minute.
    assert abs(found.jd_tt[0] - 2437837.39245) < 60 * ONE_SECOND
    # VSOP87 and DE406 suns differ by hundredths of an arcsecond: a few seconds at most.
    assert abs(found.jd_tt[0] - 2437837.39215) < 5 * ONE_SECOND


# Source: Meeus, Astronomical Algorithms 2nd ed., ch. 27, table of equinoxes and solstices
# 1996-2005 (TD, from VSOP87), as given in shared/reference/check_values.md section 2.6.
MEEUS_27_TABLE = """
1996 | 20 08:04:07 | 21 02:24:46 | 22 18:01:08 | 21 14:06:56
1997 | 20 13:55:42 | 21 08:20:59 | 22 23:56:49 | 21 20:08:05
1998 | 20 19:55:35 | 21 14:03:38 | 23 05:38:15 | 22 01:57:31
1999 | 21 01:46:53 | 21 19:50:11 | 23 11:32:34 | 22 07:44:52
2000 | 20 07:36:19 | 21 01:48:46 | 22 17:28:40 | 21 13:38:30
2001 | 20 13:31:47 | 21 07:38:48 | 22 23:05:32 | 21 19:22:34
2002 | 20 19:17:13 | 21 13:25:29 | 23 04:56:28 | 22 01:15:26
2003 | 21 01:00:50 | 21 19:11:32 | 23 10:47:53 | 22 07:04:53
2004 | 20 06:49:42 | 21 00:57:57 | 22 16:30:54 | 21 12:42:40
2005 | 20 12:34:29 | 21 06:47:12 | 22 22:24:14 | 21 18:36:01
"""


def _meeus_table_jd():
    out = []
    for line in MEEUS_27_TABLE.strip().splitlines():
        year, *cells = (c.strip() for c in line.split("|"))
        for month, cell in zip((3, 6, 9, 12), cells):
            day, hms = cell.split()
            h, m, s = (int(v) for v in hms.split(":"))
            jdn = int(gregorian_to_jdn(int(year), month, int(day)))
            out.append(jdn - 0.5 + (3600 * h + 60 * m + s) / 86400.0)
    return np.array(out)


def test_meeus_chapter_27_table_1996_2005():
    ref = _meeus_table_jd()
    found = equinoxes_solstices(ref[0] - 10, ref[-1] + 10)
    assert len(found.jd_tt) == 40
    assert found.longitude_deg.tolist() == [0.0, 90.0, 180.0, 270.0] * 10
    # Rounded to the second; VSOP87 with the IAU 1980 nutation against DE406 with IAU 2000:
    # a few hundredths of an arcsecond, about a second.
    assert np.max(np.abs(found.jd_tt - ref)) < 3 * ONE_SECOND


# ------------------------------------------------------------ skyfield

@pytest.mark.parametrize("year", [1600, 1800, 1900, 2000, 2200, 2400])
def test_skyfield_seasons_with_de406(skyfield_tools, year):
    # Source: skyfield almanac.seasons + find_discrete on the same DE406 kernel.  It uses P03
    # precession and IAU 2000B nutation with linear fundamental arguments; both agree with our
    # long-term precession and full-polynomial arguments to well under a second in 1600-2400.
    almanac, ts, find_discrete = skyfield_tools
    a = year_start(year)
    t, y = find_discrete(ts.tt_jd(a), ts.tt_jd(a + 365.25), almanac.seasons(load_ephemeris()))
    ours = equinoxes_solstices(a, a + 365.25)
    assert np.rint(ours.longitude_deg / 90).astype(int).tolist() == y.tolist()
    assert np.max(np.abs(ours.jd_tt - t.tt)) < 1.0 * ONE_SECOND


@pytest.mark.parametrize("year", [-2900, -1000, 0, 1000, 2900])
def test_skyfield_apparent_sun_same_models(skyfield_tools, year):
    # Source: skyfield's apparent Sun in its true ecliptic of date (P03 precession, full IAU
    # 2000A nutation with polynomial fundamental arguments) with find_discrete on DE406.  With
    # the same precession model ours agrees to the 77-term nutation truncation (~0.03 s).
    from skyfield.framelib import ecliptic_frame
    from skyfield.nutationlib import iau2000a_radians

    _, ts, find_discrete = skyfield_tools
    eph = load_ephemeris()
    earth, sun = eph["earth"], eph["sun"]

    def quarter(t):
        t._nutation_angles_radians = iau2000a_radians(t)
        _, lon, _ = earth.at(t).observe(sun).apparent().frame_latlon(ecliptic_frame)
        return (lon.radians // (np.pi / 2) % 4).astype(int)
    quarter.step_days = 90.0

    a = year_start(year)
    t, y = find_discrete(ts.tt_jd(a), ts.tt_jd(a + 365.25), quarter)
    ours = equinoxes_solstices(a, a + 365.25, precession="iau2006")
    assert np.rint(ours.longitude_deg / 90).astype(int).tolist() == y.tolist()
    assert np.max(np.abs(ours.jd_tt - t.tt)) < 0.1 * ONE_SECOND


def test_precession_model_moves_ancient_equinoxes_by_minutes():
    # The P03 equinox of -2900 is ~12 arcsec from the long-term one: ~5 min of solar motion.
    a = year_start(-2900)
    v = equinoxes_solstices(a, a + 365.25)
    p = equinoxes_solstices(a, a + 365.25, precession="iau2006")
    diff = np.abs(v.jd_tt - p.jd_tt) / ONE_SECOND
    assert 120 < diff.min() and diff.max() < 600


@pytest.mark.parametrize("year", [1900, 1975, 2040])
def test_skyfield_seasons_with_de421(skyfield_tools, de421, year):
    # Source: skyfield almanac.seasons + find_discrete on DE421 (skyfield-data, 1900-2053).  The
    # Earth orbits of DE406 and DE421 agree to metres here; the remaining difference is the
    # nutation and precession models (see test_skyfield_seasons_with_de406), under a second.
    almanac, ts, find_discrete = skyfield_tools
    a = year_start(year)
    t, y = find_discrete(ts.tt_jd(a), ts.tt_jd(a + 365.25), almanac.seasons(de421))
    ours = equinoxes_solstices(a, a + 365.25)
    assert np.rint(ours.longitude_deg / 90).astype(int).tolist() == y.tolist()
    assert np.max(np.abs(ours.jd_tt - t.tt)) < 2.0 * ONE_SECOND


# ------------------------------------------------------------ independent libraries

@pytest.mark.parametrize("year", [1900, 2000, 2095])
def test_pyephem_equinoxes_solstices(year):
    # Source: PyEphem next_equinox / next_solstice (libastro: truncated VSOP87 Sun, IAU 1980
    # nutation), UT through its own delta T, which we undo.  Its truncated theory is good to
    # about half an arcsecond, some 15 s of solar motion (measured: up to 17 s); a minute.
    ephem = pytest.importorskip("ephem")
    dublin = 2415020.0
    a = year_start(year)
    b = a + 5 * 365.25

    def tt(d):
        return float(d) + dublin + ephem.delta_t(d) / 86400.0
    found = []
    for func in (ephem.next_equinox, ephem.next_solstice):
        d = ephem.Date(a - dublin - 1.0)
        while tt(d := func(d)) < b:
            if tt(d) >= a:
                found.append(tt(d))
    ours = equinoxes_solstices(a, b)
    assert len(ours.jd_tt) == len(found) == 20
    assert np.max(np.abs(ours.jd_tt - np.sort(found))) < 60 * ONE_SECOND


def test_astronomy_engine_seasons():
    # Source: astronomy-engine Seasons(year), TT.  Its Sun is a truncated VSOP87 Earth with the
    # light time taken as a fixed 1 AU/c; arcsecond-level, measured up to 41 s; a minute.
    astronomy = pytest.importorskip("astronomy")
    ref = []
    for year in range(1990, 2010):
        s = astronomy.Seasons(year)
        ref += [s.mar_equinox.tt, s.jun_solstice.tt, s.sep_equinox.tt, s.dec_solstice.tt]
    ref = np.array(ref) + J2000
    ours = equinoxes_solstices(ref[0] - 1, ref[-1] + 1)
    assert np.max(np.abs(ours.jd_tt - ref)) < 60 * ONE_SECOND


# ------------------------------------------------------------ invariants

def test_seasons_order_and_lengths(all_seasons):
    s = all_seasons
    assert 23990 < len(s.jd_tt) <= 24004           # four a year for 6000 years
    assert np.all(np.diff(s.jd_tt) > 0)
    q = np.rint(s.longitude_deg / 90).astype(int)
    assert np.all(np.diff(q) % 4 == 1)
    gaps = np.diff(s.jd_tt)
    assert gaps.min() > 88.0 and gaps.max() < 95.0   # the seasons are 88.5-94.5 days long
    assert np.all(s.residual_s < 0.1)
    for k in range(4):
        years = np.diff(s.jd_tt[q == k])
        assert np.all(np.abs(years - 365.2422) < 0.03)
        assert abs(years.mean() - 365.2422) < 0.001


def test_longitude_at_the_crossings(all_seasons):
    sample = slice(None, None, 53)
    lon = sun_apparent_longitude(all_seasons.jd_tt[sample])
    off = (lon - all_seasons.longitude_deg[sample] + 180.0) % 360.0 - 180.0
    # 0.1 s of the Sun's fastest motion (1.02 deg/day) is 1.2e-6 deg.
    assert np.max(np.abs(off)) < 1.2e-6


def test_solar_terms_and_lists():
    a, b = year_start(2000), year_start(2001)
    terms = solar_longitude_crossings(a, b, np.arange(0, 360, 15))
    assert len(terms.jd_tt) == 24
    assert np.all(np.diff(terms.jd_tt) > 14.5) and np.all(np.diff(terms.jd_tt) < 16.0)
    seasons = equinoxes_solstices(a, b)
    assert np.all(np.isin(seasons.jd_tt, terms.jd_tt))
    cross = solar_longitude_crossings(a, b, [45, 135, 225, 315])
    assert sorted(cross.longitude_deg.tolist()) == [45.0, 135.0, 225.0, 315.0]
    wrapped = solar_longitude_crossings(a, b, [-45.0, 675.0])      # both are 315
    assert wrapped.longitude_deg.tolist() == [315.0]
    assert np.array_equal(wrapped.jd_tt, cross.jd_tt[cross.longitude_deg == 315.0])
    names = solar_term_names([0, 15, 315, 12.5, 360])
    assert names.tolist() == ["chunfen", "qingming", "lichun", "", "chunfen"]


def test_whole_span_edges_and_errors():
    lo, hi = SPAN_JD
    assert len(equinoxes_solstices(lo, lo + 400).jd_tt) >= 4
    assert len(equinoxes_solstices(hi - 400, hi).jd_tt) >= 4
    with pytest.raises(EphemerisRangeError):
        equinoxes_solstices(lo - 1, lo + 100)
    with pytest.raises(ParameterError):
        solar_longitude_crossings(lo, lo + 100, [])
    with pytest.raises(ParameterError):
        solar_longitude_crossings(lo + 100, lo, 0.0)
    with pytest.raises(ParameterError):
        equinoxes_solstices(lo, lo + 100, precession="lieske")


# ------------------------------------------------------------ the detectors

def test_seasons_detector(host, default_deltat):
    from calendra.sites import Site

    det = host.detectors.get("seasons")
    ref = _meeus_table_jd()[:4]                          # 1996
    table = det.search(ref[0] - 10, ref[-1] + 10, site=Site("Greenwich", 51.4778, 0.0, utc_offset_hours=0.0),
                       deltat=default_deltat)
    assert table["kind"].tolist() == list(SEASON_NAMES)
    assert np.max(np.abs(table["jd_tt"] - ref)) < 3 * ONE_SECOND
    # 1996 March 20 08:04 TT is 08:03 UT: the civil date at Greenwich (UT+0) is March 20.
    assert table["local_date"][0] == "1996-03-20"
    assert table["local_time"][0].startswith("08:03")
    assert np.allclose(table["delta_t_s"], default_deltat.seconds(table["jd_tt"]), atol=0.05)
    assert np.all((table["delta_t_s"] > 61) & (table["delta_t_s"] < 63))   # IERS: about 62 s in 1996
    assert "nutation" in table.provenance["models"]


def test_solar_longitude_detector_parameters(host, default_deltat):
    from calendra.detectors_sky import longitude_set

    assert longitude_set().tolist() == list(np.arange(0.0, 360.0, 15.0))
    assert longitude_set("45", 90).tolist() == [45.0, 135.0, 225.0, 315.0]
    assert longitude_set("10, 20").tolist() == [10.0, 20.0]
    assert longitude_set(None, 120).tolist() == [0.0, 120.0, 240.0]
    with pytest.raises(ParameterError):
        longitude_set("north")
    with pytest.raises(ParameterError):
        longitude_set(None, 0)
    det = host.detectors.get("solar-longitude")
    a = year_start(2000)
    table = det.search(a, a + 365.25, deltat=default_deltat)
    assert len(table) == 24 and "lichun" in table["kind"].tolist()
    table = det.search(a, a + 365.25, deltat=default_deltat, longitude="12.5")
    assert table["kind"].tolist() == ["longitude-12.5"]


def test_seasons_command_line():
    from click.testing import CliRunner

    from calendra.cli import main

    result = CliRunner().invoke(main, ["events", "seasons", "--from", "2000", "--to", "2001",
                                       "--format", "json"], catch_exceptions=False)
    assert result.exit_code == 0, result.output
    events = json.loads(result.output)["events"]
    assert [e["kind"] for e in events] == list(SEASON_NAMES)
    # Meeus ch. 27 table: 2000 March 20 07:36:19 TD; delta T 64 s puts it at 07:35 UT.
    assert events[0]["date_ut"] == "2000-03-20" and events[0]["time_ut"].startswith("07:35")


@pytest.mark.parametrize("name", ["seasons", "solar-longitude", "lunar-phases"])
def test_detectors_with_no_event_in_range(host, default_deltat, name):
    from calendra.sites import parse_site

    # One hour after J2000 holds no season, no solar term and no lunar phase.
    table = host.detectors.get(name).search(J2000, J2000 + 1 / 24, site=parse_site("30,30"),
                                            deltat=default_deltat)
    assert len(table) == 0
    assert {"jd_tt", "jd_ut", "kind", "delta_t_sigma_s", "local_date"} <= set(table.names)
