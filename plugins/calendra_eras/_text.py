"""Reading the date strings of the era calendars: tokens, Roman numerals, keyword numbers.

Every calendar of this package writes its dates with :meth:`format` and
reads them back with :meth:`parse`; the helpers here split a text into
tokens (numbers, ``Y-M-D`` groups, ``O.Y`` olympiad pairs and words), pick
out the numbers that a keyword labels (``year 7``, ``day 14``), and assign
the remaining numbers to year, month and day the way the core does
(:func:`calendra.calendar.parse_ymd_text`): ``D Month Y`` when the number
before the month name is 1..31, else ``Y Month D``.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field
from typing import Callable, Iterable, Mapping, Sequence

from calendra.errors import DateParseError

_TOKEN_RE = re.compile(
    r"(?P<ymd>[+-]?\d+-\d{1,2}-\d{1,2})(?![\d.])"
    r"|(?P<md>(?<![\d-])\d{1,2}-\d{1,2})(?![\d.-])"
    r"|(?P<pair>[+-]?\d+\.\d+)(?![\d.])"
    r"|(?P<num>[+-]?\d+)"
    r"|(?P<word>[^\W\d_](?:[^\W\d_]|['’.])*)",
    re.UNICODE,
)

_ROMAN_VALUES = (("x", 10), ("ix", 9), ("v", 5), ("iv", 4), ("i", 1))


def to_roman(n: int) -> str:
    """Return ``n`` (1..39) in upper-case Roman numerals (``19`` -> ``XIX``)."""
    if not 1 <= n <= 39:
        raise ValueError(f"Roman numeral out of range: {n}")
    out = []
    for sym, val in _ROMAN_VALUES:
        while n >= val:
            out.append(sym)
            n -= val
    return "".join(out).upper()


_ROMAN_RE = re.compile(r"^x{0,3}(ix|iv|v?i{0,3})$")


def from_roman(word: str) -> int | None:
    """Return the value of a Roman numeral word (``"iii"`` -> 3), or None if it is not one."""
    w = word.lower().rstrip(".")
    if not w or not _ROMAN_RE.match(w):
        return None
    total, i = 0, 0
    while i < len(w):
        for sym, val in _ROMAN_VALUES:
            if w.startswith(sym, i):
                total += val
                i += len(sym)
                break
    return total or None


@dataclass
class Token:
    """One piece of a date string: ``kind`` is ymd, md, pair, num or word."""

    kind: str
    value: object
    raw: str

    @property
    def word(self) -> str:
        """The token in lower case without trailing dots (for words)."""
        return self.raw.lower().rstrip(".")


def tokenize(text: str) -> list[Token]:
    """Split ``text`` into tokens; punctuation other than ``- . '`` separates tokens and is dropped."""
    out = []
    for m in _TOKEN_RE.finditer(text):
        kind = m.lastgroup
        raw = m.group(kind)
        if kind == "ymd":
            y, mo, d = re.fullmatch(r"([+-]?\d+)-(\d+)-(\d+)", raw).groups()
            value: object = (int(y), int(mo), int(d))
        elif kind == "md":
            mo, d = raw.split("-")
            value = (int(mo), int(d))
        elif kind == "pair":
            a, b = raw.split(".")
            value = (int(a), int(b))
        elif kind == "num":
            value = int(raw)
        else:
            value = raw
        out.append(Token(kind, value, raw))
    return out


def normalize_phrases(text: str, phrases: Mapping[str, str]) -> str:
    """Replace multi-word phrases (case-insensitive) by single tokens, e.g. ``ab urbe condita`` -> ``auc``."""
    for phrase, token in sorted(phrases.items(), key=lambda kv: -len(kv[0])):
        text = re.sub(r"(?<!\w)" + r"\s+".join(re.escape(p) for p in phrase.split()) + r"(?!\w)",
                      f" {token} ", text, flags=re.I)
    return text


