"""Conditions for switched controls (window opening, night ventilation, movable shading).

A condition compares temperatures [°C] or signals with thresholds. Conditions combine with
``&`` (and) and ``|`` (or); internally they are kept as an OR of AND-clauses so the compiled
stepping loop can evaluate them without Python.

At the start of each step a condition sees:

* free nodes: their temperature at the end of the previous step;
* boundaries: their temperature over the current step;
* signals (a pandas Series aligned to the weather, e.g. irradiance on a window [W/m²] or a
  0/1 time-of-day mask): the current step's value.

Examples
--------
>>> import thermonet as tn
>>> night = tn.hours(22, 7)                                  # doctest: +SKIP
>>> cond = tn.above("room", 24.0) & tn.warmer("room", "outdoor", by=2.0) & night  # doctest: +SKIP
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from thermonet.parameters import Expr


@dataclass(frozen=True)
class Term:
    """``value(a) − value(b) > threshold`` (op ``">"``) or ``< threshold`` (op ``"<"``).

    ``a`` and ``b`` are node/boundary names or :class:`Signal` objects; ``b`` may be None (0).

    Attributes
    ----------
    a, b : str, Signal or None
        What is compared (temperatures [°C] of nodes, or signal values).
    op : {">", "<"}
        Comparison.
    threshold : float or Expr
        Threshold of ``a − b`` in their unit ([K] for two nodes); a parameter expression
        (:mod:`thermonet.parameters`) varies it per row of a study.
    """

    a: object
    b: object
    op: str
    threshold: float


class Signal:
    """A named time series used in conditions (aligned to the weather index).

    Parameters
    ----------
    series : pandas.Series
        Values (any unit) with a DatetimeIndex, finite.
    name : str, default "signal"
        Label in messages.
    """

    def __init__(self, series: pd.Series, name: str = "signal"):
        if not isinstance(series, pd.Series) or not isinstance(series.index, pd.DatetimeIndex):
            raise TypeError("a Signal needs a pandas Series with a DatetimeIndex")
        values = np.asarray(series, dtype=float)
        if not np.isfinite(values).all():
            raise ValueError(f"signal {name!r} has NaN/inf values; fill them first")
        self.series = series.astype(float)
        self.name = name

    def __repr__(self):
        return f"Signal({self.name!r})"


class Condition:
    """An OR of AND-clauses of :class:`Term` objects (build them with :func:`above`,
    :func:`warmer`, :func:`hours` ... and combine with ``&`` and ``|``).

    Parameters
    ----------
    clauses : sequence of sequence of Term
        The condition holds when all terms of at least one clause hold.
    """

    def __init__(self, clauses):
        self.clauses = tuple(tuple(c) for c in clauses)

    def __and__(self, other):
        if not isinstance(other, Condition):
            return NotImplemented
        return Condition([a + b for a in self.clauses for b in other.clauses])

    def __or__(self, other):
        if not isinstance(other, Condition):
            return NotImplemented
        return Condition(self.clauses + other.clauses)

    def terms(self):
        """All terms, clause by clause."""
        return [t for c in self.clauses for t in c]

    def node_refs(self):
        """Names of nodes and boundaries the condition reads."""
        return sorted({r for t in self.terms() for r in (t.a, t.b) if isinstance(r, str)})

    def __repr__(self):
        def term(t):
            b = "" if t.b is None else f" − {t.b}"
            thr = f"{t.threshold!r}" if isinstance(t.threshold, Expr) else f"{t.threshold:g}"
            return f"({t.a}{b} {t.op} {thr})"
        return " | ".join(" & ".join(term(t) for t in c) for c in self.clauses)


def _ref(x):
    if isinstance(x, pd.Series):
        return Signal(x, name=str(x.name) if x.name is not None else "signal")
    if isinstance(x, (str, Signal)):
        return x
    raise TypeError(f"a condition refers to a node/boundary name, a Signal or a Series; got {x!r}")


def _threshold(x):
    """A threshold as a float, or a parameter expression kept as it is."""
    return x if isinstance(x, Expr) else float(x)


def above(ref, threshold: float) -> Condition:
    """True while the temperature (or signal) of ``ref`` is above ``threshold``.

    Parameters
    ----------
    ref : str or Signal
        Node name (its temperature [°C]) or a Signal (any unit).
    threshold : float or Expr
        Threshold in the unit of ``ref`` ([°C] for a node); a parameter expression varies
        it per row of a study (:mod:`thermonet.parameters`).
    """
    return Condition([[Term(_ref(ref), None, ">", _threshold(threshold))]])


def below(ref, threshold: float) -> Condition:
    """True while the temperature (or signal) of ``ref`` is below ``threshold``.

    Parameters
    ----------
    ref : str or Signal
        Node name (its temperature [°C]) or a Signal (any unit).
    threshold : float or Expr
        Threshold in the unit of ``ref`` ([°C] for a node); a parameter expression varies
        it per row of a study (:mod:`thermonet.parameters`).
    """
    return Condition([[Term(_ref(ref), None, "<", _threshold(threshold))]])


def warmer(a, b, by: float = 0.0) -> Condition:
    """True while ``a`` is warmer than ``b`` by more than ``by`` [K].

    Parameters
    ----------
    a, b : str
        Node or boundary names.
    by : float or Expr, default 0.0
        Required difference T_a − T_b [K].
    """
    return Condition([[Term(_ref(a), _ref(b), ">", _threshold(by))]])


def colder(a, b, by: float = 0.0) -> Condition:
    """True while ``a`` is colder than ``b`` by more than ``by`` [K].

    Parameters
    ----------
    a, b : str
        Node or boundary names.
    by : float or Expr, default 0.0
        Required difference T_b − T_a [K].
    """
    return Condition([[Term(_ref(a), _ref(b), "<", -_threshold(by))]])


def when(mask: pd.Series) -> Condition:
    """True on the steps where the boolean (or 0/1) Series ``mask`` is true.

    Parameters
    ----------
    mask : pandas.Series
        Boolean (or 0/1) values on the weather index.
    """
    return Condition([[Term(Signal(mask.astype(float), name=str(mask.name or "mask")), None,
                            ">", 0.5)]])


def hours(start: int, end: int, index: pd.DatetimeIndex | None = None) -> Condition:
    """True in the clock hours from ``start`` to ``end`` (local time of the index).

    With the hour-ending convention a row labelled 23:00 covers 22:00–23:00, so
    ``hours(22, 7)`` is true for rows labelled 23:00 … 07:00. The mask is built when the
    network is compiled against the weather index unless ``index`` is given here.

    Parameters
    ----------
    start, end : int
        Clock hours 0–24 [h]; the window wraps midnight when ``start > end``.
    index : pandas.DatetimeIndex, optional
        Build the mask now on this index instead of at compile time.
    """
    for v, what in ((start, "start"), (end, "end")):
        if not (isinstance(v, (int, np.integer)) and 0 <= v <= 24):
            raise ValueError(f"hours(): {what} must be a whole hour 0..24, got {v!r}")
    return Condition([[Term(HourWindow(int(start), int(end)), None, ">", 0.5)]])


class HourWindow:
    """A clock-hour window evaluated on the simulation index (interval mid-points).

    Parameters
    ----------
    start, end : int
        Clock hours [h]; the window wraps midnight when ``start > end``.
    """

    def __init__(self, start: int, end: int):
        self.start, self.end = start, end
        self.name = f"hours {start:02d}-{end:02d}"

    def values(self, index: pd.DatetimeIndex, step: pd.Timedelta) -> np.ndarray:
        """1.0 in the rows whose interval mid-point falls in the window, else 0.0 [-].

        Parameters
        ----------
        index : pandas.DatetimeIndex
            Simulation index (interval ending).
        step : pandas.Timedelta
            Its step.
        """
        mid = index - step / 2
        h = mid.hour + mid.minute / 60.0
        if self.start <= self.end:
            inside = (h >= self.start) & (h < self.end)
        else:
            inside = (h >= self.start) | (h < self.end)
        return np.asarray(inside, dtype=float)

    def __repr__(self):
        return f"HourWindow({self.start}, {self.end})"
