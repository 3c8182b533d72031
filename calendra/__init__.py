"""calendra: dating the past by the sky.

The core engine converts between Julian Day, Julian/Gregorian and other
calendars, models TT and UT through selectable delta-T models, reads the JPL
DE406 ephemeris, and hosts plugins that add calendars and event detectors.
The curated public interface is :mod:`calendra.api`.
"""

__version__ = "0.1.0"
