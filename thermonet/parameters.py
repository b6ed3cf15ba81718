"""Parameters of a network: named numbers declared once and varied over a table of rows.

A :class:`Param` is a named number with a default and a unit. Arithmetic on parameters
(``+ − × ÷ **``) and :meth:`Expr.apply` (any function of numpy arrays, for nonlinear maps such
as a U-value from an insulation thickness) give an :class:`Expr`, which a builder or
:class:`thermonet.Network` takes wherever it takes a number: a capacitance, a conductance, an
airflow, a source's scale, a thermostat's setpoints and capacities, a switch's thresholds and
factors. A time series times an expression (a :class:`ScaledSeries`, e.g. the solar gain per
m² of aperture × area × g-value) is a source's power.

The network is then *structured* at the defaults (which links exist, how many nodes an RC
chain has) and its numbers are evaluated for all rows of a table at once
(:func:`evaluate`, vectorised over the rows with numpy), so a design study runs a table of
values without building a network per row (:func:`thermonet.studies.run_variants` with a
parametric network instead of a build function).

Decisions that shape the network (``if area > 0: add a link``) are made at the defaults and
must be written so (:func:`default`); comparing an expression with a number, or turning it
into a plain float, raises an error naming its parameters, so that no row is silently run
with another row's structure.

A parametric network travels to process pools and dask workers by pickling: functions given
to :meth:`Expr.apply` must then be importable (defined at module level, not a lambda).
Model files hold plain numbers only (:func:`thermonet.io.save_model` refuses a parametric
network; save ``net.with_values(...)``).

Examples
--------
>>> from thermonet.parameters import Param, evaluate
>>> area = Param("area", 3.0, "m²")
>>> g = Param("g", 0.5, "-")
>>> aperture = area * g * 0.7
>>> aperture
area * g * 0.7
>>> evaluate(aperture, {"area": [2.0, 4.0], "g": [0.5, 0.6]}).round(6).tolist()
[0.7, 1.68]
"""

from __future__ import annotations

import math
import numbers
from collections.abc import Mapping

import numpy as np
import pandas as pd

from thermonet.errors import NetworkError, ParameterError

__all__ = ["Expr", "Param", "ScaledSeries", "default", "evaluate", "evaluate_many",
           "is_parametric", "parameters_of", "refuse_parameters", "table_values"]

_SYMBOL = {"add": "+", "sub": "-", "mul": "*", "div": "/", "pow": "**"}
_PRECEDENCE = {"add": 1, "sub": 1, "mul": 2, "div": 2, "neg": 3, "pow": 4}


def _is_number(x) -> bool:
    return isinstance(x, numbers.Real) and not isinstance(x, bool)


