"""calendra plugin: the geocentric models of Ptolemy's *Almagest* against the modern sky.

Modules (one model each, vectorized over arrays of instants)
-------------------------------------------------------------
``sun``
    The eccentric circle (Almagest III); Ptolemy's equation of days.
``moon``
    First and second anomalies, the revolving eccentre and the prosneusis
    point, the 5 deg latitude (IV-V).
``planets``
    Venus, Mars, Jupiter, Saturn: eccentre, equant at twice the eccentricity,
    epicycle; latitudes in the simplest form of XIII (IX-XI, XIII).
``mercury``
    The deferent whose centre revolves (IX.8-9).
``compare``
    Any body at TT instants, against DE406 (apparent, ecliptic of date), and
    Ptolemy's equinox offset.
``stations``
    A vectorized station finder over any position source
    ``longitude_deg(jd_tt: ndarray) -> ndarray`` (model or DE406).
``detectors``, ``cli``, ``plot``
    ``geocentric-positions`` and ``model-stations``; ``calendra geocentric``.

Models take Egyptian days from the Almagest epoch (Nabonassar 1 Thoth 1,
noon at Alexandria; mean solar time, UT-based); :mod:`calendra_geocentric.compare`
maps Julian Days in TT to that count through a delta-T model.  Longitudes
are in degrees, in Ptolemy's (tropical, his-equinox) frame.

The plugin is published as the entry point ``geocentric =
"calendra_geocentric.plugin"``; importing the package imports nothing heavy.
"""
