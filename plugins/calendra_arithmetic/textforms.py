"""Reading and writing the date strings of the arithmetic calendars.

Every calendar of this package writes two forms:

* ``iso``: numeric, most significant field first, ``5781-07-01`` (years with
  at least four digits and a sign when negative, as
  :func:`calendra.calendar.iso_year` writes them);
* ``long``: with the month's name, ``1 Tishri 5781 AM``.

and reads both, plus the usual variants of the long form: ``Tishri 1, 5781``,
``5781 Tishri 1``, month names without diacritics or apostrophes
(``Rabi al-Awwal``, ``Dhu al-Hijja``, ``Ordibehesht``) and accepted
alternative spellings (``Tishrei``, ``Cheshvan``).  Month names are matched
after :func:`normalize` (lower case, diacritics and apostrophes dropped,
hyphens read as spaces); a unique prefix of three or more letters is enough.
"""

from __future__ import annotations

import re
import unicodedata
from typing import Iterable, Mapping, Sequence

from calendra.errors import DateParseError

#: Letters that Unicode does not decompose into a base letter and a mark.
_PLAIN_LETTERS = str.maketrans({"ł": "l", "Ł": "l", "đ": "d", "ı": "i", "ø": "o", "æ": "ae", "ß": "ss"})
#: Apostrophe-like signs (ayn, hamza, glottal stop, quotes) dropped before matching.
_APOSTROPHES = re.compile(r"['\u2018\u2019\u02bc\u02be\u02bf\u02bb`\u00b4]")

_NUMERIC_RE = re.compile(r"^\s*([+-]?\d+)\s*[-/.]\s*(\d{1,2})\s*[-/.]\s*(\d{1,2})\s*$")
_TOKEN_RE = re.compile(r"[+-]?\d+|[^\s\d,;]+")


def normalize(text: str) -> str:
    """Return ``text`` lower-cased, without diacritics or apostrophes, hyphens and dots read as spaces."""
    s = unicodedata.normalize("NFKD", text.translate(_PLAIN_LETTERS))
    s = "".join(ch for ch in s if not unicodedata.combining(ch))
    s = _APOSTROPHES.sub("", s.lower())
    s = re.sub(r"[-_.]+", " ", s)
    return " ".join(s.split())


class NameTable:
    """Names of the months (or days) of a calendar, with their accepted variants.

    Parameters
    ----------
    names : sequence of str
        The names as written, numbered from ``first`` upwards.
    variants : mapping of str to int, optional
        Further spellings and their numbers.
    first : int
        Number of the first name (1 for months, 0 for Haab days...).
    """

    def __init__(self, names: Sequence[str], variants: Mapping[str, int] | None = None, first: int = 1):
        self.names = tuple(names)
        self.first = first
        self._exact: dict[str, int] = {}
        for i, name in enumerate(self.names):
            self._exact[normalize(name)] = i + first
        for name, number in (variants or {}).items():
            self._exact.setdefault(normalize(name), number)

    def lookup(self, word: str) -> int | None:
        """Return the number of ``word`` (a name, variant or unique prefix of 3+ letters), or None."""
        key = normalize(word)
        if not key:
            return None
        if key in self._exact:
            return self._exact[key]
        if len(key.replace(" ", "")) >= 3:
            hits = {n for k, n in self._exact.items() if k.startswith(key) or k.replace(" ", "").startswith(key.replace(" ", ""))}
            if len(hits) == 1:
                return hits.pop()
        return None

    def listing(self) -> str:
        """The names, for error messages."""
        return ", ".join(self.names)


def split_tokens(text: str) -> list[tuple[str, object]]:
    """Split a date string into ``("num", int)`` and ``("word", str)`` tokens, in order.

    Runs of consecutive words are joined into one word token (so that
    ``Dhu al-Hijja`` or ``Adar II`` stay one name).
    """
    out: list[tuple[str, object]] = []
    for tok in _TOKEN_RE.findall(text):
        if re.fullmatch(r"[+-]?\d+", tok):
            out.append(("num", int(tok)))
        elif out and out[-1][0] == "word":
            out[-1] = ("word", f"{out[-1][1]} {tok}")
        else:
            out.append(("word", tok))
    return out


