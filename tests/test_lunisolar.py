"""Sky-defined calendars of the lunisolar plugin: Chinese, Babylonian, observational Islamic, TOML calendars.

Sources are named beside each check.  Tolerances: published calendar dates
are whole days and are compared exactly, except where a month start hangs
on minutes (a new moon near local midnight, a crescent near the
criterion's threshold, delta T before 1600): those cases are listed, with
the reason, and the reason is asserted (the margin is small, or the rule
differs), so that an unexplained disagreement still fails.
"""

import os

import numpy as np
import pytest

from calendra import julian_gregorian as jg
from calendra.errors import InvalidDateError, ParameterError
from calendra.pluginmanager import get_host

# Calendrical Calculations (Reingold & Dershowitz), Appendix C sample data, as transcribed in
# /work/shared/reference/check_values.md section 1 [V]: RD, Babylonian (4th ed., Table C6) and
# observational Islamic (Table C2) columns.
CC_ROWS = [
    (-214193, (-275, 4, 0, 10), (-1245, 12, 11)), (-61387, (143, 8, 0, 24), (-813, 2, 25)),
    (25469, (381, 7, 0, 1), (-568, 4, 2)), (171307, (780, 10, 0, 17), (-157, 10, 18)),
    (210155, (887, 2, 0, 3), (-47, 6, 3)), (369740, (1324, 1, 0, 5), (403, 10, 5)),
    (400085, (1407, 2, 0, 22), (489, 5, 22)), (434355, (1500, 12, 0, 7), (586, 2, 7)),
    (470160, (1598, 12, 0, 21), (687, 2, 21)), (473837, (1609, 1, 0, 7), (697, 7, 7)),
    (507850, (1702, 2, 0, 29), (793, 6, 30)), (544676, (1803, 1, 0, 2), (897, 6, 2)),
    (567118, (1864, 5, 0, 30), (960, 9, 30)), (569477, (1870, 11, 0, 27), (967, 5, 27)),
    (613424, (1991, 4, 0, 2), (1091, 6, 3)), (626596, (2027, 4, 0, 4), (1128, 8, 4)),
    (645554, (2079, 3, 0, 3), (1182, 2, 4)), (671401, (2149, 12, 0, 11), (1255, 1, 11)),
    (694799, (2213, 12, 1, 20), (1321, 1, 20)), (704424, (2240, 5, 0, 19), (1348, 3, 19)),
    (708842, (2252, 6, 0, 7), (1360, 9, 7)), (709580, (2254, 7, 0, 7), (1362, 10, 7)),
    (727274, (2302, 12, 0, 12), (1412, 9, 12)), (728714, (2306, 12, 0, 5), (1416, 10, 5)),
    (764652, (2405, 4, 0, 5), (1518, 3, 5)),
]
RD_TO_JDN = 1721425


@pytest.fixture(scope="module")
def chinese():
    return get_host().calendars.get("chinese")


@pytest.fixture(scope="module")
def babylonian():
    return get_host().calendars.get("babylonian")


@pytest.fixture(scope="module")
def hijri():
    return get_host().calendars.get("islamic-observed")


def _fields(cal, jdn):
    f = cal.from_jdn(jdn)
    return tuple(int(np.asarray(f[k])) for k in cal.fields)


# ============================================================ Chinese

# Chinese New Year 2000-2030: factmonster.com, "Chinese New Year Dates" (updated 2017-02-21), read
# in a stored copy [V].  (Another stored page gives 2028 January 27; the list here says 26, which the
# computation confirms: the new moon of 2028 January 26 falls at about 23 h in UTC+8.)
CNY = {2000: (2, 5), 2001: (1, 24), 2002: (2, 12), 2003: (2, 1), 2004: (1, 22), 2005: (2, 9), 2006: (1, 29),
       2007: (2, 18), 2008: (2, 7), 2009: (1, 26), 2010: (2, 14), 2011: (2, 3), 2012: (1, 23), 2013: (2, 10),
       2014: (1, 31), 2015: (2, 19), 2016: (2, 8), 2017: (1, 28), 2018: (2, 16), 2019: (2, 5), 2020: (1, 25),
       2021: (2, 12), 2022: (2, 1), 2023: (1, 22), 2024: (2, 10), 2025: (1, 29), 2026: (2, 17), 2027: (2, 6),
       2028: (1, 26), 2029: (2, 13), 2030: (2, 3)}


