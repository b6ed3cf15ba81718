"""Charts of simulation results: energy balance by path, temperatures, comfort, options.

Every function draws on a matplotlib :class:`~matplotlib.axes.Axes` and returns
``(fig, ax)`` so a notebook can restyle, annotate or save the chart. Pass ``ax=`` to draw into
an existing figure (a subplot grid, a report layout); without it a new figure is made with
:func:`matplotlib.pyplot.subplots` (constrained layout).

Colours
-------
One palette for the whole library. Each heat path keeps its colour in every chart
(:data:`PATH_COLORS`, :func:`path_colors`): solar gains are always orange, heating
vermillion, cooling blue, glazing sky blue, opaque fabric indigo, and so on. Path names the
palette does not know take colours from :data:`FALLBACK_COLORS`, chosen from the sorted set of
unknown names so the same names get the same colours in every chart. Temperatures and other
series use :data:`SERIES_COLORS` (a column named after a path keeps the path's colour). The
colours come from the colour-blind-safe sets of Okabe & Ito (2008) and Tol (2021); charts never
rely on colour alone: losses and gains sit on opposite sides of zero, lines differ in style,
and every series is labelled.

Time axis (read this once)
--------------------------
As everywhere in thermonet, each row describes the interval that ENDS at its label (hour
ending). Line charts of temperatures plot each value at its label (for
:attr:`thermonet.Results.temperatures` these are end-of-step instants). The day-by-hour
:func:`heatmap` places each row in the cell of its interval's MID-POINT (label − step/2), so
the row labelled 00:00 of 2 June (the hour 23:00–24:00) is drawn as hour 23 of 1 June. Times
are shown in the index's own time zone.

Functions
---------
:func:`path_colors`
    the colour of each heat path.
:func:`balance_bars`, :func:`balance_annual`
    energy balance of a control volume by path, per period and over the whole period.
:func:`temperature_bands`
    temperatures against a comfort band or fixed thresholds.
:func:`heatmap`
    day-by-hour map of a temperature or a flow.
:func:`duration_curve`
    values sorted in descending order against the hours they are reached or exceeded.
:func:`adaptive_scatter`
    operative temperature against the running mean outdoor temperature with the
    EN 16798-1 adaptive limits.
:func:`compare_options`
    one metric of several design options as horizontal bars.

References
----------
Okabe, M. and Ito, K. (2008), Color Universal Design (CUD): how to make figures and
presentations that are friendly to colorblind people, J*Fly (jfly.uni-koeln.de) — the
eight-colour set (from memory).
Tol, P. (2021), Colour schemes, SRON technical note SRON/EPS/TN/09-002, issue 3.2 — the
"muted" qualitative set (from memory).
van der Walt, S. and Smith, N. (2015), A better default colormap for matplotlib, SciPy 2015
— viridis. Brewer, C. A. — ColorBrewer diverging "PuOr" (colour-blind safe).
"""

from __future__ import annotations

import zlib
from collections.abc import Iterable, Mapping, Sequence
from numbers import Real

import matplotlib.dates as mdates
import matplotlib.pyplot as plt
import numpy as np
import pandas as pd
from matplotlib.colors import Normalize

from thermonet import comfort
from thermonet.errors import ScheduleError
from thermonet.labels import label as words
from thermonet.labels import unit_of

__all__ = [
    "FALLBACK_COLORS",
    "PATH_COLORS",
    "SERIES_COLORS",
    "adaptive_scatter",
    "balance_annual",
    "balance_bars",
    "compare_options",
    "duration_curve",
    "heatmap",
    "path_colors",
    "temperature_bands",
]

# --------------------------------------------------------------------------------------------
# palette
# --------------------------------------------------------------------------------------------
#: Fixed colour of each common heat path (hex RGB). Okabe & Ito (2008) colours for the paths
#: most charts show, Tol (2021) "muted" colours for the rest; grey for storage.
PATH_COLORS: dict[str, str] = {
    "solar": "#E69F00",  # orange (Okabe–Ito)
    "internal": "#CC79A7",  # reddish purple (Okabe–Ito)
    "heating": "#D55E00",  # vermillion (Okabe–Ito)
    "cooling": "#0072B2",  # blue (Okabe–Ito)
    "glazing": "#56B4E9",  # sky blue (Okabe–Ito)
    "ventilation": "#009E73",  # bluish green (Okabe–Ito)
    "opaque": "#332288",  # indigo (Tol muted)
    "infiltration": "#882255",  # wine (Tol muted)
    "ground": "#999933",  # olive (Tol muted)
    "buffer": "#44AA99",  # teal (Tol muted)
    "adjacent": "#DDCC77",  # sand (Tol muted)
    "window_ventilation": "#BBCC33",  # pear (Tol light)
    "night_ventilation": "#661100",  # brown
    "storage": "#AAAAAA",  # neutral grey: heat released by / stored in the fabric
    "residual": "#000000",
}

#: Colours for path names not in :data:`PATH_COLORS`, none of them used there.
FALLBACK_COLORS: tuple[str, ...] = (
    "#CC6677",  # rose (Tol muted)
    "#117733",  # green (Tol muted)
    "#88CCEE",  # cyan (Tol muted)
    "#6699CC",  # steel blue
    "#F0E442",  # yellow (Okabe–Ito)
    "#AA4499",  # purple (Tol muted)
    "#3969AC",  # denim
    "#E68310",  # amber
)

#: Line colours for temperatures and other series that are not heat paths (Okabe–Ito order,
#: then the fallback colours).
SERIES_COLORS: tuple[str, ...] = (
    "#0072B2",
    "#D55E00",
    "#009E73",
    "#CC79A7",
    "#E69F00",
    "#56B4E9",
    "#000000",
    *FALLBACK_COLORS,
)

_OUTDOOR_COLOR = "#777777"
_BAND_COLOR = "#009E73"
_THRESHOLD_STYLES = ("--", "-.", ":", (0, (5, 1, 1, 1, 1, 1)))
_UNIT_SCALE = {"Wh": 1000.0, "kWh": 1.0, "MWh": 1e-3}  # factor from kWh (1 kWh = 1000 Wh)
_MAX_BARS = 400


