"""Sites: coordinates, the gazetteer, user site files, horizon profiles, the dip, the `sites` command."""

import json
import math

import numpy as np
import pytest
from click.testing import CliRunner

from calendra.errors import ParameterError, UnknownNameError
from calendra.sites import (Site, dip_deg, gazetteer_sites, load_gazetteer, parse_site, read_horizon_csv,
                            read_sites_file)


@pytest.fixture(autouse=True)
def no_user_sites(monkeypatch):
    monkeypatch.delenv("CALENDRA_SITES", raising=False)


def test_coordinates_with_and_without_elevation():
    s = parse_site("32.54,44.42,35")
    assert (s.latitude_deg, s.longitude_deg, s.elevation_m) == (32.54, 44.42, 35.0)
    s = parse_site(" -13.52 , -71.98 ")
    assert (s.latitude_deg, s.longitude_deg, s.elevation_m) == (-13.52, -71.98, 0.0)
    assert s.utc_offset_hours is None and s.offset_days == pytest.approx(-71.98 / 360.0)


@pytest.mark.parametrize("text", ["95,10", "10,400", "1,2,3,4", "32.5;44"])
def test_bad_coordinates_are_rejected(text):
    with pytest.raises((ParameterError, UnknownNameError)):
        parse_site(text)


def test_gazetteer_entries_are_complete_and_named_once():
    sites = gazetteer_sites()
    assert len(sites) >= 40
    wanted = ["Babylon", "Nineveh", "Uruk", "Alexandria", "Athens", "Rome", "Jerusalem", "Memphis", "Giza",
              "Luxor", "Aswan", "Rhodes", "Constantinople", "Baghdad", "Samarkand", "Maragha", "Xi'an",
              "Chang'an", "Luoyang", "Kyoto", "Ujjain", "Chichen Itza", "Stonehenge", "Newgrange", "Greenwich",
              "Paris Observatory", "Mecca", "Cairo"]
    for name in wanted:
        parse_site(name)
    for s in sites:
        # Every entry says where its coordinates come from (rule of the gazetteer).
        assert len(s.source) > 20, s.name
        assert -90 <= s.latitude_deg <= 90 and -180 <= s.longitude_deg <= 180
    keys = {}
    for s in sites:
        from calendra.sites import _key
        for n in (s.name, *s.aliases):
            assert keys.setdefault(_key(n), s.name) == s.name, f"{n!r} names two sites"


def test_gazetteer_values_quoted_from_calendrical_calculations():
    # check_values.md section 9 [V]: CC 4th-ed. Jerusalem 31.78 N, 35.24 E, 740 m; Greenwich
    # 51.4777815 N, 0 E, 46.9 m.
    jer = parse_site("Jerusalem")
    assert (jer.latitude_deg, jer.longitude_deg, jer.elevation_m) == (31.78, 35.24, 740.0)
    gr = parse_site("greenwich")
    assert (gr.latitude_deg, gr.longitude_deg, gr.elevation_m, gr.utc_offset_hours) == (51.4777815, 0.0, 46.9, 0.0)


def test_names_ignore_case_blanks_and_punctuation():
    assert parse_site("XI-AN") is parse_site("xian") is parse_site("Chang'an")
    assert parse_site("  babylon ").name == "Babylon"
    assert parse_site("paris-observatory").name == "Paris Observatory"      # the table key is a name too


def test_unknown_name_suggests_close_ones():
    with pytest.raises(UnknownNameError) as exc:
        parse_site("Babylom")
    assert "babylon" in str(exc.value).lower()


def test_user_site_file_from_env_and_argument(tmp_path, monkeypatch):
    (tmp_path / "hz.csv").write_text("azimuth,altitude\n# surveyed skyline\n0, 1.0\n90; 2.0\n180 0.5\n270,1.5\n")
    f = tmp_path / "mine.toml"
    f.write_text('[temple]\nname = "My temple"\nlatitude = 32.5\nlongitude = 44.4\nelevation = 40\n'
                 'time = "UT+3"\ntemperature = 30\npressure = 1000\nhorizon = "hz.csv"\n'
                 'aliases = ["t1"]\nsource = "my own GPS reading"\n'
                 '[babylon]\nname = "Babylon"\nlat = 32.536\nlon = 44.421\nsource = "my survey"\n')
    monkeypatch.setenv("CALENDRA_SITES", str(f))
    s = parse_site("my temple")
    assert s is parse_site("T1") is parse_site("temple")
    assert s.utc_offset_hours == 3.0 and s.temperature_C == 30.0 and s.pressure_mbar == 1000.0
    assert s.horizon == ((0.0, 1.0), (90.0, 2.0), (180.0, 0.5), (270.0, 1.5))
    # A user entry replaces the built-in one of the same name.
    assert parse_site("Babylon").latitude_deg == 32.536
    monkeypatch.delenv("CALENDRA_SITES")
    assert parse_site("Babylon").latitude_deg == 32.54
    assert parse_site("temple", sites_file=f).name == "My temple"
    assert "mytemple" in load_gazetteer(sites_file=str(f))