class Expr:
    """An arithmetic expression of :class:`Param` objects and numbers (see the module
    docstring); built by arithmetic, not called directly.

    Parameters
    ----------
    op : str
        ``"param"``, ``"add"``, ``"sub"``, ``"mul"``, ``"div"``, ``"pow"``, ``"neg"`` or
        ``"apply"``.
    args : tuple
        Operands: expressions or floats (``"apply"``: the function, the operand, a label).
    """

    __slots__ = ("op", "args", "_default")
    #: pandas and numpy hand ``Series * expr`` and ``ndarray * expr`` to this class.
    __pandas_priority__ = 5000
    __array_ufunc__ = None

    def __init__(self, op: str, args: tuple):
        self.op, self.args, self._default = op, args, None

    # ---------------------------------------------------------------- arithmetic
    def _binary(self, op, other, reverse=False):
        if isinstance(other, pd.Series):
            if op != "mul":
                raise ParameterError(
                    f"{self!r} {_SYMBOL[op]} a Series: only a product Series × expression is a "
                    "parametric time series (a source's power); write series * expr")
            return ScaledSeries(other, self)
        if isinstance(other, ScaledSeries):
            return NotImplemented
        if isinstance(other, np.ndarray) and other.ndim == 0:
            other = float(other)
        if _is_number(other):
            other = float(other)
            if (op == "add" and other == 0.0) or (op == "mul" and other == 1.0):
                return self        # x + 0 and x·1 are x exactly (e.g. the start of sum())
        elif not isinstance(other, Expr):
            if isinstance(other, np.ndarray):
                raise ParameterError(
                    f"{self!r} {_SYMBOL[op]} an array: an expression is one number per row; "
                    "combine it with the array element by element (e.g. [expr * x for x in "
                    "arr])")
            return NotImplemented
        return Expr(op, (other, self) if reverse else (self, other))

    def __add__(self, other):
        return self._binary("add", other)

    def __radd__(self, other):
        return self._binary("add", other, reverse=True)

    def __sub__(self, other):
        return self._binary("sub", other)

    def __rsub__(self, other):
        return self._binary("sub", other, reverse=True)

    def __mul__(self, other):
        return self._binary("mul", other)

    def __rmul__(self, other):
        return self._binary("mul", other, reverse=True)

    def __truediv__(self, other):
        return self._binary("div", other)

    def __rtruediv__(self, other):
        return self._binary("div", other, reverse=True)

    def __pow__(self, other):
        return self._binary("pow", other)

    def __rpow__(self, other):
        return self._binary("pow", other, reverse=True)

    def __neg__(self):
        return Expr("neg", (self,))

    def __pos__(self):
        return self

    def apply(self, func, label: str | None = None) -> Expr:
        """``func(self)``: a nonlinear map of the expression, evaluated on arrays.

        Parameters
        ----------
        func : callable
            Takes a 1-D numpy array of the expression's values (one per row, in the unit of
            the expression) and returns an array of the same length (any unit), e.g.
            ``lambda d: 1 / (0.5 + d / 0.035)`` for a U-value [W/(m²K)] from an insulation
            thickness d [m]. Plain numpy arithmetic does this; a function of one float only
            can be wrapped in :func:`numpy.vectorize`.
        label : str, optional
            Name shown in the readable form; default the function's ``__name__``.

        Returns
        -------
        Expr
        """
        if not callable(func):
            raise TypeError(f"apply() takes a function of an array, got {type(func).__name__}")
        name = label or getattr(func, "__name__", "f")
        return Expr("apply", (func, self, str(name)))

    # ------------------------------------------------------------ no silent numbers
    def _refuse(self, what):
        names = ", ".join(repr(n) for n in parameters_of(self))
        raise TypeError(
            f"{what} of the parameter expression {self!r} (parameter(s) {names}): its value "
            "differs from row to row, so it cannot decide the shape of a network here. Use "
            "thermonet.parameters.default(x) where the default is meant, or pass a plain "
            "number")

    def __float__(self):
        self._refuse("float()")

    def __int__(self):
        self._refuse("int()")

    def __bool__(self):
        self._refuse("truth value")

    def __lt__(self, other):
        self._refuse("comparison (<)")

    def __le__(self, other):
        self._refuse("comparison (<=)")

    def __gt__(self, other):
        self._refuse("comparison (>)")

    def __ge__(self, other):
        self._refuse("comparison (>=)")

    def __round__(self, ndigits=None):
        self._refuse("round()")

    __hash__ = object.__hash__

    # ------------------------------------------------------------------- reading
    @property
    def default(self) -> float:
        """The value at every parameter's default (a float in the expression's unit)."""
        if self._default is None:
            self._default = float(np.asarray(_eval(self, None, {}), dtype=float).reshape(-1)[0])
        return self._default

    def __repr__(self):
        return _text(self)

    def __reduce__(self):
        return (Expr, (self.op, self.args))


