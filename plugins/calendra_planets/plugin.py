"""Hook implementations of the planets plugin (entry point ``calendra_planets.plugin``).

Importing this module is cheap: the detectors import numpy-heavy modules and
the ephemeris only when they run, and click is imported inside the command hook.
"""

from __future__ import annotations

from calendra.hookspecs import hookimpl


@hookimpl
def calendra_detectors():
    """stations, oppositions, solar-conjunctions, elongations, conjunctions, occultations, star-passages."""
    from .detectors import all_detectors

    return all_detectors()


@hookimpl
def calendra_cli_commands():
    """The command ``calendra retrograde-plot`` (click is imported inside)."""
    from .cli import retrograde_plot_command

    return [retrograde_plot_command()]
