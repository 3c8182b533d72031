"""A small rule language for festival dates, evaluated over many years at once.

Examples::

    first full moon after march equinox at Jerusalem, then next sunday
    new moon nearest solar longitude 315 in UTC+8
    day 15 of month 1 of chinese
    sunday after day 15 of month 1 of chinese
    first crescent after new moon nearest september equinox at Mecca by yallop
    3 days before easter julian
    second full moon after december solstice + 1 day
    saturday on or before march 25 julian

Grammar (words are case-insensitive; ``|`` separates choices, ``[...]`` is optional)::

    rule      := expr [place]...                        place: at SITE | in ZONE | by CRITERION
    expr      := sum ( [","] then step )*
    step      := next WEEKDAY | [ORDINAL] WEEKDAY REL | [ORDINAL] EVENT REL | +N [days] | -N [days]
                 | N days (after|before)                 (a step applies to the value before it)
    sum       := term ( (+|-) N [day|days] )*
    term      := N day[s] (after|before) term
               | [ORDINAL] WEEKDAY REL term
               | [ORDINAL] EVENT [REL term]
               | day N of [leap] month N [leap] of CALENDAR
               | MONTHNAME N [julian|gregorian]
               | easter [gregorian|julian|orthodox|astronomical]
               | ( expr )
    REL       := after | before | on or after | on or before | nearest [to]
    EVENT     := new moon | conjunction | full moon | first quarter | last quarter
               | march equinox | june solstice | september equinox | december solstice
               | spring equinox | summer solstice | autumn equinox | winter solstice   (northern seasons)
               | solar longitude DEGREES
               | first crescent [at SITE] [by CRITERION]
    ORDINAL   := first | second | third | fourth | fifth | 1st | 2nd | 3rd | Nth
    WEEKDAY   := sunday | monday | ... | saturday
    SITE      := a gazetteer name or LAT,LON[,ELEV];  ZONE := UTC+H[:MM] or a meridian (120E)

Meaning
-------
Every expression stands for, in each year, a **day** (a day number) and,
for sky events, the **instant** (TT) it comes from.  ``X after Y`` takes
the first X strictly after Y (an instant after the instant; after the end
of Y's day when Y is a day), ``on or after`` includes Y's day, ``before``
and ``on or before`` likewise backwards, ``nearest`` the closest.  Weekday
relations work on days: ``sunday after Y`` is the first Sunday after Y's
day (a Sunday Y gives the next one).  ``first crescent`` is the civil day
whose evening first shows the crescent at the site (the Islamic or
Babylonian month begins at that sunset, on the next day number): add
``+ 1 day`` for the day the month begins.

An event without a relation is the one of the year: ``march equinox``,
``solar longitude 315`` (the crossing in that Gregorian year), ``new moon``
(the first on or after 1 January).  ``day D of month M of CAL`` names the
day in year CAL-year of any registered calendar (``chinese``, ``hebrew``,
``islamic``, ``babylonian``, ...); when the rule's years are Gregorian, the
CAL year is the one in force on 1 July of that Gregorian year.  A rule
whose first anchor is such a date runs over the years of that calendar.

Instants become days at the rule's place: ``at SITE`` (its civil time --
local mean time unless the site has a zone), ``in ZONE``, or UT when no
place is given; one place per rule.

Errors
------
:class:`RuleSyntaxError` gives the column (1-based) and what was expected.
"""

from __future__ import annotations

import re
from dataclasses import dataclass, field

import numpy as np

from calendra import julian_gregorian as jg
from calendra.daylib import weekday
from calendra.errors import ParameterError

WEEKDAYS = ("sunday", "monday", "tuesday", "wednesday", "thursday", "friday", "saturday")
MONTHS = ("january", "february", "march", "april", "may", "june", "july", "august", "september", "october",
          "november", "december")
