"""Julian and Gregorian calendars against published standards and a reference library."""

import csv
import pathlib

import erfa
import numpy as np
import pytest
from hypothesis import given, strategies as st

from calendra import julian_gregorian as jg
from calendra.calendars_core import GregorianCalendar, JulianCalendar, WesternCalendar
from calendra.daylib import WEEKDAY_NAMES, jdn_to_rd, split_jd, weekday
from calendra.errors import InvalidDateError

DATA = pathlib.Path(__file__).parent / "data"
JUL, GREG, WEST = JulianCalendar(), GregorianCalendar(), WesternCalendar()


def _cc_rows():
    with open(DATA / "cc_sample_c1.csv") as f:
        lines = [l for l in f if not l.startswith("#")]
    return list(csv.DictReader(lines))


def _ymd(text):
    # "-586-7-24" -> (-586, 7, 24)
    sign = -1 if text.startswith("-") else 1
    y, m, d = text.lstrip("-").split("-")
    return sign * int(y), int(m), int(d)


@pytest.mark.parametrize("row", _cc_rows(), ids=lambda r: r["rd"])
def test_calendrical_calculations_sample_dates(row):
    # Source: Reingold & Dershowitz, Calendrical Calculations 3rd ed., Appendix C, table C1.
    rd = int(row["rd"])
    jdn = rd + 1721425
    assert float(row["jd"]) == jdn - 0.5
    assert int(jdn_to_rd(jdn)) == rd
    assert WEEKDAY_NAMES[int(weekday(jdn))] == row["weekday"]
    assert tuple(int(v) for v in jg.gregorian_from_jdn(jdn)) == _ymd(row["gregorian"])
    assert int(GREG.to_jdn(*_ymd(row["gregorian"]))) == jdn
    # CC prints Julian years without a year 0: -587 is 587 BCE = astronomical -586.
    y, m, d = _ymd(row["julian"])
    astro = y + 1 if y < 0 else y
    assert tuple(int(v) for v in jg.julian_from_jdn(jdn)) == (astro, m, d)
    assert int(JUL.to_jdn(astro, m, d)) == jdn


# Source: Meeus, Astronomical Algorithms, 2nd ed., ch. 7 (Ex. 7.a, 7.b and the list on p. 62),
# as listed in shared/reference/check_values.md section 2.1 [V].
MEEUS_JD = [
    ("gregorian", 1957, 10, 4.81, 2436116.31),
    ("julian", 333, 1, 27.5, 1842713.0),
    ("gregorian", 2000, 1, 1.5, 2451545.0),
    ("gregorian", 1999, 1, 1.0, 2451179.5),
    ("gregorian", 1987, 1, 27.0, 2446822.5),
    ("gregorian", 1987, 6, 19.5, 2446966.0),
    ("gregorian", 1988, 1, 27.0, 2447187.5),
    ("gregorian", 1988, 6, 19.5, 2447332.0),
    ("gregorian", 1900, 1, 1.0, 2415020.5),
    ("gregorian", 1600, 1, 1.0, 2305447.5),
    ("gregorian", 1600, 12, 31.0, 2305812.5),
    ("julian", 837, 4, 10.3, 2026871.8),
    ("julian", -1000, 7, 12.5, 1356001.0),
    ("julian", -1001, 8, 17.9, 1355671.4),
    ("julian", -4712, 1, 1.5, 0.0),
]


@pytest.mark.parametrize("cal,y,m,d,jd", MEEUS_JD)
def test_meeus_julian_day_examples(cal, y, m, d, jd):
    calendar = GREG if cal == "gregorian" else JUL
    day = int(d)
    got = float(calendar.to_jdn(y, m, day)) - 0.5 + (d - day)
    assert got == pytest.approx(jd, abs=1e-9)
    jdn, frac = split_jd(jd)
    assert tuple(int(v) for v in calendar.from_jdn(jdn).values()) == (y, m, day)
    assert float(frac) == pytest.approx(d - day, abs=1e-6)


def test_meeus_inverse_exercise():
    # Source: Meeus ch. 7 exercise p. 64: JD 1507900.13 -> -584 May 28.63 (Julian).
    jdn, frac = split_jd(1507900.13)
    assert tuple(int(v) for v in jg.julian_from_jdn(jdn)) == (-584, 5, 28)
    assert float(frac) == pytest.approx(0.63, abs=1e-9)


def test_meeus_interval_weekday_day_of_year():
    # Source: Meeus ch. 7, p. 64-65: Halley interval, Ex. 7.e weekday, Ex. 7.f/7.g day of year.
    assert int(GREG.to_jdn(1986, 2, 9) - GREG.to_jdn(1910, 4, 20)) == 27689
    assert WEEKDAY_NAMES[int(weekday(split_jd(2434923.5)[0]))] == "Wednesday"
    assert int(GREG.day_of_year(1978, 11, 14)) == 318
    assert int(GREG.day_of_year(1988, 4, 22)) == 113


def test_leap_year_rules():
    # Source: Meeus ch. 7, p. 62.
    assert list(JUL.is_leap([900, 1236, 750, 1429])) == [True, True, False, False]
    assert list(GREG.is_leap([1600, 2000, 2400, 1700, 1800, 1900, 2100])) == [True] * 3 + [False] * 4