def path_colors(paths: str | Iterable[str]) -> dict[str, str]:
    """Colour of each heat path, the same in every thermonet chart.

    Parameters
    ----------
    paths : str or iterable of str
        Path names (balance columns such as ``"opaque"``, ``"solar"``, ``"heating"``).

    Returns
    -------
    dict of str to str
        ``{path: "#RRGGBB"}`` in the order given (duplicates once).

    Raises
    ------
    TypeError
        if a path name is not a string.

    Notes
    -----
    Known names take :data:`PATH_COLORS`. Unknown names are sorted; each starts at the
    fallback colour picked by a CRC-32 of its name (stable across sessions, unlike Python's
    ``hash``) and moves to the next free one, so a given set of unknown names always gets the
    same colours whatever the order or the chart. More than ``len(FALLBACK_COLORS)`` unknown
    names share colours (the cycle repeats).

    Examples
    --------
    >>> path_colors(["solar", "opaque"])
    {'solar': '#E69F00', 'opaque': '#332288'}
    """
    names = [paths] if isinstance(paths, str) else list(paths)
    for p in names:
        if not isinstance(p, str):
            raise TypeError(f"path names must be strings, got {p!r} ({type(p).__name__})")
    names = list(dict.fromkeys(names))
    unknown = sorted(p for p in names if p not in PATH_COLORS)
    n = len(FALLBACK_COLORS)
    taken: set[int] = set()
    extra: dict[str, str] = {}
    for p in unknown:
        if len(taken) == n:
            taken = set()  # every fallback colour used once: the cycle repeats
        k = zlib.crc32(p.encode("utf-8")) % n
        while k in taken:
            k = (k + 1) % n
        taken.add(k)
        extra[p] = FALLBACK_COLORS[k]
    return {p: PATH_COLORS.get(p, extra.get(p)) for p in names}


def _series_colors(names: Sequence[str], avoid: Iterable[str] = ()) -> dict[str, str]:
    """Path colours for path names, then the series cycle for the others (no repeats).

    Colours in ``avoid`` (e.g. that of a comfort band drawn on the same axes) are not given
    to the other series.
    """
    known = {n: PATH_COLORS[n] for n in names if isinstance(n, str) and n in PATH_COLORS}
    skip = set(known.values()) | set(avoid)
    free = [c for c in SERIES_COLORS if c not in skip]
    out, k = {}, 0
    for n in names:
        if n in known:
            out[n] = known[n]
        else:
            out[n] = free[k % len(free)]
            k += 1
    return out


# --------------------------------------------------------------------------------------------
# helpers
# --------------------------------------------------------------------------------------------
def _new_axes(ax, figsize):
    if ax is None:
        fig, ax = plt.subplots(figsize=figsize, layout="constrained")
        return fig, ax
    if not hasattr(ax, "figure") or not hasattr(ax, "bar"):
        raise TypeError(f"ax must be a matplotlib Axes or None, got {type(ax).__name__}")
    return ax.figure, ax


def _time_step(index: object, name: str) -> pd.Timedelta:
    """Validate a tz-aware regular DatetimeIndex (via comfort.interval_midpoints)."""
    if not isinstance(index, pd.DatetimeIndex):
        raise ScheduleError(
            f"{name} must have a DatetimeIndex, got {type(index).__name__}; use the "
            "simulation or weather index (e.g. res.temperatures['room'])"
        )
    mid = comfort.interval_midpoints(index)  # raises ScheduleError for a bad index
    return (index[0] - mid[0]) * 2


def _as_frame(data, name: str) -> pd.DataFrame:
    if isinstance(data, pd.Series):
        return data.to_frame(name=data.name if data.name is not None else name)
    if isinstance(data, pd.DataFrame):
        if data.shape[1] == 0:
            raise ValueError(f"{name} has no columns; give at least one series to draw")
        return data
    raise TypeError(f"{name} must be a pandas Series or DataFrame, got {type(data).__name__}")


def _numeric(df: pd.DataFrame, name: str, *, allow_nan: bool) -> np.ndarray:
    for col in df.columns:
        dt = df[col].dtype
        if pd.api.types.is_bool_dtype(dt) or not pd.api.types.is_numeric_dtype(dt):
            raise TypeError(f"{name} column {col!r} must hold numbers, got dtype {dt}")
    values = df.to_numpy(dtype=float, na_value=np.nan)
    bad = np.isinf(values) if allow_nan else ~np.isfinite(values)
    if bad.any():
        r, c = np.argwhere(bad)[0]
        what = "infinite" if allow_nan else "NaN or infinite"
        raise ValueError(
            f"{name} column {df.columns[c]!r} has {int(bad[:, c].sum())} {what} value(s), "
            f"e.g. at {df.index[r]}; nothing is filled or dropped — repair them first"
        )
    return values


def _unit_factor(unit: str, floor_area) -> tuple[float, str]:
    if unit not in _UNIT_SCALE:
        raise ValueError(
            f"unit must be one of {', '.join(map(repr, _UNIT_SCALE))} (the balance is in kWh), "
            f"got {unit!r}"
        )
    factor = _UNIT_SCALE[unit]
    if floor_area is None:
        return factor, unit
    area = float(floor_area)
    if not np.isfinite(area) or area <= 0:
        raise ValueError(f"floor_area must be a finite number > 0 [m²], got {floor_area!r}")
    return factor / area, f"{unit}/m²"


def _fmt(v: float, signed: bool = True, scale: float = 0.0) -> str:
    """A value for a label: thousands separated, 3 significant digits below 100 (whole numbers
    as they are), "≈ 0" for rounding noise (below 1e-9 × ``scale``), a true minus sign."""
    a = abs(v)
    if 0 < a < 1e-9 * scale:
        return "\u2248 0"
    if a >= 100 or a == 0 or float(v).is_integer():   # whole numbers (hours) without ".0"
        s = f"{v:+,.0f}" if signed else f"{v:,.0f}"
    elif a >= 1:
        s = f"{v:+.1f}" if signed else f"{v:.1f}"
    else:
        s = f"{v:+.3g}" if signed else f"{v:.3g}"
    return s.replace("-", "\u2212")


def _hours(h: float) -> str:
    return f"{h:,.0f}" if float(h).is_integer() else f"{h:,.1f}"


def _residual_note(ax, residual: np.ndarray, terms: np.ndarray, rel_tol: float, unit: str):
    """Annotate the axes when the balance residual is not negligible; return the worst one."""
    worst = float(np.max(np.abs(residual))) if residual.size else 0.0
    scale = float(np.max(np.abs(terms))) if terms.size else 0.0
    if worst > rel_tol * max(scale, 1e-300):
        # below the axes (under the x label), so it never hides a bar
        ax.annotate(
            f"balance residual up to {_fmt(worst, False)} {unit} "
            f"({worst / max(scale, 1e-300):.1e} of the largest term): not drawn, check the "
            "control volume and the input",
            xy=(0.0, 0.0),
            xycoords="axes fraction",
            xytext=(0, -44),
            textcoords="offset points",
            fontsize=8,
            color="#D55E00",
            ha="left",
            va="top",
            annotation_clip=False,
        )
    return worst


