"""Rising, setting, transit and twilight against published examples and other libraries."""

import math
import os
import warnings

import numpy as np
import pytest
from skyfield import almanac
from skyfield.api import wgs84

from calendra.deltat import get_model, skyfield_timescale
from calendra.ephemeris import load_ephemeris
from calendra.errors import ParameterError
from calendra.riseset import (ABOVE, BELOW, OK, Horizon, _Engine, crossing_near, daily_events, find_events,
                              refraction_bennett, refraction_saemundsson, sun_crossing_on_days)
from calendra.sites import Site

MODEL = get_model("smh2016")
SECOND = 1.0 / 86400.0
BABYLON = Site("Babylon", 32.54, 44.42, 35.0)
ROME = Site("Rome", 41.89, 12.49, 20.0)


# ----------------------------------------------------------------- refraction

def test_bennett_refraction_meeus_example_16a():
    # Meeus, Astronomical Algorithms 2nd ed., Ex. 16.a: apparent altitude 0.5 deg -> R = 28.754'.
    assert refraction_bennett(0.5) == pytest.approx(28.754, abs=0.001)


def test_refraction_weather_factor_and_consistency():
    # Meeus ch. 16: R scales with (P/1010)(283/(273+T)); at the horizon Bennett gives about 34.5'.
    assert refraction_bennett(0.0) == pytest.approx(34.48, abs=0.01)
    assert refraction_bennett(2.0, 30.0, 950.0) == pytest.approx(refraction_bennett(2.0) * 950 / 1010 * 283 / 303)
    # Saemundsson's formula (true altitude) inverts Bennett's (apparent altitude) to within 0.1'
    # above the horizon (Meeus ch. 16: the two are consistent to a small fraction of an arcminute).
    h_app = np.linspace(0.0, 89.0, 300)
    h_true = h_app - refraction_bennett(h_app) / 60.0
    assert np.max(np.abs(refraction_saemundsson(h_true) - refraction_bennett(h_app))) < 0.1
    # Refraction falls monotonically with altitude and is never negative.
    r = refraction_bennett(np.linspace(-1, 90, 500))
    assert np.all(np.diff(r) <= 0) and np.all(r >= 0)


def test_event_altitude_of_the_conventions():
    site = Site("x", 40.0, 0.0)
    # Upper limb of a body with SD 16' and standard refraction: the almanacs' -0.8333 deg (50').
    assert Horizon().target(site, 0.0, 16 / 60) == pytest.approx(-50 / 60)
    assert Horizon(limb="centre").target(site, 0.0, 16 / 60) == pytest.approx(-34 / 60)
    assert Horizon(limb="lower", refraction="none").target(site, 0.0, 16 / 60) == pytest.approx(16 / 60)
    assert Horizon.twilight("nautical").target(site, 0.0, 16 / 60) == -12.0
    # A horizon 100 m below the eye (dip 17.6') and Bennett refraction at that apparent altitude.
    low = Site("cliff", 40.0, 0.0, eye_height_m=100.0)
    h = -17.6 / 60
    assert Horizon(limb="centre", refraction="bennett").target(low, 0.0, 0.0) == pytest.approx(
        h - refraction_bennett(h) / 60)
    with pytest.raises(ParameterError):
        Horizon(limb="middle")


# ------------------------------------------------------------- Meeus ch. 15

