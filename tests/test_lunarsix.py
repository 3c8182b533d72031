"""The Babylonian lunar six: definitions of Huber & Steele (2007), consistency with the rise/set lists."""

import numpy as np
import pytest

from calendra.crescent import crescent_nights, visibility
from calendra.deltat import get_model
from calendra.lunarsix import MINUTES_PER_US, NAMES, lunar_six
from calendra.riseset import find_events
from calendra.sites import Site

MODEL = get_model("smh2016")
BABYLON = Site("Babylon", 32.54, 44.42, 35.0)
SPAN = (1538400.0, 1538400.0 + 180.0)          # -500 January to June (TT)


@pytest.fixture(scope="module")
def six():
    return lunar_six(BABYLON, *SPAN, deltat=MODEL)


@pytest.fixture(scope="module")
def events():
    lo, hi = SPAN[0] - 40, SPAN[1] + 40
    sun = find_events("sun", BABYLON, lo, hi, deltat=MODEL, kinds=("rise", "set"))
    moon = find_events("moon", BABYLON, lo, hi, deltat=MODEL, kinds=("rise", "set"))
    return {"sunrise": sun["rise"].jd_ut, "sunset": sun["set"].jd_ut,
            "moonrise": moon["rise"].jd_ut, "moonset": moon["set"].jd_ut}


def _next(times, t):
    return times[np.searchsorted(times, t, side="right")]


def _prev(times, t):
    return times[np.searchsorted(times, t, side="left") - 1]


def test_units_are_us_of_four_minutes(six):
    # Huber & Steele 2007, section I: 1 UŠ = 4 minutes of time ("time degree").
    assert MINUTES_PER_US == 4.0
    for name in NAMES:
        ok = np.isfinite(six[name]["minutes"])
        assert ok.sum() >= 5, name
        assert np.allclose(six[name]["us"][ok], six[name]["minutes"][ok] / 4.0)
        assert np.all(six[name]["minutes"][ok] > 0)


def test_full_moon_intervals_follow_the_definitions(six, events):
    # Huber & Steele 2007, section I:
    # ŠÚ: moonset to sunrise, when the Moon set for the last time before sunrise;
    # na: sunrise to moonset, when the Moon set for the first time after sunrise;
    # ME: moonrise to sunset, when the Moon rose for the last time before sunset;
    # GE6: sunset to moonrise, when the Moon rose for the first time after sunset.
    su, na, me, ge = six["SU"], six["na"], six["ME"], six["GE6"]
    ok = np.isfinite(su["minutes"]) & np.isfinite(na["minutes"])
    # ŠÚ: the moonset precedes sunrise, and it is the last moonset before that sunrise.
    assert np.all(su["moon_ut"][ok] < su["sun_ut"][ok])
    assert np.allclose(su["moon_ut"][ok], _prev(events["moonset"], su["sun_ut"][ok]), atol=1e-6)
    # na: on the next morning; the first moonset after that sunrise.
    assert np.all(na["day"][ok] == su["day"][ok] + 1)
    assert np.allclose(na["moon_ut"][ok], _next(events["moonset"], na["sun_ut"][ok]), atol=1e-6)
    assert np.allclose(na["sun_ut"][ok], _next(events["sunrise"], su["sun_ut"][ok]), atol=1e-6)
    # No morning between: the moonset after ŠÚ's sunrise already comes after the next sunrise.
    assert np.all(_next(events["moonset"], su["sun_ut"][ok]) > na["sun_ut"][ok])
    ok = np.isfinite(me["minutes"]) & np.isfinite(ge["minutes"])
    assert np.all(me["moon_ut"][ok] < me["sun_ut"][ok])
    assert np.allclose(me["moon_ut"][ok], _prev(events["moonrise"], me["sun_ut"][ok]), atol=1e-6)
    assert np.all(ge["day"][ok] == me["day"][ok] + 1)
    assert np.allclose(ge["moon_ut"][ok], _next(events["moonrise"], ge["sun_ut"][ok]), atol=1e-6)
    assert np.all(_next(events["moonrise"], me["sun_ut"][ok]) > ge["sun_ut"][ok])
    # The Moon's events fall back by roughly 40-60 minutes a day against the Sun's, so ŠÚ + na and
    # ME + GE6 are about one day's retardation.
    assert np.all((su["minutes"] + na["minutes"])[np.isfinite(su["minutes"] + na["minutes"])] < 90)
    assert np.all((me["minutes"] + ge["minutes"])[np.isfinite(me["minutes"] + ge["minutes"])] < 90)


