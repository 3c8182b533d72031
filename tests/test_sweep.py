"""Sweeps on Dask: spec checks, chunking, serial = cluster output, re-run of dead chunks, resume."""

import csv
import os
import subprocess
import sys
import textwrap
from pathlib import Path

import numpy as np
import pytest

pytest.importorskip("distributed")

from calendra_sweep.jobs import execute_chunk
from calendra_sweep.runner import SweepError, make_plan, run_sweep
from calendra_sweep.spec import SpecError, load_spec
from calendra_sweep.store import CHUNK_FOLDER, chunk_path
from calendra_sweep.testing import FailOnce

#: Heliacal risings (arcus visionis) of two stars at two sites, two delta-T variants, two 50-year chunks:
#: 16 chunks of a few hundredths of a second each.
HELIACAL = """
title = "test heliacal grid"
[job]
detector = "heliacal"
[job.parameters]
phase = "rising"
method = "arcus"
[grid]
sites = ["Babylon", "30.0,31.2"]
objects = ["Sirius", "Aldebaran"]
years = [-1500, -1400]
chunk_years = 50
delta_t_offset_s = [0, 900]
[output]
folder = "out"
"""

#: Seasons (no site): 4 chunks of 100 years, two delta-T offsets.
SEASONS = """
[job]
detector = "seasons"
[grid]
years = [-1000, -600]
chunk_years = 100
delta_t_offset_s = [0, 600]
[output]
folder = "out"
"""

#: First crescents on a 3 x 2 latitude/longitude raster over 4 years, with a map of the median age.
CRESCENT = """
[job]
detector = "crescent"
[job.parameters]
criterion = "yallop"
[grid]
years = [-600, -596]
chunk_years = 2
[grid.latlon]
latitude = [20, 40]
longitude = [30, 40]
step = 10
[output]
folder = "out"
[output.plot]
file = "age.png"
value = "age_h"
statistic = "median"
where = { kind = "first-crescent" }
"""


def write_spec(folder: Path, text: str, name: str = "spec.toml") -> Path:
    path = folder / name
    path.write_text(textwrap.dedent(text), encoding="utf-8")
    return path


def chunk_files(folder: Path) -> dict:
    return {p.name: p.read_bytes() for p in sorted((folder / CHUNK_FOLDER).glob("*.csv"))}


def read_rows(path: Path) -> list:
    with open(path, newline="") as fh:
        return list(csv.DictReader(fh))


@pytest.fixture(scope="module")
def client():
    """Two worker processes on the loopback interface, shut down after the module."""
    from distributed import Client, LocalCluster

    cluster = LocalCluster(n_workers=2, threads_per_worker=1, processes=True, host="127.0.0.1",
                           dashboard_address=":0", silence_logs=50)
    cl = Client(cluster, timeout=60)
    cl.wait_for_workers(2, timeout=60)
    yield cl
    cl.close(timeout=30)
    cluster.close(timeout=30)


@pytest.fixture(scope="module")
def heliacal_reference(tmp_path_factory):
    """The serial run of HELIACAL: the reference every other run must equal."""
    folder = tmp_path_factory.mktemp("reference")
    spec = write_spec(folder, HELIACAL)
    report = run_sweep(spec, serial=True)
    return spec, report, chunk_files(folder / "out"), (folder / "out" / "summary.csv").read_bytes()


# ------------------------------------------------------------------ spec checks