ORDINALS = {"first": 1, "second": 2, "third": 3, "fourth": 4, "fifth": 5, "next": 1}
SEASONS = {"march equinox": 0.0, "june solstice": 90.0, "september equinox": 180.0, "december solstice": 270.0,
           "spring equinox": 0.0, "vernal equinox": 0.0, "summer solstice": 90.0, "autumn equinox": 180.0,
           "autumnal equinox": 180.0, "winter solstice": 270.0, "equinox": 0.0}
PHASES = {"new moon": "new", "conjunction": "new", "full moon": "full", "first quarter": "first-quarter",
          "last quarter": "last-quarter"}
RELATIONS = ("after", "before", "on or after", "on or before", "nearest")


class RuleSyntaxError(ParameterError):
    """A rule that cannot be read: ``column`` (1-based) and ``expected`` say where and what."""

    def __init__(self, text, column, expected, found):
        self.text, self.column, self.expected, self.found = text, column, expected, found
        pointer = " " * (column - 1) + "^"
        super().__init__(f"rule, column {column}: expected {expected}, found {found}\n  {text}\n  {pointer}")


# ------------------------------------------------------------------ tokens

_TOKEN = re.compile(r"\s*(?:(?P<coord>[+-]?\d+(?:\.\d+)?\s*,\s*[+-]?\d+(?:\.\d+)?(?:\s*,\s*[+-]?\d+(?:\.\d+)?)?)(?![\w.])"
                    r"|(?P<ord>\d+(?:st|nd|rd|th))\b"
                    r"|(?P<num>\d+(?:\.\d+)?)"
                    r"|(?P<word>[A-Za-z_][\w'.\-]*(?:\[[^\]]*\])?)"
                    r"|(?P<sym>[+\-,()]))")


@dataclass
class Token:
    kind: str
    text: str
    col: int

    @property
    def low(self):
        return self.text.lower()


def tokenize(text: str) -> list[Token]:
    out = []
    pos = 0
    while pos < len(text):
        if text[pos:].strip() == "":
            break
        m = _TOKEN.match(text, pos)
        if not m or m.end() == pos:
            col = pos + 1 + (len(text[pos:]) - len(text[pos:].lstrip()))
            raise RuleSyntaxError(text, col, "a word, a number or one of + - , ( )", repr(text[col - 1]))
        kind = m.lastgroup
        out.append(Token(kind, m.group(kind), m.start(kind) + 1))
        pos = m.end()
    out.append(Token("end", "", len(text) + 1))
    return out


# ------------------------------------------------------------------ syntax tree

@dataclass
class Node:
    kind: str
    args: dict = field(default_factory=dict)
    col: int = 1


@dataclass
class Rule:
    text: str
    node: Node
    site: str | None = None
    zone: str | None = None
    criterion: str | None = None
    calendar: str = "gregorian"
    base: str | None = None         # a calendar name when the rule runs over that calendar's years


