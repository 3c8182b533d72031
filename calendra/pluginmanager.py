"""Loading plugins and collecting what they add.

The :class:`Host` creates a pluggy plugin manager for the hooks of
:mod:`calendra.hookspecs`, registers the core's own hook modules, then loads
every entry point of the group ``calendra`` (built-in plugins under
``plugins/`` are published there exactly as a third-party plugin would be).
A plugin that fails to import, fails in a hook, or registers a name that is
taken is reported with its name and error; everything else keeps working.

Set the environment variable ``CALENDRA_NO_PLUGINS=1`` to skip the entry
points (the core's calendars and detectors stay).
"""

from __future__ import annotations

import importlib
import os
from dataclasses import dataclass, field
from importlib import metadata

import pluggy

from . import hookspecs
from .registry import CalendarRegistry, Registry

ENTRY_POINT_GROUP = "calendra"

#: Modules of the core that implement hooks (registered directly, not through entry points).
CORE_HOOK_MODULES = ("calendra.calendars_core", "calendra.detectors_sky", "calendra.detectors_site")


@dataclass
class PluginInfo:
    """What is known of one plugin: where it came from, its version, what it added, what went wrong."""

    name: str
    source: str
    version: str = ""
    errors: list = field(default_factory=list)
    added: dict = field(default_factory=dict)

    @property
    def ok(self) -> bool:
        return not self.errors


class Host:
    """The plugin manager with the registries it fills.

    Parameters
    ----------
    autoload : bool
        Load the entry points of group ``calendra`` (default: unless
        ``CALENDRA_NO_PLUGINS`` is set).
    plugins : iterable of (name, object)
        Extra plugin objects to register (used by tests and embedding code).
    """

    def __init__(self, autoload: bool | None = None, plugins=()):
        if autoload is None:
            autoload = not os.environ.get("CALENDRA_NO_PLUGINS")
        self.pm = pluggy.PluginManager(hookspecs.PROJECT)
        self.pm.add_hookspecs(hookspecs)
        self.info: dict[str, PluginInfo] = {}
        from . import __version__

        for modname in CORE_HOOK_MODULES:
            try:
                mod = importlib.import_module(modname)
            except ModuleNotFoundError as exc:
                if exc.name == modname:     # that part of the core is not written yet
                    continue
                raise
            name = "core" if modname.endswith("calendars_core") else "core-" + modname.rsplit("_", 1)[1]
            self._register(name, mod, "calendra core", __version__)
        if autoload:
            self._load_entry_points()
        for name, obj in plugins:
            self._register(name, obj, "given", getattr(obj, "__version__", ""))
        self._calendars = None
        self._detectors = None
        self._deltat = None

    # ------------------------------------------------------------ loading
    def _register(self, name, obj, source, version):
        info = self.info.setdefault(name, PluginInfo(name, source, version))
        try:
            self.pm.register(obj, name=name)
        except Exception as exc:  # pluggy.PluginValidationError, ValueError (duplicate)
            info.errors.append(f"cannot register: {exc}")

    def _load_entry_points(self):
        for ep in sorted(metadata.entry_points(group=ENTRY_POINT_GROUP), key=lambda e: e.name):
            version = ""
            dist = getattr(ep, "dist", None)
            if dist is not None:
                version = dist.version
            if ep.name in self.info:
                self.info.setdefault(f"{ep.name} ({ep.value})", PluginInfo(ep.name, ep.value, version)).errors.append(
                    f"plugin name {ep.name!r} is already taken")
                continue
            try:
                obj = ep.load()
            except Exception as exc:
                self.info[ep.name] = PluginInfo(ep.name, ep.value, version,
                                                errors=[f"failed to import: {type(exc).__name__}: {exc}"])
                continue
            self._register(ep.name, obj, ep.value, version)

    def _collect(self, hookname: str, registry: Registry) -> Registry:
        caller = getattr(self.pm.hook, hookname)
        # Call implementations one by one (oldest registration first) so each
        # result and each failure is attributed to its plugin.
        for impl in caller.get_hookimpls():
            name = impl.plugin_name
            info = self.info.setdefault(name, PluginInfo(name, "?"))
            try:
                items = impl.function() or []
            except Exception as exc:
                info.errors.append(f"{hookname} failed: {type(exc).__name__}: {exc}")
                continue
            added = info.added.setdefault(registry.kind, [])
            before = len(registry.clashes)
            for item in items:
                if isinstance(item, Exception):     # a part of the plugin that could not be made
                    info.errors.append(str(item))
                elif registry.add(item, name):
                    added.append(item.name)
            for _, message in registry.clashes[before:]:
                info.errors.append(message)
        return registry

    # ---------------------------------------------------------- registries
    @property
    def calendars(self) -> CalendarRegistry:
        """All calendars, by name."""
        if self._calendars is None:
            self._calendars = self._collect("calendra_calendars", CalendarRegistry())
        return self._calendars

    @property
    def detectors(self) -> Registry:
        """All event detectors, by name."""
        if self._detectors is None:
            self._detectors = self._collect("calendra_detectors", Registry("detector"))
        return self._detectors

    @property
    def deltat_models(self) -> Registry:
        """Delta-T models added by plugins (the built-in ones live in :mod:`calendra.deltat`)."""
        if self._deltat is None:
            self._deltat = self._collect("calendra_deltat_models", Registry("delta-T model"))
        return self._deltat

    def cli_commands(self) -> list:
        """Click commands added by plugins."""
        commands = []
        for impl in self.pm.hook.calendra_cli_commands.get_hookimpls():
            try:
                commands.extend(impl.function() or [])
            except Exception as exc:
                self.info.setdefault(impl.plugin_name, PluginInfo(impl.plugin_name, "?")).errors.append(
                    f"calendra_cli_commands failed: {type(exc).__name__}: {exc}")
        return commands

    def load_all(self) -> "Host":
        """Fill every registry (so that plugin errors of all hooks are known)."""
        self.calendars, self.detectors, self.deltat_models
        return self

    def problems(self) -> list[str]:
        """One line per plugin problem."""
        return [f"plugin {i.name}: {e}" for i in self.info.values() for e in i.errors]


_HOST: Host | None = None


def get_host() -> Host:
    """Return the process-wide host, creating it on first use."""
    global _HOST
    if _HOST is None:
        _HOST = Host()
    return _HOST


def set_host(host: Host | None) -> None:
    """Replace the process-wide host (None: create a fresh one on next use)."""
    global _HOST
    _HOST = host
