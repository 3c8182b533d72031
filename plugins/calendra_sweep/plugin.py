"""Hook implementations of the sweep plugin: the ``calendra sweep`` command.

Nothing heavy is imported here: click (through :mod:`calendra_sweep.cli`) is
imported inside the hook, and dask/distributed only when a sweep runs on a cluster.
"""

from __future__ import annotations

from calendra.hookspecs import hookimpl


@hookimpl
def calendra_cli_commands():
    from .cli import sweep_command

    return [sweep_command()]