class _Parser:
    STOP = {"at", "in", "by", "then", "after", "before", "on", "nearest", "of", "leap"}

    def __init__(self, text):
        self.text = text
        self.toks = tokenize(text)
        self.i = 0
        self.rule = Rule(text, Node("none"))

    # helpers
    @property
    def tok(self):
        return self.toks[self.i]

    def peek(self, n=1):
        return self.toks[min(self.i + n, len(self.toks) - 1)]

    def take(self):
        t = self.tok
        self.i += 1
        return t

    def fail(self, expected):
        t = self.tok
        raise RuleSyntaxError(self.text, t.col, expected, "the end of the rule" if t.kind == "end" else repr(t.text))

    def word(self, *words):
        if self.tok.kind == "word" and self.tok.low in words:
            return self.take()
        return None

    def expect(self, *words):
        t = self.word(*words)
        if t is None:
            self.fail(" or ".join(repr(w) for w in words))
        return t

    def number(self, what="a number"):
        if self.tok.kind != "num":
            self.fail(what)
        return self.take()

    def words_ahead(self, phrase):
        parts = phrase.split()
        for j, p in enumerate(parts):
            t = self.peek(j)
            if t.kind != "word" or t.low != p:
                return False
        return True

    def take_phrase(self, phrases):
        for ph in sorted(phrases, key=lambda p: -len(p.split())):
            if self.words_ahead(ph):
                col = self.tok.col
                for _ in ph.split():
                    self.take()
                return ph, col
        return None, None

    # grammar
    def parse(self):
        node = self.expr()
        self.places()
        if self.tok.kind != "end":
            self.fail("the end of the rule, ', then ...', '+ N days', or a place (at SITE, in ZONE, by CRITERION)")
        self.rule.node = node
        return self.rule

    def places(self):
        while True:
            if self.word("at"):
                self.rule_place("site", self.site_text())
            elif self.tok.kind == "word" and self.tok.low == "in" and self.peek().kind in ("word", "num", "sym"):
                self.take()
                self.rule_place("zone", self.zone_text())
            elif self.word("by"):
                if self.tok.kind != "word":
                    self.fail("a crescent criterion (yallop, odeh, lag)")
                self.rule_place("criterion", self.take().low)
            else:
                return

    def rule_place(self, key, value):
        old = getattr(self.rule, key)
        if old is not None and old != value:
            self.fail(f"one {key} per rule (already {old!r})")
        if key in ("site", "zone") and (self.rule.site if key == "zone" else self.rule.zone) is not None:
            self.fail("either 'at SITE' or 'in ZONE', not both")
        setattr(self.rule, key, value)

    def site_text(self):
        t = self.tok
        if t.kind == "coord":
            return self.take().text.replace(" ", "")
        if t.kind != "word" or t.low in self.STOP:
            self.fail("a site (a gazetteer name or LAT,LON[,ELEV])")
        parts = [self.take().text]
        while self.tok.kind == "word" and self.tok.low not in self.STOP and self.tok.low not in WEEKDAYS:
            parts.append(self.take().text)
        return " ".join(parts)

    def zone_text(self):
        t = self.tok
        if t.kind == "word" and re.fullmatch(r"ut[c]?", t.low) and self.peek().kind == "sym" and self.peek().text in "+-":
            self.take()
            sign = self.take().text
            if self.tok.kind != "num":
                self.fail("an hour offset (UTC+8)")
            num = self.take().text
            return f"UTC{sign}{num}"
        if t.kind == "word" and re.fullmatch(r"utc?[+-]\d+(:\d\d)?", t.low):
            return self.take().text
        if t.kind == "num":
            text = self.take().text
            if self.tok.kind == "word" and self.tok.low in ("e", "w"):
                text += self.take().text.upper()
            self.word("zone", "meridian")
            return text
        if t.kind == "word" and re.fullmatch(r"\d+(\.\d+)?[ew]", t.low):
            self.take()
            self.word("zone", "meridian")
            return t.text.upper()
        self.fail("a zone (UTC+8) or a meridian (120E)")

    def expr(self):
        node = self.sum()
        while True:
            save = self.i
            if self.tok.kind == "sym" and self.tok.text == ",":
                self.take()
                if not self.word("then"):
                    self.i = save
                    return node
            elif not self.word("then"):
                return node
            node = self.step(node)

    def step(self, prev):
        col = self.tok.col
        if self.word("next"):
            wd = self.weekday_word()
            return Node("weekday", {"weekday": wd, "rel": "after", "n": 1, "anchor": prev}, col)
        if self.tok.kind == "sym" and self.tok.text in "+-":
            sign = 1 if self.take().text == "+" else -1
            n = float(self.number("a number of days").text)
            self.word("day", "days")
            return Node("offset", {"days": sign * n, "anchor": prev}, col)
        if self.tok.kind == "num" and self.peek().kind == "word" and self.peek().low in ("day", "days"):
            n = float(self.take().text)
            self.take()
            d = self.expect("after", "before").low
            return Node("offset", {"days": n if d == "after" else -n, "anchor": prev}, col)
        n = self.ordinal()
        if self.tok.kind == "word" and self.tok.low in WEEKDAYS:
            wd = self.weekday_word()
            rel = self.relation(required=True)
            return Node("weekday", {"weekday": wd, "rel": rel, "n": n, "anchor": prev}, col)
        ev = self.event()
        if ev is not None:
            rel = self.relation(required=True)
            ev.args.update({"rel": rel, "n": n, "anchor": prev})
            return ev
        self.fail("a step: 'next WEEKDAY', 'WEEKDAY after', 'full moon after', '+ N days', 'N days after'")

    def sum(self):
        node = self.term()
        while self.tok.kind == "sym" and self.tok.text in "+-" and self.peek().kind == "num":
            col = self.tok.col
            sign = 1 if self.take().text == "+" else -1
            n = float(self.take().text)
            self.word("day", "days")
            node = Node("offset", {"days": sign * n, "anchor": node}, col)
        return node

    def ordinal(self):
        t = self.tok
        if t.kind == "word" and t.low in ORDINALS and t.low != "next":
            nxt = self.peek()
            if t.low == "first" and nxt.kind == "word" and nxt.low in ("quarter", "crescent"):
                return 1
            self.take()
            return ORDINALS[t.low]
        if t.kind == "ord":
            self.take()
            return int(re.match(r"\d+", t.text).group())
        return 1

    def weekday_word(self):
        if self.tok.kind == "word" and self.tok.low in WEEKDAYS:
            return WEEKDAYS.index(self.take().low)
        self.fail("a weekday (sunday ... saturday)")

    def relation(self, required):
        ph, _ = self.take_phrase(["on or after", "on or before", "after", "before", "nearest to", "nearest"])
        if ph is None:
            if required:
                self.fail("after, before, on or after, on or before, or nearest")
            return None
        return "nearest" if ph.startswith("nearest") else ph

    def event(self):
        col = self.tok.col
        ph, _ = self.take_phrase(list(PHASES) + list(SEASONS) + ["solar longitude", "first crescent"])
        if ph is None:
            return None
        if ph in PHASES:
            return Node("phase", {"phase": PHASES[ph]}, col)
        if ph in SEASONS:
            return Node("solar", {"longitude": SEASONS[ph], "name": ph}, col)
        if ph == "solar longitude":
            lon = float(self.number("a longitude in degrees").text)
            return Node("solar", {"longitude": lon % 360.0, "name": f"solar longitude {lon:g}"}, col)
        args = {}
        if self.tok.kind == "word" and self.tok.low == "at":
            self.take()
            args["site"] = self.site_text()
        if self.word("by"):
            if self.tok.kind != "word":
                self.fail("a crescent criterion (yallop, odeh, lag)")
            args["criterion"] = self.take().low
        return Node("crescent", args, col)

    def term(self):
        t = self.tok
        col = t.col
        if t.kind == "sym" and t.text == "(":
            self.take()
            node = self.expr()
            if not (self.tok.kind == "sym" and self.tok.text == ")"):
                self.fail("')'")
            self.take()
            return node
        if t.kind == "num" and self.peek().kind == "word" and self.peek().low in ("day", "days"):
            n = float(self.take().text)
            self.take()
            d = self.expect("after", "before").low
            anchor = self.term()
            return Node("offset", {"days": n if d == "after" else -n, "anchor": anchor}, col)
        if t.kind == "word" and t.low == "day" and self.peek().kind == "num":
            self.take()
            d = int(self.take().text)
            self.expect("of")
            leap = 1 if self.word("leap") else 0
            self.expect("month")
            m = int(self.number("a month number").text)
            if self.word("leap"):
                leap = 1
            self.expect("of")
            if self.tok.kind != "word":
                self.fail("a calendar name (chinese, hebrew, islamic, babylonian, ...)")
            cal = self.take().text
            if self.rule.base is None:
                self.rule.base = cal
            return Node("caldate", {"calendar": cal, "month": m, "leap": leap, "day": d}, col)
        if t.kind == "word" and t.low in MONTHS and self.peek().kind == "num":
            self.take()
            d = int(self.take().text)
            which = self.word("julian", "gregorian")
            cal = which.low if which else "gregorian"
            if cal == "julian":
                self.rule.calendar = "julian"
            self.rule.base = self.rule.base or "@solar"
            return Node("civil", {"calendar": cal, "month": MONTHS.index(t.low) + 1, "day": d}, col)
        if t.kind == "word" and t.low == "easter":
            self.take()
            m = self.word("gregorian", "julian", "orthodox", "astronomical")
            method = m.low if m else "gregorian"
            method = "julian" if method == "orthodox" else method
            if method == "julian":
                self.rule.calendar = "julian"
            self.rule.base = self.rule.base or "@solar"
            return Node("easter", {"method": method}, col)
        n = self.ordinal()
        if self.tok.kind == "word" and self.tok.low in WEEKDAYS:
            wd = self.weekday_word()
            rel = self.relation(required=True)
            anchor = self.term()
            return Node("weekday", {"weekday": wd, "rel": rel, "n": n, "anchor": anchor}, col)
        ev = self.event()
        if ev is not None:
            rel = self.relation(required=False)
            ev.args.update({"rel": rel, "n": n})
            if rel is not None:
                self.places()
                ev.args["anchor"] = self.term()
            else:
                self.rule.base = self.rule.base or "@solar"
            self.places()
            return ev
        self.fail("a date or an event: 'full moon', 'march equinox', 'solar longitude N', 'day N of month M of "
                  "CAL', 'march 21', 'easter', 'first crescent', a weekday, 'N days after', or '('")