def _strip_era(word: str, era_words: Iterable[str]) -> tuple[str, bool]:
    """Remove era words from the ends of a word run; return the rest and whether an era word was seen."""
    eras = sorted({normalize(e) for e in era_words if normalize(e)}, key=len, reverse=True)
    rest = normalize(word)
    seen = False
    changed = True
    while changed and rest:
        changed = False
        for era in eras:
            if rest == era:
                rest, changed = "", True
            elif rest.startswith(era + " "):
                rest, changed = rest[len(era) + 1:], True
            elif rest.endswith(" " + era):
                rest, changed = rest[: -len(era) - 1], True
            if changed:
                seen = True
                break
    return rest, seen


def parse_year_month_day(text: str, months: NameTable, calendar: str,
                         era_words: Iterable[str] = ()) -> tuple[int, int, int]:
    """Read a year-month-day date of an arithmetic calendar.

    Accepted forms: ``Y-M-D`` (also with ``/`` or ``.``), ``D Month Y``,
    ``Month D, Y``, ``Y Month D``; an era word of the calendar (``AM``,
    ``AH``...) may follow or precede the year.  Years are as the calendar
    numbers them (see its ``year_numbering``); an era word requires a year of
    1 or more.

    Raises
    ------
    DateParseError
        If the text is not one of these forms or names no known month.
    """
    m = _NUMERIC_RE.match(text)
    if m:
        return int(m.group(1)), int(m.group(2)), int(m.group(3))
    tokens = split_tokens(text)
    numbers = [(i, v) for i, (kind, v) in enumerate(tokens) if kind == "num"]
    words = [(i, v) for i, (kind, v) in enumerate(tokens) if kind == "word"]
    month = None
    era_seen = False
    for pos, word in words:
        rest, seen = _strip_era(word, era_words)
        era_seen |= seen
        if not rest:
            continue
        number = months.lookup(rest)
        if number is None or month is not None:
            raise DateParseError(f"cannot read {text!r} as a {calendar} date: unknown word {rest!r} "
                                 f"(months: {months.listing()})")
        month = (pos, number)
    if month is None:
        if len(numbers) == 3 and not words:
            (_, y), (_, mo), (_, d) = numbers
            return y, mo, d
        raise DateParseError(f"cannot read {text!r} as a {calendar} date: write Y-M-D or e.g. "
                             f"'1 {months.names[0]} 1'")
    if len(numbers) != 2:
        raise DateParseError(f"cannot read {text!r} as a {calendar} date: expected a day and a year beside the month")
    (p1, v1), (p2, v2) = numbers
    if month[0] < p1:                                    # Month D, Y
        day, year = v1, v2
    elif p1 < month[0] < p2 and 1 <= v1 <= 31:         # D Month Y
        day, year = v1, v2
    else:                                                # Y Month D
        year, day = v1, v2
    if era_seen and year < 1:
        raise DateParseError(f"{text!r}: a year written with its era is counted from 1; "
                             "write earlier years as signed numbers without the era")
    return year, month[1], day


def year_with_era(year: int, era: str) -> str:
    """Write ``year`` for the long form: ``5781 AM`` when 1 or more, the bare signed number otherwise."""
    return f"{year} {era}" if era and year >= 1 else str(year)


_ROMAN = ((1000, "M"), (900, "CM"), (500, "D"), (400, "CD"), (100, "C"), (90, "XC"),
          (50, "L"), (40, "XL"), (10, "X"), (9, "IX"), (5, "V"), (4, "IV"), (1, "I"))
_ROMAN_RE = re.compile(r"^M{0,3}(CM|CD|D?C{0,3})(XC|XL|L?X{0,3})(IX|IV|V?I{0,3})$")


def to_roman(n: int) -> str:
    """Write 1..3999 in Roman numerals."""
    if not 1 <= n <= 3999:
        raise ValueError(f"{n} has no Roman numeral form (1..3999)")
    out = []
    for value, sign in _ROMAN:
        count, n = divmod(n, value)
        out.append(sign * count)
    return "".join(out)


def from_roman(text: str) -> int | None:
    """Read a Roman numeral (1..3999); None if ``text`` is not one."""
    s = text.upper()
    if not s or not _ROMAN_RE.match(s):
        return None
    total, i = 0, 0
    for value, sign in _ROMAN:
        while s.startswith(sign, i):
            total += value
            i += len(sign)
    return total
