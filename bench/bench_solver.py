"""Benchmark of the record solver (calendra date): whole runs, with the time of each stage.

Cases
-----
1. the demo record (demo_events/record_kesh_ammat.toml), end to end;
2. a 1200-year window with three observations (a lunar eclipse seen at a site, the
   vernal equinox before it, Sirius' heliacal rising after it);
3. a 1200-year window with five observations (target of issue 9: under 15 s);
4. the chronology sweep of a reign list with an uncertain accession over 100 years
   and ten observations dated by regnal year (target: under 30 s).

Records 2-4 are written from the real sky (events computed by the detectors for a
true date) into a temporary folder.  Run::

    /work/venv/bin/python bench/bench_solver.py

Each case prints its wall time, its stages (load, candidates, join, delta_t, ranking:
seconds) and whether the true date was ranked first.  Times depend on the machine
(2 cores here) and on what else runs on it.
"""

from __future__ import annotations

import os
import sys
import tempfile
import textwrap
import time

import numpy as np

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))


def _events(name, a, b, site=None, **params):
    from calendra.pluginmanager import get_host

    return get_host().detectors.get(name).search(a, b, site=site, **params)


def _run(label, path, check=None, **kw):
    from calendra_solver.engine import date_record

    t0 = time.perf_counter()
    res = date_record(path, **kw)
    wall = time.perf_counter() - t0
    stages = ", ".join(f"{k} {v:.2f}" for k, v in res.timings.items() if isinstance(v, float))
    ok = "" if check is None else f"; true date first: {check(res)}"
    print(f"{label}: {wall:.1f} s ({stages}; detector calls {res.timings['detector_calls']}; "
          f"{res.n_solutions} solution(s){ok})")
    return wall, res


def three_and_five(tmp):
    from calendra.dateparse import date_to_jd_tt
    from calendra.sites import parse_site

    site = parse_site("babylon")
    a = date_to_jd_tt("-0480-01-01")
    ecl = _events("eclipses", a, a + 3 * 365, site, kind="lunar")
    ecl = ecl.select((np.asarray(ecl["umbral_mag"], float) >= 0.5) & (np.asarray(ecl["seen"]).astype(str) == "yes"))
    e_t, e_mag = float(ecl["jd_tt"][0]), float(ecl["umbral_mag"][0])
    sir = _events("heliacal", e_t, e_t + 400, site, object="Sirius")["jd_tt"][0]
    eq = _events("seasons", e_t - 400, e_t)
    kinds = np.asarray(eq["kind"]).astype(str)
    eq_t = float(eq["jd_tt"][kinds == "vernal-equinox"][-1])
    sol_t = float(eq["jd_tt"][kinds == "summer-solstice"][-1])
    full = _events("lunar-phases", e_t - 2, e_t + 2, phase="full")["jd_tt"][0]
    head = f"""
        [record]
        window = "-1100..100"
        site = "babylon"
        [[observation]]
        id = "equinox"
        detector = "seasons"
        kind = "vernal-equinox"
        [[observation]]
        id = "eclipse"
        detector = "eclipses"
        site = "record"
        params = {{ kind = "lunar" }}
        where = "seen == 'yes'"
        require = [{{ column = "umbral_mag", target = {e_mag:.2f}, tolerance = 0.1 }}]
        [[observation]]
        id = "sirius"
        detector = "heliacal"
        params = {{ object = "Sirius" }}
        [[relation]]
        type = "interval"
        from = "equinox"
        to = "eclipse"
        days = {e_t - eq_t:.1f}
        plus_minus = 2
        [[relation]]
        type = "interval"
        from = "eclipse"
        to = "sirius"
        days = {sir - e_t:.1f}
        plus_minus = 2
    """
    more = f"""
        [[observation]]
        id = "full-moon"
        detector = "lunar-phases"
        params = {{ phase = "full" }}
        [[observation]]
        id = "solstice"
        detector = "seasons"
        kind = "summer-solstice"
        [[relation]]
        type = "interval"
        from = "full-moon"
        to = "eclipse"
        days = {e_t - full:.2f}
        plus_minus = 0.5
        [[relation]]
        type = "interval"
        from = "solstice"
        to = "sirius"
        days = {sir - sol_t - (365.2422 if sir - sol_t > 300 else 0):.1f}
        plus_minus = 3
    """
    p3 = os.path.join(tmp, "three.toml")
    p5 = os.path.join(tmp, "five.toml")
    with open(p3, "w") as fh:
        fh.write(textwrap.dedent(head))
    with open(p5, "w") as fh:
        fh.write(textwrap.dedent(head) + textwrap.dedent(more))

    def check(res):
        return bool(res.solutions) and abs(res.solutions[0].events[1]["jd_tt"] - e_t) < 1e-3

    return p3, p5, check