def parse_rule(text: str) -> Rule:
    """Parse a rule (see the module notes); raises :class:`RuleSyntaxError` with the column and what was expected."""
    if not isinstance(text, str) or not text.strip():
        raise RuleSyntaxError(str(text), 1, "a rule", "nothing")
    return _Parser(text).parse()


# ------------------------------------------------------------------ evaluation

@dataclass
class RuleResult:
    """Dates of a rule: ``day`` (day numbers) and ``instant_ut`` (UT1 JD of the sky event, NaN for days)."""

    day: np.ndarray
    instant_ut: np.ndarray
    calendar: str
    describe: str


class _Context:
    def __init__(self, rule: Rule, jd_lo, jd_hi, site, zone, deltat):
        from calendra.deltat import get_model
        from calendra.sites import parse_site

        from . import sky

        self.rule = rule
        self.deltat = get_model(deltat)
        self.lo, self.hi = jd_lo, jd_hi
        self.site = None
        site = rule.site or site
        zone = rule.zone or zone
        if rule.site is None and rule.zone is None and site is None and zone is None:
            crescents = _find(rule.node, "crescent")
            if crescents and "site" in crescents[0].args:
                site = crescents[0].args["site"]
        if site is not None and (rule.zone is None):
            self.site = parse_site(site)
            self.local = sky.LocalTime(self.site.offset_days * 24.0, False, f"civil time of {self.site.name} "
                                                                           f"({self.site.time_rule})")
        elif zone is not None:
            self.local = sky.parse_local_time(zone)
        else:
            self.local = sky.LocalTime(0.0, False, "UT (no place given)")
        self._phases = {}
        self._solar = {}
        self._cres = {}
        self.notes = [f"instants dated by the {self.local.describe()}"]

    def days_of(self, t_tt):
        ut = np.asarray(self.deltat.ut_from_tt(t_tt), dtype=float)
        return self.local.days(ut, self.deltat)

    def day_start_tt(self, day):
        """TT of the local midnight that begins day ``day`` (mean-time offset; apparent time within ~16 min)."""
        ut = np.asarray(day, dtype=float) - 0.5 - self.local.offset_hours / 24.0
        return np.asarray(self.deltat.tt_from_ut(ut), dtype=float)

    def phases(self, phase):
        if phase not in self._phases:
            from calendra.lunations import lunar_phases

            self._phases[phase] = lunar_phases(self.lo, self.hi, phase).jd_tt
        return self._phases[phase]

    def solar(self, lon):
        if lon not in self._solar:
            from . import sky

            self._solar[lon] = sky.SolarSource([lon]).crossings(self.lo, self.hi)[0]
        return self._solar[lon]

    def crescent(self, site, criterion):
        from calendra.sites import parse_site

        from . import sky

        key = (site, criterion)
        if key not in self._cres:
            st = parse_site(site)
            self._cres[key] = sky.CrescentSource(st, criterion, {}, None, self.deltat)
            self.notes.append(f"first crescent: {self._cres[key].describe()}")
        return self._cres[key]


