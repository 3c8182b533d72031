"""Hook implementations of the solver plugin: the ``calendra date`` command.

The solver itself (:mod:`calendra_solver.engine`) uses whatever detectors
and calendars are installed, through their protocols only.
"""

from __future__ import annotations

from calendra.hookspecs import hookimpl


@hookimpl
def calendra_cli_commands():
    from .command import date_command

    return [date_command()]