def _period_labels(index: pd.Index) -> list[str]:
    """Tick labels of balance periods: years, months, days or full time stamps."""
    if not isinstance(index, pd.DatetimeIndex):
        return [str(x) for x in index]
    midnight = bool((index == index.normalize()).all())
    freq = index.freqstr or ""
    if midnight and (freq.startswith(("Y", "A")) or (
            len(index) > 1 and (index.month == 1).all() and (index.day == 1).all())):
        return [f"{t:%Y}" for t in index]
    if midnight and (index.day == 1).all():
        several = index.year.nunique() > 1
        return [f"{t:%b}\n{t:%Y}" if several and (i == 0 or t.month == 1) else f"{t:%b}"
                for i, t in enumerate(index)]
    if midnight:
        return [f"{t:%d %b}" for t in index]
    return [f"{t:%Y-%m-%d %H:%M}" for t in index]


def _date_axis(ax, tz):
    loc = mdates.AutoDateLocator(tz=tz)
    ax.xaxis.set_major_locator(loc)
    ax.xaxis.set_major_formatter(mdates.ConciseDateFormatter(loc, tz=tz))
    ax.set_xlabel(f"Time (hour ending, {tz})")


# --------------------------------------------------------------------------------------------
# 1. energy balance
# --------------------------------------------------------------------------------------------
def _balance_terms(balance: pd.DataFrame, name: str):
    if not isinstance(balance, pd.DataFrame):
        raise TypeError(
            f"{name} must be the DataFrame of Results.balance(nodes, freq=...), got "
            f"{type(balance).__name__}"
        )
    if len(balance) == 0:
        raise ValueError(f"{name} has no rows")
    values = _numeric(balance, name, allow_nan=False)
    cols = [str(c) for c in balance.columns]
    if "residual" in cols:
        k = cols.index("residual")
        residual = values[:, k]
        values = np.delete(values, k, axis=1)
        cols.pop(k)
    else:
        residual = values.sum(axis=1)
    if not cols:
        raise ValueError(f"{name} has no path column besides 'residual'")
    return cols, values, residual


def balance_bars(
    balance_df: pd.DataFrame,
    *,
    title: str | None = None,
    ax=None,
    unit: str = "kWh",
    floor_area: float | None = None,
    drop_zero: bool = True,
    residual_tol: float = 1e-6,
    legend: bool = True,
    xlabel: str | None = None,
):
    """Energy balance of a control volume by heat path, as stacked bars per period.

    Parameters
    ----------
    balance_df : pandas.DataFrame
        :meth:`thermonet.Results.balance` with ``freq`` (``"MS"`` monthly, ``"D"``, ``"YS"``)
        [kWh]: one column per path plus ``heating``, ``cooling``, ``storage`` and
        ``residual``; positive = heat into the control volume. At most 400 rows.
    title : str, optional
        Axes title; default "Energy balance by heat path".
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; default a new figure.
    unit : {"kWh", "MWh", "Wh"}, default "kWh"
        Unit of the bars (converted from kWh).
    floor_area : float, optional
        Floor area [m²]; when given the bars are per m² (e.g. [kWh/m²]).
    drop_zero : bool, default True
        Leave out columns that are exactly zero in every period (e.g. ``cooling`` without a
        cooler); they would only add an empty legend entry.
    residual_tol : float, default 1e-6
        ``residual`` is never drawn; when its largest absolute value exceeds
        ``residual_tol`` × the largest absolute term, a note on the chart says so.
    legend : bool, default True
        Draw the legend (paths in column order, in words from :data:`thermonet.labels.LABELS`)
        to the right of the axes.
    xlabel : str, optional
        x-axis label; default from the index ("Month", "Day", "Year") or "Period".

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        One :class:`~matplotlib.container.BarContainer` per drawn column (in
        ``ax.containers``, label = path name); each bar's height is the input value
        (converted), gains above zero and losses below.

    Raises
    ------
    TypeError
        if ``balance_df`` is not a DataFrame or holds non-numeric columns.
    ValueError
        for NaN or infinite values, more than 400 rows (aggregate with ``freq`` first), an
        unknown ``unit`` or an invalid ``floor_area``.

    Notes
    -----
    In each period the positive terms (gains) are stacked upwards from zero and the negative
    terms (losses) downwards, in column order. Because the balance closes (Σ terms +
    residual = 0), the gain stack and the loss stack of a period have the same height.
    """
    cols, values, residual = _balance_terms(balance_df, "balance_df")
    if len(balance_df) > _MAX_BARS:
        raise ValueError(
            f"balance_df has {len(balance_df)} rows; bars need at most {_MAX_BARS}. Use "
            "res.balance(nodes, freq='MS') (monthly) or freq='D' (daily)"
        )
    factor, label_unit = _unit_factor(unit, floor_area)
    values = values * factor
    residual = residual * factor
    keep = [j for j in range(len(cols)) if not (drop_zero and np.all(values[:, j] == 0.0))]
    fig, ax = _new_axes(ax, (9.0, 4.8))
    colors = path_colors(cols)
    x = np.arange(len(balance_df))
    up = np.zeros(len(x))
    down = np.zeros(len(x))
    for j in keep:
        v = values[:, j]
        bottom = np.where(v >= 0.0, up, down)
        ax.bar(x, v, bottom=bottom, width=0.72, color=colors[cols[j]], label=cols[j],
               edgecolor="white", linewidth=0.6)
        up = up + np.clip(v, 0.0, None)
        down = down + np.clip(v, None, 0.0)
    ax.axhline(0.0, color="black", linewidth=0.8)
    lo, hi = float(down.min()), float(up.max())
    pad = 0.05 * ((hi - lo) or 1.0)
    ax.set_ylim(lo - pad, hi + pad)  # explicit: zero-height bars would pin the autoscale
    ax.set_xticks(x, _period_labels(balance_df.index))
    if len(x) > 24:
        step = int(np.ceil(len(x) / 24))
        for k, lab in enumerate(ax.get_xticklabels()):
            lab.set_visible(k % step == 0)
    ax.set_xlim(-0.6, len(x) - 0.4)
    ax.set_ylabel(f"Energy [{label_unit}]  (+ into, − out of the control volume)")
    ax.set_xlabel(xlabel if xlabel is not None else _period_word(balance_df.index))
    ax.set_title(title if title is not None else "Energy balance by heat path")
    ax.grid(axis="y", color="#DDDDDD", linewidth=0.6)
    ax.set_axisbelow(True)
    terms = values[:, keep] if keep else values
    if not keep:
        ax.text(0.5, 0.62, "Every path is 0 in every period shown\n(e.g. no step of the "
                "period falls in it)", transform=ax.transAxes, ha="center", va="center",
                color="#444444")
    _residual_note(ax, residual, terms, residual_tol, label_unit)
    if legend and keep:
        handles = list(ax.containers)
        ax.legend(handles, [words(h.get_label(), unit=False) for h in handles],
                  loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False,
                  title="Heat path")
    return fig, ax


