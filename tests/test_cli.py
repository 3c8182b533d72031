"""The command line: conversions, listings, generated detector commands, one-line errors."""

import json
import subprocess
import sys

import numpy as np
import pytest
from click.testing import CliRunner

from calendra import pluginmanager
from calendra.cli import main
from calendra.pluginmanager import Host

from test_plugins import _SpacedEventsPlugin


def run(*args, input=None):
    result = CliRunner().invoke(main, list(args), input=input, catch_exceptions=False)
    return result.exit_code, result.output, result.stderr if hasattr(result, "stderr") else ""


def test_convert_table_shows_calendars_jd_weekday_and_delta_t():
    code, out, _ = run("convert", "585 BC May 28")
    assert code == 0
    # Source: Meeus, Astronomical Algorithms ch. 7: -584 May 28.0 (Julian) = JD 1507899.5.
    assert "JD 1507899.50000 UT" in out
    assert "28 May 585 BC" in out and "julian" in out and "gregorian" in out
    assert "delta T" in out and "1 sigma" in out
    assert "astronomical (year 0 = 1 BC" in out


def test_convert_json_and_csv():
    code, out, _ = run("convert", "1957-10-04T19:26:24", "--to", "julian", "--format", "json")
    data = json.loads(out)
    rec = data["dates"][0]
    # Source: Meeus ch. 7, Ex. 7.a: 1957 Oct 4.81 = JD 2436116.31.
    assert rec["jd_ut"] == pytest.approx(2436116.31, abs=1e-6)
    assert rec["calendars"]["julian"]["date"] == "1957-09-21"
    assert "delta_t" in data["provenance"]
    code, out, _ = run("convert", "2000-01-01", "--to", "gregorian", "--format", "csv")
    lines = out.strip().splitlines()
    assert lines[0].startswith("input,jd_ut") and len(lines) == 2


def test_convert_reads_many_dates_from_standard_input():
    dates = "\n".join(f"julian:{y}-03-01" for y in range(-500, 500)) + "\n# a comment\n"
    code, out, _ = run("convert", "--file", "-", "--to", "gregorian", "--format", "json", input=dates)
    data = json.loads(out)
    assert code == 0 and len(data["dates"]) == 1000
    jd = np.array([d["jd_ut"] for d in data["dates"]])
    assert np.all(np.diff(jd) > 0)


@pytest.mark.parametrize("args,match", [
    (["convert", "1900-02-30"], "February 30 does not exist"),
    (["convert", "julain:2000-01-01"], "did you mean julian"),
    (["convert", "2000-01-01", "--to", "gregorain"], "did you mean gregorian"),
    (["convert", "not a date"], "cannot read"),
    (["convert", "2000-01-01", "--delta-t", "constant:abc"], "delta"),
    (["convert"], "at least one DATE"),
    (["convert", "2000-01-01", "--format", "xml"], "xml"),
])
def test_bad_input_is_one_line_and_exit_2(args, match):
    proc = subprocess.run([sys.executable, "-m", "calendra.cli", *args], capture_output=True, text=True)
    assert proc.returncode == 2, proc.stderr
    assert "Traceback" not in proc.stderr
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and match.lower() in lines[0].lower(), proc.stderr


def test_calendars_and_plugins_listings():
    code, out, _ = run("calendars")
    assert code == 0 and "western" in out and "unbounded" in out
    code, out, _ = run("plugins", "--format", "json")
    plugins = {p["plugin"]: p for p in json.loads(out)["plugins"]}
    assert "core" in plugins and "julian" in plugins["core"]["adds"]


def test_calendar_year_table():
    code, out, _ = run("calendar", "western", "1582", "--format", "json")
    months = json.loads(out)["months"]
    # The reform: October 1582 has 21 days in Rome (common practice, Inter gravissimas).
    assert [m["days"] for m in months][9] == 21
    assert sum(m["days"] for m in months) == 355


def test_events_generated_from_detector_parameters(fresh_host):
    pluginmanager.set_host(Host(autoload=False, plugins=[("every", _SpacedEventsPlugin())]))
    code, out, _ = run("events")
    assert "every-n-days" in out and "--step" in out
    code, out, _ = run("events", "every-n-days", "--from", "2000-01-01", "--to", "2000-02-25",
                       "--step", "20", "--label", "b", "--format", "json")
    assert code == 0
    events = json.loads(out)["events"]
    assert len(events) == 3 and {e["kind"] for e in events} == {"b"}
    code, out, _ = run("events", "every-n-days", "--help")
    assert "--step" in out and "spacing, days" in out


def test_unknown_detector_is_one_line():
    proc = subprocess.run([sys.executable, "-m", "calendra.cli", "events", "no-such-thing", "--from", "0",
                           "--to", "1"], capture_output=True, text=True)
    assert proc.returncode == 2 and "unknown detector" in proc.stderr and "Traceback" not in proc.stderr


def test_help_does_not_import_skyfield():
    code = ("import sys; from calendra.cli import main\n"
            "try:\n    main(['--help'])\nexcept SystemExit:\n    pass\n"
            "assert 'skyfield' not in sys.modules, 'skyfield imported by --help'")
    proc = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True)
    assert proc.returncode == 0, proc.stderr


def test_year_table_keeps_a_leap_month_apart():
    # The Chinese year 2023 had a leap second month (from memory; the lunisolar tests check it
    # against published tables): 13 months, the leap one its own row.
    code, out, _ = run("calendar", "chinese", "2023", "--format", "json")
    months = json.loads(out)["months"]
    assert code == 0 and len(months) == 13
    assert [m["month"] for m in months[:3]] == [1, 2, 2]
    assert "leap" in months[2]["name"] and all(m["days"] in (29, 30) for m in months)


def test_year_table_of_a_negative_year_and_of_a_regnal_year(fresh_host, monkeypatch):
    # A negative year needs no "--".  Babylonian SE -292 (604/603 BC) has a second Addaru; its
    # 1 Nisannu is 604 BC April 2 (Parker & Dubberstein, Babylonian Chronology; from memory).
    code, out, _ = run("calendar", "babylonian", "-292", "--format", "json")
    months = json.loads(out)["months"]
    assert code == 0 and len(months) == 13
    assert months[0]["name"] == "Nisannu" and months[0]["first_western"] == "-0603-04-02"
    assert months[-1]["name"] == "Addaru II"
    # A reign list: the regnal year of --ruler (the demo's kings count years from 1 Barley).
    monkeypatch.setenv("CALENDRA_LUNISOLAR", "demo_events/invented_lunisolar_kesh.toml")
    monkeypatch.setenv("CALENDRA_ERAS", "demo_events/kesh_ammat_kings.toml")
    pluginmanager.set_host(None)
    code, out, _ = run("calendar", "kesh-ammat-kings[ammurapi=julian:-0797-10-20]", "7", "--ruler", "Ishmerat",
                       "--format", "json")
    months = json.loads(out)["months"]
    assert code == 0 and months[0]["name"] == "Barley" and months[0]["first_western"] == "-0778-04-17"
    assert len(months) == 12 and months[-1]["name"] == "Lambing"          # to the next 1 Barley
    result = CliRunner().invoke(main, ["calendar", "kesh-ammat-kings", "7"])
    assert result.exit_code == 2 and "--ruler" in result.output
