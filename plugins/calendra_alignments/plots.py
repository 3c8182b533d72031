"""Figures of alignments (matplotlib with the Agg backend, imported only when a figure is drawn).

* :func:`plot_alignment` -- a horizon diagram (azimuth against apparent
  altitude: the skyline, the alignment and its error band, the rising or
  setting tracks of the matched targets at the chosen epoch) above the
  declination interval against the targets' declinations over the epochs.
* :func:`plot_histogram` -- the declinations of a batch: a histogram, the sum
  of one normal curve per alignment (its own standard error), the
  declinations that random azimuths on the same skylines would give (a null
  model, fixed seed), the main solar and lunar targets, and the caveats.
* :func:`plot_star_years` -- the rising (setting) azimuth of a star against
  the year, with the alignment's azimuth window.
"""

from __future__ import annotations

import numpy as np

from . import geometry as G

#: Seed of the null-model draws of the histogram.
NULL_SEED = 4096


def _pyplot():
    try:
        import matplotlib

        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
    except ImportError:
        from calendra.errors import CalendraError

        raise CalendraError("--plot needs matplotlib (pip install matplotlib)") from None
    return plt


def plot_alignment(path, al, index, intervals, targets, matches, *, epoch_index=0, limb="upper",
                   moon_distance="mean", extinction_deg=0.0, refraction_model="bennett", title=""):
    """Draw the horizon diagram and the declination-against-epoch panel of one alignment.

    Parameters
    ----------
    path : str or Path
        Output file (PNG, PDF, SVG by extension).
    al : Alignments
    index : int
        Which alignment of ``al``.
    intervals : dict
        kind -> DeclinationInterval.
    targets : Targets
    matches : Matches
    epoch_index : int
        Grid epoch of the tracks in the horizon diagram.
    limb, moon_distance, extinction_deg, refraction_model
        As used for the intervals.
    """
    from .matching import bodies

    plt = _pyplot()
    i = int(index)
    hz = al.horizons[i]
    az0 = float(al.azimuth_deg[i])
    lat = float(al.latitude_deg[i])
    k = intervals["star"].level if "star" in intervals else 2.0
    half = 12.0 + 3.0 * k * float(al.azimuth_sigma_deg[i])
    a_grid = np.linspace(az0 - half, az0 + half, 600)
    sky = np.asarray(hz.altitude(a_grid % 360.0))
    fig, (ax, bx) = plt.subplots(2, 1, figsize=(9, 9), gridspec_kw={"height_ratios": [1.1, 1.0]})
    ax.fill_between(a_grid, sky, sky.min() - 3.0, color="0.75", lw=0, label="skyline (apparent)")
    ax.plot(a_grid, sky, color="0.3", lw=1)
    s = float(al.azimuth_sigma_deg[i])
    ax.axvspan(az0 - k * s, az0 + k * s, color="C0", alpha=0.18, label=f"alignment +-{k:g} sigma")
    ax.axvline(az0, color="C0", lw=1.5)
    sel = np.nonzero(matches.alignment == i)[0]
    body = bodies(limb, moon_distance, extinction_deg)
    e = int(epoch_index)
    ep = targets.epochs[e]
    kw = dict(refraction_model=refraction_model, temperature_C=float(al.temperature_C[i]),
              pressure_mbar=float(al.pressure_mbar[i]))
    for n, j in enumerate(matches.target[sel]):
        b = body[str(targets.kinds[j])]
        ta, th = G.rising_setting_track(targets.dec[j, e], lat, b, **kw)
        ta, th = ta[0], th[0]
        # Unwrap the track's azimuths around the alignment so the window holds it.
        ta = az0 + (ta - az0 + 180.0) % 360.0 - 180.0
        keep = (ta > az0 - half) & (ta < az0 + half) & (th > sky.min() - 3.0) & (th < sky.max() + 8.0)
        if keep.any():
            order = np.argsort(ta[keep])
            xa, ya = ta[keep][order], th[keep][order]
            seen = ya >= np.asarray(hz.altitude(xa % 360.0))
            color = f"C{(n % 8) + 1}"
            ax.plot(xa, np.where(seen, ya, np.nan), lw=1.3, color=color, label=targets.labels[j][:48])
            ax.plot(xa, np.where(seen, np.nan, ya), lw=0.8, ls=":", color=color)
    ax.set_xlim(az0 - half, az0 + half)
    ax.set_ylim(sky.min() - 3.0, sky.max() + 8.0)
    ax.set_xlabel("azimuth (degrees from true north)")
    ax.set_ylabel("apparent altitude (degrees)")
    ax.set_title(title or f"{al.ids[i]}: azimuth {az0:.2f}, latitude {lat:.3f}; tracks at epoch {ep:g}")
    ax.legend(loc="upper right", fontsize=7)
    # Declination against epoch.
    epochs = targets.epochs
    for kind, color in (("star", "C0"), ("sun", "C1"), ("moon", "C2")):
        if kind in intervals:
            iv = intervals[kind]
            bx.axhspan(float(iv.lo[i]), float(iv.hi[i]), color=color, alpha=0.15,
                       label=f"interval ({kind} declination)")
    for n, j in enumerate(matches.target[sel]):
        d = targets.dec[j]
        if epochs.size > 1:
            bx.plot(epochs, d, lw=1.2, color=f"C{(n % 8) + 1}", label=targets.labels[j][:48])
            if np.any(targets.halfwidth[j] > 0):
                bx.fill_between(epochs, d - targets.halfwidth[j], d + targets.halfwidth[j],
                                color=f"C{(n % 8) + 1}", alpha=0.15, lw=0)
        else:
            bx.errorbar(epochs, d, yerr=targets.halfwidth[j], fmt="o", color=f"C{(n % 8) + 1}",
                        label=targets.labels[j][:48])
    bx.axvspan(float(al.epoch_from[i]), float(al.epoch_to[i]), color="0.9", zorder=-1)
    bx.set_xlabel("epoch (astronomical year)")
    bx.set_ylabel("declination (degrees)")
    if "star" in intervals:
        iv = intervals["star"]
        pad = 1.5 + 2.0 * float(iv.sigma[i])
        bx.set_ylim(float(iv.lo[i]) - pad, float(iv.hi[i]) + pad)
    bx.legend(loc="best", fontsize=7)
    fig.text(0.01, 0.005, "A match shows the geometry allows a target; it cannot show intent.", fontsize=7)
    fig.tight_layout(rect=(0, 0.015, 1, 1))
    fig.savefig(path, dpi=120)
    plt.close(fig)