def test_venus_rising_transit_setting_meeus_example_15a():
    # Meeus, Astronomical Algorithms 2nd ed., Ex. 15.a: Venus at Boston (42 deg 20' N, 71 deg 05' W),
    # 1988 March 20, h0 = -0.5667 deg (refraction only: a point source), delta T = 56 s:
    # m(rise) = 0.51766, m(transit) = 0.81980, m(set) = 0.12130 (fractions of the UT day).
    # Tolerance 4 s: the book interpolates three 0h TD positions of another theory, ignores Venus's
    # parallax (about 15" here, ~1.5 s) and prints m to 1e-5 day (0.9 s).
    boston = Site("Boston", 42 + 20 / 60, -(71 + 5 / 60))
    day0 = 2447240.5        # 1988 March 20, 0h UT (Meeus Ex. 7.a conventions)
    ev = find_events("venus", boston, day0, day0 + 1, deltat=get_model("constant:56"),
                     horizon=Horizon(limb="centre"))
    assert len(ev["rise"].jd_ut) == len(ev["set"].jd_ut) == len(ev["transit"].jd_ut) == 1
    assert ev["rise"].jd_ut[0] - day0 == pytest.approx(0.51766, abs=4 * SECOND)
    assert ev["transit"].jd_ut[0] - day0 == pytest.approx(0.81980, abs=4 * SECOND)
    assert ev["set"].jd_ut[0] - day0 == pytest.approx(0.12130, abs=4 * SECOND)


# ----------------------------------------------------------- skyfield almanac

def _skyfield_events(eph, site, body, jd0, jd1, horizon_deg, kind):
    ts = skyfield_timescale(MODEL)
    obs = eph["earth"] + wgs84.latlon(site.latitude_deg, site.longitude_deg, site.elevation_m)
    if kind == "transit":
        return almanac.find_transits(obs, eph[body], ts.ut1_jd(jd0), ts.ut1_jd(jd1)).ut1
    fn = almanac.find_risings if kind == "rise" else almanac.find_settings
    t, crosses = fn(obs, eph[body], ts.ut1_jd(jd0), ts.ut1_jd(jd1), horizon_degrees=horizon_deg)
    return t.ut1[crosses]


@pytest.fixture(scope="module")
def de421():
    import skyfield_data
    from skyfield.api import load_file

    with warnings.catch_warnings():
        warnings.filterwarnings("ignore", message=".*finals2000A.*", category=RuntimeWarning)
        directory = skyfield_data.get_skyfield_data_path()
    kernel = load_file(os.path.join(directory, "de421.bsp"))
    yield kernel
    kernel.close()


@pytest.mark.parametrize("body", ["sun", "moon"])
@pytest.mark.parametrize("site", [BABYLON, ROME, Site("Tromso", 69.65, 18.96)], ids=lambda s: s.name)
def test_agrees_with_skyfield_find_risings_on_our_kernel(body, site):
    # Reference: skyfield's almanac.find_risings / find_settings / find_transits with the same
    # kernel, timescale and horizon (-0.8333 deg for the centre).  Tolerance 0.05 s: only the
    # nutation series (IAU 2000B here, 2000A there: ~1 mas) and the solvers' stopping rules differ.
    # Three years, so that Tromso's midnight sun and polar night are crossed.
    jd0 = 2451545.0
    jd1 = jd0 + (3 * 365 if site.latitude_deg > 60 else 90)
    ours = find_events(body, site, jd0, jd1, deltat=MODEL, horizon=Horizon(altitude_deg=-0.8333))
    eph = load_ephemeris()
    for kind in ("rise", "set", "transit"):
        ref = _skyfield_events(eph, site, body, jd0, jd1, -0.8333, kind)
        got = ours[kind].jd_ut
        if site.latitude_deg > 60 and kind != "transit":
            # Near the polar limits a body may just graze the horizon at culmination; such a touch
            # may be missed (a pair of events closer together than the search grid, ~16 min).
            # Every event we give is one of skyfield's, and every one we miss is a graze.
            idx = np.searchsorted(ref, got)
            near = np.minimum(np.abs(ref[np.clip(idx, 0, len(ref) - 1)] - got),
                              np.abs(ref[np.clip(idx - 1, 0, len(ref) - 1)] - got))
            assert np.max(near) < 0.05 * SECOND
            idx = np.searchsorted(got, ref)
            gap = np.minimum(np.abs(got[np.clip(idx, 0, len(got) - 1)] - ref),
                             np.abs(got[np.clip(idx - 1, 0, len(got) - 1)] - ref))
            missed = ref[gap > SECOND]
            assert len(missed) <= 3
            if len(missed):
                eng = _Engine(body, site, MODEL)
                around = missed[:, None] + np.array([-10, 0, 10]) / 1440.0
                alt = eng.full(around.ravel())[0].reshape(around.shape)
                assert np.all(np.abs(alt + 0.8333) < 0.1), "a missed event that is not a graze"
        else:
            assert len(got) == len(ref)
            assert np.max(np.abs(got - ref)) < 0.05 * SECOND