def reign_list(tmp, n_obs=10):
    """A reign list whose accession is free over 100 years; ten regnal years with a lunar eclipse each."""
    from calendra.dateparse import date_to_jd_tt
    from calendra.sites import parse_site

    site = parse_site("babylon")
    with open(os.path.join(tmp, "kings.toml"), "w") as fh:
        fh.write(textwrap.dedent("""
            [[dynasty]]
            name = "bench-kings"
            year_start = "julian:1 March"
            counting = "accession-year"
            [[dynasty.reign]]
            ruler = "First"
            key = "first"
            accession_between = [-760, -661]
            length = 40
        """))
    true_acc = -712          # accession year: regnal year y runs from 1 March of year -712 + y
    obs = []
    for y in range(1, 41):                 # the first n_obs regnal years with an eclipse seen at the site
        if len(obs) == n_obs:
            break
        a = date_to_jd_tt(f"julian:{true_acc + y}-03-10")
        ecl = _events("eclipses", a, a + 340, site, kind="lunar")
        ecl = ecl.select((np.asarray(ecl["umbral_mag"], float) > 0.05) & (np.asarray(ecl["seen"]).astype(str) == "yes"))
        if not len(ecl):
            continue
        obs.append((y, float(ecl["umbral_mag"][0]), float(ecl["jd_tt"][0])))
    body = ['[record]\nwindow = "-800..-550"\nsite = "babylon"\neras = ["kings.toml"]\n'
            'delta_t_sweep = { mode = "off" }\n']
    for k, (y, mag, _) in enumerate(obs):
        body.append(textwrap.dedent(f"""
            [[observation]]
            id = "year-{y}"
            detector = "eclipses"
            site = "record"
            params = {{ kind = "lunar" }}
            where = "seen == 'yes'"
            require = [{{ column = "umbral_mag", target = {mag:.2f}, tolerance = 0.08 }}]
            [observation.date]
            calendar = "bench-kings"
            ruler = "First"
            year = {y}
            tolerance_days = 10
        """))
    body.append('\n[[relation]]\ntype = "regnal"\ncalendar = "bench-kings"\nepoch = "first"\nstep_days = 30\n')
    path = os.path.join(tmp, "reign.toml")
    with open(path, "w") as fh:
        fh.write("".join(body))

    def check(res):
        return bool(res.solutions) and all(abs(ev["jd_tt"] - t) < 1e-3
                                           for ev, (_, _, t) in zip(res.solutions[0].events, obs))

    return path, check, len(obs)


def main(argv=None):
    cases = set(argv or sys.argv[1:]) or {"demo", "three", "five", "reign"}
    with tempfile.TemporaryDirectory() as tmp:
        if "demo" in cases:
            _run("demo record (Kesh-Ammat, 5 observations, 300 years, regnal epoch)",
                 os.path.join(ROOT, "demo_events", "record_kesh_ammat.toml"),
                 check=lambda r: {e["observation"]: e["date_ut"] for e in r.solutions[0].events}
                 .get("eclipse-day-14") == "-0778-04-29")
        p3, p5, check = three_and_five(tmp)
        if "three" in cases:
            _run("1200-year window, 3 observations", p3, check)
        if "five" in cases:
            wall, _ = _run("1200-year window, 5 observations (target < 15 s)", p5, check)
        if "reign" in cases:
            path, check, n = reign_list(tmp)
            wall, res = _run(f"chronology sweep, 100-year epoch range, {n} observations (target < 30 s)", path,
                             check)
            best = int(np.argmax(res.chronology["holding"]))
            print(f"    epoch samples {len(res.chronology['samples'])}; most observations holding "
                  f"({max(res.chronology['holding'])}) first at day {res.chronology['samples'][best][0]}")


if __name__ == "__main__":
    main()