def _find(node, kind):
    out = []
    if isinstance(node, Node):
        if node.kind == kind:
            out.append(node)
        for v in node.args.values():
            out.extend(_find(v, kind))
    return out


def _pick(events, t, rel, n, col, ctx, what):
    """Index into sorted ``events`` by relation to instants ``t``."""
    if rel == "after":
        idx = np.searchsorted(events, t, side="right") + (n - 1)
    elif rel == "on or after":
        idx = np.searchsorted(events, t, side="left") + (n - 1)
    elif rel == "before":
        idx = np.searchsorted(events, t, side="left") - n
    elif rel == "on or before":
        idx = np.searchsorted(events, t, side="right") - n
    else:
        i = np.clip(np.searchsorted(events, t), 1, events.size - 1)
        idx = np.where(np.abs(events[i - 1] - t) <= np.abs(events[i] - t), i - 1, i)
    if np.any(idx < 0) or np.any(idx >= events.size):
        raise ParameterError(f"rule, column {col}: {what} falls outside the span computed for these years")
    return events[idx]


def _anchor_instant(ctx, value, rel):
    t, day = value
    if rel == "after":
        from_day = ctx.day_start_tt(day + 1)
    elif rel == "on or after":
        from_day = ctx.day_start_tt(day)
    elif rel == "before":
        from_day = ctx.day_start_tt(day)
    elif rel == "on or before":
        from_day = ctx.day_start_tt(day + 1)
    else:
        from_day = ctx.day_start_tt(day) + 0.5
    return np.where(np.isfinite(t), t, from_day)