def test_agrees_with_skyfield_and_de421(de421):
    # Reference: skyfield with JPL DE421 (skyfield-data), sample days 1900-2050 at Rome.
    # Tolerance 0.5 s: DE421 and DE406 differ by metres (Sun) to tens of metres (Moon) in this span,
    # i.e. well under 0.1 s; the rest is the nutation series and the solvers' stopping rules.
    for jd0 in (2415385.5, 2433282.5, 2451545.5, 2469807.5):
        for body in ("sun", "moon"):
            ours = find_events(body, ROME, jd0, jd0 + 3, deltat=MODEL, horizon=Horizon(altitude_deg=-0.8333))
            for kind in ("rise", "set"):
                ref = _skyfield_events(de421, ROME, body, jd0, jd0 + 3, -0.8333, kind)
                assert len(ref) == len(ours[kind].jd_ut)
                assert np.max(np.abs(ref - ours[kind].jd_ut)) < 0.5 * SECOND


def test_limb_refraction_and_parallax_are_applied_at_the_event():
    # Invariant: at the reported moonrise the upper limb sits on the horizon: the airless
    # topocentric altitude of the centre (skyfield) is -34' - SD (topocentric semi-diameter).
    eng = _Engine("moon", ROME, MODEL)
    ev = find_events("moon", ROME, 2451545.0, 2451575.0, deltat=MODEL, engine=eng)
    for kind in ("rise", "set"):
        alt, _, dist, _, _ = eng.full(ev[kind].jd_ut)
        sd = np.degrees(np.arcsin(1737.4 / dist))
        assert np.allclose(alt, -34 / 60 - sd, atol=0.2 / 3600)
    # Parallax: Meeus (Astronomical Algorithms, ch. 15) gives the geocentric altitude of the Moon's
    # centre at moonrise as h0 = 0.7275 pi - 34' (pi the horizontal parallax), about +0.125 deg.
    # Tolerance 0.02 deg: Meeus' rule neglects the small difference between the topocentric and
    # geocentric semi-diameter and the site's height.
    t = eng.time(ev["rise"].jd_ut)
    geo_pos = eng.earth.at(t).observe(eng.target_body).apparent()
    geo = geo_pos.frame_latlon(eng.topos)[0].degrees
    hp = np.degrees(np.arcsin(6378.14 / geo_pos.distance().km))
    assert np.allclose(geo, 0.7275 * hp - 34 / 60, atol=0.02)


def test_horizon_profile_delays_sunrise_where_the_skyline_is_high():
    # A ridge of +2 deg in the east delays sunrise; a flat profile at 0 equals the astronomical horizon.
    days = np.arange(2451545, 2451545 + 30)
    flat = daily_events("sun", BABYLON, days, deltat=MODEL, transit=False)
    zero = daily_events("sun", BABYLON.with_horizon([(0.0, 0.0)]), days, deltat=MODEL, transit=False)
    ridge = daily_events("sun", BABYLON.with_horizon([(0, 0), (90, 2.0), (180, 0), (270, 0)]), days,
                         deltat=MODEL, transit=False)
    assert np.allclose(flat.rise_ut, zero.rise_ut, atol=0.01 * SECOND)
    delay = (ridge.rise_ut - flat.rise_ut) * 1440
    # The January Sun rises at azimuth ~117 deg, where the skyline stands at 2 (180 - 117) / 90 = 1.4
    # deg; refraction there is ~21' instead of 34', so the Sun must climb ~1.6 deg more, at
    # 15 deg/h cos(lat) cos(dec) sin(H) ~ 11.5 deg/h: about 8.5 minutes later.
    assert np.all((delay > 7.5) & (delay < 9.5))
    assert np.allclose(ridge.set_ut, flat.set_ut, atol=0.01 * SECOND)      # the west is unchanged
    # At the event the Sun's upper limb meets the profile: the apparent altitude of the skyline at
    # the Sun's azimuth (interpolated), with refraction taken there.
    site = BABYLON.with_horizon([(0, 0), (90, 2.0), (180, 0), (270, 0)])
    eng = _Engine("sun", site, MODEL)
    alt, az, dist, _, _ = eng.full(ridge.rise_ut)
    sd = eng.semidiameter_deg(dist)
    assert np.allclose(alt, Horizon().target(site, az, sd), atol=0.5 / 3600)