def test_chinese_new_year_2000_2030(chinese):
    years = np.array(sorted(CNY))
    got = chinese.year_start_jdn(years)
    want = jg.gregorian_to_jdn(years, [CNY[y][0] for y in years], [CNY[y][1] for y in years])
    assert np.array_equal(got, want)


@pytest.mark.parametrize("year, leap", [(2017, 6), (2020, 4), (2023, 2), (2025, 6), (2033, 11), (2019, 0),
                                        (2024, 0)])
def test_chinese_leap_months(chinese, year, leap):
    # From memory [M]: leap 6th month 2017, leap 4th 2020, leap 2nd 2023, leap 6th 2025; 2033 has a
    # leap 11th month (the "2033 problem", settled by the rule of the first month without a principal
    # term in a 13-month sui); 2019 and 2024 have none.
    assert int(chinese.leap_month(year)) == leap
    assert int(chinese.months_in_year(year)) == (13 if leap else 12)


# lunardate (PyPI, tables for 1900-2099) disagrees on these month starts; each is explained:
#  * 1914, 1916, 1920: before 1929 the calendar was reckoned on the meridian of Beijing (116 deg 25'
#    E); with meridian=116.4 the computation agrees (checked below);
#  * new moon within 10 minutes after midnight (UTC+8): the day depends on the ephemeris and delta T
#    the tables were made with (1933, 1978; 2057 and 2097 depend on the unknown future delta T);
#  * 1954-11-25: the new moon falls at 20:30 UTC+8 (3.5 h from midnight), so 1954-11-25 begins a month
#    under any ephemeris; the table's day 30 there is its own anomaly.
LUNARDATE_EXCEPTIONS = {(1914, 11, 18): "beijing", (1916, 2, 4): "beijing", (1920, 11, 11): "beijing",
                        (1933, 7, 23): "midnight", (1978, 9, 3): "midnight", (2057, 9, 29): "midnight",
                        (2097, 8, 8): "midnight", (1954, 11, 25): "table"}


def _leap(ld):
    """lunardate's leap flag (``is_leap_month`` in 0.3, ``isLeapMonth`` before)."""
    flag = ld.__dict__.get("is_leap_month")
    return int(ld.isLeapMonth if flag is None else flag)


def test_chinese_months_1900_2099_against_lunardate(chinese):
    lunardate = pytest.importorskip("lunardate")
    j0, j1 = int(jg.gregorian_to_jdn(1900, 2, 1)), int(jg.gregorian_to_jdn(2099, 12, 1))
    jdn = np.arange(j0, j1)
    f = chinese.from_jdn(jdn)
    starts = jdn[np.asarray(f["day"]) == 1]
    disagree = {}
    for j in starts:
        y, m, d = (int(v) for v in jg.gregorian_from_jdn(j))
        ld = lunardate.LunarDate.from_solar_date(y, m, d)
        i = j - j0
        mine = (int(f["year"][i]), int(f["month"][i]), int(f["leap"][i]), int(f["day"][i]))
        if mine != (ld.year, ld.month, _leap(ld), ld.day):
            disagree[(y, m, d)] = j
    assert set(disagree) == set(LUNARDATE_EXCEPTIONS), sorted(set(disagree) ^ set(LUNARDATE_EXCEPTIONS))
    assert len(starts) > 2400
    beijing = chinese.with_options(meridian="116.4")
    for (y, m, d), why in LUNARDATE_EXCEPTIONS.items():
        j = disagree[(y, m, d)]
        k = chinese.lunation_of_day(j)
        margin = float(chinese.moons.margin(np.array([k]))[0])
        if why == "midnight":
            assert margin < 10.0
        elif why == "beijing":
            ld = lunardate.LunarDate.from_solar_date(y, m, d)
            assert _fields(beijing, j) == (ld.year, ld.month, _leap(ld), ld.day)
        else:
            assert margin > 180.0