class Param(Expr):
    """A named parameter: a number with a default and a unit, varied over the rows of a table.

    Parameters
    ----------
    name : str
        The name; the column of the table of values (:func:`thermonet.studies.run_variants`).
    default : float
        Value used to structure the network and in a plain simulation [``unit``].
    unit : str, default "-"
        Unit of the values, e.g. ``"m²"``, ``"W/(m²K)"`` (for messages and the readable form).
    low, high : float, optional
        Bounds of allowed values [``unit``], checked for every row of a table.

    Examples
    --------
    >>> from thermonet.parameters import Param
    >>> Param("g_value", 0.5, "-", low=0.0, high=1.0)
    Param('g_value', 0.5, '-')
    """

    __slots__ = ("name", "unit", "low", "high")

    def __init__(self, name: str, default: float, unit: str = "-", *, low: float | None = None,
                 high: float | None = None):
        if not isinstance(name, str) or not name.isidentifier():
            raise ParameterError(f"a parameter name must be a Python identifier (it is a column "
                                 f"of the table and a keyword), got {name!r}")
        if not _is_number(default) or not math.isfinite(float(default)):
            raise ParameterError(f"parameter {name!r}: default must be a finite number "
                                 f"[{unit}], got {default!r}")
        for b, what in ((low, "low"), (high, "high")):
            if b is not None and (not _is_number(b) or math.isnan(float(b))):
                raise ParameterError(f"parameter {name!r}: {what} must be a number [{unit}], "
                                     f"got {b!r}")
        lo = -math.inf if low is None else float(low)
        hi = math.inf if high is None else float(high)
        if not lo <= float(default) <= hi:
            raise ParameterError(f"parameter {name!r}: default {default!r} lies outside its "
                                 f"bounds [{lo:g}, {hi:g}] {unit}")
        super().__init__("param", (name,))
        self.name, self.unit, self.low, self.high = name, str(unit), lo, hi
        self._default = float(default)

    def __repr__(self):
        return f"Param({self.name!r}, {self._default!r}, {self.unit!r})"

    def __reduce__(self):
        low = None if self.low == -math.inf else self.low
        high = None if self.high == math.inf else self.high
        return (_make_param, (self.name, self._default, self.unit, low, high))


def _make_param(name, default_, unit, low, high):
    return Param(name, default_, unit, low=low, high=high)


class ScaledSeries:
    """A time series times a parameter expression: ``series × scale``.

    A source's power given so (e.g. ``gain_per_m2 * area * g``) keeps the series once and
    scales it per row (the scale is the source's factor in the compiled network).

    Parameters
    ----------
    series : pandas.Series
        The time series [its unit, e.g. W per unit of ``scale``].
    scale : Expr or float
        The factor [unit of the product / unit of the series].
    """

    __pandas_priority__ = 5000
    __array_ufunc__ = None

    def __init__(self, series: pd.Series, scale):
        if not isinstance(series, pd.Series):
            raise TypeError(f"ScaledSeries takes a pandas Series, got {type(series).__name__}")
        self.series, self.scale = series, scale

    def __mul__(self, other):
        if isinstance(other, (Expr,)) or _is_number(other):
            return ScaledSeries(self.series, self.scale * other)
        raise ParameterError(f"{self!r} × {type(other).__name__}: a parametric series can only "
                             "be scaled by a number or a parameter expression")

    __rmul__ = __mul__

    def __truediv__(self, other):
        if isinstance(other, (Expr,)) or _is_number(other):
            return ScaledSeries(self.series, self.scale / other)
        raise ParameterError(f"{self!r} ÷ {type(other).__name__}: divide by a number or a "
                             "parameter expression only")

    def __neg__(self):
        return ScaledSeries(self.series, -self.scale)

    def __add__(self, other):
        raise ParameterError(
            f"{self!r} + {type(other).__name__}: a sum of series scaled by different parameter "
            "expressions is not one series times one expression; add one source per term")

    __radd__ = __sub__ = __rsub__ = __add__

    def rename(self, name) -> ScaledSeries:
        """The same product with the series renamed.

        Parameters
        ----------
        name : hashable
            New name of the series.
        """
        return ScaledSeries(self.series.rename(name), self.scale)

    @property
    def index(self) -> pd.DatetimeIndex:
        """The series' index."""
        return self.series.index

    def at_default(self) -> pd.Series:
        """``series × default(scale)`` [unit of the product]."""
        return self.series * default(self.scale)

    def __repr__(self):
        name = self.series.name if self.series.name is not None else "series"
        return f"<{name}> * ({_text(self.scale) if isinstance(self.scale, Expr) else self.scale})"


# ==================================================================== reading functions
def is_parametric(x) -> bool:
    """Whether ``x`` is a parameter expression or a parametric series.

    Parameters
    ----------
    x : object
        Anything.
    """
    return isinstance(x, (Expr, ScaledSeries))


def default(x):
    """``x`` at the parameters' defaults: a float for an expression, a Series for a
    :class:`ScaledSeries`, ``x`` itself otherwise.

    Parameters
    ----------
    x : Expr, ScaledSeries, float, Series or None
        A value that may be parametric (its unit is kept).
    """
    if isinstance(x, Expr):
        return x.default
    if isinstance(x, ScaledSeries):
        return x.at_default()
    return x