@pytest.mark.parametrize("body, message", [
    ("[x]\nlatitude = 10\n", "longitude is missing"),
    ("[x]\nlatitude = 10\nlongitude = 20\ncolour = 'red'\n", "unknown key"),
    ("[x]\nlatitude = 100\nlongitude = 20\n", "latitude"),
    ("[x]\nlatitude = 10\nlongitude = 20\ntime = 'soon'\n", "time must be"),
    ("[x]\nlatitude = '10'\nlongitude = 20\n", "must be a number"),
    ("[x\n", "not valid TOML"),
])
def test_bad_site_files_are_reported_with_the_file(tmp_path, body, message):
    f = tmp_path / "bad.toml"
    f.write_text(body)
    with pytest.raises(ParameterError) as exc:
        read_sites_file(f)
    assert message in str(exc.value) and "bad.toml" in str(exc.value)


def test_horizon_profile_is_linear_and_periodic_in_azimuth():
    s = Site("x", 30.0, 30.0, horizon=[(350.0, 1.0), (10.0, 3.0), (180.0, 0.0)])
    # Linear between given azimuths, across north: 350 -> 10 deg passes 0 at the midpoint.
    assert s.horizon_altitude(0.0) == pytest.approx(2.0)
    assert s.horizon_altitude(355.0) == pytest.approx(1.5)
    assert s.horizon_altitude(-5.0) == pytest.approx(1.5)           # taken mod 360
    assert s.horizon_altitude(95.0) == pytest.approx(3.0 - 3.0 * 85.0 / 170.0)
    assert s.horizon_altitude(720.0 + 180.0) == pytest.approx(0.0)
    az = np.linspace(-720, 720, 1441)
    assert np.allclose(s.horizon_altitude(az), s.horizon_altitude(az + 360.0))
    # One point: a constant horizon.
    assert np.allclose(Site("y", 0, 0, horizon=[(42.0, 0.7)]).horizon_altitude([0, 100, 300]), 0.7)


def test_profile_with_a_repeated_azimuth_is_rejected():
    with pytest.raises(ParameterError):
        Site("x", 0, 0, horizon=[(0.0, 1.0), (360.0, 2.0)])


def test_horizon_csv(tmp_path):
    f = tmp_path / "p.csv"
    f.write_text("az alt\n200 1\n20 2 # east-north-east ridge\n")
    assert read_horizon_csv(f) == ((20.0, 2.0), (200.0, 1.0))
    f.write_text("0,1\nnot a number\n")
    with pytest.raises(ParameterError, match="p.csv:2"):
        read_horizon_csv(f)


def test_dip():
    # Dip of the sea horizon 1.76' sqrt(h/m) (the nautical almanacs' formula): 100 m -> 17.6'.
    assert dip_deg(100.0) * 60 == pytest.approx(17.6)
    assert dip_deg(0.0) == 0.0 and dip_deg(-5.0) == 0.0
    s = Site("tower", 40, 20, eye_height_m=25.0)
    assert s.horizon_altitude(123.0) == pytest.approx(-1.76 * 5 / 60)
    # A surveyed profile already contains the dip.
    assert s.with_horizon([(0.0, 0.5)]).horizon_altitude(10.0) == 0.5


def test_sites_command_lists_table_json_csv(tmp_path):
    from calendra.cli import main

    runner = CliRunner()
    out = runner.invoke(main, ["sites"])
    assert out.exit_code == 0 and "Babylon" in out.output and "from memory" in out.output
    out = runner.invoke(main, ["sites", "babylon", "30,40,5", "--format", "json"])
    data = json.loads(out.output)
    assert [s["name"] for s in data["sites"]] == ["Babylon", "30,40,5"]
    f = tmp_path / "s.toml"
    f.write_text('[hill]\nlatitude = 1\nlongitude = 2\nsource = "test"\n')
    out = runner.invoke(main, ["sites", "--sites-file", str(f), "--format", "csv"])
    assert out.exit_code == 0 and out.output.splitlines()[0].startswith("name,region,latitude_deg")
    assert any(line.startswith("hill,") for line in out.output.splitlines())
    out = runner.invoke(main, ["sites", "nowhere-at-all"])
    assert out.exit_code == 2 and "unknown site" in out.output


def test_site_validation():
    with pytest.raises(ParameterError):
        Site("x", 10, 10, pressure_mbar=5000)
    with pytest.raises(ParameterError):
        Site("x", 10, 10, elevation_m=math.nan)
    with pytest.raises(ParameterError):
        Site("x", 10, 10, utc_offset_hours=20)
