"""Running a sweep: in-process (the reference) or on a Dask cluster, local or remote.

:func:`run_sweep` reads the spec, cuts the grid into chunks, skips the
chunks already on disk when resuming, computes the others and writes each
one atomically as soon as it arrives, then writes the summary, the plot and
``manifest.json``.

* ``serial=True`` computes the chunks one after the other in this process,
  without Dask: the reference the cluster's output must equal byte for byte.
* Otherwise the chunks go to a Dask cluster through
  :class:`distributed.Client`: the one given as ``client``, the scheduler at
  ``scheduler`` (an address such as ``tcp://10.0.0.5:8786``), or a
  :class:`distributed.LocalCluster` of ``workers`` processes (one thread
  each) on the loopback interface, started and shut down by the run.

Each chunk is one task, submitted with ``retries=2`` (an exception in the
task is retried twice); a worker process that dies while holding a chunk is
replaced by its nanny and the scheduler hands the chunk to another worker
(up to ``distributed.scheduler.allowed-failures`` times, 3 by default),
after which the run stops with the chunk named.  At most a window of a few
tasks per worker thread is in flight, so a grid of a million chunks does
not flood the scheduler.  Workers compute and return the chunk's CSV text;
the client writes the files, so the output folder need only exist where the
client runs (no shared file system is needed).
"""

from __future__ import annotations

import itertools
import json
import os
import socket
import sys
import time
import uuid
from dataclasses import dataclass, field
from pathlib import Path

from calendra.errors import CalendraError

from .jobs import Chunk, ChunkResult, JobKind, execute_chunk
from .spec import SweepSpec, check_writable, load_spec
from .store import chunk_path, remove_stale_temporaries, write_atomic

MANIFEST = "manifest.json"
#: Tasks kept in flight per worker thread.
WINDOW_PER_THREAD = 4
#: Seconds to wait for a remote scheduler.
CONNECT_TIMEOUT_S = 30


class SweepError(CalendraError):
    """A sweep that could not finish: a chunk that failed, a cluster that cannot be reached."""


@dataclass
class Plan:
    """A checked spec cut into chunks.

    Attributes
    ----------
    spec : SweepSpec
    job : JobKind
        The job that computes the chunks (normally ``spec.job``).
    chunks : list of Chunk
    """

    spec: SweepSpec
    job: JobKind
    chunks: list

    @property
    def folder(self) -> Path:
        """The output folder."""
        return self.spec.output.folder

    def with_job(self, job: JobKind) -> "Plan":
        """Return the same chunks computed by another job object (e.g. a wrapper)."""
        return Plan(self.spec, job, self.chunks)


def make_plan(spec: SweepSpec) -> Plan:
    """Cut a checked spec into its chunks."""
    chunks = spec.job.chunks()
    if not chunks:
        raise SweepError(f"{spec.path}: the grid has no chunk to run")
    keys = [c.key for c in chunks]
    if len(set(keys)) != len(keys):  # pragma: no cover - keys hash the whole chunk identity
        raise SweepError(f"{spec.path}: two chunks share a key")
    return Plan(spec, spec.job, chunks)


@dataclass
class SweepReport:
    """What a run did.

    Attributes
    ----------
    folder : pathlib.Path
        The output folder.
    total, computed, skipped : int
        Chunks in the plan, computed by this run, found finished on disk (``--resume``).
    rows : int
        Rows written by this run.
    wall_s : float
        Wall time of the computation (cluster start-up included), s.
    chunk_seconds : dict of str to float
        Compute time of each chunk of this run on its worker, s.
    workers : set of str
        ``host:pid`` of the processes that computed chunks.
    mode : str
        ``serial``, ``local N`` or the scheduler's address.
    summary : calendra_sweep.summary.Summary or None
    plot : pathlib.Path or None
    """

    folder: Path
    total: int = 0
    computed: int = 0
    skipped: int = 0
    rows: int = 0
    wall_s: float = 0.0
    chunk_seconds: dict = field(default_factory=dict)
    workers: set = field(default_factory=set)
    mode: str = ""
    summary: object = None
    plot: Path | None = None


# --------------------------------------------------------------- running