def _period_word(index: pd.Index) -> str:
    """x label of balance periods: Month, Day or Year from the spacing of a DatetimeIndex."""
    if isinstance(index, pd.DatetimeIndex) and len(index) > 1:
        days = (index[1] - index[0]) / pd.Timedelta(days=1)
        if 28 <= days <= 31:
            return "Month"
        if 365 <= days <= 366:
            return "Year"
        if days == 1:
            return "Day"
    return "Period"


def balance_annual(
    balance_df_or_series: pd.DataFrame | pd.Series,
    *,
    ax=None,
    title: str | None = None,
    unit: str = "kWh",
    floor_area: float | None = None,
    drop_zero: bool = True,
    residual_tol: float = 1e-6,
):
    """Where the heat goes: totals per path as horizontal bars sorted by magnitude.

    Parameters
    ----------
    balance_df_or_series : pandas.DataFrame or pandas.Series
        A :meth:`thermonet.Results.balance` table [kWh] (any ``freq``; its rows are summed),
        or a Series of totals by path [kWh]. Positive = into the control volume.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; default a new figure.
    title : str, optional
        Axes title; default "Where the heat goes (total over the period)".
    unit : {"kWh", "MWh", "Wh"}, default "kWh"
        Unit of the bars and labels.
    floor_area : float, optional
        Floor area [m²]; when given the totals are per m².
    drop_zero : bool, default True
        Leave out paths whose total is exactly zero.
    residual_tol : float, default 1e-6
        ``residual`` is not drawn; a note appears when ``|residual|`` of the total exceeds
        ``residual_tol`` × the largest absolute total.

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        One bar per path (``ax.patches``, largest magnitude at the top), width = total;
        gains to the right of zero, losses to the left, each labelled with its value.

    Raises
    ------
    TypeError, ValueError
        as :func:`balance_bars`.

    Notes
    -----
    The sums of gains and of losses are written in the title line; over a closed balance
    they are equal and opposite (storage included as a term).
    """
    if isinstance(balance_df_or_series, pd.Series):
        frame = balance_df_or_series.to_frame().T
        frame.index = pd.RangeIndex(1)
        cols, values, residual = _balance_terms(frame, "balance_df_or_series")
    else:
        cols, values, residual = _balance_terms(balance_df_or_series, "balance_df_or_series")
    factor, label_unit = _unit_factor(unit, floor_area)
    totals = values.sum(axis=0) * factor
    res_total = np.array([residual.sum() * factor])
    order = [j for j in np.argsort(-np.abs(totals), kind="stable")
             if not (drop_zero and totals[j] == 0.0)]
    names = [cols[j] for j in order]
    vals = totals[order]
    fig, ax = _new_axes(ax, (8.0, 0.9 + 0.42 * max(len(names), 2)))
    colors = path_colors(names)
    y = np.arange(len(names))[::-1]
    bars = ax.barh(y, vals, height=0.66, color=[colors[n] for n in names], edgecolor="white")
    span = float(np.max(np.abs(vals))) if len(vals) else 1.0
    for bar, v in zip(bars, vals, strict=True):
        pad = 0.01 * span
        ax.text(v + (pad if v >= 0 else -pad), bar.get_y() + bar.get_height() / 2,
                f"{_fmt(v, scale=span)} {label_unit}", va="center",
                ha="left" if v >= 0 else "right",
                fontsize=8.5)
    ax.set_yticks(y[::-1], names[::-1])  # tick labels listed bottom → top
    ax.set_ylabel("Heat path")
    ax.axvline(0.0, color="black", linewidth=0.8)
    lo = min(0.0, float(vals.min())) if len(vals) else -1.0
    hi = max(0.0, float(vals.max())) if len(vals) else 1.0
    ax.set_xlim(lo - 0.28 * span, hi + 0.28 * span)
    ax.set_xlabel(f"Energy [{label_unit}]   \u2190 losses (out) | gains (in) \u2192")
    gains = float(vals[vals > 0].sum())
    losses = float(vals[vals < 0].sum())
    ax.set_title(
        (title if title is not None else "Where the heat goes (total over the period)")
        + f"\ngains {_fmt(gains, False)} {label_unit}, losses {_fmt(losses)} {label_unit}",
        fontsize=10,
    )
    ax.grid(axis="x", color="#DDDDDD", linewidth=0.6)
    ax.set_axisbelow(True)
    _residual_note(ax, res_total, totals, residual_tol, label_unit)
    return fig, ax


# --------------------------------------------------------------------------------------------
# 2. temperatures against comfort bands
# --------------------------------------------------------------------------------------------
def _thresholds(bands) -> list[tuple[str, float]]:
    if isinstance(bands, Mapping):
        items = list(bands.items())
    elif isinstance(bands, Real) and not isinstance(bands, bool):
        items = [(None, bands)]
    elif isinstance(bands, (list, tuple, np.ndarray)):
        items = [(None, b) for b in bands]
    else:
        raise TypeError(
            "bands must be None, a DataFrame with 'lower'/'upper' columns (e.g. "
            "comfort.adaptive_limits), a number, a list of numbers or a dict {label: number} "
            f"[°C]; got {type(bands).__name__}"
        )
    out = []
    for label, v in items:
        if isinstance(v, bool) or not isinstance(v, Real) or not np.isfinite(float(v)):
            raise ValueError(f"threshold {label or v!r} must be a finite number [°C], got {v!r}")
        out.append((str(label) if label is not None else f"{float(v):g} °C", float(v)))
    return out