def test_dip_advances_sunrise():
    days = np.arange(2451545, 2451545 + 5)
    ground = daily_events("sun", ROME, days, deltat=MODEL, transit=False)
    tower = daily_events("sun", Site("Rome, tower", 41.89, 12.49, 20.0, eye_height_m=50.0), days, deltat=MODEL,
                         transit=False)
    early = (ground.rise_ut - tower.rise_ut) * 1440
    # Dip 1.76' sqrt(50) = 12.4' plus the extra refraction at -12.4': roughly 2 minutes earlier.
    assert np.all((early > 1.3) & (early < 3.0))


def test_polar_days_are_flagged():
    north = Site("far north", 78.2, 15.6)
    d = daily_events("sun", north, [2451545 + 5, 2451545 + 180], deltat=MODEL)
    assert np.isnan(d.rise_ut).all() and np.isnan(d.set_ut).all()
    assert d.rise_flag.tolist() == [BELOW, ABOVE] and d.set_flag.tolist() == [BELOW, ABOVE]
    assert np.isfinite(d.transit_ut).all()


def test_twilight_order_and_depressions():
    days = np.arange(2451545, 2451545 + 10)
    d = daily_events("sun", ROME, days, deltat=MODEL, twilight=("civil", "nautical", "astronomical", 3.5))
    order = [d.extra["astronomical_dawn"][0], d.extra["nautical_dawn"][0], d.extra["civil_dawn"][0],
             d.extra["3.5deg_dawn"][0], d.rise_ut, d.transit_ut, d.set_ut, d.extra["3.5deg_dusk"][0],
             d.extra["civil_dusk"][0], d.extra["nautical_dusk"][0], d.extra["astronomical_dusk"][0]]
    assert np.all(np.diff(np.array(order), axis=0) > 0)
    eng = _Engine("sun", ROME, MODEL)
    alt = eng.full(d.extra["nautical_dusk"][0])[0]
    assert np.allclose(alt, -12.0, atol=0.1 / 3600)


def test_crossing_near_picks_the_nearest_crossing_of_the_right_sense():
    days = np.arange(2451545, 2451545 + 60)
    sun = daily_events("sun", BABYLON, days, deltat=MODEL, transit=False)
    moonset, _, flag = crossing_near("moon", BABYLON, sun.set_ut, rising=False, deltat=MODEL)
    assert np.all(flag == OK)
    lag = (moonset - sun.set_ut) * 24
    assert np.all(np.abs(lag) <= 12.5)
    # Each moonset returned is a real one: it is in the list of all moonsets.
    allsets = find_events("moon", BABYLON, days[0] - 2.0, days[-1] + 2.0, deltat=MODEL, kinds=("set",))["set"].jd_ut
    assert np.all(np.min(np.abs(moonset[:, None] - allsets[None, :]), axis=1) < 0.01 * SECOND)


def test_daybounds_use_the_same_solver():
    from calendra.daybounds import sun_crossing

    days = np.arange(2451545, 2451545 + 10)
    assert np.allclose(sun_crossing(days, ROME, MODEL, rising=True),
                       sun_crossing_on_days(days, ROME, MODEL, rising=True, altitude_deg=-0.8333))


