"""Every registered calendar, core or plugin, honours the calendar protocol.

Invariants (no external source needed): day number -> fields -> day number
round trips, fields -> text -> fields round trips, consecutive days map to
distinct dates in order, the vectorized path equals the scalar path.
"""

import numpy as np
import pytest
from hypothesis import given, settings, strategies as st

from calendra.calendar import DAY_STARTS, Calendar
from calendra.pluginmanager import get_host

CALENDARS = list(get_host().calendars)
#: -10000..10000 years around the Julian Day epoch region, in day numbers.
SPAN = (1721425 - 10000 * 366, 1721425 + 10000 * 366)


def _bounds(cal):
    lo, hi = cal.valid_jdn
    return max(lo, SPAN[0]), min(hi, SPAN[1])


def _invertible(cal):
    return cal.invertible


@pytest.mark.parametrize("cal", CALENDARS, ids=lambda c: c.name)
def test_declares_the_protocol(cal):
    assert isinstance(cal, Calendar)
    assert cal.name and cal.name == cal.name.lower() and " " not in cal.name
    assert cal.fields and cal.description
    assert cal.day_start in DAY_STARTS
    assert cal.year_numbering or cal.fields == ("day",) or not _invertible(cal)


@pytest.mark.parametrize("cal", CALENDARS, ids=lambda c: c.name)
def test_round_trip_day_fields_day(cal):
    lo, hi = _bounds(cal)

    @settings(max_examples=150)
    @given(st.integers(min_value=lo, max_value=hi))
    def check(jdn):
        fields = cal.from_jdn(jdn)
        values = [fields[f] for f in cal.fields]
        assert np.all(cal.is_valid(*values))
        if _invertible(cal):
            assert int(cal.to_jdn(*values)) == jdn

    check()


@pytest.mark.parametrize("cal", CALENDARS, ids=lambda c: c.name)
def test_round_trip_fields_text_fields(cal):
    lo, hi = _bounds(cal)

    @settings(max_examples=100)
    @given(st.integers(min_value=lo, max_value=hi))
    def check(jdn):
        fields = cal.from_jdn(jdn)
        values = tuple(int(np.asarray(fields[f])) for f in cal.fields)
        text = cal.format(*values)
        assert tuple(cal.parse(text)) == values, text

    check()


@pytest.mark.parametrize("cal", CALENDARS, ids=lambda c: c.name)
def test_vectorized_equals_scalar_and_days_are_ordered(cal):
    lo, hi = _bounds(cal)
    start = max(lo, 1721425 - 800 * 365)
    jdn = np.arange(start, min(hi, start + 4000))
    fields = cal.from_jdn(jdn)
    cols = [np.asarray(fields[f]) for f in cal.fields]
    for i in (0, 1, 500, len(jdn) - 1):
        one = cal.from_jdn(int(jdn[i]))
        assert tuple(int(np.asarray(one[f])) for f in cal.fields) == tuple(int(c[i]) for c in cols)
    if _invertible(cal):
        assert np.array_equal(cal.to_jdn(*cols), jdn)
        # Distinct days have distinct dates (no two days share a name).
        keys = set(zip(*(c.tolist() for c in cols)))
        assert len(keys) == len(jdn)


@pytest.mark.parametrize("cal", [c for c in CALENDARS if _invertible(c)], ids=lambda c: c.name)
def test_invalid_dates_are_caught_in_every_block_of_a_large_array(cal):
    # Invariant: to_jdn on an array larger than several evaluation blocks raises exactly when
    # is_valid (the element-wise mask) has a False, and the error's mask is that mask, wherever
    # the bad dates sit: first, middle or last (partial) block.
    from calendra.errors import InvalidDateError
    from calendra_arithmetic.base import BLOCK, BlockwiseMixin
    lo, hi = _bounds(cal)
    start = max(lo, 1721425 - 300 * 365)
    # At least three blocks and a partial one (core kernels: blocks of 32768 dates, arithmetic ones BLOCK).
    n = 3 * BLOCK + 3 if isinstance(cal, BlockwiseMixin) else 100_003
    jdn = np.arange(start, min(hi, start + n))
    fields = cal.from_jdn(jdn)
    cols = [np.array(fields[f], dtype=np.int64) for f in cal.fields]
    assert np.array_equal(cal.to_jdn(*cols), jdn)
    rng = np.random.default_rng(3)
    for k, _ in enumerate(cols):
        column = cols[k]
        # One past the largest and below the smallest value the field takes, and far off.
        for value in (column.max() + 1, column.min() - 1, None, 2**40, -2**40):
            for where in (0, len(jdn) // 2, len(jdn) - 1, int(rng.integers(len(jdn)))):
                bad = [c.copy() for c in cols]
                bad[k][where] = column[where] + 40 if value is None else value
                mask = ~np.asarray(cal.is_valid(*bad))
                if not mask.any():
                    cal.to_jdn(*bad)          # a shifted field that is still a date: no error
                    continue
                with pytest.raises(InvalidDateError) as info:
                    cal.to_jdn(*bad)
                assert np.array_equal(info.value.mask, mask)