def _band_frame(bands: pd.DataFrame, index: pd.DatetimeIndex, step: pd.Timedelta):
    if not ({"lower", "upper"} & set(bands.columns)):
        raise ValueError(
            "bands DataFrame needs a 'lower' and/or 'upper' column [°C] (as returned by "
            f"comfort.adaptive_limits); got columns {list(bands.columns)}"
        )
    if bands.index.equals(index):
        return bands
    bidx = bands.index
    daily = (
        isinstance(bidx, pd.DatetimeIndex)
        and str(bidx.tz) == str(index.tz)
        and len(bidx) > 0
        and (bidx == bidx.normalize()).all()
    )
    if not daily:
        raise ScheduleError(
            "bands must be on the index of temps, or daily (one row per local midnight in the "
            f"same time zone, as comfort.running_mean_outdoor); got {len(bidx)} rows "
            f"{bidx[0] if len(bidx) else ''} … against temps {index[0]} … {index[-1]} "
            f"(tz {index.tz}). Use comfort.daily_to_index to align it"
        )
    out = {}
    for col in bands.columns:
        if pd.api.types.is_bool_dtype(bands[col].dtype):
            spread = comfort.daily_to_index(bands[col].astype(float), index)
            out[col] = spread.to_numpy() > 0.5
        else:
            out[col] = comfort.daily_to_index(bands[col], index).to_numpy()
    return pd.DataFrame(out, index=index)


def temperature_bands(
    temps: pd.DataFrame | pd.Series,
    *,
    outdoor: pd.Series | None = None,
    bands=None,
    ax=None,
    title: str | None = None,
    band_label: str = "comfort band",
    colors: Mapping[str, str] | None = None,
):
    """Temperatures over time against a comfort band or fixed thresholds.

    Parameters
    ----------
    temps : pandas.Series or pandas.DataFrame
        Temperatures [°C] (one line per column) on a tz-aware regular index (hour ending),
        e.g. ``res.temperatures[["room", "bedroom"]]``. NaN shows as a gap.
    outdoor : pandas.Series, optional
        Outdoor air temperature [°C], drawn as a thin grey line; it must hold every time
        stamp of ``temps`` (it may be longer, e.g. the weather).
    bands : DataFrame, number, list of numbers or dict, optional
        * DataFrame with ``lower`` and/or ``upper`` [°C] (and optionally ``comfort``,
          ``lower_applicable``, ``upper_applicable`` as returned by
          :func:`thermonet.comfort.adaptive_limits`) on the index of ``temps``, or daily
          (indexed by local midnights, spread with :func:`thermonet.comfort.daily_to_index`).
          The band between the limits is shaded where both apply; each limit is drawn as a
          line where it applies.
        * fixed thresholds [°C]: a number, a list (e.g. ``[25, 26, 28]``) or a dict
          ``{"TM59 bedroom": 26}``, drawn as horizontal lines.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; default a new figure.
    title : str, optional
        Axes title.
    band_label : str, default "comfort band"
        Legend label of the shaded band.
    colors : mapping of str to str, optional
        Line colour per column (e.g. one colour per design option, the same in every
        figure); columns not in it get the series colours.

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        Lines in this order: one per column of ``temps``, the outdoor line, then the
        limits / thresholds; the shaded band is a PolyCollection in ``ax.collections``.

    Raises
    ------
    TypeError
        for wrong types.
    ScheduleError
        for an invalid index, or ``outdoor`` / ``bands`` not aligned with ``temps``.
    ValueError
        for infinite values or a bands DataFrame without ``lower`` / ``upper``.
    """
    df = _as_frame(temps, "temps")
    step = _time_step(df.index, "temps")
    values = _numeric(df, "temps", allow_nan=True)
    index = df.index
    fig, ax = _new_axes(ax, (10.0, 4.2))
    # the band and its limits are drawn in _BAND_COLOR: keep that colour off the lines
    line_colors = _series_colors([str(c) for c in df.columns],
                                 avoid=(_BAND_COLOR,) if isinstance(bands, pd.DataFrame) else ())
    line_colors.update({str(k): v for k, v in dict(colors or {}).items()})
    for j, col in enumerate(df.columns):
        ax.plot(index, values[:, j], color=line_colors[str(col)], linewidth=1.1,
                label=str(col))
    if outdoor is not None:
        if not isinstance(outdoor, pd.Series):
            raise TypeError(f"outdoor must be a pandas Series, got {type(outdoor).__name__}")
        _time_step(outdoor.index, "outdoor")
        if str(outdoor.index.tz) != str(index.tz) or not index.isin(outdoor.index).all():
            raise ScheduleError(
                f"outdoor must hold every time stamp of temps ({index[0]} … {index[-1]}, tz "
                f"{index.tz}); got {outdoor.index[0]} … {outdoor.index[-1]} (tz "
                f"{outdoor.index.tz}). Pass the weather's temp_air of the same period"
            )
        o = _numeric(outdoor.reindex(index).to_frame(), "outdoor", allow_nan=True)[:, 0]
        ax.plot(index, o, color=_OUTDOOR_COLOR, linewidth=0.7, label="outdoor air")
    if isinstance(bands, pd.DataFrame):
        b = _band_frame(bands, index, step)
        num = [c for c in ("lower", "upper", "comfort") if c in b.columns]
        arr = _numeric(b[num], "bands", allow_nan=True)
        lim = dict(zip(num, arr.T, strict=True))
        ok = {
            k: (b[f"{k}_applicable"].to_numpy(dtype=bool) if f"{k}_applicable" in b.columns
                else np.ones(len(b), dtype=bool))
            for k in ("lower", "upper")
        }
        if "lower" in lim and "upper" in lim:
            ax.fill_between(index, lim["lower"], lim["upper"], where=ok["lower"] & ok["upper"],
                            color=_BAND_COLOR, alpha=0.18, linewidth=0, label=band_label)
        for k, style in (("upper", "-"), ("lower", "-")):
            if k in lim:
                ax.plot(index, np.where(ok[k], lim[k], np.nan), color=_BAND_COLOR,
                        linestyle=style, linewidth=0.9, label=f"{k} limit")
        if "comfort" in lim:
            ax.plot(index, lim["comfort"], color=_BAND_COLOR, linestyle="--", linewidth=0.8,
                    label="comfort temperature")
    elif bands is not None:
        for k, (label, v) in enumerate(_thresholds(bands)):
            ax.axhline(v, color="#444444", linewidth=1.0,
                       linestyle=_THRESHOLD_STYLES[k % len(_THRESHOLD_STYLES)], label=label)
    _date_axis(ax, index.tz)
    ax.set_ylabel("Temperature [°C]")
    if title is not None:
        ax.set_title(title)
    ax.grid(color="#EEEEEE", linewidth=0.6)
    ax.legend(loc="upper left", bbox_to_anchor=(1.01, 1.0), frameon=False)
    return fig, ax