def test_ancient_dates_work_and_span_is_checked():
    # Babylon, -500 March: sunrise near 6:30 local mean time (sanity: equinox soon after).
    days = np.arange(1538492, 1538502)
    d = daily_events("sun", BABYLON, days, deltat=MODEL)
    local = ((d.rise_ut + BABYLON.offset_days + 0.5) % 1) * 24
    assert np.all((local > 6.0) & (local < 6.9))
    from calendra.errors import EphemerisRangeError

    with pytest.raises(EphemerisRangeError):
        daily_events("sun", BABYLON, [600000], deltat=MODEL)


# ------------------------------------------------------ Calendrical Calculations

# Calendrical Calculations 3rd ed., Appendix C, Table C5 (check_values.md section 1): RD, dawn in Paris
# (Sun 18 deg below the horizon) and sunset in Jerusalem, local standard time (None: no dawn, "bogus").
CC_C5 = [
    (-214193, "02:17:13", "18:44:25"), (-61387, "06:39:25", "16:44:28"), (25469, "04:53:08", "17:38:36"),
    (171307, "06:52:22", "17:00:59"), (210155, "02:18:39", "18:35:16"), (369740, "03:35:13", "18:18:44"),
    (400085, "02:07:24", "18:38:59"), (434355, "05:01:16", "17:57:36"), (470160, "04:33:23", "18:04:50"),
    (473837, "03:27:14", "18:21:08"), (507850, None, "18:49:27"), (544676, "04:16:25", "18:09:12"),
    (567118, "04:43:27", "17:45:28"), (569477, "05:40:40", "17:45:27"), (613424, None, "18:53:50"),
    (626596, "02:32:03", "18:46:27"), (645554, None, "18:52:43"), (671401, "04:52:07", "17:59:54"),
    (694799, "03:54:07", "18:15:07"), (704424, "03:55:08", "18:17:32"), (708842, "05:00:32", "17:32:29"),
    (709580, "05:12:21", "17:22:55"), (727274, "05:13:28", "17:53:40"), (728714, "05:57:06", "17:38:23"),
    (764652, "02:16:44", "18:50:04"),
]


def _seconds(text):
    h, m, s = (int(x) for x in text.split(":"))
    return h * 3600 + m * 60 + s


def test_calendrical_calculations_sunset_in_jerusalem_and_dawn_in_paris():
    # Locations of CC 3rd ed. (check_values.md section 9, from memory there): Jerusalem 31.8 N,
    # 35.2 E, 800 m, zone +2 h; Paris 48 50' 11" N, 2 20' 15" E, 27 m, zone +1 h.
    # CC's sunset: the Sun's centre 16' + 34' + dip below the horizon, with CC's dip for an
    # elevation h: arccos(R / (R + h)) + 19" sqrt(h), R = 6372 km (CC 3rd ed., from memory);
    # dawn: the centre 18 deg below the horizon, no refraction.
    # Tolerances: CC's solar theory and equation of time are truncated series whose error grows
    # away from 2000: 8 s from AD 1000 on, 45 s before (measured: <= 6 s and <= 41 s).
    jer = Site("Jerusalem (CC3)", 31.8, 35.2, 800.0, utc_offset_hours=2.0)
    paris = Site("Paris (CC3)", 48 + 50 / 60 + 11 / 3600, 2 + 20 / 60 + 15 / 3600, 27.0, utc_offset_hours=1.0)
    r_earth = 6.372e6
    depression = (16 + 34) / 60 + math.degrees(math.acos(r_earth / (r_earth + 800.0))) + 19 / 3600 * math.sqrt(800.0)
    rd = np.array([row[0] for row in CC_C5])
    days = rd + 1721425                      # RD -> JDN (check_values.md: JD = RD + 1721424.5)
    sunset = sun_crossing_on_days(days, jer, MODEL, rising=False, altitude_deg=-depression)
    dawn = sun_crossing_on_days(days, paris, MODEL, rising=True, altitude_deg=-18.0)
    for (r, cc_dawn, cc_sunset), ss, dw in zip(CC_C5, sunset, dawn):
        tol = 8 if r >= 364978 else 45       # RD 364978 = AD 1000 January 1 (Gregorian)
        got = ((ss + 2 / 24 + 0.5) % 1) * 86400
        assert abs(got - _seconds(cc_sunset)) <= tol, (r, got, cc_sunset)
        if cc_dawn is None:
            assert np.isnan(dw), r           # midsummer: the Sun never gets 18 deg below Paris
        else:
            got = ((dw + 1 / 24 + 0.5) % 1) * 86400
            assert abs(got - _seconds(cc_dawn)) <= tol, (r, got, cc_dawn)


