"""Small helpers shared by the lunar and solar parts: saros numbers, the ephemeris span, constants.

Saros numbers
-------------
Two eclipses 223 lunations apart (the saros, 6585.32 days) belong to the
same series; an eclipse 358 lunations after another (the inex, 10571.95
days) belongs to the next series.  Since 223 and 358 are coprime, every
lunation ``n`` is ``n0 + 223 a + 358 b`` for integers ``a, b``, unique up to
``(a - 358 j, b + 223 j)``: with an anchor eclipse ``n0`` of known series
``S0`` the series is ``S0 + b``.  ``b`` is fixed modulo 223 by
``b = (n - n0) 358^-1 (mod 223)``; the branch ``j`` is the one that puts the
eclipse near the middle of its series.  Per saros the Moon's argument of
latitude at mid-eclipse falls by 0.478 deg, per inex it grows by 0.040 deg
past a half-turn (mean elements: synodic month 29.530589 d, draconic month
27.212221 d), so the middle of series ``S0 + b`` lies about ``0.0837 b``
saros steps from ``a = 0`` and the branches are 358 + 223 * 0.0837 = 376.7
saros steps (6800 years) apart: the nearest branch is the series, by a wide
margin for -3000..3000 (a series lasts 1200 to 1500 years).

Anchors (the numbering of the five-millennium canons, Espenak & Meeus):
solar series 1 holds the eclipse of lunation -48658 (-1935 December 18,
NASA/TP-2009-214174 catalogue row 00155); lunar series 129 holds the
eclipse of lunation 229 (2018 July 27, Brown lunation 1182).
"""

from __future__ import annotations

import numpy as np

#: (lunation number, series) of the anchor eclipses; lunation numbers of Meeus (0 = 2000 January 6).
SOLAR_SAROS_ANCHOR = (-48658, 1)
LUNAR_SAROS_ANCHOR = (229, 129)
SAROS_LUNATIONS = 223
INEX_LUNATIONS = 358
#: Middle-of-series drift, saros steps per series, from the mean elements (module docstring).
_CENTRE_DRIFT = 0.040 / 0.478
_BRANCH = INEX_LUNATIONS + SAROS_LUNATIONS * _CENTRE_DRIFT
_INEX_INVERSE = pow(INEX_LUNATIONS % SAROS_LUNATIONS, -1, SAROS_LUNATIONS)


def saros_numbers(lunation, anchor):
    """Saros series of eclipses from their lunation numbers.

    Parameters
    ----------
    lunation : array_like of int
        Meeus' lunation numbers (for a lunar eclipse the lunation containing the full moon).
    anchor : (int, int)
        Lunation number and series of one eclipse (:data:`SOLAR_SAROS_ANCHOR`,
        :data:`LUNAR_SAROS_ANCHOR`).

    Returns
    -------
    series : ndarray of int
    member_offset : ndarray of int
        Saros steps ``a`` from the anchor's lunation within the series
        arithmetic (consecutive members differ by 1).
    """
    n0, s0 = anchor
    dn = np.asarray(lunation, dtype=np.int64) - n0
    b = (dn * _INEX_INVERSE) % SAROS_LUNATIONS
    a = (dn - INEX_LUNATIONS * b) // SAROS_LUNATIONS
    j = np.rint((a - _CENTRE_DRIFT * b) / _BRANCH).astype(np.int64)
    a = a - INEX_LUNATIONS * j
    b = b + SAROS_LUNATIONS * j
    return s0 + b, a


def span_tt():
    """The ephemeris span (JD TT) less a margin of two days for the refinements."""
    from calendra.ephemeris import SPAN_JD

    return SPAN_JD[0] + 2.0, SPAN_JD[1] - 2.0
