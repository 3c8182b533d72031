"""Fault injection for checking that a cluster re-runs the chunks of dead or failing workers.

:class:`FailOnce` wraps a job: on the first attempt at each chosen chunk it
either ends the worker process (``os._exit(1)``, as a crash or an
out-of-memory kill would) or raises an :class:`OSError`; later attempts
compute the chunk normally.  "First" is recorded by a marker file per chunk,
created with ``O_CREAT | O_EXCL`` in a folder every worker can reach, so it
holds across processes.  The wrapper lives in this importable module so that
Dask workers can unpickle it.

Use it on a plan (the chunk keys and the output are those of the wrapped job)::

    plan = make_plan(load_spec("spec.toml"))
    faulty = plan.with_job(FailOnce(plan.job, marker_dir, {plan.chunks[0].key}, mode="exit"))
    run_sweep(None, plan=faulty, client=client)
"""

from __future__ import annotations

import os
from pathlib import Path

from .jobs import JobKind

MODES = ("exit", "raise")


class FailOnce(JobKind):
    """A job that fails on the first attempt at some chunks, then behaves as the job it wraps.

    Parameters
    ----------
    job : JobKind
        The job doing the work.
    marker_dir : str or os.PathLike
        Folder of the marker files (one per chunk that has failed once).
    keys : iterable of str
        Keys of the chunks to fail once.
    mode : str
        ``exit``: the worker computes the chunk, then its process ends with
    ``os._exit(1)`` before the result is handed back; ``raise``: an OSError
    before any work.
    """

    name = "fail-once"
    title = "fault injection: fail the first attempt at chosen chunks"

    def __init__(self, job: JobKind, marker_dir, keys, mode: str = "exit"):
        if mode not in MODES:
            raise ValueError(f"mode must be one of {MODES}")
        self.job = job
        self.marker_dir = str(marker_dir)
        self.keys = frozenset(keys)
        self.mode = mode
        self.has_latlon = getattr(job, "has_latlon", False)

    def marker(self, key: str) -> Path:
        """Return the marker file of chunk ``key``."""
        return Path(self.marker_dir) / f"{key}.failed"

    def light(self) -> "FailOnce":
        inner = self.job.light() if hasattr(self.job, "light") else self.job
        return FailOnce(inner, self.marker_dir, self.keys, self.mode)

    def chunks(self):
        return self.job.chunks()

    def describe(self) -> dict:
        return {**self.job.describe(), "fault_injection": self.mode}

    def run(self, chunk):
        if chunk.key in self.keys:
            try:
                fd = os.open(self.marker(chunk.key), os.O_CREAT | os.O_EXCL | os.O_WRONLY)
            except FileExistsError:
                pass
            else:
                os.write(fd, f"{os.getpid()}\n".encode())
                os.close(fd)
                if self.mode == "exit":
                    self.job.run(chunk)     # the work is done, then the process dies before handing it back
                    os._exit(1)
                raise OSError(f"injected failure of chunk {chunk.key}")
        return self.job.run(chunk)
