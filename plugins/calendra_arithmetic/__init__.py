"""calendra plugin: arithmetic calendars.

Hebrew (fixed), tabular Islamic, arithmetic Persian, Coptic, Ethiopic,
Armenian, French Republican (arithmetic rule), Maya Long Count / Haab /
Tzolkin, Indian national (Saka), arithmetic Baha'i and ISO week dates.
Each is a :class:`calendra.calendar.Calendar` with integer numpy arithmetic
on chronological Julian Day Numbers; see the module of each calendar for
its rules, epoch, year numbering and day boundary.
"""
