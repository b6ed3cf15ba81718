"""Words and units for the code names that appear in tables and figures.

One table (:data:`LABELS`) turns a code name — a heat path such as ``"window_ventilation"``
or a metric column such as ``"heating_kwh_m2"`` — into what a reader sees in a legend, an axis
label or a table header: ``"Window airing"``, ``"Heating demand [kWh/m²]"``. The figures of
:mod:`thermonet.plots`, the notebook display of :mod:`thermonet.display` and the demo report
all read it, so one name reads the same everywhere. Add your own names with
``label(name, extra={...})`` or by updating the dictionary in your session.

Unit suffixes of metric columns (``_h`` hours, ``_kelvin_hours`` K·h, ``_kwh_m2`` kWh/m² ...)
are read by :func:`unit_of` when a name is not in the table.
"""

from __future__ import annotations

from collections.abc import Mapping

__all__ = ["LABELS", "UNIT_SUFFIXES", "label", "unit_of"]

#: Code name -> (words, unit); unit "" for none. Heat paths first, then metric columns.
LABELS: dict[str, tuple[str, str]] = {
    # heat paths (balance columns)
    "solar": ("Sun through the windows", "kWh"),
    "internal": ("Internal gains", "kWh"),
    "heating": ("Heating", "kWh"),
    "cooling": ("Cooling", "kWh"),
    "opaque": ("Walls and roof (incl. sun on outer faces)", "kWh"),
    "glazing": ("Conduction through windows", "kWh"),
    "ground": ("Ground", "kWh"),
    "buffer": ("Unheated buffer space", "kWh"),
    "interzone": ("Other heated zones", "kWh"),
    "adjacent": ("Neighbouring spaces", "kWh"),
    "infiltration": ("Infiltration", "kWh"),
    "ventilation": ("Background ventilation", "kWh"),
    "window_ventilation": ("Window airing", "kWh"),
    "night_ventilation": ("Night ventilation", "kWh"),
    "storage": ("Released from storage (− = stored)", "kWh"),
    "residual": ("Residual (rounding)", "kWh"),
    # metric columns
    "hours_above_25_h": ("Hours above 25 °C", "h"),
    "hours_above_26_h": ("Hours above 26 °C", "h"),
    "hours_above_28_h": ("Hours above 28 °C", "h"),
    "max_operative_c": ("Highest operative temperature", "°C"),
    "overheating_freq_25_pct": ("Share of all hours above 25 °C", "%"),
    "adaptive_ii_hours_above_h": ("Occupied hours above the EN 16798-1 cat. II limit", "h"),
    "adaptive_ii_share_above_pct": ("Share of occupied hours above the EN 16798-1 cat. II "
                                    "limit", "%"),
    "adaptive_ii_degree_hours_above_kelvin_hours": ("Degree-hours above the EN 16798-1 "
                                                    "cat. II limit", "K·h"),
    "adaptive_ii_share_in_category_pct": ("Share of occupied hours within EN 16798-1 cat. II",
                                          "%"),
    "tm52_c1_exceedance_pct": ("TM52 criterion 1: hours of exceedance", "%"),
    "tm52_c2_worst_we_kelvin_hours": ("TM52 criterion 2: worst daily weighted exceedance",
                                      "K·h"),
    "tm52_c3_max_dt_k": ("TM52 criterion 3: largest ΔT", "K"),
    "tm52_failed_criteria": ("TM52 criteria failed", ""),
    "tm59_a_pct": ("TM59 criterion (a): hours of exceedance", "%"),
    "heating_kwh": ("Heating demand", "kWh"),
    "heating_kwh_m2": ("Heating demand per floor area", "kWh/m²"),
    "peak_heating_w": ("Peak heating power", "W"),
    "peak_heating_w_m2": ("Peak heating power per floor area", "W/m²"),
    "solar_windows_summer_kwh": ("Sun through the windows, June–August", "kWh"),
    "solar_windows_annual_kwh": ("Sun through the windows, whole period", "kWh"),
    "daily_swing_summer_k": ("Mean daily swing of the operative temperature, June–August",
                             "K"),
    "cost_rank": ("Cost and hassle rank (1 cheap … 5 costly)", ""),
}

#: Suffix of a metric column -> unit, longest first (read by :func:`unit_of`).
UNIT_SUFFIXES: tuple[tuple[str, str], ...] = (
    ("_kelvin_hours", "K·h"),
    ("_kwh_m2", "kWh/m²"),
    ("_w_m2", "W/m²"),
    ("_kwh", "kWh"),
    ("_mwh", "MWh"),
    ("_kw", "kW"),
    ("_w", "W"),
    ("_kelvin_hours", "K·h"),
    ("_h", "h"),
    ("_pct", "%"),
    ("_c", "°C"),
    ("_k", "K"),
)


def unit_of(name: str) -> str | None:
    """Unit of a code name: from :data:`LABELS`, else from its suffix, else None.

    Parameters
    ----------
    name : str
        A heat path or metric column name.

    Returns
    -------
    str or None
        The unit ("" for a dimensionless name in the table), None when unknown.
    """
    if name in LABELS:
        return LABELS[name][1]
    low = str(name).lower()
    return next((u for suffix, u in UNIT_SUFFIXES if low.endswith(suffix)), None)


def label(name: str, *, unit: bool = True, extra: Mapping[str, tuple[str, str]] | None = None
          ) -> str:
    """What a reader sees for a code name: words, and the unit in brackets.

    Parameters
    ----------
    name : str
        A heat path or metric column name.
    unit : bool, default True
        Append `` [unit]`` when the unit is known and not empty.
    extra : mapping of str to (str, str), optional
        Your own names -> (words, unit), looked up before :data:`LABELS`.

    Returns
    -------
    str
        E.g. ``label("heating_kwh_m2")`` -> ``"Heating demand per floor area [kWh/m²]"``; an
        unknown name is returned with underscores as spaces (and its suffix unit, if any).

    Examples
    --------
    >>> label("window_ventilation", unit=False)
    'Window airing'
    """
    table = {**LABELS, **dict(extra or {})}
    if name in table:
        words, u = table[name]
    else:
        words, u = str(name).replace("_", " ").capitalize(), unit_of(name) or ""
    return f"{words} [{u}]" if unit and u else words
