"""Array-backed tables of events, the common result of every detector.

An :class:`EventTable` holds equal-length numpy columns.  Three are always
present: ``jd_tt`` (Julian Day, TT), ``jd_ut`` (Julian Day, UT1 through the
delta-T model named in the provenance) and ``kind`` (a short string naming
the event).  Detectors add named columns with units.  Every table carries a
provenance dict (see :mod:`calendra.provenance`).
"""

from __future__ import annotations

from dataclasses import dataclass, field

import numpy as np

REQUIRED = ("jd_tt", "jd_ut", "kind")


@dataclass
class Column:
    """Metadata of one column: unit and a short description."""

    name: str
    unit: str = ""
    description: str = ""
    fmt: str = ""


@dataclass
class EventTable:
    """Equal-length columns of events with their provenance.

    Parameters
    ----------
    columns : dict of str -> array_like
        Must include ``jd_tt``, ``jd_ut`` and ``kind``.
    meta : dict of str -> Column, optional
        Units and descriptions of columns.
    provenance : dict, optional
        Models, ephemeris, conventions and warnings behind the values.
    """

    columns: dict
    meta: dict = field(default_factory=dict)
    provenance: dict = field(default_factory=dict)

    def __post_init__(self):
        missing = [c for c in REQUIRED if c not in self.columns]
        if missing:
            raise ValueError(f"an event table needs columns {', '.join(missing)}")
        cols = {k: np.atleast_1d(np.asarray(v)) for k, v in self.columns.items()}
        lengths = {len(v) for v in cols.values()}
        if len(lengths) > 1:
            raise ValueError(f"columns differ in length: { {k: len(v) for k, v in cols.items()} }")
        self.columns = cols
        for name in cols:
            self.meta.setdefault(name, Column(name))
        self.meta["jd_tt"].description = self.meta["jd_tt"].description or "Julian Day, TT"
        self.meta["jd_ut"].description = self.meta["jd_ut"].description or "Julian Day, UT1 = TT - delta T"

    def __len__(self):
        return len(self.columns["jd_tt"])

    def __getitem__(self, name):
        return self.columns[name]

    @property
    def names(self) -> list[str]:
        return list(self.columns)

    def select(self, mask) -> "EventTable":
        """Return the rows where ``mask`` is True (or the given indices)."""
        return EventTable({k: v[mask] for k, v in self.columns.items()}, dict(self.meta), dict(self.provenance))

    def sorted(self) -> "EventTable":
        """Return the rows in time order."""
        return self.select(np.argsort(self.columns["jd_tt"], kind="stable"))

    def with_column(self, name, values, unit="", description="") -> "EventTable":
        """Return a copy with a column added or replaced."""
        cols = dict(self.columns)
        cols[name] = np.asarray(values)
        meta = dict(self.meta)
        meta[name] = Column(name, unit, description)
        return EventTable(cols, meta, dict(self.provenance))

    @staticmethod
    def concat(tables) -> "EventTable":
        """Join tables with the same columns; the first table's provenance is kept."""
        tables = list(tables)
        if not tables:
            raise ValueError("nothing to join")
        names = tables[0].names
        cols = {n: np.concatenate([t.columns[n] for t in tables]) for n in names}
        return EventTable(cols, dict(tables[0].meta), dict(tables[0].provenance))

    def rows(self):
        """Yield one dict per event with plain Python values."""
        for i in range(len(self)):
            yield {k: _plain(v[i]) for k, v in self.columns.items()}


def _plain(value):
    if isinstance(value, np.generic):
        return value.item()
    return value
