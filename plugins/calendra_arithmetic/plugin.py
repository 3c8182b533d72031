"""Hook implementations of the arithmetic-calendars plugin.

Registered through the entry-point group ``calendra`` as ``arithmetic``.
Every calendar is returned with its default options; variants are asked
for by name, e.g. ``islamic-tabular[leap=base15,epoch=astronomical]``,
``mayan-long-count[correlation=584285]``, ``persian-arithmetic[rule=33]``.
"""

from __future__ import annotations

from calendra.hookspecs import hookimpl

from .armenian import ArmenianCalendar
from .bahai import BahaiArithmeticCalendar
from .coptic import CopticCalendar, EthiopicCalendar
from .french_republican import FrenchArithmeticCalendar
from .hebrew import HebrewCalendar
from .indian_national import IndianNationalCalendar
from .islamic import IslamicTabularCalendar
from .iso_week import IsoWeekCalendar
from .mayan import MayanHaabCalendar, MayanLongCountCalendar, MayanTzolkinCalendar
from .persian import PersianArithmeticCalendar


def arithmetic_calendars() -> list:
    """Return fresh instances of this plugin's calendars (default options)."""
    return [
        HebrewCalendar(),
        IslamicTabularCalendar(),
        PersianArithmeticCalendar(),
        CopticCalendar(),
        EthiopicCalendar(),
        ArmenianCalendar(),
        FrenchArithmeticCalendar(),
        MayanLongCountCalendar(),
        MayanHaabCalendar(),
        MayanTzolkinCalendar(),
        IndianNationalCalendar(),
        BahaiArithmeticCalendar(),
        IsoWeekCalendar(),
    ]


@hookimpl
def calendra_calendars():
    return arithmetic_calendars()