BAD_SPECS = [
    ("[job] detector", 'detector = "heliacal"', 'detector = "helical"', "unknown detector 'helical'"),
    ("[grid] sites", 'sites = ["Babylon", "30.0,31.2"]', "sites = []", "empty"),
    ("[grid] objects", 'objects = ["Sirius", "Aldebaran"]', "objects = []", "empty"),
    ("[grid] years", "years = [-1500, -1400]", "years = [-1400, -1500]", "empty"),
    ("[grid] years", "years = [-1500, -1400]", "years = [-5000, -4000]", "outside the ephemeris"),
    ("[grid] sites", 'sites = ["Babylon", "30.0,31.2"]', 'sites = ["Atlantis"]', "unknown site 'Atlantis'"),
    ("[grid] delta_t_offset_s", "delta_t_offset_s = [0, 900]", 'delta_t_offset_s = ["900 s"]', "seconds"),
    ("[job.parameters] method", 'method = "arcus"', 'method = "guess"', "one of arcus, physical"),
    ("[job.parameters] method", 'method = "arcus"', "method = 3", "must be a string"),
    ("[job.parameters] k", 'method = "arcus"', 'k = "high"', "must be a number"),
    ("[job.parameters] k", 'method = "arcus"', "k = true", "must be a number"),
    ("[job.parameters] colour", 'method = "arcus"', 'colour = "red"', "unknown key"),
    ("[job.parameters] object", 'objects = ["Sirius", "Aldebaran"]', "", "needs parameter object"),
    ("[job] kind", 'detector = "heliacal"', 'kind = "atlas"\ndetector = "heliacal"', "unknown job kind 'atlas'"),
    ("[grid] chunk_years", "chunk_years = 50", "chunk_years = 0", "positive"),
    ("[grid] chunk_years", "chunk_years = 50", "chunk_years = 2.5", "whole number"),
    ("[grid] sizes", "chunk_years = 50", "chunk_years = 50\nsizes = 3", "unknown key"),
    ("[output] format", 'folder = "out"', 'folder = "out"\nformat = "xlsx"', "must be one of csv"),
]


@pytest.mark.parametrize("where,old,new,match", BAD_SPECS)
def test_bad_spec_gives_one_line_naming_file_and_key_before_any_work(tmp_path, monkeypatch, where, old, new, match):
    import calendra_sweep.runner as runner

    assert old in HELIACAL
    spec = write_spec(tmp_path, HELIACAL.replace(old, new, 1))
    monkeypatch.setattr(runner, "execute_chunk", lambda *a: pytest.fail("work started on a bad spec"))
    with pytest.raises(SpecError) as info:
        run_sweep(spec, serial=True)
    message = str(info.value)
    assert "\n" not in message
    assert message.startswith(f"{spec}: {where}"), message
    assert match in message
    assert not (tmp_path / "out").exists()


def test_spec_without_grid_points_or_with_sites_for_a_siteless_detector(tmp_path):
    for text, where, match in [
        (HELIACAL.replace('sites = ["Babylon", "30.0,31.2"]', ""), "[grid] sites", "needs sites"),
        (SEASONS.replace("chunk_years = 100", 'chunk_years = 100\nsites = ["Babylon"]'), "[grid] sites",
         "takes no site"),
        (CRESCENT.replace("latitude = [20, 40]", "latitude = [40, 20]"), "[grid.latlon] latitude", "empty"),
        (CRESCENT.replace("step = 10", ""), "[grid.latlon] step", "missing"),
        (SEASONS + '[output.plot]\nfile = "x.png"\n', "[output.plot]", "latitude/longitude grid"),
        ("[job]\ndetector = 'seasons'\n", "[grid]", "missing table"),
        ("[job\n", "", "not valid TOML"),
    ]:
        spec = write_spec(tmp_path, text)
        with pytest.raises(SpecError, match=match) as info:
            load_spec(spec)
        assert "\n" not in str(info.value) and str(info.value).startswith(f"{spec}: {where}")


def test_unwritable_output_folder_is_refused(tmp_path):
    blocker = tmp_path / "a-file"
    blocker.write_text("not a folder")
    spec = write_spec(tmp_path, SEASONS.replace('folder = "out"', 'folder = "a-file/out"'))
    with pytest.raises(SpecError, match=r"\[output\] folder: .*a-file is a file, not a folder"):
        load_spec(spec)
    # --output replaces the spec's folder and is checked the same way
    with pytest.raises(SpecError, match="is a file, not a folder"):
        load_spec(write_spec(tmp_path, SEASONS), output=blocker / "sub")
    if os.geteuid() != 0:  # root writes anywhere
        ro = tmp_path / "ro"
        ro.mkdir()
        ro.chmod(0o500)
        try:
            with pytest.raises(SpecError, match="cannot write there"):
                load_spec(write_spec(tmp_path, SEASONS), output=ro / "out")
        finally:
            ro.chmod(0o700)