def null_declinations(al, draws_per_alignment: int = 200, body=G.STAR, seed: int = NULL_SEED):
    """Declinations of random azimuths (uniform on the circle) on the alignments' own skylines and latitudes.

    Returns a flat array of ``len(al) * draws_per_alignment`` declinations, degrees.
    """
    rng = np.random.default_rng(seed)
    n = len(al)
    az = rng.uniform(0.0, 360.0, (n, draws_per_alignment))
    alt = np.empty_like(az)
    for i, hz in enumerate(al.horizons):
        alt[i] = hz.altitude(az[i])
    return np.asarray(G.declination(az, alt, al.latitude_deg[:, None], body,
                                    temperature_C=al.temperature_C[:, None],
                                    pressure_mbar=al.pressure_mbar[:, None])).ravel()


def plot_histogram(path, al, interval, targets=None, *, epoch_index=None, title=""):
    """Draw the declination histogram of a batch with its caveats (see the module notes).

    Parameters
    ----------
    path : str or Path
    al : Alignments
    interval : DeclinationInterval
        Point-source declinations of the alignments.
    targets : Targets, optional
        Solar and lunar targets are marked at ``epoch_index`` (default: the middle grid epoch).
    """
    plt = _pyplot()
    dec = np.asarray(interval.dec, dtype=float)
    sig = np.maximum(np.asarray(interval.sigma, dtype=float), 0.05)
    lo, hi = np.floor(dec.min()) - 3.0, np.ceil(dec.max()) + 3.0
    fig, ax = plt.subplots(figsize=(12, 5.5))
    bins = np.arange(lo, hi + 1.0, 1.0)
    ax.hist(dec, bins=bins, color="0.7", label=f"alignments (N = {dec.size}), 1-degree bins")
    x = np.linspace(lo, hi, 1200)
    curve = np.sum(np.exp(-0.5 * ((x[:, None] - dec[None, :]) / sig[None, :]) ** 2)
                   / (sig[None, :] * np.sqrt(2 * np.pi)), axis=1)
    ax.plot(x, curve, color="C0", lw=1.5, label="sum of normal curves (each alignment's own error)")
    draws = 200
    null = null_declinations(al, draws)
    h, edges = np.histogram(null, bins=bins)
    centres = 0.5 * (edges[1:] + edges[:-1])
    # Scaled to N alignments: each alignment contributed ``draws`` random azimuths.
    ax.step(centres, h / draws, where="mid", color="C3", ls="--", lw=1.2,
            label="random azimuths on the same skylines (null model)")
    if targets is not None:
        if epoch_index is None:      # the grid epoch nearest the median of the alignments' mid-epochs
            mid = np.median(0.5 * (al.epoch_from + al.epoch_to))
            epoch_index = int(np.argmin(np.abs(targets.epochs - mid)))
        e = int(epoch_index)
        for j, tid in enumerate(targets.ids):
            if tid in ("sun:solstice-90", "sun:solstice-270", "sun:equinox-0:astronomical",
                       "moon:major-north", "moon:major-south", "moon:minor-north", "moon:minor-south"):
                d = targets.dec[j, e]
                if lo <= d <= hi:
                    ax.axvline(d, color="C1" if tid.startswith("sun") else "C2", lw=1, alpha=0.8)
                    ax.text(d, ax.get_ylim()[1] * 0.97, tid.split(":")[1], rotation=90, fontsize=7,
                            va="top", ha="right")
        ax.set_title(title or f"Declinations of the alignments; targets at epoch {targets.epochs[e]:g}")
    ax.set_xlabel("declination (degrees; point source at the skyline)")
    ax.set_ylabel("alignments per degree")
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), fontsize=8)
    caveat = ("Caveats: a peak is evidence only against a null model (the dashed curve: random azimuths on the "
              "same skylines), and only if the structures were chosen without regard to their orientation.\n"
              "No significance test is applied here; with many targets, wide intervals and a small N, "
              "coincidences with some target are expected by chance.  Intent cannot be measured.")
    fig.text(0.01, 0.01, caveat, fontsize=7, va="bottom")
    fig.tight_layout(rect=(0, 0.07, 1, 1))
    fig.savefig(path, dpi=120)
    plt.close(fig)


def plot_star_years(path, sy, *, title=""):
    """Draw the rising (setting) azimuth of a star against the year, with the azimuth window."""
    plt = _pyplot()
    fig, ax = plt.subplots(figsize=(9, 4.5))
    ax.plot(sy.years, sy.azimuth, color="C0", lw=1.2,
            label=f"{sy.star}: {'rising' if sy.rising else 'setting'} azimuth")
    ax.axhspan(sy.target_azimuth - sy.tolerance_deg, sy.target_azimuth + sy.tolerance_deg, color="C1",
               alpha=0.25, label=f"alignment {sy.target_azimuth:g} +- {sy.tolerance_deg:g}")
    for a, b in sy.runs:
        ax.axvspan(a, b, color="C2", alpha=0.2)
    for c in sy.crossings:
        ax.axvline(c, color="C2", lw=1)
    ax.set_xlabel("year (astronomical)")
    ax.set_ylabel("azimuth (degrees from true north)")
    ax.set_title(title or f"{sy.star} over the years")
    ax.legend(loc="best", fontsize=8)
    fig.tight_layout()
    fig.savefig(path, dpi=120)
    plt.close(fig)