def _gregorian_year_start_days(years):
    return jg.gregorian_to_jdn(years, 1, 1)


def _eval(node: Node, ctx: _Context, years, base_cal):
    """Return (instant_tt, day) arrays over ``years`` (of the rule's base: Gregorian or ``base_cal``)."""
    k = node.kind
    nan = np.full(years.shape, np.nan)
    greg = years if base_cal is None else _base_gregorian_year(base_cal, years)
    if k == "offset":
        t, day = _eval(node.args["anchor"], ctx, years, base_cal)
        n = node.args["days"]
        if n != int(n):
            raise ParameterError(f"rule, column {node.col}: offsets are whole days")
        return t + n, day + int(n)
    if k == "weekday":
        t, day = _eval(node.args["anchor"], ctx, years, base_cal)
        w, rel, n = node.args["weekday"], node.args["rel"], node.args["n"]
        if rel == "after":
            d = day + 1 + np.mod(w - weekday(day + 1), 7) + 7 * (n - 1)
        elif rel == "on or after":
            d = day + np.mod(w - weekday(day), 7) + 7 * (n - 1)
        elif rel == "before":
            d = day - 1 - np.mod(weekday(day - 1) - w, 7) - 7 * (n - 1)
        elif rel == "on or before":
            d = day - np.mod(weekday(day) - w, 7) - 7 * (n - 1)
        else:
            d = day - 3 + np.mod(w - weekday(day - 3), 7)
        return nan, d
    if k in ("phase", "solar"):
        events = ctx.phases(node.args["phase"]) if k == "phase" else ctx.solar(node.args["longitude"])
        what = node.args.get("name") or f"{node.args.get('phase')} moon"
        rel = node.args.get("rel")
        if rel is None:
            if k == "solar":
                ev_year = jg.gregorian_from_jdn(np.floor(events + 0.5).astype(np.int64))[0]
                idx = np.searchsorted(ev_year, greg, side="left") + (node.args["n"] - 1)
                if np.any(idx >= events.size) or np.any(ev_year[np.minimum(idx, events.size - 1)] != greg):
                    raise ParameterError(f"rule, column {node.col}: {what} not found in every year")
                t = events[idx]
            else:
                t0 = ctx.day_start_tt(_gregorian_year_start_days(greg))
                t = _pick(events, t0, "on or after", node.args["n"], node.col, ctx, what)
        else:
            anchor = _eval(node.args["anchor"], ctx, years, base_cal)
            t = _pick(events, _anchor_instant(ctx, anchor, rel), rel, node.args["n"], node.col, ctx, what)
        return t, ctx.days_of(t)
    if k == "crescent":
        site = node.args.get("site") or (ctx.site.name if ctx.site is not None else None) or ctx.rule.site
        if site is None:
            raise ParameterError(f"rule, column {node.col}: 'first crescent' needs a site (at SITE)")
        crit = node.args.get("criterion") or ctx.rule.criterion or "yallop"
        src = ctx.crescent(site, crit)
        rel = node.args.get("rel")
        if rel is None:
            t_anchor = ctx.day_start_tt(_gregorian_year_start_days(greg))
            anchor_day = _gregorian_year_start_days(greg)
            rel = "on or after"
        else:
            t_a, anchor_day = _eval(node.args["anchor"], ctx, years, base_cal)
            t_anchor = _anchor_instant(ctx, (t_a, anchor_day), rel)
            if np.all(np.isfinite(t_a)):
                # Place the anchor instant on the crescent site's civil day.
                ut = np.asarray(ctx.deltat.ut_from_tt(t_a), dtype=float)
                anchor_day = np.floor(ut + src.site.offset_days + 0.5).astype(np.int64)
        from . import sky

        k0 = sky.lunation_of_jd(t_anchor)
        cand = k0[:, None] + np.arange(-2, 4)[None, :]
        u, inv = np.unique(cand, return_inverse=True)
        ev = src.values(u, "evening")[inv.reshape(cand.shape)]
        n = node.args.get("n", 1)
        instant = np.all(np.isfinite(t_a)) if node.args.get("rel") is not None else False
        if rel in ("after", "on or after"):
            # After an instant: from the evening of its own civil day; after a day: from the next evening.
            strict = rel == "after" and not instant
            ok = ev > anchor_day[:, None] if strict else ev >= anchor_day[:, None]
            ok = ok & np.isfinite(t_anchor)[:, None]
            first = np.argmax(ok, axis=1) + (n - 1)
        elif rel in ("before", "on or before"):
            ok = ev < anchor_day[:, None] if rel == "before" else ev <= anchor_day[:, None]
            first = ok.shape[1] - 1 - np.argmax(ok[:, ::-1], axis=1) - (n - 1)
        else:
            first = np.argmin(np.abs(ev - anchor_day[:, None]), axis=1)
        if np.any(first < 0) or np.any(first >= ev.shape[1]):
            raise ParameterError(f"rule, column {node.col}: ordinal too large for 'first crescent'")
        return nan, ev[np.arange(ev.shape[0]), first]
    if k == "caldate":
        from calendra.pluginmanager import get_host

        cal = get_host().calendars.get(node.args["calendar"])
        if base_cal is not None and cal.label == base_cal.label:
            cy = years
        else:
            july = jg.gregorian_to_jdn(greg, 7, 1)
            cy = np.asarray(cal.from_jdn(july)[cal.fields[0]])
        m, d, leap = node.args["month"], node.args["day"], node.args["leap"]
        fields = [cy, np.full(cy.shape, m)]
        if len(cal.fields) == 4:
            fields.append(np.full(cy.shape, leap))
        elif leap:
            raise ParameterError(f"rule, column {node.col}: calendar {cal.name} has no leap months")
        elif len(cal.fields) != 3:
            raise ParameterError(f"rule, column {node.col}: calendar {cal.name} has no months and days")
        fields.append(np.full(cy.shape, d))
        ok = np.asarray(cal.is_valid(*fields), dtype=bool)
        day = np.full(cy.shape, -(10 ** 12), dtype=np.int64)
        if ok.any():
            day[ok] = cal.to_jdn(*(f[ok] for f in fields))
        return nan, day
    if k == "civil":
        m, d = node.args["month"], node.args["day"]
        fn = jg.julian_to_jdn if node.args["calendar"] == "julian" else jg.gregorian_to_jdn
        return nan, fn(greg, m, d)
    if k == "easter":
        from .festivals import easter_jdn

        method = node.args["method"]
        opts = {"deltat": ctx.deltat} if method == "astronomical" else {}
        return nan, easter_jdn(greg, method, **opts)
    raise ParameterError(f"rule, column {node.col}: cannot evaluate {k}")