# ------------------------------------------------------ PyEphem, astronomy-engine

def _sample_days(n=25):
    rng = np.random.default_rng(11)
    return np.sort(rng.integers(2415021, 2488069, n)) - 0.5       # 0h UT, 1900-2100


def test_against_pyephem_1900_2100():
    # Reference: PyEphem (XEphem's VSOP87/ELP2000 theories and its own delta T), upper limb, 34'
    # refraction (pressure 0, horizon -0:34).  Tolerances: Sun 5 s, Moon 30 s (measured 0.4 s and
    # 6 s): the other library's lunar theory and delta T differ, not the definition of the event;
    # a wrong refraction or limb would be off by a minute or more.
    ephem = pytest.importorskip("ephem")
    for jd0 in _sample_days():
        for body, tol in (("sun", 5.0), ("moon", 30.0)):
            ours = find_events(body, ROME, jd0, jd0 + 1.5, deltat=MODEL)
            obs = ephem.Observer()
            obs.lat, obs.lon, obs.elevation = str(ROME.latitude_deg), str(ROME.longitude_deg), ROME.elevation_m
            obs.pressure, obs.horizon, obs.date = 0, "-0:34", ephem.Date(jd0 - 2415020.0)   # Dublin JD
            target = ephem.Sun() if body == "sun" else ephem.Moon()
            for kind, fn in (("rise", obs.next_rising), ("set", obs.next_setting)):
                ref = float(fn(target)) + 2415020.0
                assert abs(ours[kind].jd_ut[0] - ref) < tol * SECOND, (body, kind, jd0)


def test_against_astronomy_engine_1900_2100():
    # Reference: astronomy-engine's SearchRiseSet (upper limb, standard refraction), sample days
    # 1900-2100 at Rome; same tolerances and reasons as for PyEphem (measured 0.4 s and 5 s).
    ae = pytest.importorskip("astronomy")
    observer = ae.Observer(ROME.latitude_deg, ROME.longitude_deg, ROME.elevation_m)
    for jd0 in _sample_days():
        for body, tol in (("sun", 5.0), ("moon", 30.0)):
            ours = find_events(body, ROME, jd0, jd0 + 1.5, deltat=MODEL)
            target = ae.Body.Sun if body == "sun" else ae.Body.Moon
            for kind, direction in (("rise", ae.Direction.Rise), ("set", ae.Direction.Set)):
                ref = ae.SearchRiseSet(target, observer, direction, ae.Time(jd0 - 2451545.0), 2).ut + 2451545.0
                assert abs(ours[kind].jd_ut[0] - ref) < tol * SECOND, (body, kind, jd0)


# -------------------------------------------------------------- vectorization

def test_one_array_job_for_a_century():
    # Every day of 100 years at Babylon: about one skyfield evaluation per sunrise and per sunset
    # (the guide model's first guess is good to about a second, so one Newton step suffices).
    eng = _Engine("sun", BABYLON, MODEL)
    days = np.arange(2415021, 2415021 + 36525)
    d = daily_events("sun", BABYLON, days, deltat=MODEL, transit=False, engine=eng)
    assert np.isfinite(d.rise_ut).all() and np.isfinite(d.set_ut).all()
    events = 2 * (days.size + 2)                     # the days before and after the span are solved too
    assert eng.full_evaluations <= 1.01 * events
    length = (d.set_ut - d.rise_ut) * 24
    assert 9.8 < length.min() < 10.2 and 14.0 < length.max() < 14.4     # Babylon: ~10 h in winter, ~14.2 h in summer