def parameters_of(*xs) -> dict:
    """The parameters that expressions depend on, by name (first seen first).

    Parameters
    ----------
    *xs : Expr, ScaledSeries or anything
        Values to search; non-parametric ones contribute nothing.

    Returns
    -------
    dict of str to Param

    Raises
    ------
    ParameterError
        Two different parameters share a name (different default, unit or bounds).
    """
    found: dict = {}
    stack = list(reversed(xs))
    while stack:
        x = stack.pop()
        if isinstance(x, ScaledSeries):
            stack.append(x.scale)
        elif isinstance(x, Param):
            old = found.get(x.name)
            if old is None:
                found[x.name] = x
            elif old is not x and (old._default, old.unit, old.low, old.high) != (
                    x._default, x.unit, x.low, x.high):
                raise ParameterError(f"two different parameters are named {x.name!r} ({old!r} "
                                     f"and {x!r}); give them different names or use one object")
        elif isinstance(x, Expr):
            stack.extend(reversed([a for a in x.args if isinstance(a, Expr)]))
    return found


def _eval(x, values, memo):
    """Value of ``x`` with parameter values ``values`` (None: defaults); arrays or floats."""
    if not isinstance(x, Expr):
        return x
    key = id(x)
    if key in memo:
        return memo[key]
    op, a = x.op, x.args
    if op == "param":
        out = x._default if values is None else values[x.name]
    elif op == "neg":
        out = -_eval(a[0], values, memo)
    elif op == "apply":
        inner = np.asarray(_eval(a[1], values, memo), dtype=float)
        arr = np.atleast_1d(inner)
        res = np.asarray(a[0](arr), dtype=float)
        if res.shape != arr.shape:
            raise ParameterError(f"{a[2]}() applied to {_text(a[1])} returned shape "
                                 f"{res.shape} for {arr.shape[0]} row(s); it must work element "
                                 "by element on an array (wrap it in numpy.vectorize)")
        out = res if inner.ndim else float(res[0])
    else:
        u, v = _eval(a[0], values, memo), _eval(a[1], values, memo)
        with np.errstate(divide="ignore", invalid="ignore", over="ignore"):
            if op == "add":
                out = u + v
            elif op == "sub":
                out = u - v
            elif op == "mul":
                out = u * v
            elif op == "div":
                out = np.divide(u, v)
            else:
                out = np.power(u, v)
    memo[key] = out
    return out


def evaluate(x, values, n: int | None = None) -> np.ndarray:
    """Values of ``x`` for every row of a table, at once (numpy arrays).

    Parameters
    ----------
    x : Expr or float
        The expression (a number gives that number on every row).
    values : mapping of str to array_like, or pandas.DataFrame
        Each parameter's value per row (column name = parameter name) [its unit].
    n : int, optional
        Number of rows (default: the length of the columns).

    Returns
    -------
    ndarray (n,)
        The expression per row [its unit]; NaN or inf where the arithmetic gives them
        (e.g. division by zero): callers check.

    Raises
    ------
    ParameterError
        A parameter of ``x`` has no column in ``values`` (named, with the known columns).
    """
    cols = {str(k): np.asarray(v, dtype=float).reshape(-1) for k, v in
            (values.items() if isinstance(values, (Mapping, pd.DataFrame)) else ())}
    if n is None:
        n = len(next(iter(cols.values()))) if cols else 1
    missing = [p for p in parameters_of(x) if p not in cols]
    if missing:
        raise ParameterError(f"no values for parameter(s) {missing} of {x!r}; the table has "
                             f"columns {sorted(cols)}")
    return np.broadcast_to(np.asarray(_eval(x, cols, {}), dtype=float), (n,)).copy()