def test_command_line_bad_spec_is_one_line_with_status_2(tmp_path):
    spec = write_spec(tmp_path, HELIACAL.replace('"heliacal"', '"helical"'))
    proc = subprocess.run([sys.executable, "-m", "calendra.cli", "sweep", str(spec), "--serial"],
                          capture_output=True, text=True, timeout=120)
    assert proc.returncode == 2
    lines = proc.stderr.strip().splitlines()
    assert len(lines) == 1 and lines[0].startswith("calendra: error: ") and "[job] detector" in lines[0]
    assert not (tmp_path / "out").exists()


# --------------------------------------------------------------------- chunking

def test_chunks_are_the_grid_product_with_stable_keys(tmp_path):
    spec = load_spec(write_spec(tmp_path, HELIACAL))
    chunks = make_plan(spec).chunks
    assert len(chunks) == 2 * 2 * 2 * 2          # sites x objects x offsets x spans
    assert [(c.year_from, c.year_to) for c in chunks[:2]] == [(-1500, -1450), (-1450, -1400)]
    assert len({c.key for c in chunks}) == len(chunks)
    again = make_plan(load_spec(write_spec(tmp_path, HELIACAL, "again.toml"))).chunks
    assert [c.key for c in again] == [c.key for c in chunks]
    # adding a site keeps the keys of the others; changing a fixed parameter changes every key
    more = make_plan(load_spec(write_spec(tmp_path, HELIACAL.replace('"30.0,31.2"', '"30.0,31.2", "Thebes"'),
                                          "more.toml"))).chunks
    assert {c.key for c in chunks} < {c.key for c in more} and len(more) == 24
    other = make_plan(load_spec(write_spec(tmp_path, HELIACAL.replace('method = "arcus"', "arcus = 9.5"),
                                           "other.toml"))).chunks
    assert not {c.key for c in chunks} & {c.key for c in other}


def test_chunked_rows_equal_one_long_search(tmp_path):
    """Cutting the span into chunks (with the margin) loses and repeats no event."""
    from calendra.pluginmanager import get_host
    from calendra.sites import parse_site
    from calendra_sweep.spec import year_bounds_jd_tt

    plan = make_plan(load_spec(write_spec(tmp_path, HELIACAL)))
    picked = [c for c in plan.chunks if c.point_dict()["grid_site"] == "30,31.2"
              and c.point_dict()["grid_object"] == "Sirius" and c.point_dict()["grid_delta_t_offset_s"] == 0.0]
    assert len(picked) == 2
    jd = np.concatenate([np.array([float(r) for r in _column(execute_chunk(plan.job, c).text, "jd_tt")])
                         for c in picked])
    start, end = year_bounds_jd_tt(-1500), year_bounds_jd_tt(-1400)
    whole = get_host().detectors.get("heliacal").search(start - 60, end + 60, site=parse_site("30.0,31.2"),
                                                        object="Sirius")
    ref = whole["jd_tt"][(whole["jd_tt"] >= start) & (whole["jd_tt"] < end)]
    assert len(jd) == 100 and np.array_equal(jd, ref)


def _column(text: str, name: str) -> list:
    rows = list(csv.DictReader(text.splitlines()))
    return [r[name] for r in rows]


def test_delta_t_offset_moves_ut_only(tmp_path):
    spec = write_spec(tmp_path, SEASONS)
    run_sweep(spec, serial=True)
    rows = {}
    for c in make_plan(load_spec(spec)).chunks:
        rows.setdefault(c.point_dict()["grid_delta_t_offset_s"], []).extend(read_rows(chunk_path(tmp_path / "out",
                                                                                               c.key)))
    base, moved = rows[0.0], rows[600.0]
    assert len(base) == len(moved) == 4 * 400
    tt = np.array([[float(a["jd_tt"]), float(b["jd_tt"])] for a, b in zip(base, moved)])
    ut = np.array([[float(a["jd_ut"]), float(b["jd_ut"])] for a, b in zip(base, moved)])
    assert np.array_equal(tt[:, 0], tt[:, 1])                  # seasons are instants in TT
    assert np.allclose(ut[:, 0] - ut[:, 1], 600 / 86400, atol=1e-8)


