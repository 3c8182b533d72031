"""Registries of named things contributed by plugins (calendars, detectors, delta-T models).

A registry maps names and aliases to objects, remembers which plugin added
each, rejects a name already taken (the clash is recorded, the first
registration wins), and answers an unknown name with the nearest known ones.

Calendars with options are looked up as ``name[key=value,...]``, e.g.
``western[reform=britain]``; the registry asks the calendar for the variant
with :meth:`calendra.calendar.Calendar.with_options`.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

from .errors import ParameterError, UnknownCalendarError, UnknownNameError

_SPEC_RE = re.compile(r"^\s*([A-Za-z0-9_.\-]+)\s*(?:\[(.*)\])?\s*$")


def parse_spec(spec: str) -> tuple[str, dict[str, str]]:
    """Split ``name[key=value,...]`` into the name and a dict of options."""
    m = _SPEC_RE.match(spec or "")
    if not m:
        raise ParameterError(f"cannot read {spec!r}: expected NAME or NAME[key=value,...]")
    name, opts = m.group(1), m.group(2)
    options: dict[str, str] = {}
    if opts:
        for part in opts.split(","):
            if "=" not in part:
                raise ParameterError(f"{spec!r}: option {part.strip()!r} needs the form key=value")
            k, v = part.split("=", 1)
            options[k.strip()] = v.strip()
    return name.lower(), options


@dataclass
class Registry:
    """Names -> objects, with the plugin that added each and the clashes seen."""

    kind: str
    _by_name: dict = field(default_factory=dict)
    _primary: dict = field(default_factory=dict)
    owner: dict = field(default_factory=dict)
    clashes: list = field(default_factory=list)

    def add(self, obj, plugin: str) -> bool:
        """Register ``obj`` (which has ``name`` and optional ``aliases``) for ``plugin``.

        Returns False, and records the clash, if a name is already taken.
        """
        name = getattr(obj, "name", "")
        if not name or not isinstance(name, str):
            self.clashes.append((plugin, f"a {self.kind} without a name: {obj!r}"))
            return False
        names = [name.lower()] + [a.lower() for a in getattr(obj, "aliases", ())]
        taken = [n for n in names if n in self._by_name]
        if taken:
            other = self.owner[self._by_name[taken[0]].name.lower()]
            self.clashes.append((plugin, f"{self.kind} name {taken[0]!r} is already registered by plugin {other!r}"))
            return False
        for n in names:
            self._by_name[n] = obj
        self._primary[name.lower()] = obj
        self.owner[name.lower()] = plugin
        return True

    def names(self) -> list[str]:
        """Primary names, in registration order."""
        return list(self._primary)

    def all_names(self) -> list[str]:
        """Names and aliases."""
        return list(self._by_name)

    def __iter__(self):
        return iter(self._primary.values())

    def __len__(self):
        return len(self._primary)

    def __contains__(self, name):
        return name.lower() in self._by_name

    def get(self, name: str):
        """Return the object registered under ``name`` (or an alias)."""
        try:
            return self._by_name[name.lower()]
        except KeyError:
            raise UnknownNameError(self.kind, name, self.all_names()) from None

    def plugin_of(self, obj) -> str:
        """Return the plugin that registered ``obj``."""
        return self.owner.get(obj.name.lower(), "?")


class CalendarRegistry(Registry):
    """Registry of calendars with ``name[options]`` look-up."""

    def __init__(self):
        super().__init__("calendar")

    def get(self, spec: str):
        name, options = parse_spec(spec)
        try:
            cal = self._by_name[name]
        except KeyError:
            raise UnknownCalendarError(name, self.all_names()) from None
        return cal.with_options(**options) if options else cal