@dataclass
class Reader:
    """Tokens of one date string, consumed as the calendar recognises them.

    Parameters
    ----------
    text : str
        The date as written.
    calendar : str
        Calendar name, for error messages.
    fillers : iterable of str
        Words to ignore (``of``, ``the``...).
    """

    text: str
    calendar: str
    fillers: Iterable[str] = ("of", "the", "in", "on", "and")
    tokens: list = field(init=False)

    def __post_init__(self):
        skip = {f.lower() for f in self.fillers}
        self.tokens = [t for t in tokenize(self.text) if not (t.kind == "word" and t.word in skip)]

    def fail(self, why: str) -> DateParseError:
        return DateParseError(f"cannot read {self.text!r} as a {self.calendar} date: {why}")

    def take_word(self, words: Mapping[str, object] | Callable[[str], object]):
        """Remove the first word token found in ``words`` (a dict or a function returning None for no match).

        Returns (value, position) or (None, -1).
        """
        for i, t in enumerate(self.tokens):
            if t.kind != "word":
                continue
            v = words(t.word) if callable(words) else words.get(t.word)
            if v is not None:
                del self.tokens[i]
                return v, i
        return None, -1

    def take_keyword_number(self, keywords: Iterable[str]) -> int | None:
        """Remove ``KEYWORD N`` (e.g. ``year 7``) and return N, or None if absent."""
        keys = {k.lower() for k in keywords}
        for i, t in enumerate(self.tokens):
            if t.kind == "word" and t.word in keys:
                if i + 1 < len(self.tokens) and self.tokens[i + 1].kind == "num":
                    value = self.tokens[i + 1].value
                    del self.tokens[i:i + 2]
                    return int(value)
                nxt = self.tokens[i + 1].raw if i + 1 < len(self.tokens) else "nothing"
                raise self.fail(f"{t.raw!r} must be followed by a whole number, not {nxt}")
        return None

    def take_era_year(self) -> int | None:
        """Remove a year written with an era word (``587 BC``, ``AD 1066``, ``70 CE``); return it astronomical.

        Returns None when no BC/BCE/AD/CE word is present.
        """
        for i, t in enumerate(self.tokens):
            if t.kind != "word" or t.word.replace(".", "") not in ("bc", "bce", "ad", "ce"):
                continue
            bc = t.word.replace(".", "") in ("bc", "bce")
            before = i > 0 and self.tokens[i - 1].kind == "num"
            after = i + 1 < len(self.tokens) and self.tokens[i + 1].kind == "num"
            # "587 BC" has the year before the word; "AD 1066" usually after it.
            if before and (bc or not after):
                year = int(self.tokens[i - 1].value)
                del self.tokens[i - 1:i + 1]
            elif after:
                year = int(self.tokens[i + 1].value)
                del self.tokens[i:i + 2]
            else:
                raise self.fail(f"{t.raw!r} needs a year beside it")
            if year <= 0:
                raise self.fail("years with BC/AD are counted from 1 (there is no year 0 in that numbering)")
            return 1 - year if bc else year
        return None

    def number_at(self, pos: int):
        """Remove and return the number token at ``pos`` (an int, a Y-M-D tuple...), or None."""
        if 0 <= pos < len(self.tokens) and self.tokens[pos].kind in ("num", "ymd", "pair"):
            return self.tokens.pop(pos)
        return None

    def read_ymd(self, month_of: Callable[[str], int | None], year: int | None = None,
                 need_year: bool = True) -> tuple[int | None, int, int]:
        """Read year (unless given), month and day from the remaining tokens.

        Forms: ``Y-M-D``; ``M-D``; ``Y Month D``; ``D Month Y`` (when the number
        before the month is 1..31 and two numbers surround it); ``Month D, Y``;
        ``month M``/``day D`` keywords; three plain numbers ``Y M D``.
        """
        month = self.take_keyword_number(("month",))
        day = self.take_keyword_number(("day",))
        mpos = -1
        for i, t in enumerate(self.tokens):
            if t.kind == "ymd":
                if year is not None or month is not None or day is not None:
                    raise self.fail(f"{t.raw!r} gives a full date but other fields were given too")
                year, month, day = t.value
                del self.tokens[i]
                break
            if t.kind == "md":
                if month is not None or day is not None:
                    raise self.fail(f"{t.raw!r} repeats the month and day")
                month, day = t.value
                del self.tokens[i]
                break
        for i, t in enumerate(self.tokens):
            if t.kind == "word":
                idx = month_of(t.word)
                if idx is None:
                    raise self.fail(f"unknown word {t.raw!r}")
                if month is not None:
                    raise self.fail(f"two months given ({t.raw!r})")
                month, mpos = idx, i
        if mpos >= 0:
            del self.tokens[mpos]
        nums = [(i, t) for i, t in enumerate(self.tokens) if t.kind == "num"]
        others = [t for t in self.tokens if t.kind not in ("num",)]
        if others:
            raise self.fail(f"unexpected {others[0].raw!r}")
        values = [int(t.value) for _, t in nums]
        if mpos >= 0 and len(values) == 2 and year is None and day is None:
            (p1, _), (p2, _) = nums
            v1, v2 = values
            if p1 >= mpos:              # Month D, Y
                day, year = v1, v2
            elif p2 < mpos:             # Y D Month: not a form we write
                raise self.fail("put the month name between the year and the day")
            elif 1 <= v1 <= 31:         # D Month Y
                day, year = v1, v2
            else:                       # Y Month D
                year, day = v1, v2
            values = []
        slots = [s for s in ("year", "month", "day")
                 if {"year": year, "month": month, "day": day}[s] is None and (s != "year" or need_year)]
        if len(values) != len(slots):
            want = ", ".join(slots) or "nothing more"
            raise self.fail(f"expected {want} but found {len(values)} number(s) left")
        got = dict(zip(slots, values))
        year = got.get("year", year)
        month = got.get("month", month)
        day = got.get("day", day)
        self.tokens = []
        return year, month, day


def month_lookup(names: Sequence[str], extra: Mapping[str, int] | None = None) -> Callable[[str], int | None]:
    """Return a function mapping a word to a 1-based month: whole name, first three letters or an extra spelling."""
    lowered = [n.lower() for n in names]
    extra = {k.lower(): v for k, v in (extra or {}).items()}

    def find(word: str) -> int | None:
        w = word.lower().rstrip(".")
        if w in extra:
            return extra[w]
        for i, n in enumerate(lowered):
            if w == n or (len(w) >= 3 and n.startswith(w)):
                return i + 1
        return None

    return find