def test_against_erfa_cal2jd_over_the_gregorian_range():
    # Reference library: ERFA (pyerfa) eraCal2jd / eraJd2cal, proleptic Gregorian, valid from -4799.
    rng = np.random.default_rng(7)
    y = rng.integers(-4799, 10000, 5000)
    m = rng.integers(1, 13, 5000)
    d = rng.integers(1, 29, 5000)
    djm0, djm = erfa.cal2jd(y, m, d)
    assert np.array_equal(GREG.to_jdn(y, m, d), (djm0 + djm + 0.5).astype(np.int64))
    jdn = rng.integers(int(GREG.to_jdn(-4799, 1, 1)), int(GREG.to_jdn(9999, 12, 31)), 5000)
    ey, em, ed, _ = erfa.jd2cal(jdn - 0.5, 0.0)
    gy, gm, gd = jg.gregorian_from_jdn(jdn)
    assert np.array_equal(gy, ey) and np.array_equal(gm, em) and np.array_equal(gd, ed)


@given(st.integers(min_value=-100_000 * 366, max_value=100_000 * 366))
def test_round_trip_beyond_100000_years(offset):
    # Invariant: jdn -> fields -> jdn, for both calendars, across +-100000 years.
    jdn = 2451545 + offset
    assert int(GREG.to_jdn(*jg.gregorian_from_jdn(jdn))) == jdn
    assert int(JUL.to_jdn(*jg.julian_from_jdn(jdn))) == jdn


@given(st.integers(min_value=-400_000_000, max_value=400_000_000), st.integers(1, 12), st.integers(1, 28))
def test_far_years_against_convertdate(year, month, day):
    # Reference library: convertdate (Python integers, no overflow).  Years beyond +-10**6 are
    # computed in int64, nearer ones in int32; both must agree with it, in arrays and alone.
    from convertdate import gregorian as cd_gregorian, julian as cd_julian
    years = np.array([year, year % 1_000_000, -(year % 999_983)])
    for cal, ref in ((JUL, cd_julian), (GREG, cd_gregorian)):
        want = [int(ref.to_jd(int(y), month, day) + 0.5) for y in years]
        assert cal.to_jdn(years, month, day).tolist() == want
        assert int(cal.to_jdn(year, month, day)) == want[0]
        back = cal.from_jdn(np.array(want))
        assert back["year"].tolist() == years.tolist()


def test_consecutive_days_are_consecutive_dates():
    # Invariant: every day of 800 years appears once and in order (monotonic, no gaps).
    jdn = np.arange(int(JUL.to_jdn(-400, 1, 1)), int(JUL.to_jdn(400, 1, 1)))
    for cal in (JUL, GREG):
        y, m, d = cal.from_jdn(jdn).values()
        key = y * 10000 + m * 100 + d
        assert np.all(np.diff(key) > 0)
        assert np.array_equal(cal.to_jdn(y, m, d), jdn)


def test_gregorian_reform_gap():
    # Common practice (papal bull Inter gravissimas): Julian 1582-10-04 is followed by Gregorian 1582-10-15.
    assert int(WEST.to_jdn(1582, 10, 15)) - int(WEST.to_jdn(1582, 10, 4)) == 1
    assert int(WEST.to_jdn(1582, 10, 15)) == jg.GREGORIAN_REFORM_JDN
    with pytest.raises(InvalidDateError, match="julian 1582-10-04 is followed by gregorian 1582-10-15"):
        WEST.to_jdn(1582, 10, 10)
    britain = WEST.with_options(reform="britain")
    # Great Britain: Wednesday 2 September 1752 was followed by Thursday 14 September (common practice).
    assert int(britain.to_jdn(1752, 9, 14)) - int(britain.to_jdn(1752, 9, 2)) == 1
    assert WEEKDAY_NAMES[int(weekday(britain.to_jdn(1752, 9, 2)))] == "Wednesday"
    assert britain.is_valid(1700, 2, 29)        # still Julian in Britain in 1700
    assert not WEST.is_valid(1700, 2, 29)       # Gregorian in Rome


def test_invalid_date_messages():
    with pytest.raises(InvalidDateError, match="February 29 does not exist in gregorian 1900; it does in julian 1900"):
        GREG.to_jdn(1900, 2, 29)
    with pytest.raises(InvalidDateError, match="month 13 does not exist"):
        JUL.to_jdn(2000, 13, 1)
    with pytest.raises(InvalidDateError, match="April 31 does not exist in julian 2000"):
        JUL.to_jdn([2000, 2000], [3, 4], [31, 31])
    assert JUL.is_valid(1900, 2, 29) and not GREG.is_valid(1900, 2, 29)


def test_shapes():
    assert np.shape(GREG.to_jdn(2000, 1, 1)) == ()
    assert GREG.to_jdn([2000, 2001], 1, 1).shape == (2,)
    grid = GREG.to_jdn(np.array([[2000], [2001]]), np.array([1, 2, 3]), 1)
    assert grid.shape == (2, 3)
    fields = GREG.from_jdn(np.array([[2451545, 2451546]]))
    assert fields["day"].shape == (1, 2)


def test_text_forms():
    assert JUL.format(-584, 5, 28) == "-0584-05-28"
    assert JUL.format(-584, 5, 28, style="long") == "28 May 585 BC"
    assert JUL.format(1, 1, 1, style="BCE") == "1 January 1 CE"
    for text in ("585 BC May 28", "28 May 585 BCE", "May 28, 585 BC", "-0584-05-28", "-584 May 28"):
        assert JUL.parse(text) == (-584, 5, 28), text
    assert JUL.parse("AD 1066 Oct 14") == (1066, 10, 14)
