"""Shared machinery of the arithmetic calendars: integer helpers, block-wise
array evaluation, options, year-month-day validation and text forms, and the
twelve-by-thirty year.

Day numbers are chronological Julian Day Numbers (``jdn``, see
:mod:`calendra.daylib`); all arithmetic is on int64 numpy arrays, with floor
division and non-negative remainders, so every rule holds unchanged before
the epoch of its calendar (years 0, -1, ... run on backwards without a gap).

A year-month-day calendar here is described by two things: its *year terms*
(the day number of the first day of each year and the row of its month
table: common or leap, or Hebrew year kind) and its *month table* (offset
from the start of the year and length of each month, by row).  Conversion
to day numbers, validation, month lengths and year lengths all come from
these; conversion from day numbers is the calendar's own.
"""

from __future__ import annotations

from typing import ClassVar, Mapping

import numpy as np

from calendra.calendar import SolarCalendar, iso_year
from calendra.daylib import as_int_array
from calendra.errors import ParameterError

from .textforms import NameTable, parse_year_month_day, year_with_era

#: Elements per block of the block-wise evaluation: small enough that the temporaries of one block
#: stay in the processor cache, large enough that numpy's per-call overhead does not matter.
BLOCK = 32768
#: Columns of a month table: months 0..31 (index 0 and months a calendar lacks have length 0;
#: month numbers beyond are clipped to the last column, also of length 0).
MONTH_COLUMNS = 32
_U64 = np.uint64
_I30 = np.int64(30)


def floor_divmod(a, n: int):
    """Return ``(a // n, a mod n)`` for int64 arrays and a positive integer ``n``.

    The remainder is computed from the quotient: numpy's integer ``%`` is
    several times slower than ``//`` on large arrays.
    """
    q = a // n
    return q, a - q * n


def blockwise(fn, arrays):
    """Evaluate ``fn(*arrays)`` (element-wise, returning a tuple of arrays) block by block.

    The arrays must have one shape.  Large inputs are cut into blocks of
    :data:`BLOCK` elements, which keeps the intermediate arrays of ``fn`` in
    the processor cache (two to three times faster on 10**6 dates than one
    call); every block is still one vectorized numpy evaluation.
    """
    size = arrays[0].size
    if size <= 2 * BLOCK:
        return fn(*arrays)
    shape = arrays[0].shape
    flat = [np.ascontiguousarray(a).reshape(-1) for a in arrays]
    outs = None
    for start in range(0, size, BLOCK):
        part = fn(*(a[start:start + BLOCK] for a in flat))
        if outs is None:
            outs = [np.empty(size, dtype=np.asarray(p).dtype) for p in part]
        for out, p in zip(outs, part):
            out[start:start + BLOCK] = p
    return tuple(out.reshape(shape) for out in outs)


def umax(values) -> int:
    """Return the largest of int64 ``values`` read as unsigned (negative values count as huge).

    ``umax(v) < n`` checks ``0 <= v < n`` for a whole block with one reduction.
    """
    return int(np.asarray(values).view(_U64).max()) if np.size(values) else 0


def below(values, limit):
    """Return ``0 <= values < limit`` element-wise with one unsigned comparison (limit >= 0).

    Negative values wrap around to huge unsigned ones, so one comparison
    checks both bounds.  ``limit`` is an int or an int64 array.
    """
    limit = _U64(limit) if isinstance(limit, int) else np.asarray(limit).view(_U64)
    return np.asarray(values).view(_U64) < limit


