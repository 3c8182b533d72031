"""Crescent visibility: published criterion formulae and thresholds, geometry, invariants, the detector."""

import numpy as np
import pytest
from hypothesis import given
from hypothesis import strategies as st

from calendra import crescent
from calendra.crescent import (CrescentCriterion, LagRule, Odeh, Yallop, crescent_geometry, crescent_nights,
                               criteria, get_criterion, odeh_arcv_limit, register_criterion, visibility,
                               yallop_arcv_limit)
from calendra.deltat import get_model
from calendra.errors import ParameterError, UnknownNameError
from calendra.sites import Site

MODEL = get_model("smh2016")
BABYLON = Site("Babylon", 32.54, 44.42, 35.0)
MINUTE = 1.0 / 1440.0


def _geometry(arcv, w, arcl=15.0, lag=60.0, age=30.0):
    """A hand-made geometry dict: the same value in geocentric and topocentric fields."""
    arcv, w, arcl, lag, age = np.broadcast_arrays(*(np.asarray(x, dtype=float) for x in (arcv, w, arcl, lag, age)))
    return {"arcv_geo": arcv, "arcv_topo": arcv, "w_geo": w, "w_topo": w, "arcl_geo": arcl, "arcl_topo": arcl,
            "lag_min": lag, "age_h": age}


# ------------------------------------------------------------------ Yallop

def test_yallop_q_formula():
    # Yallop (1997), NAO TN 69 (check_values.md 5.1 [V]): q = (ARCV - (11.8371 - 6.3226 W' + 0.7319 W'^2
    # - 0.1018 W'^3)) / 10.  Hand evaluation: W' = 0.5', ARCV = 10 deg ->
    # 11.8371 - 3.1613 + 0.182975 - 0.012725 = 8.84605, q = 0.115395.
    assert yallop_arcv_limit(0.5) == pytest.approx(8.84605, abs=1e-9)
    res = Yallop().evaluate(_geometry(10.0, 0.5))
    assert res.value[()] == pytest.approx(0.115395, abs=1e-9)
    assert res.category[()] == "B" and bool(res.visible[()])
    # At W' = 0 the limit is the constant term.
    assert yallop_arcv_limit(0.0) == 11.8371


@pytest.mark.parametrize("q, category", [
    # Yallop's categories (check_values.md 5.1 [V]): A q > +0.216; B +0.216 >= q > -0.014;
    # C -0.014 >= q > -0.160; D -0.160 >= q > -0.232; E -0.232 >= q > -0.293; F q <= -0.293.
    # Bounds are tested 1e-7 to either side (a value exactly on a bound is at the mercy of rounding).
    (0.5, "A"), (0.216 + 1e-7, "A"), (0.216 - 1e-7, "B"), (0.0, "B"), (-0.014 + 1e-7, "B"),
    (-0.014 - 1e-7, "C"), (-0.1, "C"), (-0.160 - 1e-7, "D"), (-0.2, "D"), (-0.232 + 1e-7, "D"),
    (-0.232 - 1e-7, "E"), (-0.293 + 1e-7, "E"), (-0.293 - 1e-7, "F"), (-1.0, "F"),
])
def test_yallop_categories(q, category):
    w = 0.3
    arcv = 10 * q + yallop_arcv_limit(w)
    res = Yallop().evaluate(_geometry(arcv, w))
    assert res.value[()] == pytest.approx(q, abs=1e-12)
    assert res.category[()] == category
    # Visible by default in categories A and B only.
    assert bool(res.visible[()]) == (category in "AB")


# -------------------------------------------------------------------- Odeh

def test_odeh_v_formula_and_its_relation_to_yallop():
    # Odeh (2004), Exp. Astron. 18, 39-64 (check_values.md 5.2 [V]):
    # V = ARCV - (-0.1018 W^3 + 0.7319 W^2 - 6.3226 W + 7.1651).  Same cubic as Yallop's, constant
    # 7.1651 instead of 11.8371 (a transcription that reuses 11.8371 is wrong).
    w = np.linspace(0, 4, 41)
    assert np.allclose(yallop_arcv_limit(w) - odeh_arcv_limit(w), 11.8371 - 7.1651, atol=1e-12)
    res = Odeh().evaluate(_geometry(10.0, 0.5))
    assert res.value[()] == pytest.approx(10.0 - 4.17405, abs=1e-9)