# ---------------------------------------------------------- serial = cluster

def test_cluster_output_equals_serial_output(tmp_path, client, heliacal_reference):
    spec, ref_report, ref_chunks, ref_summary = heliacal_reference
    assert ref_report.computed == 16 and ref_report.rows == 16 * 50
    report = run_sweep(spec, client=client, output=tmp_path / "dask")
    assert report.computed == 16 and report.skipped == 0
    assert len(report.workers) == 2                     # both worker processes took chunks
    assert all(int(w.rsplit(":", 1)[1]) != os.getpid() for w in report.workers)
    got = chunk_files(tmp_path / "dask")
    assert list(got) == list(ref_chunks) and len(got) == 16
    for name in got:
        assert got[name] == ref_chunks[name], name
    assert (tmp_path / "dask" / "summary.csv").read_bytes() == ref_summary
    rows = read_rows(tmp_path / "dask" / "summary.csv")
    assert len(rows) == 8 and {r["rows"] for r in rows} == {"100"}


def test_local_cluster_started_by_the_run(tmp_path):
    spec = write_spec(tmp_path, SEASONS)
    ref = run_sweep(spec, serial=True, output=tmp_path / "serial")
    report = run_sweep(spec, workers=2, output=tmp_path / "local")
    assert report.mode == "local 2" and report.computed == ref.computed == 8
    assert chunk_files(tmp_path / "local") == chunk_files(tmp_path / "serial")


# ------------------------------------------------------------ dead workers

@pytest.mark.parametrize("mode", ["exit", "raise"])
def test_chunk_of_a_dying_or_failing_worker_is_rerun(tmp_path, client, heliacal_reference, mode):
    spec, _, ref_chunks, ref_summary = heliacal_reference
    plan = make_plan(load_spec(spec, output=tmp_path / "out"))
    victims = {plan.chunks[1].key, plan.chunks[6].key}
    markers = tmp_path / "markers"
    markers.mkdir()
    faulty = plan.with_job(FailOnce(plan.job, markers, victims, mode=mode))
    before = set(client.scheduler_info()["workers"])
    report = run_sweep(None, plan=faulty, client=client)
    assert {p.name for p in markers.iterdir()} == {f"{k}.failed" for k in victims}   # each failed once
    assert report.computed == 16
    assert chunk_files(tmp_path / "out") == ref_chunks
    assert (tmp_path / "out" / "summary.csv").read_bytes() == ref_summary
    if mode == "exit":   # the nanny replaced the dead worker processes
        client.wait_for_workers(2, timeout=60)
        assert set(client.scheduler_info()["workers"]) != before


def test_user_error_in_a_chunk_stops_the_run_with_its_key(tmp_path, client):
    spec = write_spec(tmp_path, HELIACAL.replace('"Aldebaran"', '"Notastar"'))
    with pytest.raises(SweepError, match=r"chunk .*notastar.*: .*Notastar"):
        run_sweep(spec, client=client)


# ------------------------------------------------------------------- resume