def test_chinese_invariants_1900_2100(chinese):
    st = chinese.sui_structure(1900, 2100)
    start, month, leap, terms = st["start"], st["month"], st["leap"], st["terms"]
    keep = (st["sui"] >= 1900) & (st["sui"] <= 2100)
    lengths = np.diff(start)[keep[:-1]]
    assert set(np.unique(lengths)) <= {29, 30}
    t = terms[keep]
    # A leap month never contains a principal term.
    assert np.all(t[leap[keep] == 1] == 0)
    # At most one principal term a month, except rare months that hold two.  The documented edge case is
    # the sui of 2033-34 [M]: its month 11, beginning 2033-11-22, holds xiaoxue and dongzhi, which leaves
    # the sui ending in December 2033 a 12-month sui with a month without a principal term that is not
    # leap.  1900-2100 has four such months (computed, pinned here): the other two are month 11 of 1984
    # and of 2052, each beginning within a day of the solstice.
    two = np.flatnonzero(keep & (terms == 2))
    assert terms.max() <= 2
    got = sorted(tuple(int(v) for v in jg.gregorian_from_jdn(start[i])) for i in two)
    assert got == [(1984, 12, 22), (2033, 11, 22), (2034, 1, 20), (2052, 12, 21)]
    s33 = np.flatnonzero(st["sui"] == 2033)
    assert s33.size == 12 and np.any(terms[s33] == 0) and not np.any(leap[s33])
    for s in range(1900, 2101):
        in_sui = np.flatnonzero(st["sui"] == s)
        if in_sui.size == 13:
            # The leap month is the first month of the sui without a principal term (rule 5).
            first_empty = in_sui[np.flatnonzero(terms[in_sui] == 0)[0]]
            assert leap[first_empty] == 1
    # Month 11 contains the day of the December solstice (rule 4), and every 13-month sui has one leap.
    for s in range(1900, 2101):
        in_sui = np.flatnonzero(st["sui"] == s)
        assert month[in_sui[0]] == 11 and leap[in_sui[0]] == 0
        assert leap[in_sui].sum() == (1 if in_sui.size == 13 else 0)
        assert in_sui.size in (12, 13)


def test_chinese_solstice_by_day_in_month_11(chinese):
    for year in (1984, 2000, 2033, 2050):
        ws = [r for r in chinese.solar_terms(year) if r["longitude"] == 270][0]
        y, m, d = (int(v) for v in ws["local_date"].split("-"))
        f = _fields(chinese, int(jg.gregorian_to_jdn(y, m, d)))
        assert f[1] == 11
        assert len(chinese.solar_terms(year)) == 24


def test_sexagenary_cycles():
    from calendra_lunisolar.chinese import day_cycle_index, sexagenary_name, year_cycle_index

    # 1949 October 1 was a jiazi day [M]; the Chunqiu eclipse of Duke Yin year 3, day jisi, is the
    # solar eclipse of 720 BC February 22 (Julian -719-02-22) [M].
    assert sexagenary_name(day_cycle_index(jg.gregorian_to_jdn(1949, 10, 1))) == "jiazi"
    assert sexagenary_name(day_cycle_index(jg.julian_to_jdn(-719, 2, 22))) == "jisi"
    # 1984 was a jiazi year, 2023 a guimao (Rabbit) year [M].
    assert sexagenary_name(year_cycle_index(1984)) == "jiazi"
    assert sexagenary_name(year_cycle_index(2023)) == "guimao"


def test_chinese_options_and_errors(chinese):
    alt = get_host().calendars.get("chinese[meridian=UTC+9]")
    assert alt.label == "chinese[meridian=UTC+9]"
    with pytest.raises(ParameterError):
        get_host().calendars.get("chinese[meridian=somewhere]")
    with pytest.raises(ParameterError):
        chinese.with_options(colour="red")
    with pytest.raises(InvalidDateError, match="leap month"):
        chinese.to_jdn(2024, 4, 1, 1)
    # Local apparent time of Beijing (the historical practice) moves a month start by at most a day, and
    # rarely: only new moons within the equation of time (<= 17 min) of midnight.
    mean = chinese.with_options(meridian="116.4")
    app = chinese.with_options(meridian="116.4", solar_time="apparent")
    k = np.arange(-3600, -3200)            # 1709..1741
    d = app.month_starts(k) - mean.month_starts(k)
    assert np.all(np.abs(d) <= 1) and np.count_nonzero(d) <= 0.05 * d.size
    assert np.all(mean.moons.margin(k)[d != 0] < 17.0)
    assert chinese.parse("2023-02L-15") == (2023, 2, 1, 15)
    assert chinese.format(2023, 2, 1, 15) == "2023-02L-15"
    assert chinese.parse(chinese.format(2023, 2, 1, 15, style="long")) == (2023, 2, 1, 15)


# ============================================================ Babylonian

