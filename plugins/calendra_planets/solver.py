"""Vectorised root finding inside brackets: Newton steps guarded by bisection.

:func:`calendra.solarterms.newton_refine` is the project's Newton iteration
for angles that grow steadily (phases, solar longitudes).  The planetary
phenomena also need roots of functions that turn (a longitude rate at a
station, an elongation rate at its maximum), where a bare Newton step can
leave its basin.  Here every root comes with a bracket ``[lo, hi]`` over
which the function changes sign once; each iteration takes the Newton step
when it stays inside the current bracket and halves the bracket otherwise,
then shrinks the bracket with the sign found.  This is the safeguarded
Newton method ("rtsafe", Press et al., *Numerical Recipes*, 2nd ed., 9.4):
a Newton step is taken only when it stays inside the bracket and at least
halves the previous step, so the iteration cannot leave the bracket, never
converges more slowly than bisection and converges quadratically once
Newton's steps are accepted.
"""

from __future__ import annotations

import numpy as np

from calendra.errors import CalendraError
from calendra.solarterms import CHUNK

#: Most iterations (bisection alone shrinks a 400-day bracket to 1e-7 day in 32).
MAX_ITERATIONS = 60


def bracketed_newton(evaluate, lo, hi, t0=None, *, tolerance_days: float = 1e-6, chunk: int = CHUNK,
                     progress=None, label: str = "refining", sign_lo=None, with_index: bool = False):
    """Find one root of ``f`` in each bracket.

    Parameters
    ----------
    evaluate : callable
        ``evaluate(t) -> (f, df_dt)`` for a 1-D array of Julian Days (TT).
    lo, hi : ndarray
        Brackets, Julian Days (TT); ``f(lo)`` and ``f(hi)`` have opposite signs.
    t0 : ndarray or None
        First guesses inside the brackets (default the middles).
    tolerance_days : float
        Stop when the last step (or the bracket) is under this, days.
    chunk : int
        Instants evaluated at once.
    progress : callable or None
        ``progress(done, total, label)``.
    sign_lo : ndarray or None
        Sign of ``f(lo)`` (+1 or -1) if known; otherwise evaluated.
    with_index : bool
        Call ``evaluate(t, index)`` with the positions (into ``lo``) of the
        roots evaluated, for functions that differ from root to root.

    Returns
    -------
    t : ndarray
        Roots, Julian Days (TT).
    ok : ndarray of bool
        False where the bracket held no sign change.

    Raises
    ------
    CalendraError
        If some root has not converged in :data:`MAX_ITERATIONS` iterations.
    """
    lo = np.array(lo, dtype=np.float64).reshape(-1)
    hi = np.array(hi, dtype=np.float64).reshape(-1)
    t = 0.5 * (lo + hi) if t0 is None else np.clip(np.array(t0, dtype=np.float64).reshape(-1), lo, hi)
    n = t.size
    done = 0

    def run(times, index):
        nonlocal done
        out_f, out_d = np.empty(times.size), np.empty(times.size)
        for i in range(0, times.size, chunk):
            if with_index:
                f, d = evaluate(times[i:i + chunk], index[i:i + chunk])
            else:
                f, d = evaluate(times[i:i + chunk])
            out_f[i:i + chunk], out_d[i:i + chunk] = f, d
            done += min(chunk, times.size - i)
            if progress is not None:
                progress(done, max(done, 6 * n), label)
        return out_f, out_d

    ok = np.ones(n, dtype=bool)
    if sign_lo is None:
        every = np.arange(n)
        f_lo, _ = run(lo, every)
        f_hi, _ = run(hi, every)
        s_lo = np.sign(f_lo)
        ok = (s_lo * np.sign(f_hi)) < 0
    else:
        s_lo = np.broadcast_to(np.asarray(sign_lo, dtype=np.float64), (n,)).copy()
    active = np.nonzero(ok)[0]
    last = np.abs(hi - lo)
    for _ in range(MAX_ITERATIONS):
        if active.size == 0:
            break
        f, d = run(t[active], active)
        a, b, x = lo[active], hi[active], t[active]
        same = np.sign(f) == s_lo[active]
        a = np.where(same, x, a)
        b = np.where(same, b, x)
        with np.errstate(divide="ignore", invalid="ignore"):
            newton = x - f / d
        # Newton's step is taken when it stays inside the bracket and at least halves the step before
        # (else the iteration is not converging fast and the bracket is halved instead)
        inside = (np.isfinite(newton) & (newton > np.minimum(a, b)) & (newton < np.maximum(a, b))
                  & (np.abs(newton - x) <= 0.5 * last[active]))
        nxt = np.where(inside, newton, 0.5 * (a + b))
        nxt = np.where(f == 0.0, x, nxt)
        last[active] = np.abs(nxt - x)
        lo[active], hi[active], t[active] = a, b, nxt
        small = (np.abs(nxt - x) < tolerance_days) | (np.abs(b - a) < tolerance_days)
        active = active[~small]
    if active.size:
        raise CalendraError(f"{label}: {active.size} of {n} roots did not converge in {MAX_ITERATIONS} "
                            f"iterations (first near JD {t[active[0]]:.5f} TT)")
    if progress is not None:
        progress(done, done, label)
    return t, ok