@pytest.mark.parametrize("v, zone", [
    # Odeh's zones (check_values.md 5.2): A V >= 5.65; B 2.00 <= V < 5.65; C -0.96 <= V < 2.00; D below.
    (6.0, "A"), (5.65 + 1e-7, "A"), (5.65 - 1e-7, "B"), (2.0 + 1e-7, "B"), (2.0 - 1e-7, "C"),
    (-0.96 + 1e-7, "C"), (-0.96 - 1e-7, "D"),
])
def test_odeh_zones(v, zone):
    w = 0.4
    res = Odeh().evaluate(_geometry(v + odeh_arcv_limit(w), w))
    assert res.category[()] == zone
    assert bool(res.visible[()]) == (zone == "A")      # naked-eye visibility by default


def test_odeh_danjon_limit():
    # No crescent below ARCL 6.4 deg (Odeh's Danjon limit, check_values.md 5.2 [V]), whatever V says.
    res = Odeh().evaluate(_geometry(30.0, 0.1, arcl=6.3))
    assert res.category[()] == "D" and not res.visible[()]
    assert Odeh().evaluate(_geometry(30.0, 0.1, arcl=6.5)).visible[()]


# --------------------------------------------------------------------- lag

def test_lag_rule_thresholds():
    g = _geometry(0, 0, arcl=np.array([8, 12, 12, 12]), lag=np.array([50, 47.9, 48.0, 60]),
                  age=np.array([30, 30, 30, 20]))
    assert LagRule().evaluate(g).visible.tolist() == [True, False, True, True]
    assert LagRule(elongation_min=10).evaluate(g).visible.tolist() == [False, False, True, True]
    assert LagRule(age_min=24).evaluate(g).visible.tolist() == [True, False, True, False]
    assert LagRule(lag_min=40).evaluate(g).visible.tolist() == [True, True, True, True]


# -------------------------------------------------------------- invariants

@given(arcv=st.floats(0, 40), d_arcv=st.floats(0, 10), w=st.floats(0, 5), d_w=st.floats(0, 3),
       lag=st.floats(-60, 300), d_lag=st.floats(0, 100))
def test_visibility_is_monotone_in_arcv_width_and_lag(arcv, d_arcv, w, d_w, lag, d_lag):
    # More arc of vision, a wider crescent or a longer lag never make a visible crescent invisible.
    for crit in (Yallop(), Odeh(), LagRule()):
        lo = crit.evaluate(_geometry(arcv, w, lag=lag))
        hi = crit.evaluate(_geometry(arcv + d_arcv, w + d_w, lag=lag + d_lag))
        assert hi.value[()] >= lo.value[()] - 1e-12
        assert not (lo.visible[()] and not hi.visible[()])


def test_no_visibility_without_the_moon_in_the_sky():
    for crit in (Yallop(), Odeh(), LagRule(lag_min=-100)):
        assert not crit.evaluate(_geometry(40.0, 3.0, lag=-5.0)).visible[()]


# ---------------------------------------------------------------- registry

def test_registry_is_extensible():
    class Fixed(CrescentCriterion):
        name = "test-fixed-arcv"
        title = "ARCV above 10 deg"
        frame, at, default_threshold = "topocentric", "best", 10.0

        def value(self, g):
            return g["arcv_topo"]

    register_criterion(Fixed)
    try:
        assert "test-fixed-arcv" in criteria()
        assert get_criterion("TEST-fixed-arcv").evaluate(_geometry(11.0, 0.2)).visible[()]
        with pytest.raises(ParameterError):
            register_criterion(Fixed)
    finally:
        crescent._CRITERIA.pop("test-fixed-arcv")
    with pytest.raises(UnknownNameError):
        get_criterion("schaefer-not-here")
    assert {"yallop", "odeh", "lag"} <= set(criteria())


# ------------------------------------------------------------- conjunctions

