"""Hook implementations of the geocentric plugin (entry point ``calendra_geocentric.plugin``).

Importing this module is cheap: the detectors import skyfield and the
ephemeris only when they run, and click is imported inside the command hook.
"""

from __future__ import annotations

from calendra.hookspecs import hookimpl


@hookimpl
def calendra_detectors():
    """The detectors ``geocentric-positions`` and ``model-stations``."""
    from .detectors import GeocentricPositions, ModelStations

    return [GeocentricPositions(), ModelStations()]


@hookimpl
def calendra_cli_commands():
    """The command ``calendra geocentric`` (click is imported here, with the command module)."""
    from .cli import geocentric_command

    return [geocentric_command()]