def run_sweep(spec, *, workers: int | None = None, scheduler: str | None = None, client=None,
              output=None, resume: bool = False, serial: bool = False, progress=None,
              plan: Plan | None = None, summarize: bool = True) -> SweepReport:
    """Run a sweep and return what it did.

    Parameters
    ----------
    spec : str, os.PathLike or SweepSpec
        The spec file (checked first; nothing runs if it is bad) or a checked spec.
    workers : int, optional
        Worker processes of the local cluster (default: the number of CPUs).
    scheduler : str, optional
        Address of an existing Dask scheduler to submit to.
    client : distributed.Client, optional
        A connected client to use (it is not closed).
    output : str or os.PathLike, optional
        Output folder replacing the spec's (not used with ``plan``, whose spec fixes it).
    resume : bool
        Skip the chunks whose files exist.
    serial : bool
        Compute in this process without Dask.
    progress : callable(done, total, label), optional
        Called after each chunk.
    plan : Plan, optional
        A plan to run instead of the spec's own (same chunks, e.g. another job object).
    summarize : bool
        Write the summary and the plot at the end (default True).

    Raises
    ------
    calendra_sweep.spec.SpecError
        A bad spec, before any work.
    SweepError
        A chunk that failed for good, an unreachable scheduler.
    """
    if plan is None:
        if not isinstance(spec, SweepSpec):
            spec = load_spec(spec, output=output)
        plan = make_plan(spec)
    if sum(x is not None for x in (scheduler, client)) + bool(serial) > 1:
        raise SweepError("give at most one of a scheduler address, a client and serial")
    if workers is not None and (isinstance(workers, bool) or int(workers) < 1):
        raise SweepError(f"--workers must be at least 1, got {workers}")
    folder = plan.folder
    check_writable(folder)
    (folder / "chunks").mkdir(parents=True, exist_ok=True)
    remove_stale_temporaries(folder)

    todo = [c for c in plan.chunks if not (resume and chunk_path(folder, c.key).exists())]
    report = SweepReport(folder=folder, total=len(plan.chunks), skipped=len(plan.chunks) - len(todo))
    provenance: dict = {}
    warnings: dict = {}

    def on_result(chunk: Chunk, res: ChunkResult):
        if res.error is not None:
            raise SweepError(f"chunk {chunk.key} (years {chunk.year_from}..{chunk.year_to}): {res.error}")
        write_atomic(chunk_path(folder, chunk.key), res.text)
        report.computed += 1
        report.rows += res.rows
        report.chunk_seconds[chunk.key] = res.seconds
        report.workers.add(res.worker)
        if not provenance:
            provenance.update({k: v for k, v in res.provenance.items() if k not in ("warnings", "site")})
        for w in res.provenance.get("warnings", ()):
            warnings.setdefault(w, None)
        if progress is not None:
            progress(report.computed, len(todo), "chunks")

    start = time.perf_counter()
    light = plan.job.light() if hasattr(plan.job, "light") else plan.job
    try:
        if serial:
            report.mode = "serial"
            for chunk in todo:
                on_result(chunk, execute_chunk(light, chunk))
        elif todo:
            with _connect(client, scheduler, workers) as (cl, mode):
                report.mode = mode
                _run_on_dask(cl, light, todo, on_result)
        else:
            report.mode = "nothing to do"
    finally:
        report.wall_s = time.perf_counter() - start
        _write_manifest(plan, report, provenance, list(warnings), resume)
    if summarize:
        from .summary import make_plot, summarize as make_summary

        report.summary = make_summary(plan)
        if plan.spec.output.plot is not None:
            report.plot = make_plot(plan, plan.spec.output.plot)
    return report


