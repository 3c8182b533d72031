"""Hook specifications of calendra's plugin system (pluggy).

A plugin is a module (or object) with functions decorated by
:data:`hookimpl`, published through the entry-point group ``calendra``::

    [project.entry-points.calendra]
    mytopic = "calendra_mytopic.plugin"

Every hook is called by keyword, so a hook may gain arguments later and an
implementation asks only for the ones it needs.  Implementations return
values and never mutate their arguments.
"""

from __future__ import annotations

import pluggy

PROJECT = "calendra"

hookspec = pluggy.HookspecMarker(PROJECT)
#: Decorator marking a plugin's hook implementations.
hookimpl = pluggy.HookimplMarker(PROJECT)


@hookspec
def calendra_calendars():
    """Return a list of :class:`calendra.calendar.Calendar` instances this plugin adds.

    Names and aliases must be unique across all plugins; a clash is reported
    with both plugins' names and the later one is skipped.  An item of the
    list that is an exception instance (e.g. a user file that could not be
    read) is reported as a problem of the plugin instead of being registered;
    this holds for every hook that returns a list.
    """


@hookspec
def calendra_detectors():
    """Return a list of :class:`calendra.detector.Detector` instances this plugin adds.

    A detector searches a time range for one kind of sky event and returns an
    :class:`calendra.events.EventTable`.  Its declared parameters generate the
    ``calendra events NAME`` command line, so a plugin needs no command-line
    code of its own.
    """


@hookspec
def calendra_deltat_models():
    """Return a list of delta-T model objects (see :mod:`calendra.deltat`) this plugin adds."""


@hookspec
def calendra_cli_commands():
    """Return a list of :class:`click.Command` objects to add to the ``calendra`` command line.

    Called only when the command line needs the full command list; keep the
    plugin's import cheap (import heavy modules inside the commands).
    """