def test_conjunction_helper_meeus_example_49a_and_skyfield():
    from skyfield import almanac

    from calendra.deltat import skyfield_timescale
    from calendra.ephemeris import load_ephemeris

    # Meeus Ex. 49.a: true new moon 1977 Feb 18, JDE 2443192.65118 (TD), k = -283; the book's
    # periodic terms are good to a few seconds in this era: tolerance 10 s.
    t, k = crescent._syzygies(2443180.0, 2443200.0, 0.0, MODEL)
    assert k.tolist() == [-283.0]
    assert abs(t[0] - 2443192.65118) * 86400 < 10
    # skyfield's almanac.moon_phases on the same kernel (same definition: geocentric apparent
    # ecliptic longitudes of date): 0.1 s, at -500 and in 2000.
    eph = load_ephemeris()
    ts = skyfield_timescale(MODEL)
    for j0 in (1538400.0, 2451545.0):
        new, _ = crescent._syzygies(j0, j0 + 200, 0.0, MODEL)
        full, _ = crescent._syzygies(j0, j0 + 200, 0.5, MODEL)
        tt, ph = almanac.find_discrete(ts.tt_jd(j0), ts.tt_jd(j0 + 200), almanac.moon_phases(eph))
        assert np.allclose(new, tt.tt[ph == 0], atol=0.1 / 86400)
        assert np.allclose(full, tt.tt[ph == 2], atol=0.1 / 86400)


# ------------------------------------------------------------------ nights

@pytest.fixture(scope="module")
def nights_2000():
    return crescent_nights(BABYLON, 2451545.0, 2451545.0 + 120, deltat=MODEL)


def test_nights_follow_the_definitions(nights_2000):
    from calendra.riseset import find_events

    n = nights_2000
    assert n.day.shape == (4, 6) and n.offsets.tolist() == [-1, 0, 1, 2, 3, 4]
    # Best time = sunset + 4/9 lag (Yallop); lag = moonset - sunset.
    ok = n.lag_min > 0
    assert np.allclose(n.best_ut[ok], n.sun_ut[ok] + 4 / 9 * n.lag_min[ok] / 1440)
    assert np.isnan(n.best_ut[~ok]).all()
    # Sunsets and moonsets are real ones (skyfield-based event lists of the rise/set module).
    ev_sun = find_events("sun", BABYLON, 2451540.0, 2451700.0, deltat=MODEL, kinds=("set",))["set"].jd_ut
    ev_moon = find_events("moon", BABYLON, 2451540.0, 2451700.0, deltat=MODEL, kinds=("set",))["set"].jd_ut
    assert np.min(np.abs(n.sun_ut.ravel()[:, None] - ev_sun[None, :]), axis=1).max() < 1e-6
    assert np.min(np.abs(n.moon_ut.ravel()[:, None] - ev_moon[None, :]), axis=1).max() < 1e-6
    # Lag grows by roughly 40-70 minutes from one evening to the next.
    assert np.all((np.diff(n.lag_min, axis=1) > 25) & (np.diff(n.lag_min, axis=1) < 90))


def test_geometry_is_self_consistent(nights_2000):
    g = nights_2000.at_best
    ok = np.isfinite(g["arcv_topo"])
    assert np.allclose(g["arcv_topo"][ok], (g["moon_alt_topo"] - g["sun_alt_topo"])[ok])
    assert np.allclose(g["arcv_geo"][ok], (g["moon_alt_geo"] - g["sun_alt_geo"])[ok])
    assert np.allclose(g["w_topo"][ok], (g["sd_arcmin"] * (1 - np.cos(np.radians(g["arcl_topo"]))))[ok])
    # Lunar parallax: the topocentric Moon is lower than the geocentric by ~57' cos(alt).
    diff = (g["moon_alt_geo"] - g["moon_alt_topo"])[ok]
    assert np.all((diff > 0.85) & (diff < 1.05))
    # Semi-diameter of the Moon 14.7'..16.8'; the Sun is below the horizon at the best time.
    assert np.all((g["sd_arcmin"][ok] > 14.6) & (g["sd_arcmin"][ok] < 16.9))
    assert np.all(g["sun_alt_topo"][ok] < 0)


def test_geometry_against_astronomy_engine():
    # Reference: astronomy-engine (its own VSOP87/lunar theory): topocentric airless altitude and
    # azimuth of the Sun and the Moon, and their elongation, at a given instant.  Tolerance 0.01 deg
    # (a few arcseconds of difference between the theories, 0.001 deg of delta T-induced motion).
    ae = pytest.importorskip("astronomy")
    jd = np.array([2451575.2, 2451604.71, 2460000.6])
    g = crescent_geometry(BABYLON, jd, np.zeros(3), MODEL)
    obs = ae.Observer(BABYLON.latitude_deg, BABYLON.longitude_deg, BABYLON.elevation_m)
    for i, t in enumerate(jd):
        time = ae.Time(t - 2451545.0)
        for body, alt_key, az_key in ((ae.Body.Moon, "moon_alt_topo", "moon_az_topo"),
                                      (ae.Body.Sun, "sun_alt_topo", "sun_az_topo")):
            eq = ae.Equator(body, time, obs, True, True)
            hor = ae.Horizon(time, obs, eq.ra, eq.dec, ae.Refraction.Airless)
            assert abs(hor.altitude - g[alt_key][i]) < 0.01
            assert abs((hor.azimuth - g[az_key][i] + 180) % 360 - 180) < 0.01
        em = ae.Equator(ae.Body.Moon, time, obs, True, True).vec
        es = ae.Equator(ae.Body.Sun, time, obs, True, True).vec
        assert abs(ae.AngleBetween(em, es) - g["arcl_topo"][i]) < 0.01