class _connect:
    """Context manager yielding ``(client, mode)``: the given client, a remote one or a local cluster."""

    def __init__(self, client, scheduler, workers):
        self.client, self.scheduler, self.workers = client, scheduler, workers
        self._own = []

    def __enter__(self):
        try:
            from distributed import Client, LocalCluster
        except ModuleNotFoundError:
            raise SweepError("sweeps on Dask need the packages dask and distributed "
                             "(pip install 'dask[distributed]'), or use --serial") from None
        if self.client is not None:
            return self.client, _address(self.client)
        if self.scheduler is not None:
            try:
                cl = Client(self.scheduler, timeout=CONNECT_TIMEOUT_S)
            except (OSError, TimeoutError, ValueError) as exc:
                raise SweepError(f"cannot reach the Dask scheduler at {self.scheduler}: {exc}") from None
            self._own.append(cl)
            return cl, self.scheduler
        import logging

        n = int(self.workers or os.cpu_count() or 1)
        cluster = LocalCluster(n_workers=n, threads_per_worker=1, processes=True, host="127.0.0.1",
                               dashboard_address=":0", silence_logs=logging.ERROR)
        self._own.append(cluster)
        cl = Client(cluster)
        self._own.append(cl)
        return cl, f"local {n}"

    def __exit__(self, *exc):
        for obj in reversed(self._own):
            try:
                obj.close()
            except Exception:  # pragma: no cover - shutting down after another error
                pass
        return False


def _address(client) -> str:
    try:
        return str(client.scheduler.address)
    except Exception:  # pragma: no cover
        return "client"


def _run_on_dask(client, job: JobKind, todo: list, on_result) -> None:
    """Submit the chunks through ``client`` (a bounded window in flight) and pass each result on."""
    from distributed import as_completed
    from distributed.scheduler import KilledWorker

    token = uuid.uuid4().hex[:10]
    threads = max(1, sum(client.nthreads().values()))
    window = max(8, WINDOW_PER_THREAD * threads)
    by_key: dict = {}
    pending = iter(todo)

    def submit(chunk):
        fut = client.submit(execute_chunk, job, chunk, key=f"calendra-sweep-{token}-{chunk.key}",
                            retries=2, pure=False)
        by_key[fut.key] = chunk
        return fut

    first = [submit(c) for c in itertools.islice(pending, window)]
    stream = as_completed(first)
    try:
        for fut in stream:
            chunk = by_key.pop(fut.key)
            try:
                res = fut.result()
            except KilledWorker as exc:
                raise SweepError(f"chunk {chunk.key} (years {chunk.year_from}..{chunk.year_to}): the workers "
                                 f"computing it died too often ({exc})") from None
            fut.release()
            on_result(chunk, res)
            nxt = next(pending, None)
            if nxt is not None:
                stream.add(submit(nxt))
    except BaseException:
        for f in list(stream.futures):
            f.cancel()
        raise


def _write_manifest(plan: Plan, report: SweepReport, provenance: dict, warnings: list, resume: bool) -> None:
    """Write ``manifest.json``: the job, the chunks (with timings) and the provenance of the run."""
    import importlib.metadata as md

    path = plan.folder / MANIFEST
    old = {}
    if resume and path.exists():
        try:
            old = {c["key"]: c for c in json.loads(path.read_text("utf-8")).get("chunks", [])}
        except (OSError, ValueError, AttributeError, KeyError, TypeError):
            old = {}
    chunks = []
    for c in plan.chunks:
        entry = {"key": c.key, "years": [c.year_from, c.year_to],
                 "done": chunk_path(plan.folder, c.key).exists()}
        if c.key in report.chunk_seconds:
            entry["seconds"] = round(report.chunk_seconds[c.key], 4)
        elif c.key in old and "seconds" in old[c.key]:
            entry["seconds"] = old[c.key]["seconds"]
        chunks.append(entry)

    def version(name):
        try:
            return md.version(name)
        except md.PackageNotFoundError:
            return None

    doc = {
        "spec": str(plan.spec.path), "title": plan.spec.title, "job": plan.spec.job.describe(),
        "mode": report.mode, "host": socket.gethostname(), "wall_s": round(report.wall_s, 3),
        "total": report.total, "computed": report.computed, "skipped": report.skipped,
        "workers": sorted(report.workers),
        "versions": {n: version(n) for n in ("calendra", "dask", "distributed", "numpy", "skyfield")},
        "provenance": provenance, "warnings": warnings, "chunks": chunks,
        "python": sys.version.split()[0],
    }
    from calendra.output import render_json

    write_atomic(path, render_json(doc) + "\n")