def test_seleucid_era_begins_3_april_311_bc(babylonian):
    # 1 Nisannu SE 1 = 311 BC April 3 (Julian -310-04-03): Parker & Dubberstein, as quoted in
    # check_values section 8 [M].
    assert int(babylonian.year_start_jdn(1)) == int(jg.julian_to_jdn(-310, 4, 3))


def test_babylonian_against_calendrical_calculations(babylonian):
    # CC 4th ed. Table C6 (check_values section 1 [V]).  CC extends the 19-year cycle backwards; with
    # before=cycle all 25 rows agree to the day (measured), which says that the default month rule
    # (lag >= 48 min, age >= 24 h at Babylon) gives the same first crescents on these dates.
    cyc = babylonian.with_options(before="cycle")
    for rd, bab, _ in CC_ROWS:
        assert _fields(cyc, rd + RD_TO_JDN) == bab, rd
    # The default reconstructs the years before 424/3 BC by the equinox rule: only the row of 587 BC
    # (before the cycle) may differ, and then by whole months, not days.
    for rd, bab, _ in CC_ROWS:
        got = _fields(babylonian, rd + RD_TO_JDN)
        if rd + RD_TO_JDN >= int(jg.julian_to_jdn(-423, 1, 1)):
            assert got == bab, rd
        else:
            assert got[0] == bab[0] and got[3] == bab[3]


def test_babylonian_cycle_positions():
    from calendra_lunisolar.babylonian import cycle_leap_position

    # Stern, Calendars in Antiquity (2012), Table 2.5 [V]: the cycle beginning 367/6 BC has XII2 in
    # its years 3, 6, 8, 11, 14, 19 and VI2 in year 17; the years 2, 4, 5 are common.
    def se(bc):
        return 1 - bc + 311
    first = 367
    for pos in range(1, 20):
        bc = first - (pos - 1)
        want = 6 if pos == 17 else (12 if pos in (3, 6, 8, 11, 14, 19) else -1)
        assert int(cycle_leap_position(se(bc))) == want, (bc, pos)
    # Ululu II of 408/7 BC (year 17 of the cycle of 424/3), Stern Table 2.5 note a [V].
    assert int(cycle_leap_position(se(408))) == 6


def test_babylonian_invariants(babylonian):
    years = np.arange(-400, 101)
    nk, months, lp = babylonian._year_info(years)
    assert set(np.unique(months)) <= {12, 13}
    k = np.arange(int(nk[0]), int(nk[-1] + months[-1]))
    lengths = np.diff(babylonian.month_starts(np.r_[k, k[-1] + 1]))
    assert set(np.unique(lengths)) <= {29, 30}
    # The 30-day rule: where the computed crescent would make a month of 31 days (about 0.6 % of months
    # with the default lag rule, measured), the next month begins on day 31 anyway; the shift it carries
    # dies out within a few months, well inside the lunations a block is recomputed from.
    from calendra_lunisolar.base import CHAIN_MARGIN

    moved = babylonian.month_starts(k) != babylonian._raw_starts(k)
    runs = np.diff(np.flatnonzero(np.diff(np.r_[0, moved.astype(int), 0])))[::2]
    assert moved.any() and runs.max() < CHAIN_MARGIN
    # Nisannu 1 near the spring equinox: within -3..+31 days of it over 400 BC..AD 100 (cycle era).
    from calendra.solarterms import equinoxes_solstices

    starts = babylonian.month_starts(nk)
    eq = equinoxes_solstices(float(starts[0]) - 60, float(starts[-1]) + 60)
    march = eq.jd_tt[np.abs(eq.longitude_deg) < 1e-6]
    offs = starts - march[np.searchsorted(march, starts - 40)]
    assert offs.min() > -3 and offs.max() < 32


def test_babylonian_margins_are_exposed(babylonian):
    rows = babylonian.year_rows(-100)
    assert len(rows) in (12, 13)
    for r in rows:
        assert r["days"] in (29, 30)
        assert r["fragile"] == (not np.isfinite(r["margin"]) or r["margin"] < 4.0)
        if r["seen"] and r["sky_start_agrees"]:
            # The margin after is the lag (min) of the first visible evening minus the threshold.
            assert r["lag"] - 48.0 >= r["margin"] - 1e-9
    assert any(not r["fragile"] for r in rows)
    assert rows[0]["intercalation"] == "19-year cycle"


def test_babylonian_criteria_differ_by_days_only(babylonian):
    yal = babylonian.with_options(criterion="yallop")
    k = np.arange(-28000, -27800)
    d = yal.month_starts(k) - babylonian.month_starts(k)
    assert np.abs(d).max() <= 2 and np.mean(d == 0) > 0.5


