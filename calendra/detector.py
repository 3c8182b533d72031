"""The event-detector protocol.

A detector searches a time range for one kind of sky event.  It declares
its parameters (name, type, default, help) so that the command line, the
record solver and other hosts can call it without knowing it: the
``calendra events NAME`` command is generated from that declaration.

A detector's :meth:`Detector.search` receives the range as Julian Days in TT,
an optional :class:`calendra.sites.Site`, the delta-T model, a progress
callback and its declared parameters by keyword, and returns an
:class:`calendra.events.EventTable`.  Work over the range must be done as
array jobs (numpy over all candidate times), never a day-by-day Python loop.
"""

from __future__ import annotations

from dataclasses import dataclass
from typing import Any, Callable, ClassVar, Sequence

from .errors import ParameterError

#: Parameter types a detector may declare.
PARAMETER_TYPES = ("float", "int", "str", "bool", "choice")


@dataclass(frozen=True)
class Parameter:
    """One declared detector parameter.

    Attributes
    ----------
    name : str
        Python identifier; the command-line option is ``--name`` with ``_`` as ``-``.
    type : str
        One of :data:`PARAMETER_TYPES`.
    default : Any
        Value used when the parameter is not given (None: required).
    help : str
        One line, with the unit.
    choices : sequence of str
        Allowed values for type ``choice``.
    """

    name: str
    type: str = "float"
    default: Any = None
    help: str = ""
    choices: Sequence[str] = ()
    required: bool = False

    def __post_init__(self):
        if self.type not in PARAMETER_TYPES:
            raise ValueError(f"parameter {self.name}: type must be one of {PARAMETER_TYPES}")
        if self.type == "choice" and not self.choices:
            raise ValueError(f"parameter {self.name}: a choice needs choices")

    def convert(self, value):
        """Return ``value`` converted to the declared type, or raise ParameterError."""
        if value is None:
            return None
        try:
            if self.type == "float":
                return float(value)
            if self.type == "int":
                return int(value)
            if self.type == "bool":
                if isinstance(value, str):
                    low = value.lower()
                    if low in ("1", "true", "yes", "on"):
                        return True
                    if low in ("0", "false", "no", "off"):
                        return False
                    raise ValueError(value)
                return bool(value)
            if self.type == "choice":
                if str(value) not in self.choices:
                    raise ValueError(value)
                return str(value)
            return str(value)
        except (TypeError, ValueError):
            allowed = f" (one of {', '.join(self.choices)})" if self.type == "choice" else ""
            raise ParameterError(f"parameter {self.name}: {value!r} is not a valid {self.type}{allowed}") from None


class Detector:
    """Base class of event detectors.

    Subclasses set :attr:`name`, :attr:`title`, :attr:`parameters`,
    :attr:`needs_site` and implement :meth:`_search`.
    """

    name: ClassVar[str] = ""
    aliases: ClassVar[tuple[str, ...]] = ()
    title: ClassVar[str] = ""
    description: ClassVar[str] = ""
    parameters: ClassVar[tuple[Parameter, ...]] = ()
    needs_site: ClassVar[bool] = False
    #: Longest span (days) one search may cover; None: no limit.
    max_span_days: ClassVar[float | None] = None

    def resolve_parameters(self, given: dict) -> dict:
        """Return all declared parameters with defaults filled in and types checked."""
        known = {p.name: p for p in self.parameters}
        unknown = [k for k in given if k not in known]
        if unknown:
            raise ParameterError(f"detector {self.name} has no parameter {unknown[0]!r} "
                                 f"(parameters: {', '.join(known) or 'none'})")
        out = {}
        for p in self.parameters:
            value = given.get(p.name, p.default)
            if value is None and p.required:
                raise ParameterError(f"detector {self.name} needs --{p.name.replace('_', '-')}")
            out[p.name] = p.convert(value)
        return out

    def search(self, jd_tt_start: float, jd_tt_end: float, site=None, deltat=None,
               progress: Callable[[int, int, str], None] | None = None, **params):
        """Find events between two Julian Days (TT) and return an EventTable.

        Parameters
        ----------
        jd_tt_start, jd_tt_end : float
            The range, Julian Days in TT.
        site : calendra.sites.Site or None
            Observer, required when :attr:`needs_site`.
        deltat : delta-T model or None
            Model used for the UT column (default model when None).
        progress : callable(done, total, label) or None
            Called as the work advances.
        **params
            The detector's declared parameters.
        """
        if jd_tt_end <= jd_tt_start:
            raise ParameterError("the end of the range must come after its start")
        if self.needs_site and site is None:
            raise ParameterError(f"detector {self.name} needs a site (--site NAME or LAT,LON[,ELEVATION_M])")
        if self.max_span_days and jd_tt_end - jd_tt_start > self.max_span_days:
            raise ParameterError(f"detector {self.name} searches at most {self.max_span_days:g} days at once")
        if deltat is None:
            from .deltat import get_model, DEFAULT_MODEL

            deltat = get_model(DEFAULT_MODEL)
        values = self.resolve_parameters(params)
        return self._search(jd_tt_start, jd_tt_end, site=site, deltat=deltat, progress=progress, **values)

    def _search(self, jd_tt_start, jd_tt_end, *, site, deltat, progress, **params):  # pragma: no cover
        raise NotImplementedError

    def describe(self) -> dict:
        """Return a dict describing the detector and its parameters."""
        return {
            "name": self.name,
            "title": self.title,
            "description": self.description,
            "needs_site": self.needs_site,
            "parameters": [
                {"name": p.name, "type": p.type, "default": p.default, "help": p.help,
                 "choices": list(p.choices)} for p in self.parameters
            ],
        }