def test_resume_skips_finished_chunks_and_loses_nothing(tmp_path, client, heliacal_reference):
    spec, _, ref_chunks, ref_summary = heliacal_reference
    out = tmp_path / "out"
    plan = make_plan(load_spec(spec, output=out))

    # an interrupted run: stopped after 5 chunks
    class Stop(Exception):
        pass

    def stop_after_five(done, total, label):
        if done == 5:
            raise Stop

    with pytest.raises(Stop):
        run_sweep(None, plan=plan, serial=True, progress=stop_after_five)
    assert len(chunk_files(out)) == 5
    (out / CHUNK_FOLDER / ".stale.csv.123.tmp").write_text("half a chunk")   # left by a killed writer
    stamps = {p.name: (p.stat().st_ino, p.stat().st_mtime_ns) for p in (out / CHUNK_FOLDER).glob("*.csv")}

    report = run_sweep(None, plan=plan, client=client, resume=True)
    assert (report.skipped, report.computed) == (5, 11)
    assert chunk_files(out) == ref_chunks
    assert (out / "summary.csv").read_bytes() == ref_summary
    assert not list((out / CHUNK_FOLDER).glob("*.tmp"))
    for name, stamp in stamps.items():   # finished chunks were not rewritten
        p = out / CHUNK_FOLDER / name
        assert (p.stat().st_ino, p.stat().st_mtime_ns) == stamp

    again = run_sweep(None, plan=plan, client=client, resume=True)
    assert (again.skipped, again.computed) == (16, 0)
    rerun = run_sweep(None, plan=plan, serial=True)             # without --resume everything is computed
    assert rerun.computed == 16 and chunk_files(out) == ref_chunks


# --------------------------------------------------------- summary and plot

def test_summary_and_map_of_a_latlon_grid(tmp_path):
    from calendra_sweep.summary import raster

    spec = write_spec(tmp_path, CRESCENT)
    report = run_sweep(spec, serial=True)
    plan = make_plan(load_spec(spec))
    assert report.total == 6 * 2 and report.plot == tmp_path / "out" / "age.png"
    assert report.plot.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    rows = read_rows(tmp_path / "out" / "summary.csv")
    assert len(rows) == 6 and "median_age_h" in rows[0]
    # the summary's statistic is the median over the point's first-crescent rows
    point = plan.chunks[0].point
    ages = [float(r["age_h"]) for c in plan.chunks if c.point == point
            for r in read_rows(chunk_path(tmp_path / "out", c.key)) if r["kind"] == "first-crescent"]
    assert len(ages) >= 45                                   # about 49 lunations in 4 years
    first = next(r for r in rows if r["grid_site"] == dict(point)["grid_site"])
    assert float(first["median_age_h"]) == pytest.approx(np.median(ages))
    (label, (lats, lons, grid)), = raster(plan, plan.spec.output.plot).items()
    assert list(lats) == [20.0, 30.0, 40.0] and list(lons) == [30.0, 40.0]
    assert grid.shape == (3, 2) and np.all(np.isfinite(grid))
    assert grid[0, 0] == pytest.approx(np.median(ages))
    # the crescent is seen younger in the tropics than at 40 degrees (on average over these years)
    assert grid[0].mean() < grid[2].mean()


def test_a_raster_gets_a_map_by_default(tmp_path):
    base = CRESCENT[:CRESCENT.index("[output.plot]")]
    plot = load_spec(write_spec(tmp_path, base)).output.plot
    assert plot is not None and (plot.value, plot.file, plot.axes) == ("count", "map.png", "map")
    assert load_spec(write_spec(tmp_path, base + "plot = false\n")).output.plot is None
    assert load_spec(write_spec(tmp_path, SEASONS)).output.plot is None


def test_command_runs_serial_and_prints_summary(tmp_path):
    from click.testing import CliRunner

    from calendra_sweep.cli import sweep_command

    spec = write_spec(tmp_path, SEASONS)
    result = CliRunner().invoke(sweep_command(), [str(spec), "--serial", "--output", str(tmp_path / "cli")],
                                catch_exceptions=False)
    assert result.exit_code == 0, result.output
    assert "sweep summary: 2 grid points" in result.output
    assert "8 chunks: 8 computed, 0 already done" in result.output
    result = CliRunner().invoke(sweep_command(), [str(spec), "--resume", "--serial", "--output",
                                                  str(tmp_path / "cli")], catch_exceptions=False)
    assert "8 chunks: 0 computed, 8 already done" in result.output
    result = CliRunner().invoke(sweep_command(), [str(spec), "--check"], catch_exceptions=False)
    assert "8 chunks of job detector" in result.output and not (tmp_path / "out").exists()


# -------------------------------------------------------------- other job kinds

DEMO = Path(__file__).resolve().parents[1] / "demo_events"


