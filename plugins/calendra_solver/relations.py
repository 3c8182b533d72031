"""Relations of a record (``[[relation]]`` tables): their types, checking, and labels for output.

See SCHEMA.md for the meaning of each type; the join turns them into edges
(:func:`calendra_solver.join.edges_from_relations`).
"""

from __future__ import annotations

from dataclasses import dataclass


RELATION_TYPES = {
    "interval": ({"type", "from", "to", "days", "plus_minus", "min_days", "max_days", "note"}, {"from", "to"}),
    "before": ({"type", "first", "then", "max_days", "min_days", "note"}, {"first", "then"}),
    "same-year": ({"type", "observations", "calendar", "note"}, {"observations", "calendar"}),
    "consecutive-years": ({"type", "observations", "calendar", "note"}, {"observations", "calendar"}),
    "years-after": ({"type", "from", "to", "years", "calendar", "note"}, {"from", "to", "years", "calendar"}),
    "regnal": ({"type", "calendar", "epoch", "between", "step_days", "note"}, {"calendar"}),
}



@dataclass
class Relation:
    """A relation between observations (see SCHEMA.md, ``[[relation]]``)."""

    type: str
    members: tuple                   # observation ids, in the relation's order
    index: int = 0
    days: float | None = None
    plus_minus: float = 0.0
    min_days: float | None = None
    max_days: float | None = None
    years: int = 0
    calendar: str | None = None
    epoch: str | None = None
    between: tuple | None = None
    step_days: float = 30.0
    note: str = ""

    @property
    def label(self) -> str:
        """Short text naming the relation, for output."""
        m = self.members
        if self.type == "interval":
            if self.days is not None:
                return f"{m[1]} {self.days:g}+-{self.plus_minus:g} d after {m[0]}"
            return f"{m[1]} {self.min_days:g}..{self.max_days:g} d after {m[0]}"
        if self.type == "before":
            return f"{m[0]} before {m[1]}" + (f" (within {self.max_days:g} d)" if self.max_days is not None else "")
        if self.type == "same-year":
            return f"{', '.join(m)} in the same {self.calendar} year"
        if self.type == "consecutive-years":
            return f"{', '.join(m)} in consecutive {self.calendar} years"
        if self.type == "years-after":
            return f"{m[1]} {self.years} {self.calendar} years after {m[0]}"
        return f"regnal epoch {self.calendar}.{self.epoch or '?'}"


def parse_relation(table, i, fail, ids) -> Relation:
    """Check one ``[[relation]]`` table (number ``i``) against the observation ids; raise ``fail(...)``."""
    where = f"[[relation]] #{i}"
    if not isinstance(table, dict):
        raise fail(where, "must be a table")
    rtype = table.get("type")
    if rtype == "after":            # 'after' is 'before' read the other way
        table = dict(table)
        rtype = table["type"] = "before"
        if "first" in table or "then" in table or "observation" not in table or "reference" not in table:
            raise fail(where, "type 'after' takes observation (the later one) and reference (the earlier one)")
        table["first"], table["then"] = table.pop("reference"), table.pop("observation")
    if rtype not in RELATION_TYPES:
        raise fail(f"{where}, key 'type'", f"{rtype!r}: one of {', '.join(sorted(RELATION_TYPES))}, after")
    allowed, required = RELATION_TYPES[rtype]
    _check_keys(table, allowed, fail, where)
    where = f"[[relation]] #{i} ({rtype})"
    for key in sorted(required):
        if key not in table:
            raise fail(where, f"missing key {key!r}")
    rel = Relation(type=rtype, members=(), index=i, note=str(table.get("note", "")))

    def member(key):
        v = table[key]
        if v not in ids:
            raise fail(f"{where}, key {key!r}", f"{v!r} is not the id of an observation (ids: {', '.join(sorted(ids))})")
        return v

    if rtype == "interval":
        rel.members = (member("from"), member("to"))
        if "days" in table:
            if "min_days" in table or "max_days" in table:
                raise fail(where, "give days (with plus_minus) or min_days/max_days, not both")
            rel.days = _number(table, "days", None, fail, where)
            rel.plus_minus = _number(table, "plus_minus", 0.0, fail, where, lo=0.0)
        else:
            if "min_days" not in table or "max_days" not in table:
                raise fail(where, "give days (with plus_minus), or both min_days and max_days")
            rel.min_days = _number(table, "min_days", None, fail, where)
            rel.max_days = _number(table, "max_days", None, fail, where)
            if rel.min_days > rel.max_days:
                raise fail(f"{where}, key 'min_days'", "is above max_days")
    elif rtype == "before":
        rel.members = (member("first"), member("then"))
        rel.min_days = _number(table, "min_days", 0.0, fail, where, lo=0.0)
        rel.max_days = _number(table, "max_days", None, fail, where, lo=0.0)
    elif rtype in ("same-year", "consecutive-years"):
        obs = table["observations"]
        if not isinstance(obs, list) or len(obs) < 2:
            raise fail(f"{where}, key 'observations'", "a list of at least two observation ids")
        for v in obs:
            if v not in ids:
                raise fail(f"{where}, key 'observations'", f"{v!r} is not the id of an observation")
        rel.members = tuple(obs)
    elif rtype == "years-after":
        rel.members = (member("from"), member("to"))
        y = table["years"]
        if isinstance(y, bool) or not isinstance(y, int):
            raise fail(f"{where}, key 'years'", "a whole number of years")
        rel.years = y
    elif rtype == "regnal":
        if "between" in table:
            b = table["between"]
            if not isinstance(b, list) or len(b) != 2 or not all(isinstance(x, (str, int)) for x in b):
                raise fail(f"{where}, key 'between'", "two dates (or Julian years) bounding the accession")
            rel.between = tuple(str(x) for x in b)
        if "epoch" in table:
            if not isinstance(table["epoch"], str):
                raise fail(f"{where}, key 'epoch'", "the key of the reign whose accession is uncertain")
            rel.epoch = table["epoch"]
        rel.step_days = _number(table, "step_days", 30.0, fail, where, lo=1.0)
    if rtype in ("same-year", "consecutive-years", "years-after", "regnal"):
        if not isinstance(table["calendar"], str):
            raise fail(f"{where}, key 'calendar'", "must be a calendar name")
        rel.calendar = table["calendar"]
    if len(set(rel.members)) != len(rel.members):
        raise fail(where, "names the same observation twice")
    return rel


def _check_keys(table, allowed, fail, where):
    extra = sorted(set(table) - set(allowed))
    if extra:
        raise fail(where, f"unknown key {extra[0]!r} (allowed: {', '.join(sorted(allowed))})")


def _number(table, key, default, fail, where, lo=None):
    if key not in table:
        return default
    v = table[key]
    if isinstance(v, bool) or not isinstance(v, (int, float)):
        raise fail(f"{where}, key {key!r}", f"{v!r}: must be a number")
    if lo is not None and v < lo:
        raise fail(f"{where}, key {key!r}", f"{v!r}: must be >= {lo:g}")
    return float(v)
