"""The plugin system: entry points, hooks, failures and clashes reported, the rest keeps working."""

import types
from importlib import metadata

import numpy as np
import pytest

from calendra import pluginmanager
from calendra.calendars_core import JulianCalendar
from calendra.detector import Detector, Parameter
from calendra.errors import UnknownCalendarError
from calendra.events import EventTable
from calendra.hookspecs import hookimpl
from calendra.pluginmanager import Host


class _Shifted(JulianCalendar):
    name = "shifted-julian"
    aliases = ("sj",)
    description = "test calendar: Julian dates shifted by one day"

    def _to_jdn(self, y, m, d):
        return super()._to_jdn(y, m, d) + 1

    def _from_jdn(self, jdn):
        return super()._from_jdn(jdn - 1)


class _SpacedEventsPlugin:
    """A detector defined inside the tests: evenly spaced mock events (for the host, not astronomy)."""

    class Every(Detector):
        name = "every-n-days"
        title = "test detector: an event every N days"
        parameters = (Parameter("step", "float", 10.0, "spacing, days"),
                      Parameter("label", "choice", "a", "event label", choices=("a", "b")))

        def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, step, label):
            t = np.arange(jd_tt_start, jd_tt_end, step)
            return EventTable({"jd_tt": t, "jd_ut": deltat.ut_from_tt(t), "kind": np.full(t.shape, label),
                               "index": np.arange(t.size)})

    @hookimpl
    def calendra_detectors(self):
        return [self.Every()]


class _CalendarPlugin:
    @hookimpl
    def calendra_calendars(self):
        return [_Shifted()]


class _ClashPlugin:
    @hookimpl
    def calendra_calendars(self):
        return [JulianCalendar()]      # the name "julian" belongs to the core


class _BrokenHookPlugin:
    @hookimpl
    def calendra_calendars(self):
        raise RuntimeError("boom")


def test_core_calendars_come_through_the_hook():
    host = Host(autoload=False)
    assert {"julian", "gregorian", "western", "rd", "jdn"} <= set(host.calendars.names())
    assert host.calendars.plugin_of(host.calendars.get("julian")) == "core"


def test_plugin_calendar_and_alias():
    host = Host(autoload=False, plugins=[("shift", _CalendarPlugin())])
    cal = host.calendars.get("SJ")
    assert cal.name == "shifted-julian"
    assert host.info["shift"].added["calendar"] == ["shifted-julian"]


def test_clash_is_reported_and_first_registration_wins():
    host = Host(autoload=False, plugins=[("clash", _ClashPlugin())])
    assert host.calendars.plugin_of(host.calendars.get("julian")) == "core"
    assert any("already registered by plugin 'core'" in e for e in host.info["clash"].errors)


def test_failing_hook_is_reported_and_others_keep_working():
    host = Host(autoload=False, plugins=[("broken", _BrokenHookPlugin()), ("shift", _CalendarPlugin())])
    assert "shifted-julian" in host.calendars
    assert any("boom" in e for e in host.info["broken"].errors)
    assert any(p.startswith("plugin broken:") for p in host.problems())


def test_unknown_calendar_suggests_nearest():
    host = Host(autoload=False)
    with pytest.raises(UnknownCalendarError, match="did you mean julian"):
        host.calendars.get("julain")


def _fake_entry_points(monkeypatch, eps):
    real = metadata.entry_points

    def fake(**kw):
        if kw.get("group") == pluginmanager.ENTRY_POINT_GROUP:
            return eps
        return real(**kw)

    monkeypatch.setattr(pluginmanager.metadata, "entry_points", fake)


def test_entry_point_that_fails_to_import_is_reported(monkeypatch):
    good = types.ModuleType("calendra_testgood")
    good.calendra_calendars = hookimpl(lambda: [_Shifted()])
    monkeypatch.setitem(__import__("sys").modules, "calendra_testgood", good)
    eps = [metadata.EntryPoint("missing", "calendra_does_not_exist.plugin", "calendra"),
           metadata.EntryPoint("good", "calendra_testgood", "calendra")]
    _fake_entry_points(monkeypatch, eps)
    host = Host(autoload=True)
    assert "shifted-julian" in host.calendars
    assert "failed to import" in host.info["missing"].errors[0]
    assert "calendra_does_not_exist" in host.info["missing"].errors[0]


def test_builtin_plugins_are_published_as_entry_points():
    # The design: built-in plugins load through the same entry-point group as third-party ones.
    names = {ep.name: ep.value for ep in metadata.entry_points(group="calendra")}
    assert names, "no calendra entry points: is the project installed?"
    assert all(v.split(".")[0].startswith("calendra_") for v in names.values())


def test_core_never_imports_a_plugin_by_name():
    import pathlib

    core = pathlib.Path(pluginmanager.__file__).parent
    for path in core.glob("*.py"):
        text = path.read_text()
        assert "import calendra_" not in text and "from calendra_" not in text, path.name


def test_detector_runs_through_the_host(default_deltat):
    host = Host(autoload=False, plugins=[("every", _SpacedEventsPlugin())])
    det = host.detectors.get("every-n-days")
    table = det.search(2451545.0, 2451600.0, deltat=default_deltat, step=5)
    assert len(table) == 11
    assert np.all(np.diff(table["jd_tt"]) == 5)
    assert np.all(table["jd_tt"] - table["jd_ut"] > 0)       # TT runs ahead of UT since 1900