def test_alignment_batch_in_blocks_equals_one_run(tmp_path):
    from calendra_sweep.jobs import job_kinds

    if "alignment-batch" not in job_kinds():
        pytest.skip("the alignment plugin is not installed")
    from calendra_alignments import batch as B

    spec = write_spec(tmp_path, f"""
        [job]
        kind = "alignment-batch"
        structures = "{DEMO / 'invented_stone_rows.csv'}"
        step = 100
        epochs = [-3000, 1500]
        [job.parameters]
        targets = "sun,moon"
        [grid]
        structures_per_chunk = 2
        [output]
        folder = "out"
        """)
    report = run_sweep(spec, serial=True)
    assert report.total == 7 and report.computed == 7        # 13 structures in blocks of 2
    got = sorted((r["id"], r["target"], r["epoch_best"], r["offset_sigma"])
                 for p in sorted((tmp_path / "out" / CHUNK_FOLDER).glob("*.csv")) for r in read_rows(p))
    survey = B.read_structures(DEMO / "invented_stone_rows.csv")
    whole = B.run(survey, groups=("sun", "moon"), stars=(), epochs=B.epoch_grid(-3000, 1500, 100))
    want = sorted((r["id"], r["target"], repr(float(r["epoch_best"])), repr(float(r["offset_sigma"])))
                  for r in B.match_rows(whole))
    assert len(want) > 0 and got == want


def test_chronology_kind_dates_the_record_in_its_span(tmp_path):
    from calendra_sweep.jobs import job_kinds

    if "chronology" not in job_kinds():
        pytest.skip("the solver plugin is not installed")
    from calendra_solver.engine import date_record
    from calendra_sweep.spec import year_bounds_jd_tt

    spec = write_spec(tmp_path, f"""
        [job]
        kind = "chronology"
        record = "{DEMO / 'record_kesh_ammat.toml'}"
        overlap_years = 5
        delta_t_sweep = "off"
        [grid]
        years = [-780, -770]
        chunk_years = 10
        [output]
        folder = "out"
        """)
    run_sweep(spec, serial=True)
    (path,) = (tmp_path / "out" / CHUNK_FOLDER).glob("*.csv")
    rows = read_rows(path)
    direct = date_record(str(DEMO / "record_kesh_ammat.toml"), window="-785..-765", sweep="off", top=1000)
    lo, hi = year_bounds_jd_tt(-780), year_bounds_jd_tt(-770)
    firsts = [min(e["jd_tt"] for e in s.events) for s in direct.solutions]
    wanted = [s for s, f in zip(direct.solutions, firsts) if lo <= f < hi]
    assert wanted, "the demo record has a solution in -780..-770"
    assert len(rows) == sum(len(s.events) for s in wanted)
    assert sorted(float(r["jd_tt"]) for r in rows) == sorted(e["jd_tt"] for s in wanted for e in s.events)


def test_bad_extra_kind_specs_name_the_key(tmp_path):
    from calendra_sweep.jobs import job_kinds

    kinds = job_kinds()
    cases = []
    if "alignment-batch" in kinds:
        cases += [
            ('[job]\nkind = "alignment-batch"\nstructures = "missing.csv"\n[grid]\n[output]\nfolder = "o"\n',
             "[job] structures", "cannot read"),
            (f'[job]\nkind = "alignment-batch"\nstructures = "{DEMO / "invented_stone_rows.csv"}"\n'
             '[job.parameters]\nlimb = "middle"\n[grid]\n[output]\nfolder = "o"\n', "[job.parameters] limb",
             "one of upper"),
        ]
    if "chronology" in kinds:
        cases += [
            (f'[job]\nkind = "chronology"\nrecord = "{DEMO / "record_kesh_ammat.toml"}"\n[grid]\nyears = []\n'
             '[output]\nfolder = "o"\n', "[grid] years", "empty"),
        ]
    if not cases:
        pytest.skip("neither the alignment nor the solver plugin is installed")
    for text, where, match in cases:
        spec = write_spec(tmp_path, text)
        with pytest.raises(SpecError, match=match) as info:
            load_spec(spec)
        assert str(info.value).startswith(f"{spec}: {where}") and "\n" not in str(info.value)
