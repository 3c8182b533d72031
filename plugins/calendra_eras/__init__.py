"""calendra plugin: eras and era-based calendars of antiquity.

The Egyptian civil calendar with the eras of Nabonassar, Philip, Augustus
and Diocletian; Olympiads; years Ab Urbe Condita; the Byzantine Anno Mundi
and the indiction; the Seleucid era (Macedonian and Babylonian reckonings,
in Julian years); Roman dates by Kalends, Nones and Ides; the Julian
calendar with Scaliger's reconstruction of the Roman leap years of
45 BC - AD 8; and user-defined eras and reign lists read from TOML files
(:mod:`calendra_eras.user_eras`).  The hook lives in
:mod:`calendra_eras.plugin`, published through the ``calendra`` entry-point
group; importing this package imports nothing else.
"""