class BlockwiseMixin:
    """``to_jdn`` and ``from_jdn`` evaluated block-wise, with validation fused into the conversion.

    A calendar using it implements ``_checked_to_jdn(*fields) -> (days, ok)``
    (day numbers less :attr:`_jdn_offset`, and the mask of dates that exist)
    and ``_from_jdn``.  It may also implement a faster block writer
    ``_to_jdn_block(out, *fields) -> bool`` that writes the day numbers of
    one block (:data:`BLOCK` dates) into ``out`` and returns whether *every* date of the block
    exists (typically from min/max reductions, which cost a fraction of an
    element-wise mask); the exact mask is then computed only to report an
    invalid date.
    """

    #: Constant that ``_checked_to_jdn`` leaves out of its day numbers; adding it while the block
    #: is copied into the result saves a pass over the data.
    _jdn_offset = 0

    def to_jdn(self, *fields, **named) -> np.ndarray:
        """Return day numbers of the dates given by ``fields`` (in the order of :attr:`fields`).

        Raises
        ------
        InvalidDateError
            If any date does not exist; the message names the first offender
            and the error's ``mask`` marks every one.
        """
        values = np.broadcast_arrays(*self._gather(fields, named))
        shape = values[0].shape
        size = values[0].size
        flat = [np.ascontiguousarray(v).reshape(-1) for v in values]
        out = np.empty(size, dtype=np.int64)
        for start in range(0, size, BLOCK):
            stop = start + BLOCK
            block = [v[start:stop] for v in flat]
            if not self._to_jdn_block(out[start:stop], *block):
                bad = ~blockwise(self._checked_to_jdn, values)[1]
                if bad.any():
                    self._raise_invalid(values, bad)
                BlockwiseMixin._to_jdn_block(self, out[start:stop], *block)   # the quick test was too strict
        return out.reshape(shape) if shape else out[0]

    def _to_jdn_block(self, out, *fields) -> bool:
        """Write the day numbers of one block of dates into ``out``; return True if all of them exist."""
        days, ok = self._checked_to_jdn(*fields)
        np.add(days, self._jdn_offset, out=out)
        return bool(ok.all())

    def from_jdn(self, jdn) -> dict[str, np.ndarray]:
        """Return a dict of int64 field arrays for day numbers ``jdn`` (any shape).

        Raises
        ------
        DateRangeError
            If a day number is outside :attr:`valid_jdn`.
        """
        jdn = as_int_array(jdn)
        lo, hi = self.valid_jdn
        if jdn.size and (jdn.min() < lo or jdn.max() > hi):
            self.check_range(jdn)
        return dict(zip(self.fields, (np.asarray(v, dtype=np.int64) for v in blockwise(self._from_jdn, [jdn]))))

    def _checked_to_jdn(self, *fields):
        return self._to_jdn(*fields), self.is_valid(*fields)


class OptionsMixin:
    """Calendar variants chosen by options (``name[key=value,...]``).

    A subclass lists its options and their defaults in ``option_defaults``,
    their meaning in ``option_help``, takes them as keyword arguments of
    ``__init__`` and stores the normalized values in ``self.options`` (which
    :meth:`calendra.calendar.Calendar.describe` reports).
    """

    option_defaults: ClassVar[Mapping[str, object]] = {}
    option_help: ClassVar[Mapping[str, str]] = {}
    options: dict

    def with_options(self, **options):
        """Return the variant of this calendar with ``options`` changed (the others kept)."""
        unknown = sorted(set(options) - set(self.option_defaults))
        if unknown:
            known = ", ".join(f"{k} ({v})" for k, v in self.option_help.items()) or "none"
            raise ParameterError(f"calendar {self.name} has no option {', '.join(unknown)}; options: {known}")
        if not options:
            return self
        return type(self)(**{**self.options, **options})

    @property
    def label(self) -> str:
        """The name, with the options that differ from the defaults: ``islamic-tabular[leap=base15]``."""
        changed = [f"{k}={v}" for k, v in self.options.items() if v != self.option_defaults[k]]
        return f"{self.name}[{','.join(changed)}]" if changed else self.name


def parse_int_option(name: str, value, calendar: str) -> int:
    """Read an integer option given as int or text."""
    try:
        return int(str(value).strip())
    except ValueError:
        raise ParameterError(f"calendar {calendar}: option {name} must be an integer, got {value!r}") from None


def parse_choice_option(name: str, value, choices: Mapping[str, str], calendar: str) -> str:
    """Read an option that names one of ``choices`` (a mapping of accepted spellings to canonical names)."""
    key = str(value).strip().lower()
    if key not in choices:
        raise ParameterError(f"calendar {calendar}: option {name} must be one of "
                             f"{', '.join(sorted(set(choices.values())))}, got {value!r}")
    return choices[key]


def month_table(*rows) -> tuple[np.ndarray, np.ndarray]:
    """Build the flat (offsets, lengths) month table from rows of month lengths (month 1 first).

    Each row lists the lengths of months 1, 2, ... in month-number order
    and, separately, the order in which they follow one another in the year:
    ``rows`` are ``(lengths, order)`` pairs, ``order`` a sequence of month
    numbers from the first month of the year.  Offsets are days from the
    first day of the year to the first of the month.
    """
    offsets = np.zeros((len(rows), MONTH_COLUMNS), dtype=np.int64)
    lengths = np.zeros((len(rows), MONTH_COLUMNS), dtype=np.int64)
    for r, (row_lengths, order) in enumerate(rows):
        day = 0
        for month in order:
            offsets[r, month] = day
            lengths[r, month] = row_lengths[month - 1]
            day += row_lengths[month - 1]
    return offsets.ravel(), lengths.ravel()


