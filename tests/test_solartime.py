"""Equation of time and local apparent solar time."""

import numpy as np
import pytest

from calendra.dateparse import parse_date, resolve_dates
from calendra.deltat import get_model
from calendra.sites import Site
from calendra.solartime import equation_of_time_days

MODEL = get_model("smh2016")


def test_meeus_example_28a():
    # Source: Meeus, Astronomical Algorithms 2nd ed., Ex. 28.a (from memory): 1992 October 13, 0h TD,
    # E = +13m 42.6s. Meeus works from VSOP87 and a rounded obliquity; allow 1 s.
    jd_ut = MODEL.ut_from_tt(2448908.5)
    assert equation_of_time_days(jd_ut, MODEL) * 86400 == pytest.approx(13 * 60 + 42.6, abs=1.0)


def test_equation_of_time_stays_within_its_annual_bounds():
    # Common practice: |E| stays below about 17 minutes in the modern era, and sums to ~0 over a year.
    jd = 2451545.0 + np.arange(0, 365.25, 0.5)
    e = equation_of_time_days(jd, MODEL) * 1440
    assert e.max() < 17.0 and e.min() > -15.0
    assert abs(e.mean()) < 0.5


def test_local_apparent_time_differs_from_mean_time_by_the_equation(host):
    site = Site("Greenwich meridian", 51.48, 0.0)
    lat = resolve_dates([parse_date("gregorian:1992-10-13 12:00 LAT", host)], host, MODEL, site)
    lmt = resolve_dates([parse_date("gregorian:1992-10-13 12:00 LMT", host)], host, MODEL, site)
    diff = (lmt.jd_ut[0] - lat.jd_ut[0]) * 86400
    assert diff == pytest.approx(float(equation_of_time_days(lat.jd_ut[0], MODEL)) * 86400, abs=0.5)
    assert 13 * 60 < diff < 15 * 60