# --------------------------------------------------------------------------------------------
# 3. day-by-hour heat map
# --------------------------------------------------------------------------------------------
def heatmap(
    series: pd.Series,
    *,
    ax=None,
    cmap=None,
    label: str | None = None,
    unit: str = "°C",
    vmin: float | None = None,
    vmax: float | None = None,
    title: str | None = None,
):
    """Day-by-hour heat map of a temperature or a flow (x = day of year, y = hour of day).

    Parameters
    ----------
    series : pandas.Series
        Values on a tz-aware regular index whose step divides one day (1 h, 30 min, 15 min
        ...), hour ending; e.g. ``res.temperatures["room"]`` [°C] or ``res.flows[name]`` [W].
        NaN shows as an empty cell.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; default a new figure.
    cmap : str or matplotlib.colors.Colormap, optional
        Default ``"viridis"`` for one-signed data, ``"PuOr_r"`` centred on zero (symmetric
        limits) for data with both signs (a flow: orange one way, purple the other).
    label : str, optional
        Colour-bar label; default ``"<series name> [<unit>]"``.
    unit : str, default "°C"
        Unit for the default label (pass ``"W"`` for a flow).
    vmin, vmax : float, optional
        Colour limits [unit]; default the data range (symmetric for two-signed data).
    title : str, optional
        Axes title.

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        ``ax.collections[0]`` is the :class:`~matplotlib.collections.QuadMesh`; its array has
        shape (slots per day, days), row k = hours [k·Δt, (k+1)·Δt) of the local day.

    Raises
    ------
    TypeError
        if ``series`` is not a numeric Series.
    ScheduleError
        for an invalid index, a step that does not divide 24 h, or two rows in one cell
        (daylight-saving changes: use a fixed-offset zone such as ``"Etc/GMT-1"``).
    ValueError
        for infinite values.

    Notes
    -----
    Each row is placed by its interval MID-POINT m = label − Δt/2 (see the module notes):
    column = local calendar day of m, counted as the day of year of the first mid-point's
    year (continuing past 365 for longer series), cell centred on that number; row =
    ⌊(local clock time of m)/Δt⌋, spanning the interval the value describes.
    """
    if not isinstance(series, pd.Series):
        raise TypeError(f"series must be a pandas Series, got {type(series).__name__}")
    step = _time_step(series.index, "series")
    values = _numeric(series.to_frame(), "series", allow_nan=True)[:, 0]
    day = pd.Timedelta(days=1)
    if step > day or day % step != pd.Timedelta(0):
        raise ScheduleError(
            f"series step {step} must divide one day (1 h, 30 min, 15 min ...) for a "
            "day-by-hour map; resample it first"
        )
    slots = int(day // step)
    mid = series.index - step / 2
    midnight = mid.normalize()
    local = midnight.tz_localize(None)  # local calendar dates (days of 23/25 h under DST)
    start = pd.Timestamp(year=local[0].year, month=1, day=1)
    doy = ((local - start) // day).to_numpy() + 1  # day of year, 1 = 1 January
    clock = mid.hour * 3600 + mid.minute * 60 + mid.second  # local wall clock [s]
    slot = (np.asarray(clock) // int(step.total_seconds())).astype(int)
    d0, d1 = int(doy.min()), int(doy.max())
    grid = np.full((slots, d1 - d0 + 1), np.nan)
    count = np.zeros(grid.shape, dtype=int)
    np.add.at(count, (slot, doy - d0), 1)
    if (count > 1).any():
        r, c = np.argwhere(count > 1)[0]
        raise ScheduleError(
            f"two rows of series fall in one cell (day {d0 + c}, slot {r}): the local clock "
            f"repeats, probably a daylight-saving change in zone {series.index.tz}. Convert "
            "to a fixed-offset zone first, e.g. series.tz_convert('Etc/GMT-1')"
        )
    grid[slot, doy - d0] = values
    finite = values[np.isfinite(values)]
    two_signed = finite.size > 0 and finite.min() < 0 < finite.max()
    if cmap is None:
        cmap = "PuOr_r" if two_signed else "viridis"
    if two_signed and vmin is None and vmax is None:
        m = float(np.abs(finite).max())
        vmin, vmax = -m, m
    fig, ax = _new_axes(ax, (10.0, 3.8))
    hours = step / pd.Timedelta(hours=1)
    x_edges = np.arange(d0, d1 + 2) - 0.5
    y_edges = np.arange(slots + 1) * hours
    mesh = ax.pcolormesh(x_edges, y_edges, np.ma.masked_invalid(grid), cmap=cmap,
                         norm=Normalize(vmin=vmin, vmax=vmax), shading="flat")
    name = series.name if series.name is not None else "value"
    cbar = fig.colorbar(mesh, ax=ax, pad=0.01)
    cbar.set_label(label if label is not None else f"{name} [{unit}]")
    ax.set_ylim(0, 24)
    ax.set_yticks([0, 6, 12, 18, 24])
    ax.set_ylabel(f"Hour of day [h] ({series.index.tz})")
    # ticks at the first of each month, labelled with the month
    months = pd.date_range(start, start + pd.Timedelta(days=d1 + 1), freq="MS")
    ticks = [(m - start) // day + 1 for m in months]
    tl = [(t, f"{m:%b}\n{t}") for t, m in zip(ticks, months, strict=True) if d0 <= t <= d1]
    if len(tl) >= 2:
        ax.set_xticks([t for t, _ in tl], [s for _, s in tl])
    ax.set_xlim(d0 - 0.5, d1 + 0.5)
    ax.set_xlabel(f"Day of year [d] ({start:%Y})")
    if title is not None:
        ax.set_title(title)
    return fig, ax


# --------------------------------------------------------------------------------------------
# 4. duration curve
# --------------------------------------------------------------------------------------------
def duration_curve(
    series_or_df: pd.Series | pd.DataFrame,
    *,
    ax=None,
    unit: str = "W",
    label: str | None = None,
    title: str | None = None,
    colors: Mapping[str, str] | None = None,
):
    """Duration curve: values sorted in descending order against cumulative hours.

    Parameters
    ----------
    series_or_df : pandas.Series or pandas.DataFrame
        Heating power [W], a temperature [°C] ... (one curve per column) on a tz-aware
        regular index; each row counts one step Δt (0.5 h for 30-min data). NaN refused.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; default a new figure.
    unit : str, default "W"
        Unit of the values, for the y label (``"°C"`` for temperatures).
    label : str, optional
        y label; default ``"<name> [<unit>]"`` for one series, ``"Value [<unit>]"`` else.
    title : str, optional
        Axes title.
    colors : mapping of str to str, optional
        Line colour per column (e.g. one colour per design option); others get the series
        colours.

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        One step line per column; the k-th sorted value is held over
        [k·Δt, (k+1)·Δt] hours, so the curve at x gives the value reached or exceeded for x
        hours.

    Raises
    ------
    TypeError, ScheduleError, ValueError
        for a wrong type, an invalid index or NaN / infinite values.
    """
    df = _as_frame(series_or_df, "series_or_df")
    step = _time_step(df.index, "series_or_df")
    values = _numeric(df, "series_or_df", allow_nan=False)
    dt = step / pd.Timedelta(hours=1)
    n = len(df)
    x = np.arange(n + 1) * dt
    fig, ax = _new_axes(ax, (8.0, 4.2))
    names = [str(c) for c in df.columns]
    line_colors = _series_colors(names)
    line_colors.update({str(k): v for k, v in dict(colors or {}).items()})
    for j, name in enumerate(names):
        v = np.sort(values[:, j])[::-1]
        ax.plot(x, np.append(v, v[-1]), drawstyle="steps-post", color=line_colors[name],
                linewidth=1.3, label=name)
    ax.set_xlim(0, n * dt)
    ax.set_xlabel("Duration [h] (hours the value is reached or exceeded)")
    if label is None:
        label = f"{names[0]} [{unit}]" if len(names) == 1 else f"Value [{unit}]"
    ax.set_ylabel(label)
    ax.grid(color="#EEEEEE", linewidth=0.6)
    if len(names) > 1:
        ax.legend(frameon=False)
    if title is not None:
        ax.set_title(title)
    return fig, ax


# --------------------------------------------------------------------------------------------
# 5. adaptive comfort scatter
# --------------------------------------------------------------------------------------------
def adaptive_scatter(
    t_op: pd.Series,
    temp_air_outdoor: pd.Series,
    *,
    category: str = "II",
    occupied: pd.Series | None = None,
    ax=None,
    alpha: float = 0.8,
    init: str | float = "first_day",
    other_categories: bool = True,
    title: str | None = None,
):
    """Operative temperature against the running mean outdoor temperature, EN 16798-1 limits.

    Parameters
    ----------
    t_op : pandas.Series
        Indoor operative temperature [°C], tz-aware regular index (hour ending).
    temp_air_outdoor : pandas.Series
        Outdoor air temperature [°C], same step and zone, covering every time stamp of
        ``t_op`` in whole days (may start earlier to give the running mean its history).
    category : {"I", "II", "III"}, default "II"
        The category whose limits are drawn solid and used to colour the points.
    occupied : pandas.Series of bool, optional
        Occupied rows on the index of ``t_op``; only those are drawn. Default all.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; default a new figure.
    alpha : float, default 0.8
        Running-mean weighting constant [–] (:func:`thermonet.comfort.running_mean_outdoor`).
    init : {"first_day", "periodic"} or float, default "first_day"
        Running-mean start, see :func:`thermonet.comfort.running_mean_outdoor`.
    other_categories : bool, default True
        Also draw the limits of the other categories as thin dotted lines.
    title : str, optional
        Axes title.

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        Scatter groups (``ax.collections``) labelled with their hours: above the upper limit,
        below the lower limit, within the category, and outside the applicability range; the
        limit lines carry a ``gid`` ``"<category>-upper"`` / ``"<category>-lower"`` and the
        comfort line ``"comfort"``.

    Raises
    ------
    ScheduleError, ValueError, TypeError
        as :func:`thermonet.comfort.adaptive_assessment`.

    Notes
    -----
    θc = 0.33 θrm + 18.8 [°C]; upper limits θc + 2 / 3 / 4 K (I / II / III), drawn for
    10 °C ≤ θrm ≤ 30 °C; lower limits θc − 3 / 4 / 5 K, drawn for 15 °C ≤ θrm ≤ 30 °C (the
    standard's ranges are strict inequalities). The point classes and their hours come from
    :func:`thermonet.comfort.adaptive_assessment` (a point above an applicable upper limit or
    below an applicable lower limit, weighted by the step length).

    References
    ----------
    EN 16798-1:2019, adaptive criteria for buildings without mechanical cooling (from memory,
    docs/references.md §5.2 [M]).
    """
    a = comfort.adaptive_assessment(t_op, temp_air_outdoor, category, occupied,
                                    alpha=alpha, init=init)
    h = a.hourly
    cat = a.category
    dt = _time_step(t_op.index, "t_op") / pd.Timedelta(hours=1)
    occ = h["occupied"].to_numpy(dtype=bool)
    trm = h["running_mean"].to_numpy()
    top = h["t_op"].to_numpy()
    up_ok = h["upper_applicable"].to_numpy(dtype=bool)
    low_ok = h["lower_applicable"].to_numpy(dtype=bool)
    above = occ & up_ok & (top > h["upper"].to_numpy())
    below = occ & low_ok & (top < h["lower"].to_numpy())
    none_ok = occ & ~up_ok & ~low_ok
    within = occ & ~above & ~below & ~none_ok
    fig, ax = _new_axes(ax, (7.5, 5.5))
    groups = (
        (none_ok, "#BBBBBB", "o", "no limit applicable"),
        (within, "#555555", "o", f"within category {cat}"),
        (below, PATH_COLORS["cooling"], "v", f"below category {cat} lower limit"),
        (above, PATH_COLORS["heating"], "^", f"above category {cat} upper limit"),
    )
    for mask, color, marker, text in groups:
        ax.scatter(trm[mask], top[mask], s=7, color=color, marker=marker, alpha=0.55,
                   linewidths=0, label=f"{text}: {_hours(np.count_nonzero(mask) * dt)} h",
                   rasterized=True)
    x_up = np.array([10.0, 30.0])
    x_low = np.array([15.0, 30.0])
    cats = list(comfort.EN16798_ADAPTIVE_CATEGORIES)
    if not other_categories:
        cats = [cat]
    for c in cats:
        main = c == cat
        style = {"color": "black" if main else "#888888", "linewidth": 1.6 if main else 0.8,
                 "linestyle": "-" if main else ":"}
        lu = comfort.adaptive_limits(x_up, c)["upper"].to_numpy()
        ll = comfort.adaptive_limits(x_low, c)["lower"].to_numpy()
        (line,) = ax.plot(x_up, lu, gid=f"{c}-upper",
                          label=f"category {c} limits" if main else None, **style)
        ax.plot(x_low, ll, gid=f"{c}-lower", **style)
        ax.annotate(c, (30.0, lu[-1]), xytext=(3, 0), textcoords="offset points",
                    va="center", fontsize=8, color=style["color"])
    ax.plot(x_up, comfort.adaptive_comfort_temperature(x_up), color="black", linewidth=0.8,
            linestyle="--", gid="comfort", label="comfort temperature θc")
    ax.set_xlabel("Running mean outdoor temperature θrm [°C]")
    ax.set_ylabel("Operative temperature θop [°C]")
    lo = min(8.0, float(np.min(trm[occ])) - 1 if occ.any() else 8.0)
    hi = max(32.0, float(np.max(trm[occ])) + 1 if occ.any() else 32.0)
    ax.set_xlim(lo, hi)
    ax.grid(color="#EEEEEE", linewidth=0.6)
    ax.set_axisbelow(True)
    ax.legend(loc="upper left", fontsize=8, frameon=False, markerscale=2.0)
    ax.set_title(title if title is not None else
                 f"EN 16798-1 adaptive comfort, category {cat} (occupied hours)")
    return fig, ax


# --------------------------------------------------------------------------------------------
# 6. design options
# --------------------------------------------------------------------------------------------
def compare_options(
    table: pd.DataFrame,
    metric: str,
    ax=None,
    *,
    unit: str | None = None,
    sort: bool = True,
    highlight: str | Sequence[str] | None = None,
    title: str | None = None,
    colors: Mapping[str, str] | None = None,
    xlabel: str | None = None,
):
    """One metric of several design options as labelled horizontal bars.

    Parameters
    ----------
    table : pandas.DataFrame
        One row per option (index = option names), one column per metric.
    metric : str
        Column to draw.
    ax : matplotlib.axes.Axes, optional
        Axes to draw on; default a new figure.
    unit : str, optional
        Unit of the metric for the axis label and the value labels. Default:
        :func:`thermonet.labels.unit_of` — the label table, else the column name's suffix
        (``_kwh_m2`` kWh/m², ``_w_m2`` W/m², ``_kwh`` kWh, ``_mwh`` MWh, ``_kw`` kW, ``_w`` W,
        ``_kelvin_hours`` K·h, ``_h`` h, ``_pct`` %, ``_c`` °C, ``_k`` K); pass ``unit="–"``
        for a dimensionless metric.
    sort : bool, default True
        Largest value at the top; False keeps the table order (first row at the top).
    highlight : str or list of str, optional
        Option(s) drawn in orange (e.g. the reference design); the others are blue.
    title : str, optional
        Axes title; default the metric name.
    colors : mapping of str to str, optional
        Bar colour per option (one colour per option, the same in every figure); overrides
        ``highlight`` for the options it names.
    xlabel : str, optional
        x-axis label; default the metric in words with its unit
        (:func:`thermonet.labels.label`).

    Returns
    -------
    fig : matplotlib.figure.Figure
    ax : matplotlib.axes.Axes
        One bar per option in ``ax.patches``, width = the metric's value.

    Raises
    ------
    TypeError
        if ``table`` is not a DataFrame or the column is not numeric.
    ValueError
        for an unknown metric or highlight, NaN / infinite values, or a unit that cannot be
        read from the name.
    """
    if not isinstance(table, pd.DataFrame):
        raise TypeError(f"table must be a pandas DataFrame, got {type(table).__name__}")
    if metric not in table.columns:
        raise ValueError(
            f"metric {metric!r} is not a column of table; columns: "
            f"{', '.join(map(str, table.columns))}"
        )
    if len(table) == 0:
        raise ValueError("table has no rows (no options to compare)")
    values = _numeric(table[[metric]], "table", allow_nan=False)[:, 0]
    if unit is None:
        unit = unit_of(str(metric))
        if unit is None:
            raise ValueError(
                f"cannot read the unit of metric {metric!r} from its name; pass unit=..., "
                "e.g. unit='kWh/m²' (or unit='–' if dimensionless)"
            )
    names = [str(i) for i in table.index]
    marked = set() if highlight is None else (
        {highlight} if isinstance(highlight, str) else set(highlight))
    unknown = marked - set(names)
    if unknown:
        raise ValueError(f"highlight {sorted(unknown)} not in the options {names}")
    order = np.argsort(-values, kind="stable") if sort else np.arange(len(values))
    vals = values[order]
    labels = [names[k] for k in order]
    fig, ax = _new_axes(ax, (8.0, 0.9 + 0.42 * max(len(labels), 2)))
    y = np.arange(len(labels))[::-1]
    given = {str(k): v for k, v in dict(colors or {}).items()}
    bar_colors = [given.get(n, "#E69F00" if n in marked else "#0072B2") for n in labels]
    bars = ax.barh(y, vals, height=0.66, color=bar_colors, edgecolor="white")
    span = float(np.max(np.abs(vals)))
    suffix = f" {unit}" if unit not in ("", "–") else ""
    if span == 0.0:  # nothing to compare: say so instead of bars of zero length
        ax.text(0.5, 0.5, f"0{suffix} for every option", transform=ax.transAxes,
                ha="center", va="center", fontsize=10, color="#444444")
        span = 1.0
    else:
        for bar, v in zip(bars, vals, strict=True):
            pad = 0.01 * span
            ax.text(v + (pad if v >= 0 else -pad), bar.get_y() + bar.get_height() / 2,
                    f"{_fmt(v, signed=False)}{suffix}", va="center",
                    ha="left" if v >= 0 else "right", fontsize=8.5)
    ax.set_yticks(y[::-1], labels[::-1])  # tick labels listed bottom → top
    ax.axvline(0.0, color="black", linewidth=0.8)
    lo = min(0.0, float(vals.min()))
    hi = max(0.0, float(vals.max()))
    # room for the value labels ("1,234 kWh/m²") beside the longest bar
    room = 0.34 * span
    ax.set_xlim(lo - (room if lo < 0 else 0.0), hi + (room if hi > 0 else 0.02 * span))
    if not np.any(vals):
        ax.set_xticks([])  # an empty scale would only show meaningless fractions
    ax.set_xlabel(xlabel if xlabel is not None else
                  (f"{words(str(metric), unit=False)} [{unit}]" if suffix else
                   words(str(metric), unit=False)))
    ax.set_ylabel("Design option")
    ax.set_title(title if title is not None else str(metric))
    ax.grid(axis="x", color="#DDDDDD", linewidth=0.6)
    ax.set_axisbelow(True)
    return fig, ax