class ArithmeticCalendar(BlockwiseMixin, SolarCalendar):
    """A year-month-day calendar with named months and an arithmetic rule.

    Subclasses set ``month_names`` (and optionally ``month_variants``,
    ``era``, ``era_words``), the flat month tables ``_offsets`` and
    ``_lengths`` (see :func:`month_table`), and implement
    :meth:`_year_terms` and :meth:`_from_jdn`; conversion to day numbers,
    validation, month and year lengths and the text forms come from here.
    """

    #: Era written after the year in the long form (``AM``, ``AH``...), for years >= 1.
    era: ClassVar[str] = ""
    #: Words accepted around the year when reading dates (the era and its spellings).
    era_words: ClassVar[tuple[str, ...]] = ()
    #: Other accepted spellings of month names, to month numbers.
    month_variants: ClassVar[Mapping[str, int]] = {}
    #: Flat month tables (rows of :data:`MONTH_COLUMNS`): day offset in the year, and length.
    _offsets: ClassVar[np.ndarray]
    _lengths: ClassVar[np.ndarray]

    _month_table: ClassVar[NameTable | None] = None

    @classmethod
    def month_table(cls) -> NameTable:
        """The month names with their variants, for reading dates."""
        if cls.__dict__.get("_month_table") is None:
            cls._month_table = NameTable(cls.month_names, cls.month_variants)
        return cls._month_table

    # ------------------------------------------------------- arithmetic
    # Subclasses define _year_terms(year) -> (day number of the first day of each year, offset of its
    # row in the month table: row * MONTH_COLUMNS), on int64 arrays.

    def _month_index(self, month, row):
        index = np.clip(month, 0, MONTH_COLUMNS - 1)
        index += row
        return index

    def year_start_jdn(self, year) -> np.ndarray:
        """Return the day number of the first day of ``year``."""
        return self._year_terms(as_int_array(year))[0]

    def year_length(self, year) -> np.ndarray:
        """Return the number of days of ``year``."""
        y = as_int_array(year)
        return self._year_terms(y + 1)[0] - self._year_terms(y)[0]

    def is_leap(self, year) -> np.ndarray:
        """Return True where ``year`` has the calendar's extra day (or month)."""
        return self._year_terms(as_int_array(year))[1] > 0

    def months_in_year(self, year) -> np.ndarray:
        """Return the number of months of ``year``."""
        y = as_int_array(year)
        counts = np.count_nonzero(self._lengths.reshape(-1, MONTH_COLUMNS), axis=1)
        return np.broadcast_to(counts[self._year_terms(y)[1] // MONTH_COLUMNS], y.shape)

    def month_length(self, year, month) -> np.ndarray:
        """Return the days of ``month`` in ``year``; 0 for a month the year does not have."""
        y, m = np.broadcast_arrays(as_int_array(year), as_int_array(month))
        return self._lengths[self._month_index(m, self._year_terms(y)[1])]

    def is_valid(self, year, month, day) -> np.ndarray:
        """Return a boolean mask, True where (year, month, day) exists (vectorized)."""
        y, m, d = np.broadcast_arrays(*(as_int_array(v) for v in (year, month, day)))
        return self._checked_to_jdn(y, m, d)[1]

    def _checked_to_jdn(self, year, month, day):
        start, row = self._year_terms(year)
        index = self._month_index(month, row)
        day0 = day - 1
        jdn = start + self._offsets[index]
        jdn += day0
        return jdn, below(day0, self._lengths[index])

    def _to_jdn(self, year, month, day):
        return self._checked_to_jdn(year, month, day)[0] + self._jdn_offset

    def _invalid_reason(self, year, month, day):
        reason = super()._invalid_reason(year, month, day)
        if reason and 1 <= month <= int(self.months_in_year(np.int64(year))) and day >= 1:
            note = self._length_note(year, month)
            if note:
                reason = f"{reason} ({note})"
        return reason

    def _length_note(self, year: int, month: int) -> str:
        """Why ``month`` of ``year`` has the length it has (added to invalid-date messages)."""
        return ""

    # ------------------------------------------------------- text forms
    def format(self, year, month, day, style: str = "iso") -> str:
        """Write one date: ``style="iso"`` gives ``5781-07-01``, ``"long"`` gives ``1 Tishri 5781 AM``."""
        y, m, d = int(year), int(month), int(day)
        if style == "iso":
            return f"{iso_year(y)}-{m:02d}-{d:02d}"
        if style == "long":
            return f"{d} {self.month_name(m, y)} {year_with_era(y, self.era)}"
        raise ParameterError(f"unknown date style {style!r} for {self.name} (iso, long)")

    def parse(self, text: str) -> tuple[int, int, int]:
        """Read ``Y-M-D``, ``D Month Y``, ``Month D, Y`` or ``Y Month D`` (see :mod:`.textforms`)."""
        return parse_year_month_day(text, self.month_table(), self.name, self.era_words or (self.era,))


#: Month table of the twelve-by-thirty year: months 1..12 of 30 days, month 13 of 5 (common) or 6 days.
_EPAGOMENAL_TABLE = month_table(([30] * 12 + [5], range(1, 14)), ([30] * 12 + [6], range(1, 14)))


class EpagomenalCalendar(ArithmeticCalendar):
    """Twelve months of 30 days and a thirteenth month of 5 (or 6) epagomenal days.

    Subclasses give ``epoch_jdn`` (day number of 1/1/1), :meth:`is_leap`,
    :meth:`leap_days_before` (number of leap years among years 1 ..
    year-1, negative for years before 1) and optionally a faster
    :meth:`_year_of_day`.
    """

    _offsets, _lengths = _EPAGOMENAL_TABLE
    #: Mean length of the year in days, for the first guess of the year of a day.
    mean_year: ClassVar[float] = 365.25
    #: The leap rule in words, for messages.
    leap_rule_text: ClassVar[str] = ""

    @property
    def _jdn_offset(self):
        return self.epoch_jdn - 365

    def _days_before_year(self, year):
        """Day number of 1/1 of ``year`` less :attr:`_jdn_offset`: ``365 y`` + leap years among 1 .. y-1."""
        return 365 * year + self.leap_days_before(year)

    def year_start_jdn(self, year) -> np.ndarray:
        """Return the day number of day 1 of month 1 of ``year``."""
        return self._jdn_offset + self._days_before_year(as_int_array(year))

    def _year_terms(self, year):
        return self.year_start_jdn(year), self.is_leap(year) * MONTH_COLUMNS

    def year_length(self, year) -> np.ndarray:
        return 365 + self.is_leap(as_int_array(year))

    def _checked_to_jdn(self, year, month, day):
        # Day of the year 30 (m - 1) + (d - 1); the date exists when 1 <= d <= 30 and that day is
        # within the year (which bounds the month to 1..13 and the epagomenal days to 5 or 6).
        doy = 30 * month
        doy += day
        doy -= 31
        ok = below(day - 1, 30)
        ok &= below(doy, self._days_in_year(year))
        doy += self._days_before_year(year)
        return doy, ok

    def _to_jdn_block(self, out, year, month, day):
        # Days 1..30 and months 1..13 by four reductions.  The day of the year then needs an
        # element-wise check only where it reaches 365 (a sixth epagomenal day or beyond).
        if day.size == 0:
            return True
        if month.min() < 1 or umax(month) > 13:
            return False
        np.multiply(month, _I30, out=out)
        if day.min() < 1 or umax(day) > 30:
            return False
        out += day                                        # day of the year + 31
        if int(out.max()) >= 365 + 31:
            late = np.flatnonzero(out >= 365 + 31)
            if not np.all(out[late] - 31 < self._days_in_year(year[late])):
                return False
        out += self._days_before_year(year)
        out += np.int64(self._jdn_offset - 31)
        return True

    def _days_in_year(self, year):
        """Days of ``year`` (an int when the same for every year), for validation."""
        return 365 + self.is_leap(year)

    def _length_note(self, year, month):
        if month == 13:
            return f"{year} is a {'leap' if bool(self.is_leap(year)) else 'common'} year; {self.leap_rule_text}"
        return ""

    def _year_of_day(self, jdn) -> np.ndarray:
        """Return the year containing day ``jdn``: a first guess from the mean year, then corrected."""
        guess = np.floor((jdn - self.epoch_jdn) / self.mean_year).astype(np.int64) + 1
        guess -= self.year_start_jdn(guess) > jdn
        guess += self.year_start_jdn(guess + 1) <= jdn
        return guess

    def _from_jdn(self, jdn):
        year = self._year_of_day(jdn)
        doy = jdn - self.year_start_jdn(year)
        month = doy // 30
        return year, month + 1, doy - 30 * month + 1
