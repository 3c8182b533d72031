"""Hook implementations of the eclipses plugin.

* Detector ``eclipses`` (``calendra events eclipses --kind lunar|solar --from DATE --to DATE
  [--site S] [--min-magnitude M] [--shadow danjon|chauvenet|none]``): the catalogue of
  :mod:`.lunar` / :mod:`.solar`, with the local circumstances of :mod:`.lunar_local` /
  :mod:`.solar_local` when a site is given (columns: :mod:`.tables`).
* Command ``calendra eclipse DATE --site S`` (:mod:`.command`): full local circumstances of the
  eclipse nearest DATE, ΔT windows (:mod:`.windows`) and plots (:mod:`.plots`).
"""

from __future__ import annotations

import numpy as np

from calendra.detector import Detector, Parameter
from calendra.hookspecs import hookimpl


class Eclipses(Detector):
    """Lunar or solar eclipses, global circumstances, and local ones at a site."""

    name = "eclipses"
    title = "Lunar and solar eclipses (-3000..3000), with local circumstances at a site"
    description = ("Lunar: type, saros, gamma, magnitudes, contacts P1..P4 (UT) and durations; with --site the "
                   "Moon's altitude at each contact and whether it rose or set eclipsed. Solar: type (partial, "
                   "annular, total, hybrid), greatest eclipse point, gamma, magnitude, path width; with --site "
                   "whether it was seen, magnitude, obscuration, contacts C1..C4 in civil time and the Sun's "
                   "altitude. Times of greatest eclipse are TT (jd_tt) and UT1 through the delta-T model.")
    parameters = (
        Parameter("kind", "choice", "lunar", "lunar or solar eclipses", choices=("lunar", "solar")),
        Parameter("min_magnitude", "float", None,
                  "keep eclipses of at least this magnitude (lunar: umbral; solar: at greatest eclipse, or "
                  "at the site with --site)"),
        Parameter("shadow", "choice", "danjon", "lunar shadow enlargement: danjon (1/85 of the Earth's radius), "
                  "chauvenet (1/50 of the shadow), none", choices=("danjon", "chauvenet", "none")),
    )

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, kind, min_magnitude, shadow):
        from .tables import lunar_table, solar_table

        if kind == "lunar":
            from .lunar import lunar_eclipses

            ecl = lunar_eclipses(jd_tt_start, jd_tt_end, shadow=shadow, progress=progress)
            if min_magnitude is not None:
                ecl = ecl.select(ecl.umbral_magnitude >= min_magnitude)
            return lunar_table(ecl, deltat, site)
        from .solar import solar_eclipses

        ecl = solar_eclipses(jd_tt_start, jd_tt_end, deltat=deltat, progress=progress)
        table = solar_table(ecl, deltat, site)
        if min_magnitude is not None:
            mag = table["local_mag"] if site is not None and len(table) else table["magnitude"]
            table = table.select(np.asarray(mag, dtype=float) >= min_magnitude)
        return table


@hookimpl
def calendra_detectors():
    return [Eclipses()]


@hookimpl
def calendra_cli_commands():
    from .command import eclipse_command

    return [eclipse_command()]