def test_babylonian_attested_lengths_override_and_report(tmp_path, babylonian):
    from calendra_lunisolar.babylonian import check_attested

    y = 10
    natural = babylonian.year_rows(y)
    flip = natural[3]
    other = 59 - flip["days"]
    path = tmp_path / "att.toml"
    path.write_text(f'[[month_length]]\nyear = {y}\nmonth = "{flip["name"]}"\ndays = {other}\nsource = "test"\n'
                    f'[[month_length]]\nyear = {y}\nmonth = 2\ndays = {natural[1]["days"]}\n', encoding="utf-8")
    cal = babylonian.with_options(attested=str(path))
    rows = cal.year_rows(y)
    assert rows[3]["days"] == other and rows[3]["attested_days"] == other
    assert rows[4]["first_jdn"] == flip["first_jdn"] + other
    assert all(r["days"] in (29, 30) for r in rows)
    report = check_attested(cal)
    assert [r["agree"] for r in report] == [True, False]
    assert report[1]["computed_days"] == flip["days"] and report[1]["attested_days"] == other


def test_babylonian_attested_intercalations(tmp_path, babylonian):
    cal = babylonian.with_options(attested="stern2012")
    # Stern 2012 Table 2.1 [V]: VI2 in 621/0 BC (Nisannu in Julian -620), XII2 in 624/3, none in 623/2.
    assert int(cal.leap_month(-620 + 311)) == 6
    assert int(cal.leap_month(-623 + 311)) == 12
    assert int(cal.leap_month(-622 + 311)) == 0
    assert cal.intercalation_rule(-620 + 311).startswith("attested")
    assert cal.year_rows(-620 + 311)[6]["name"] == "Ululu II"
    bad = tmp_path / "bad.toml"
    bad.write_text('[[intercalation]]\nyear = 5\nmonth = "Simanu"\n', encoding="utf-8")
    with pytest.raises(ParameterError, match="Ululu II or Addaru II"):
        babylonian.with_options(attested=str(bad))


# ============================================================ observational Islamic

def test_islamic_observed_against_calendrical_calculations(hijri):
    # CC Table C2 "Islamic obs." (check_values section 1 [V]).  CC's observational calendar uses its own
    # site (Cairo, from memory) and criterion (from memory: Shaukat's), not Yallop's; with Yallop at
    # Cairo every row from AD 1 on agrees to the day (measured) and the -586 row, where delta T is
    # uncertain by hours, by one day.  With Odeh's stricter naked-eye zone the differences are one day.
    cairo = hijri.with_options(site="Cairo")
    odeh = hijri.with_options(site="Cairo", criterion="odeh")
    for rd, _, isl in CC_ROWS:
        jdn = rd + RD_TO_JDN
        got = cairo.to_jdn(*_fields(cairo, jdn)) - cairo.to_jdn(*isl) if cairo.is_valid(*isl) else None
        if rd > 0:
            assert _fields(cairo, jdn) == isl, rd
        else:
            assert got is not None and abs(int(got)) <= 1
        o = _fields(odeh, jdn)
        assert o[:2] == isl[:2] and abs(o[2] - isl[2]) <= 1


def test_islamic_observed_next_to_tabular(hijri):
    from calendra_lunisolar.islamic_observed import compare_with_tabular

    rows = compare_with_tabular(hijri, 1445)
    assert len(rows) == 12
    diffs = [r["difference_days"] for r in rows]
    assert all(abs(d) <= 2 for d in diffs)
    assert all(r["days"] in (29, 30) for r in rows)
    # 1 Muharram AH 1 falls on 622 July 15-17 (Julian) -- the tabular epochs are July 15/16 (check_values
    # section 8 [M]); the sighting prediction can be a day later.
    j = int(hijri.year_start_jdn(1))
    assert int(jg.julian_to_jdn(622, 7, 15)) <= j <= int(jg.julian_to_jdn(622, 7, 17))


# ============================================================ TOML calendars

DEMO = os.path.join(os.path.dirname(__file__), "..", "demo_events", "invented_lunisolar_kesh.toml")