def _base_gregorian_year(cal, years):
    """Gregorian year in which year ``years`` of calendar ``cal`` begins."""
    return jg.gregorian_from_jdn(cal.year_start_jdn(years))[0]


def evaluate_rule(rule, y0: int, y1: int, *, site=None, zone=None, deltat=None) -> RuleResult:
    """Evaluate a rule for the dates falling in Gregorian years y0..y1 (one array evaluation).

    Parameters
    ----------
    rule : Rule or str
    y0, y1 : int
        Gregorian (astronomical) years of the resulting dates.
    site, zone : str, optional
        Default place for dating instants, when the rule names none.
    deltat : delta-T model or name, optional

    Returns
    -------
    RuleResult
        The occurrences in time order.
    """
    from calendra.ephemeris import SPAN_JD
    from calendra.pluginmanager import get_host

    if isinstance(rule, str):
        rule = parse_rule(rule)
    if y1 < y0:
        raise ParameterError(f"the year range {y0}..{y1} is empty")
    lo = max(float(jg.gregorian_to_jdn(y0 - 2, 1, 1)), SPAN_JD[0] + 1.0)
    hi = min(float(jg.gregorian_to_jdn(y1 + 3, 1, 1)), SPAN_JD[1] - 1.0)
    ctx = _Context(rule, lo, hi, site, zone, deltat)
    base_cal = None
    if rule.base not in (None, "@solar"):
        base_cal = get_host().calendars.get(rule.base)
        first = cal_year_of(base_cal, int(jg.gregorian_to_jdn(y0, 1, 1))) - 1
        last = cal_year_of(base_cal, int(jg.gregorian_to_jdn(y1, 12, 31))) + 1
        years = np.arange(first, last + 1)
        ctx.notes.append(f"years of calendar {base_cal.label}")
    else:
        years = np.arange(y0 - 1, y1 + 2)
    t, day = _eval(rule.node, ctx, years, base_cal)
    dlo, dhi = int(jg.gregorian_to_jdn(y0, 1, 1)), int(jg.gregorian_to_jdn(y1, 12, 31))
    keep = (day >= dlo) & (day <= dhi)
    day, t = day[keep], np.asarray(t, dtype=float)[keep]
    day, first_idx = np.unique(day, return_index=True)
    t = t[first_idx]
    ut = np.where(np.isfinite(t), np.asarray(ctx.deltat.ut_from_tt(np.where(np.isfinite(t), t, 2451545.0)),
                                             dtype=float), np.nan)
    return RuleResult(day, ut, rule.calendar, "; ".join(ctx.notes))


def cal_year_of(cal, jdn) -> int:
    return int(np.asarray(cal.from_jdn(jdn)[cal.fields[0]]))
