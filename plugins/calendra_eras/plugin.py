"""Hook implementations of the eras plugin: the calendars it adds to calendra.

Built-in calendars (names and options):

* ``egyptian[era=nabonassar|philip|augustan|diocletian]`` - Egyptian civil
  calendar, wandering or Alexandrian fixed year (:mod:`.egyptian`)
* ``olympiad[new_year=MM-DD]`` - Olympiads, years from 1 July (:mod:`.olympiads`)
* ``auc[foundation=varro|cato|...,new_year=MM-DD]`` - years Ab Urbe Condita (:mod:`.auc`)
* ``byzantine[new_year=MM-DD]`` - Byzantine Anno Mundi (:mod:`.byzantine`)
* ``indiction[start=greek|bedan|pontifical]`` - indiction cycle (:mod:`.byzantine`)
* ``seleucid[reckoning=macedonian|babylonian,new_year=MM-DD]`` - Seleucid era in
  Julian years (:mod:`.seleucid`)
* ``roman[leap=proleptic|scaliger]`` - Kalends, Nones and Ides (:mod:`.roman`)
* ``julian-roman[leap=proleptic|scaliger]`` - the Julian calendar with the
  Roman leap years of 45 BC - AD 8 (:mod:`.julian_roman`)

plus the eras and dynasties of the TOML files listed in ``CALENDRA_ERAS``
(:mod:`.user_eras`).  A file that cannot be read is skipped and reported as a
problem of this plugin (``calendra plugins``); the built-in calendars stay.
"""

from __future__ import annotations

from calendra.hookspecs import hookimpl


def builtin_calendars() -> list:
    """Return fresh instances of the built-in calendars of this plugin (default options)."""
    from .auc import AUCCalendar
    from .byzantine import AnnoMundiCalendar, IndictionCalendar
    from .egyptian import EgyptianCalendar
    from .julian_roman import JulianRomanCalendar
    from .olympiads import OlympiadCalendar
    from .roman import RomanCalendar
    from .seleucid import SeleucidCalendar

    return [EgyptianCalendar(), OlympiadCalendar(), AUCCalendar(), AnnoMundiCalendar(), IndictionCalendar(),
            SeleucidCalendar(), RomanCalendar(), JulianRomanCalendar()]


@hookimpl
def calendra_calendars():
    from calendra.errors import CalendraError

    from .user_eras import ENV_VAR, calendars_from_environment

    cals, problems = calendars_from_environment()
    # Exceptions in the list are reported by the host as this plugin's problems (see hookspecs).
    return builtin_calendars() + cals + [CalendraError(f"{ENV_VAR} file skipped: {p}") for p in problems]
