"""The ``calendra sweep`` command.

``calendra sweep SPEC.toml [--workers N] [--scheduler ADDRESS] [--output DIR] [--resume] [--serial]``

Without ``--scheduler`` a local Dask cluster of N worker processes (default:
the number of CPUs) is started on 127.0.0.1 and shut down at the end; with
an address the chunks go to that cluster; ``--serial`` computes in this
process without Dask.  A progress bar over chunks is drawn on standard error
when it is a terminal.  The summary table is printed at the end.
"""

from __future__ import annotations

import click


def sweep_command() -> click.Command:
    """Build the click command (click is imported by the caller's hook)."""

    @click.command("sweep", context_settings={"help_option_names": ["-h", "--help"]})
    @click.argument("spec", metavar="SPEC.toml", type=click.Path(dir_okay=False))
    @click.option("--workers", type=click.IntRange(min=1), default=None, metavar="N",
                  help="Worker processes of the local Dask cluster (default: the number of CPUs).")
    @click.option("--scheduler", default=None, metavar="ADDRESS",
                  help="Submit to the existing Dask cluster at this scheduler address (e.g. tcp://host:8786).")
    @click.option("--output", default=None, metavar="DIR", type=click.Path(file_okay=False),
                  help="Output folder (replaces the spec's [output] folder).")
    @click.option("--resume", is_flag=True, help="Skip the chunks already written in the output folder.")
    @click.option("--serial", is_flag=True, help="Compute in this process without Dask (the reference run).")
    @click.option("--check", is_flag=True, help="Check the spec and list the chunks, compute nothing.")
    def sweep(spec, workers, scheduler, output, resume, serial, check):
        """Run a grid job (any detector over sites x parameters x years) in chunks, on Dask.

        SPEC.toml describes the job, the grid and the output folder; see the
        documentation of the calendra_sweep package for its keys.  Each chunk
        is written atomically to DIR/chunks/KEY.csv as soon as it is done.
        """
        import sys

        from .runner import SweepError, make_plan, run_sweep
        from .spec import load_spec

        if serial and scheduler:
            raise click.UsageError("--serial and --scheduler exclude each other")
        if serial and workers:
            raise click.UsageError("--workers applies to the local Dask cluster, not to --serial")
        if scheduler and workers:
            raise click.UsageError("--workers applies to the local Dask cluster, not to --scheduler")
        checked = load_spec(spec, output=output)
        plan = make_plan(checked)
        if check:
            click.echo(f"{checked.path}: {len(plan.chunks)} chunks of job {checked.job.name} "
                       f"into {checked.output.folder}")
            return
        bar = None

        def progress(done, total, label):
            nonlocal bar
            if not sys.stderr.isatty():
                return
            if bar is None:
                bar = click.progressbar(length=total, label=f"calendra sweep: {label}", file=sys.stderr,
                                        show_eta=True, show_pos=True)
                bar.__enter__()
            bar.update(done - bar.pos)

        try:
            report = run_sweep(checked, workers=workers, scheduler=scheduler, resume=resume, serial=serial,
                               progress=progress, plan=plan)
        except KeyboardInterrupt:
            raise SweepError("interrupted; the chunks written so far are kept (run again with --resume)") from None
        finally:
            if bar is not None:
                bar.__exit__(None, None, None)
        click.echo(report.summary.text())
        for note in report.summary.notes:
            click.echo(f"calendra: note: {note}", err=True)
        click.echo("")
        click.echo(f"{report.total} chunks: {report.computed} computed, {report.skipped} already done; "
                   f"{report.rows} rows in {report.wall_s:.1f} s ({report.mode}); output in {report.folder}")
        if report.plot is not None:
            click.echo(f"plot: {report.plot}")

    return sweep