def test_toml_calendars_from_demo_file():
    from calendra.solarterms import solar_longitude_crossings
    from calendra_lunisolar.generic import load_lunisolar

    moons, civil = load_lunisolar(DEMO)
    assert moons.name == "kesh-moons" and moons.day_start == "sunset"
    j = np.arange(int(jg.julian_to_jdn(-705, 1, 1)), int(jg.julian_to_jdn(-690, 1, 1)))
    for cal in (moons, civil):
        f = cal.from_jdn(j)
        assert np.array_equal(cal.to_jdn(*[f[k] for k in cal.fields]), j)
        months = cal.months_in_year(np.arange(-700, -690))
        assert set(np.unique(months)) <= {12, 13}
    # kesh-moons: each year's first month contains the day of the September equinox (local civil day).
    for y in range(-700, -690):
        s0, s1 = int(moons.year_start_jdn(y)), int(moons.month_starts(moons._year_info(y)[0] + 1))
        c = solar_longitude_crossings(s0 - 40.0, s1 + 40.0, 180.0)
        ut = float(moons.deltat.ut_from_tt(c.jd_tt[0]))
        day = int(np.floor(ut + moons.site.offset_days + 0.5))
        assert s0 <= day < s1
    # kesh-civil: 8-year cycle with leap positions 3, 5, 8, year 1 holding -0699-03-30 in month 1.
    assert [int(civil.months_in_year(y)) for y in range(1, 9)] == [12, 12, 13, 12, 13, 12, 12, 13]
    anchor = int(jg.gregorian_to_jdn(-699, 3, 30))
    assert _fields(civil, anchor)[:3] == (1, 1, 0)
    # Months begin the day after the local day of the conjunction.
    k = civil.lunation_of_day(anchor)
    assert int(civil.month_starts(k)) == int(civil.source.values(np.array([k]), "day")[0]) + 1


def test_toml_calendar_errors(tmp_path):
    from calendra_lunisolar.generic import load_lunisolar

    p = tmp_path / "bad.toml"
    p.write_text('[calendar]\nname = "x"\nmonth_names = ["a"]\nsite = "Babylon"\n', encoding="utf-8")
    with pytest.raises(ParameterError, match="month_names"):
        load_lunisolar(p)
    p.write_text('[calendar]\nname = "x"\nmonth_names = ["a","b","c","d","e","f","g","h","i","j","k","l"]\n'
                 'site = "Babylon"\ncolour = 1\n', encoding="utf-8")
    with pytest.raises(ParameterError, match="colour"):
        load_lunisolar(p)


def test_toml_calendars_register_from_environment(monkeypatch, fresh_host):
    from calendra import pluginmanager

    monkeypatch.setenv("CALENDRA_LUNISOLAR", DEMO)
    pluginmanager.set_host(None)
    host = pluginmanager.get_host()
    assert "kesh-moons" in host.calendars and "kesh-civil" in host.calendars
    assert host.calendars.plugin_of(host.calendars.get("kesh-moons")) == "lunisolar"


def test_lunisolar_year_command():
    from click.testing import CliRunner

    from calendra.cli import main

    res = CliRunner().invoke(main, ["lunisolar-year", "babylonian", "-500"])
    assert res.exit_code == 0, res.output
    assert "Nisannu" in res.output and "margin" in res.output and "community's own authority" in res.output
    res = CliRunner().invoke(main, ["hijri-compare", "--site", "Mecca", "--year", "1445", "--format", "csv"])
    assert res.exit_code == 0, res.output
    assert res.output.splitlines()[0].startswith("month,name,evening_gregorian")
    assert len(res.output.strip().splitlines()) == 13


def test_long_dates_of_leap_months_read_back(babylonian):
    # Invariant: fields -> long text -> fields, for every day of years with a leap month, in the
    # Babylonian calendar ("Addaru II") and in a TOML calendar naming its leap month "Second {name}".
    from calendra_lunisolar.generic import load_lunisolar

    moons, _ = load_lunisolar(DEMO)
    for cal, years in ((babylonian, (-292, -289)), (moons, (-700, -695))):
        j = np.arange(int(cal.year_start_jdn(years[0])), int(cal.year_start_jdn(years[1])))
        f = cal.from_jdn(j)
        rows = np.stack([np.asarray(f[k]) for k in cal.fields], axis=1)
        assert rows[:, 2].any()                                   # some leap-month days among them
        for row in rows[rows[:, 2] == 1][::7].tolist() + rows[::97].tolist():
            text = cal.format(*row, style="long")
            assert tuple(cal.parse(text)) == tuple(row), text
    assert babylonian.parse("1 Addaru II -292") == (-292, 12, 1, 1)
