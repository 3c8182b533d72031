"""Solar time: the equation of time and local apparent solar time.

Local mean solar time (LMT) at a site is UT + longitude/15 h.  Local
apparent solar time (LAT), the time of a sundial, is LMT + the equation of
time E, where E = GAST - RA(apparent Sun) - UT (wrapped to +-12 h), computed
here from the DE406 Sun through skyfield.  E stays within about +-17 min
over -3000..3000, but its annual curve shifts with the perihelion.
"""

from __future__ import annotations

import numpy as np


def equation_of_time_days(jd_ut, deltat):
    """Return the equation of time (apparent minus mean solar time), in days.

    Parameters
    ----------
    jd_ut : float or array_like
        Julian Day, UT1.
    deltat : delta-T model
        Converts UT1 to the TT the ephemeris needs.
    """
    from .deltat import skyfield_timescale
    from .ephemeris import load_ephemeris

    eph = load_ephemeris()
    ts = skyfield_timescale(deltat)
    jd_ut = np.asarray(jd_ut, dtype=float)
    t = ts.ut1_jd(jd_ut)
    ra, _, _ = eph["earth"].at(t).observe(eph["sun"]).apparent().radec(epoch="date")
    ut_hours = (jd_ut - 0.5) % 1.0 * 24.0
    # Apparent solar time at Greenwich = hour angle of the Sun + 12 h; mean solar time = UT.
    apparent_hours = t.gast - ra.hours + 12.0
    e_hours = (apparent_hours - ut_hours + 12.0) % 24.0 - 12.0
    return e_hours / 24.0


def local_apparent_time_days(jd_ut, longitude_deg, deltat):
    """Return local apparent solar time at a longitude as a Julian-Day-like count (days).

    The fractional part + 0.5 (mod 1) is the fraction of the apparent solar
    day since apparent midnight.
    """
    return np.asarray(jd_ut, dtype=float) + longitude_deg / 360.0 + equation_of_time_days(jd_ut, deltat)
