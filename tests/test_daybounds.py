"""Which calendar day an instant falls on, for days beginning at midnight, noon, sunset or sunrise."""

import numpy as np
from skyfield import almanac
from skyfield.api import wgs84

from calendra.calendars_core import JulianCalendar
from calendra.convert import convert_dates
from calendra.daybounds import calendar_day, sun_crossing
from calendra.deltat import get_model, skyfield_timescale
from calendra.ephemeris import load_ephemeris
from calendra.pluginmanager import Host
from calendra.hookspecs import hookimpl
from calendra.sites import Site

BABYLON = Site("Babylon", 32.54, 44.42, 35.0)
MODEL = get_model("smh2016")


def test_midnight_and_noon_days():
    jd = np.array([2451544.49, 2451544.51, 2451545.01])
    # Common practice: the civil day starts at midnight (JD .5), the astronomers' day at noon (JD .0).
    assert calendar_day(jd, "midnight").tolist() == [2451544, 2451545, 2451545]
    # 1999-12-31 23:45 and 2000-01-01 00:14 both belong to the astronomical day of December 31.
    assert calendar_day(jd, "noon").tolist() == [2451544, 2451544, 2451545]


def test_sunset_matches_skyfield_almanac():
    # Reference library: skyfield's almanac.sunrise_sunset with the same kernel, timescale and horizon
    # (-0.8333 deg, the almanacs' refraction + semi-diameter convention); agreement within 2 s.
    eph = load_ephemeris()
    ts = skyfield_timescale(MODEL)
    days = np.arange(2451545, 2451545 + 20)
    ours = sun_crossing(days, BABYLON, MODEL, rising=False)
    topos = wgs84.latlon(BABYLON.latitude_deg, BABYLON.longitude_deg, BABYLON.elevation_m)
    f = almanac.sunrise_sunset(eph, topos)
    t, up = almanac.find_discrete(ts.ut1_jd(days[0] - 0.5), ts.ut1_jd(days[-1] + 0.5), f)
    sets = t.ut1[~up.astype(bool)]
    assert np.allclose(ours, sets[: len(ours)], atol=2 / 86400)


def test_evening_belongs_to_the_next_day_in_a_sunset_calendar():
    class EveningJulian(JulianCalendar):
        name = "evening-julian"
        aliases = ()
        day_start = "sunset"
        description = "test calendar: Julian dates, day begins at sunset"

    class Plugin:
        @hookimpl
        def calendra_calendars(self):
            return [EveningJulian()]

    host = Host(autoload=False, plugins=[("evening", Plugin())])
    conv = convert_dates(["julian:-0500-03-20 20:00", "julian:-0500-03-20 12:00"],
                         targets=["evening-julian", "julian"], site=BABYLON, host=host)
    recs = conv.records()
    # 20:00 local mean time at Babylon in March is after sunset: the sunset day is March 21.
    assert recs[0]["calendars"]["evening-julian"]["date"] == "-0500-03-21"
    assert recs[0]["calendars"]["julian"]["date"] == "-0500-03-20"
    assert recs[1]["calendars"]["evening-julian"]["date"] == "-0500-03-20"


def test_sunrise_day_counts_the_small_hours_with_the_previous_day():
    day = 2451545 + 100
    rise = sun_crossing(np.array([day]), BABYLON, MODEL, rising=True)[0]
    assert calendar_day(rise - 0.01, "sunrise", BABYLON, MODEL)[()] == day - 1
    assert calendar_day(rise + 0.01, "sunrise", BABYLON, MODEL)[()] == day


def test_polar_night_has_no_sunset():
    north = Site("far north", 78.2, 15.6)
    winter = np.array([2451545 + 5])        # early January
    assert np.isnan(sun_crossing(winter, north, MODEL, rising=False)[0])