def test_first_visibility_by_each_criterion(nights_2000):
    for name in ("yallop", "odeh", "lag"):
        vis = visibility(nights_2000, name)
        idx = vis.index
        assert np.all(idx >= 1)                      # never before the day of conjunction
        rows = np.arange(idx.size)
        assert vis.result.visible[rows, idx].all()
        assert not vis.result.visible[rows, idx - 1].any()
        g = nights_2000.geometry(vis.criterion.at)
        assert np.all(g["age_h"][rows, idx] > 0)
    # Odeh's naked-eye zone A is stricter than Yallop's A+B, so never earlier.
    assert np.all(visibility(nights_2000, "odeh").index >= visibility(nights_2000, "yallop").index)
    # Lowering the lag threshold can only bring the first evening earlier.
    assert np.all(visibility(nights_2000, "lag", lag_min=30).index <= visibility(nights_2000, "lag").index)


def test_last_visibility_in_the_morning():
    n = crescent_nights(BABYLON, 2451545.0, 2451545.0 + 60, deltat=MODEL, morning=True)
    vis = visibility(n, "yallop")
    rows = np.arange(n.day.shape[0])
    idx = vis.index
    assert np.all(idx >= 0)
    g = n.at_best
    assert np.all(g["age_h"][rows, idx] < 0)        # before conjunction
    # Mornings: the Moon rises before the Sun; lag = sunrise - moonrise; best time before sunrise.
    assert np.all(n.moon_ut[rows, idx] < n.sun_ut[rows, idx])
    assert np.all(n.best_ut[rows, idx] < n.sun_ut[rows, idx])
    later = idx + 1
    ok = later < n.day.shape[1]
    assert not vis.result.visible[rows[ok], later[ok]].any()


def test_crescent_detector_rows(host):
    det = host.detectors.get("crescent")
    table = det.search(1538400.0, 1538400.0 + 90, site=BABYLON, deltat=MODEL)   # -500, three lunations
    kinds = table["kind"].tolist()
    assert kinds.count("first-crescent") == 3
    first = table.select(table["kind"] == "first-crescent")
    before = table.select(table["kind"] == "evening-before")
    assert first["visible"].all() and not before["visible"].any()
    assert np.all(first["q"] > -0.014)
    assert any("Yallop" in v for v in table.provenance["models"].values())
    lag = det.search(1538400.0, 1538400.0 + 90, site=BABYLON, deltat=MODEL, criterion="lag", lag_min=40.0)
    assert np.all(lag.select(lag["kind"] == "first-crescent")["lag"] >= 40.0)
    morning = det.search(1538400.0, 1538400.0 + 90, site=BABYLON, deltat=MODEL, phase="morning")
    last = morning.select(morning["kind"] == "last-crescent")
    after = morning.select(morning["kind"] == "morning-after")
    earlier = morning.select(morning["kind"] == "morning-before")
    assert len(last) >= 2 and last["visible"].all() and not after["visible"].any()
    assert np.all(last["age_h"] < 0) and np.all(earlier["age_h"] < last["age_h"][: len(earlier)])
    with pytest.raises(UnknownNameError):
        det.search(1538400.0, 1538430.0, site=BABYLON, deltat=MODEL, criterion="nonsense")


def test_crescent_command_line():
    from click.testing import CliRunner

    from calendra.cli import main

    out = CliRunner().invoke(main, ["events", "crescent", "--site", "Babylon", "--from", "-500", "--to", "-499",
                                    "--format", "csv"])
    assert out.exit_code == 0, out.output
    lines = out.output.strip().splitlines()
    header = lines[0].split(",")
    assert "q" in header and "lag_min" in header and "category" in header
    assert sum(",first-crescent" in line for line in lines) in (12, 13)
