"""Hook implementations of the alignments plugin: the ``calendra align`` command.

The command (see :mod:`calendra_alignments.cli`) is built on demand; click
and the astronomy modules are imported inside the hook and the command, so
that loading the plugin stays cheap.
"""

from __future__ import annotations

from calendra.hookspecs import hookimpl


@hookimpl
def calendra_cli_commands():
    from .cli import align_command   # imports click: only when the command line asks

    return [align_command()]