def evaluate_many(xs, values, n: int) -> list:
    """:func:`evaluate` for several expressions sharing their common parts (one pass each).

    Parameters
    ----------
    xs : sequence of Expr or float
        The expressions.
    values : mapping of str to ndarray (n,)
        Each parameter's value per row [its unit] (e.g. from :func:`table_values`).
    n : int
        Number of rows.

    Returns
    -------
    list of ndarray (n,)
        One array per expression, in its unit.
    """
    cols = {str(k): np.asarray(v, dtype=float).reshape(-1) for k, v in values.items()}
    missing = [p for p in parameters_of(*xs) if p not in cols]
    if missing:
        raise ParameterError(f"no values for parameter(s) {missing}; the table has columns "
                             f"{sorted(cols)}")
    memo: dict = {}
    return [np.broadcast_to(np.asarray(_eval(x, cols, memo), dtype=float), (n,)) for x in xs]


def table_values(params: Mapping, table: pd.DataFrame) -> dict:
    """Checked columns of ``table`` for the parameters ``params`` (one array per parameter).

    Parameters
    ----------
    params : mapping of str to Param
        The parameters a network declares (:func:`parameters_of`).
    table : pandas.DataFrame
        One row per variant, one column per parameter [the parameter's unit].

    Returns
    -------
    dict of str to ndarray (n,)

    Raises
    ------
    ParameterError
        A column that is no parameter, a parameter without a column, a value that is not a
        finite number or lies outside the parameter's bounds (the row is named).
    """
    if not isinstance(table, pd.DataFrame):
        raise TypeError(f"the table of parameter values must be a pandas DataFrame, got "
                        f"{type(table).__name__}")
    unknown = [c for c in table.columns if c not in params]
    if unknown:
        raise ParameterError(f"table column(s) {unknown} are not parameters of the network; "
                             f"its parameters: {sorted(params)}. Drop the column, or declare "
                             "the parameter with thermonet.parameters.Param and use it")
    missing = [p for p in params if p not in table.columns]
    if missing:
        shown = ", ".join(f"{p}={params[p].default:g} {params[p].unit}" for p in missing)
        raise ParameterError(f"the table has no column for parameter(s) {missing}; add a column "
                             f"per parameter (its default: {shown})")
    out = {}
    for name, p in params.items():
        col = table[name]
        try:
            arr = col.to_numpy(dtype=float)
        except (TypeError, ValueError) as exc:
            raise ParameterError(f"table column {name!r} must hold numbers [{p.unit}] ({exc})"
                                 ) from None
        bad = ~np.isfinite(arr) | (arr < p.low) | (arr > p.high)
        if bad.any():
            i = int(np.argmax(bad))
            raise ParameterError(
                f"table column {name!r}, row {table.index[i]!r}: {arr[i]!r} is not a finite "
                f"number within [{p.low:g}, {p.high:g}] {p.unit}"
                + (f" ({int(bad.sum())} rows in all)" if bad.sum() > 1 else ""))
        out[name] = arr
    return out


def refuse_parameters(net) -> None:
    """Raise when ``net`` has parameters: one run needs plain numbers.

    Parameters
    ----------
    net : Network
        The network to be simulated or compiled on its own.

    Raises
    ------
    NetworkError
        The network has parameters (named), with the two ways to run it.
    """
    params = getattr(net, "parameters", None)
    if params:
        raise NetworkError(
            f"network {net.name!r} has parameters {sorted(params)}: run it over a table of "
            "their values with thermonet.studies.run_variants(net, table, weather), or simulate "
            "one set of values with net.with_values(...) (the defaults: net.with_values())")



# ========================================================================= readable form
def _operand(x, parent_prec, right=False):
    if not isinstance(x, Expr):
        return f"{x!r}"
    s = _text(x)
    prec = _PRECEDENCE.get(x.op, 5)
    if prec < parent_prec or (right and prec == parent_prec):
        return f"({s})"
    return s


def _text(x) -> str:
    """The readable form of an expression (Python syntax; functions by their label)."""
    if not isinstance(x, Expr):
        return repr(x)
    if x.op == "param":
        return x.args[0]
    if x.op == "neg":
        return f"-{_operand(x.args[0], _PRECEDENCE['neg'])}"
    if x.op == "apply":
        return f"{x.args[2]}({_text(x.args[1])})"
    prec = _PRECEDENCE[x.op]
    left = _operand(x.args[0], prec + (1 if x.op == "pow" else 0))
    right = _operand(x.args[1], prec, right=x.op != "pow")
    return f"{left} {_SYMBOL[x.op]} {right}"