def test_sequence_of_the_four_is_one_huber_and_steele_list(six):
    # Huber & Steele 2007, section I: depending on whether opposition falls in daytime or at night,
    # the four intervals come in one of four sequences, on Babylonian days (beginning at sunset):
    # ŠÚ-ME-NA-GE6 on n, n+1, n+1, n+2; ŠÚ-NA-ME-GE6 on n, n+1, n+2, n+3;
    # ME-ŠÚ-GE6-NA on n, n, n+1, n+1; ME-GE6-ŠÚ-NA on n, n+1, n+1, n+2.
    allowed = {("SU", "ME", "na", "GE6"): (0, 1, 1, 2), ("SU", "na", "ME", "GE6"): (0, 1, 2, 3),
               ("ME", "SU", "GE6", "na"): (0, 0, 1, 1), ("ME", "GE6", "SU", "na"): (0, 1, 1, 2)}
    names = ("SU", "na", "ME", "GE6")
    evening = {"ME": True, "GE6": True, "SU": False, "na": False}
    n = six["SU"]["minutes"].size
    seen = set()
    for i in range(n):                      # a few months: a loop over rows of the result, not over days
        if not all(np.isfinite(six[k]["minutes"][i]) for k in names):
            continue
        t = {k: six[k]["moon_ut"][i] for k in names}
        order = tuple(sorted(names, key=lambda k: t[k]))
        # An evening belongs to the Babylonian day that begins at that sunset.
        bday = {k: six[k]["day"][i] + (1 if evening[k] else 0) for k in names}
        offsets = tuple(int(bday[k] - bday[order[0]]) for k in order)
        assert allowed.get(order) == offsets, (i, order, offsets)
        seen.add(order)
    assert len(seen) >= 2                   # six months show more than one case


def test_na_and_kur_on_the_crescent_days(six):
    # NA: sunset to moonset on the evening of first visibility; KUR: moonrise to sunrise on the
    # morning of last visibility (Huber & Steele 2007), here by Yallop's q.
    ev = crescent_nights(BABYLON, *SPAN, deltat=MODEL)
    vis = visibility(ev, "yallop")
    rows = np.arange(ev.day.shape[0])
    assert np.allclose(six["NA"]["minutes"], ev.lag_min[rows, vis.index])
    assert np.all(six["NA"]["moon_ut"] > six["NA"]["sun_ut"])
    assert np.all(six["KUR"]["moon_ut"] < six["KUR"]["sun_ut"])
    # The first crescent is seen 1-3 evenings after conjunction; NA is then typically 30-130 min
    # (8-33 UŠ); KUR similarly on the last morning.
    assert np.all((six["NA"]["minutes"] > 20) & (six["NA"]["minutes"] < 150))
    assert np.all((six["KUR"]["minutes"] > 20) & (six["KUR"]["minutes"] < 150))
    # Months: NA opens month k, KUR closes month k (the conjunction after it is k + 1).
    assert np.all(np.diff(six["NA"]["lunation"]) == 1)


def test_lunar_six_detector(host):
    det = host.detectors.get("lunar-six")
    table = det.search(1538400.0, 1538460.0, site=BABYLON, deltat=MODEL)
    kinds = table["kind"].tolist()
    for name in NAMES:
        assert name in kinds
    assert np.all(np.diff(table["jd_ut"]) > 0)
    assert np.allclose(table["us"], np.round(table["minutes"] / 4, 2), atol=0.01)
    assert "Huber & Steele" in table.provenance["models"]["lunar six"]
