"""Airflow through windows and openings from wind and stack, and its heat conductance.

Plain functions on numbers, numpy arrays and pandas Series (a Series in gives a Series out on
the same index; otherwise a numpy array, 0-d for scalars). They need no network: the engine (or
a user in a notebook) evaluates them per step from the room and outdoor temperatures and the
wind speed, and turns the flow into a conductance with :func:`flow_conductance`.

Units: flows in m³/s inside (returned by every flow function), m³/h only at the edges
(:func:`to_m3h`, :func:`from_m3h`); temperatures in °C; wind speed in m/s; lengths in m;
areas in m²; pressures in Pa; angles in degrees.

Methods
-------
* single-sided, wind + stack + turbulence: :func:`single_sided_de_gids_phaff`
  (de Gids & Phaff 1982);
* single-sided, the larger of wind and stack: :func:`single_sided_en16798_7`
  (EN 16798-7:2017, from memory);
* one opening, stack only: :func:`single_opening_stack_bs5925` (BS 5925:1991);
* two openings, stack only: :func:`stack_flow` (BS 5925:1991);
* two openings, wind only (cross ventilation): :func:`cross_flow_wind` (BS 5925:1991);
* two openings, wind and stack together: :func:`two_opening_flow` (orifice equation around
  the pressure loop);
* orifice equation :func:`orifice_flow` (BS 5925:1991 eq. 2); openings in series
  :func:`series_area`;
* free area of a top-, bottom- or side-hung sash from its opening angle
  :func:`hinged_free_area` (plane geometry); EN 16798-7 opening-angle factor
  :func:`opening_angle_factor_en16798_7` (from memory); sash angle for a restricted gap
  :func:`restricted_opening_angle`;
* wind speed at a height :func:`wind_speed_at_height` (BS 5925 / CIBSE terrain law);
* heat conductance of a flow :func:`flow_conductance` (ρ·c_p·|V̇|).

Every function raises :class:`thermonet.errors.AirflowError` naming the parameter, the allowed
range and the value received (negative area or wind speed, C_d outside (0, 1], NaN/inf,
an angle outside 0 … 90°, Series on different indexes).

Effective area = discharge coefficient C_d × free area. The orifice functions take the free
area and C_d separately; the two single-sided correlations are fitted to the opening area
itself (no C_d).

Every function returns the volume flow as a magnitude [m³/s] except :func:`orifice_flow` and
:func:`two_opening_flow`, which are signed (see their docstrings). An exchange or through-flow
V̇ between a room at T_i and outdoors at T_e carries ρ·c_p·|V̇|·(T_e − T_i) into the room
whatever its direction, so the heat conductance is :func:`flow_conductance` of the magnitude.
"""

from __future__ import annotations

import numpy as np
import pandas as pd

from thermonet.constants import RHO_CP_AIR, SECONDS_PER_HOUR, ZERO_CELSIUS
from thermonet.errors import AirflowError

__all__ = [
    "GRAVITY",
    "GAS_CONSTANT_DRY_AIR",
    "STANDARD_PRESSURE",
    "TERRAIN_WIND_FACTORS",
    "air_density",
    "FLOW_LAWS",
    "cross_wind_speed",
    "FLOW_LAW_NAMES",
    "cross_flow_wind",
    "flow_conductance",
    "flow_law_coefficients",
    "from_m3h",
    "hinged_free_area",
    "law_flow",
    "opening_angle_factor_en16798_7",
    "orifice_flow",
    "restricted_opening_angle",
    "series_area",
    "single_opening_stack_bs5925",
    "single_sided_de_gids_phaff",
    "single_sided_en16798_7",
    "stack_flow",
    "stack_pressure",
    "to_m3h",
    "two_opening_flow",
    "wind_speed_at_height",
]

#: Standard acceleration of gravity g_n [m/s²] (3rd CGPM 1901; ISO 80000-3), exact.
GRAVITY = 9.80665

#: Specific gas constant of dry air R_d [J/(kg·K)]: 287.058 (R = 8.314462618 J/(mol·K),
#: CODATA 2018, over M_d = 0.0289647 kg/mol, ICAO standard atmosphere — from memory).
GAS_CONSTANT_DRY_AIR = 287.058

#: Standard sea-level air pressure [Pa] (ISO 2533 standard atmosphere), used when none given.
STANDARD_PRESSURE = 101325.0

#: Terrain factors (k, a) of the wind-speed power law U_z = U_10 · k · z^a, U_10 the mean wind
#: speed at 10 m in open country. BS 5925:1991 / CIBSE Guide A (from memory); the same four
#: rows are printed in Faber & Kell, Heating and Air-Conditioning of Buildings, Table 2.10.
TERRAIN_WIND_FACTORS: dict[str, tuple[float, float]] = {
    "open": (0.68, 0.17),          # open flat country
    "country": (0.52, 0.20),       # country with scattered wind breaks
    "urban": (0.35, 0.25),
    "city": (0.21, 0.33),
}

#: Reference temperature of the EN 16798-7 air density ratio ρ_a,ref / ρ_a,e [°C]
#: (from memory: ρ_a,ref = 1.204 kg/m³, dry air at 20 °C).
EN16798_REFERENCE_TEMPERATURE = 20.0


# --------------------------------------------------------------------------------------------
# input handling: scalar, ndarray or Series in; ndarray or Series out
# --------------------------------------------------------------------------------------------
def _index_of(*args):
    """The index of the first Series among ``args`` (all Series must share it), or None."""
    index = None
    for a in args:
        if isinstance(a, pd.Series):
            if index is None:
                index = a.index
            elif not a.index.equals(index):
                raise AirflowError(
                    f"Series inputs must share one index; got {len(index)} and {len(a.index)} "
                    "rows with different labels. Align them first (e.g. s.reindex(weather.index))"
                )
    return index


def _wrap(values, index, name):
    values = np.asarray(values, dtype=float)
    if index is not None:
        return pd.Series(np.broadcast_to(values, (len(index),)).copy(), index=index, name=name)
    return values


def _array(x, name, *, minimum=None, strict=False, maximum=None):
    """``x`` as a float array, checked finite and within bounds; errors name ``name``."""
    if isinstance(x, bool):
        raise AirflowError(f"{name} must be a number, array or Series, got a bool {x!r}")
    try:
        arr = np.asarray(x, dtype=float)
    except (TypeError, ValueError):
        raise AirflowError(f"{name} must be a number, array or Series of numbers, got "
                           f"{type(x).__name__} {x!r}") from None
    bad = ~np.isfinite(arr)
    if bad.any():
        where = int(np.flatnonzero(bad.ravel())[0])
        raise AirflowError(f"{name} must be finite; got {arr.ravel()[where]} at position {where}"
                           "; fill or drop the gap first")
    low = None
    if minimum is not None:
        low = (arr <= minimum) if strict else (arr < minimum)
    if low is not None and low.any():
        where = int(np.flatnonzero(low.ravel())[0])
        rel = ">" if strict else "≥"
        raise AirflowError(f"{name} must be {rel} {minimum}; got {arr.ravel()[where]} at "
                           f"position {where}")
    if maximum is not None and (arr > maximum).any():
        where = int(np.flatnonzero((arr > maximum).ravel())[0])
        raise AirflowError(f"{name} must be ≤ {maximum}; got {arr.ravel()[where]} at "
                           f"position {where}")
    return arr


def _cd(discharge_coefficient):
    return _array(discharge_coefficient, "discharge_coefficient [-]", minimum=0.0, strict=True,
                  maximum=1.0)


# --------------------------------------------------------------------------------------------
# units and conductance
# --------------------------------------------------------------------------------------------
def to_m3h(flow):
    """Volume flow from m³/s to m³/h (× 3600 s/h).

    Parameters
    ----------
    flow : float, array or Series
        Volume flow [m³/s].

    Returns
    -------
    ndarray or Series
        Volume flow [m³/h].
    """
    index = _index_of(flow)
    return _wrap(_array(flow, "flow [m³/s]") * SECONDS_PER_HOUR, index, "flow_m3h")


def from_m3h(flow_m3h):
    """Volume flow from m³/h to m³/s (÷ 3600 s/h).

    Parameters
    ----------
    flow_m3h : float, array or Series
        Volume flow [m³/h].

    Returns
    -------
    ndarray or Series
        Volume flow [m³/s].
    """
    index = _index_of(flow_m3h)
    return _wrap(_array(flow_m3h, "flow_m3h [m³/h]") / SECONDS_PER_HOUR, index, "flow_m3s")


def flow_conductance(flow, rho_cp=RHO_CP_AIR):
    """Heat conductance of an airflow, G = ρ·c_p·|V̇| [W/K].

    Parameters
    ----------
    flow : float, array or Series
        Volume flow [m³/s]; its sign (direction) does not matter: a through-flow or an
        exchange of |V̇| between a room at T_i and outdoors at T_e carries G·(T_e − T_i) [W]
        into the room either way.
    rho_cp : float, default :data:`thermonet.constants.RHO_CP_AIR` (1200)
        Volumetric heat capacity of air [J/(m³·K)].

    Returns
    -------
    ndarray or Series
        Conductance [W/K], ≥ 0.

    Notes
    -----
    ISO 13789:2017 ventilation heat transfer coefficient H_ve = ρ_a·c_a·q_v (from memory),
    with q_v in m³/s. 1 m³/h then gives 1200/3600 = 0.333 W/K.

    Examples
    --------
    >>> float(flow_conductance(0.1))      # 0.1 m³/s = 360 m³/h
    120.0
    """
    index = _index_of(flow)
    g = np.abs(_array(flow, "flow [m³/s]")) * _array(rho_cp, "rho_cp [J/(m³K)]", minimum=0.0,
                                                     strict=True)
    return _wrap(g, index, "conductance_w_per_k")


# --------------------------------------------------------------------------------------------
# air properties and driving pressures
# --------------------------------------------------------------------------------------------
def air_density(temp, pressure=STANDARD_PRESSURE):
    """Density of dry air from the ideal gas law, ρ = p / (R_d·T) [kg/m³].

    Parameters
    ----------
    temp : float, array or Series
        Air temperature [°C].
    pressure : float, array or Series, default 101325
        Air pressure [Pa].

    Returns
    -------
    ndarray or Series
        Density [kg/m³] (1.2041 at 20 °C and 101325 Pa).
    """
    index = _index_of(temp, pressure)
    t = _array(temp, "temp [°C]", minimum=-ZERO_CELSIUS, strict=True) + ZERO_CELSIUS
    p = _array(pressure, "pressure [Pa]", minimum=0.0, strict=True)
    return _wrap(p / (GAS_CONSTANT_DRY_AIR * t), index, "air_density")


def stack_pressure(height_difference, temp_in, temp_out, pressure=STANDARD_PRESSURE):
    """Stack (buoyancy) pressure difference over a height, Δp = g·h·(ρ_e − ρ_i) [Pa].

    Parameters
    ----------
    height_difference : float, array or Series
        Vertical distance h between the two openings (or heights in one opening) [m], ≥ 0.
    temp_in, temp_out : float, array or Series
        Indoor and outdoor air temperatures [°C].
    pressure : float, array or Series, default 101325
        Air pressure [Pa].

    Returns
    -------
    ndarray or Series
        Δp [Pa]; positive when the room is warmer than outdoors (air enters low, leaves high).

    References
    ----------
    BS 5925:1991, clause 10 (pressure differences due to temperature difference) — from memory.
    """
    index = _index_of(height_difference, temp_in, temp_out, pressure)
    h = _array(height_difference, "height_difference [m]", minimum=0.0)
    rho_i = np.asarray(air_density(_array(temp_in, "temp_in [°C]"), pressure))
    rho_e = np.asarray(air_density(_array(temp_out, "temp_out [°C]"), pressure))
    return _wrap(GRAVITY * h * (rho_e - rho_i), index, "stack_pressure")


def wind_speed_at_height(wind_speed, height, terrain="open"):
    """Mean wind speed at a height from the 10 m open-country value, U_z = U_10·k·z^a [m/s].

    Parameters
    ----------
    wind_speed : float, array or Series
        Mean wind speed at 10 m in open country (weather-station wind) [m/s], ≥ 0.
    height : float
        Height above ground [m], > 0 (e.g. the building or opening height).
    terrain : {"open", "country", "urban", "city"}
        Terrain class of :data:`TERRAIN_WIND_FACTORS`.

    Returns
    -------
    ndarray or Series
        Wind speed at ``height`` [m/s].

    References
    ----------
    BS 5925:1991 (Table 8) and CIBSE Guide A (from memory); the factors are printed in Faber &
    Kell, Heating and Air-Conditioning of Buildings, Table 2.10.
    """
    if terrain not in TERRAIN_WIND_FACTORS:
        raise AirflowError(f"terrain must be one of {sorted(TERRAIN_WIND_FACTORS)}, got "
                           f"{terrain!r}")
    index = _index_of(wind_speed)
    k, a = TERRAIN_WIND_FACTORS[terrain]
    u = _array(wind_speed, "wind_speed [m/s]", minimum=0.0)
    z = _array(height, "height [m]", minimum=0.0, strict=True)
    return _wrap(u * k * z**a, index, "wind_speed")


# --------------------------------------------------------------------------------------------
# orifice equation and openings in series
# --------------------------------------------------------------------------------------------
def orifice_flow(area, pressure_difference, discharge_coefficient=0.61, density=1.2041):
    """Flow through a sharp-edged opening, V̇ = C_d·A·√(2|Δp|/ρ)·sign(Δp) [m³/s].

    Parameters
    ----------
    area : float, array or Series
        Free area A of the opening [m²], ≥ 0.
    pressure_difference : float, array or Series
        Δp across the opening [Pa]; the flow has its sign.
    discharge_coefficient : float, default 0.61
        C_d [-], 0 < C_d ≤ 1 (0.61 for a sharp-edged orifice, BS 5925, from memory).
    density : float, default 1.2041
        Air density ρ [kg/m³] (dry air, 20 °C, 101325 Pa).

    Returns
    -------
    ndarray or Series
        Signed volume flow [m³/s].

    References
    ----------
    BS 5925:1991 + A1:1995, clause 9, equation (2): Q = C_d·A·(2Δp/ρ)^½.
    """
    index = _index_of(area, pressure_difference, discharge_coefficient, density)
    a = _array(area, "area [m²]", minimum=0.0)
    dp = _array(pressure_difference, "pressure_difference [Pa]")
    rho = _array(density, "density [kg/m³]", minimum=0.0, strict=True)
    q = _cd(discharge_coefficient) * a * np.sqrt(2.0 * np.abs(dp) / rho) * np.sign(dp)
    return _wrap(q, index, "flow_m3s")


def series_area(*areas):
    """Equivalent area of openings in series, 1/A² = Σ 1/A_j² [m²].

    Parameters
    ----------
    *areas : float, array or Series
        Free (or effective) areas of the openings the same flow passes in turn [m²], ≥ 0.
        A closed opening (0) closes the path.

    Returns
    -------
    ndarray or Series
        Equivalent area [m²].

    References
    ----------
    BS 5925:1991, Table 9 / CIBSE Guide A, natural ventilation (openings in series; same C_d) —
    from memory; it follows from equal flow through each orifice and added pressure drops.
    """
    if not areas:
        raise AirflowError("series_area needs at least one area [m²]")
    index = _index_of(*areas)
    arrs = [_array(a, f"area {i + 1} [m²]", minimum=0.0) for i, a in enumerate(areas)]
    inv = sum(np.divide(1.0, a**2, out=np.full(np.shape(a), np.inf), where=a > 0) for a in arrs)
    return _wrap(np.where(np.isinf(inv), 0.0, 1.0 / np.sqrt(inv)), index, "area")


# --------------------------------------------------------------------------------------------
# single-sided ventilation (one opening, or openings in one façade)
# --------------------------------------------------------------------------------------------
def _delta_t(temp_in, temp_out):
    return np.abs(_array(temp_in, "temp_in [°C]") - _array(temp_out, "temp_out [°C]"))


def single_sided_de_gids_phaff(area, height, temp_in, temp_out, wind_speed, *, c1=0.001,
                               c2=0.0035, c3=0.01):
    """Single-sided ventilation through an open window, de Gids & Phaff (1982) [m³/s].

    Parameters
    ----------
    area : float, array or Series
        Opening area A of the window [m²], ≥ 0.
    height : float, array or Series
        Height H of the opening [m], ≥ 0.
    temp_in, temp_out : float, array or Series
        Indoor and outdoor air temperatures [°C].
    wind_speed : float, array or Series
        Meteorological wind speed U (10 m, weather station) [m/s], ≥ 0.
    c1 : float, default 0.001
        Wind coefficient [-].
    c2 : float, default 0.0035
        Stack coefficient [m/(s²·K)].
    c3 : float, default 0.01
        Turbulence term [m²/s²]; it gives a flow of 0.05·A m³/s with no wind and no
        temperature difference. Set 0 to drop it.

    Returns
    -------
    ndarray or Series
        Volume flow exchanged through the opening [m³/s], ≥ 0, even in the sign of ΔT.

    Notes
    -----
    .. math::

        U_{eff} = \\sqrt{C_1 U^2 + C_2 H |T_i - T_e| + C_3}, \\qquad Q = \\tfrac12 A U_{eff}

    fitted to tracer-gas measurements on single windows in the Netherlands. The constants are
    those quoted with the correlation in the natural-ventilation literature (from memory).

    References
    ----------
    de Gids, W., Phaff, H. (1982). Ventilation rates and energy consumption due to open
    windows: a brief overview of research in the Netherlands. Air Infiltration Review 4(1),
    4–5 (from memory).

    Examples
    --------
    >>> round(float(single_sided_de_gids_phaff(1.0, 1.2, 25.0, 15.0, 3.0)), 5)
    0.12349
    """
    index = _index_of(area, height, temp_in, temp_out, wind_speed)
    a = _array(area, "area [m²]", minimum=0.0)
    h = _array(height, "height [m]", minimum=0.0)
    u = _array(wind_speed, "wind_speed [m/s]", minimum=0.0)
    consts = [_array(c, n, minimum=0.0) for c, n in ((c1, "c1 [-]"), (c2, "c2 [m/(s²K)]"),
                                                     (c3, "c3 [m²/s²]"))]
    u_eff = np.sqrt(consts[0] * u**2 + consts[1] * h * _delta_t(temp_in, temp_out) + consts[2])
    return _wrap(0.5 * a * u_eff, index, "flow_m3s")


def single_sided_en16798_7(area, height, temp_in, temp_out, wind_speed, *, c_wind=0.001,
                           c_stack=0.0035, density_ratio=True):
    """Single-sided ventilation by window opening, EN 16798-7:2017 (from memory) [m³/s].

    Parameters
    ----------
    area : float, array or Series
        Total open area of the windows in the façade A_w,tot [m²], ≥ 0 (for a hinged sash,
        the sash area times :func:`opening_angle_factor_en16798_7`).
    height : float, array or Series
        Stack height of the window h_w,st [m], ≥ 0.
    temp_in, temp_out : float, array or Series
        Zone and outdoor air temperatures [°C].
    wind_speed : float, array or Series
        Wind speed at 10 m at the site u_10,site [m/s], ≥ 0.
    c_wind : float, default 0.001
        C_wnd [-].
    c_stack : float, default 0.0035
        C_st [m/(s²·K)].
    density_ratio : bool, default True
        Multiply by ρ_a,ref/ρ_a,e = (θ_e + 273.15)/(20 + 273.15) (ideal gas at equal
        pressure), which turns the flow of outdoor air into a flow at the reference density.

    Returns
    -------
    ndarray or Series
        Volume flow [m³/s], ≥ 0, even in the sign of ΔT.

    Notes
    -----
    .. math::

        q_V = \\frac{\\rho_{a,ref}}{\\rho_{a,e}} \\frac{A_{w,tot}}{2}
              \\sqrt{\\max(C_{wnd} u_{10,site}^2,\\; C_{st} h_{w,st} |\\theta_i - \\theta_e|)}

    The standard writes it in m³/h (a factor 3600). Unlike de Gids & Phaff, wind and stack
    are not added: the larger one drives the flow, and there is no turbulence term, so no
    wind and no ΔT give no flow.

    References
    ----------
    EN 16798-7:2017, Energy performance of buildings — Ventilation for buildings — Part 7:
    Calculation methods for the determination of air flow rates in buildings including
    infiltration, window opening for single-sided ventilation — from memory; the same
    constants (0.001, 0.0035) as de Gids & Phaff (1982). Verify against the standard before
    relying on a tight tolerance.
    """
    index = _index_of(area, height, temp_in, temp_out, wind_speed)
    a = _array(area, "area [m²]", minimum=0.0)
    h = _array(height, "height [m]", minimum=0.0)
    u = _array(wind_speed, "wind_speed [m/s]", minimum=0.0)
    cw = _array(c_wind, "c_wind [-]", minimum=0.0)
    cs = _array(c_stack, "c_stack [m/(s²K)]", minimum=0.0)
    drive = np.maximum(cw * u**2, cs * h * _delta_t(temp_in, temp_out))
    q = 0.5 * a * np.sqrt(drive)
    if density_ratio:
        t_e = _array(temp_out, "temp_out [°C]", minimum=-ZERO_CELSIUS, strict=True)
        q = q * (t_e + ZERO_CELSIUS) / (EN16798_REFERENCE_TEMPERATURE + ZERO_CELSIUS)
    return _wrap(q, index, "flow_m3s")


def _mean_absolute(temp_in, temp_out):
    t_i = _array(temp_in, "temp_in [°C]", minimum=-ZERO_CELSIUS, strict=True)
    t_e = _array(temp_out, "temp_out [°C]", minimum=-ZERO_CELSIUS, strict=True)
    return 0.5 * (t_i + t_e) + ZERO_CELSIUS


def single_opening_stack_bs5925(area, height, temp_in, temp_out, discharge_coefficient=0.61):
    """Stack-driven exchange through one opening, BS 5925:1991 [m³/s].

    Parameters
    ----------
    area : float, array or Series
        Free area A of the opening [m²], ≥ 0.
    height : float, array or Series
        Height h of the opening [m], ≥ 0.
    temp_in, temp_out : float, array or Series
        Indoor and outdoor air temperatures [°C].
    discharge_coefficient : float, default 0.61
        C_d [-].

    Returns
    -------
    ndarray or Series
        Volume flow in (= out) [m³/s], ≥ 0, even in the sign of ΔT.

    Notes
    -----
    .. math:: Q = C_d \\frac{A}{3} \\sqrt{\\frac{|\\Delta T|\\, g\\, h}{\\bar T}}

    with T̄ the mean of the indoor and outdoor absolute temperatures [K]: air enters through
    the lower half of the opening and leaves through the upper half.

    References
    ----------
    BS 5925:1991, Table 9 (single opening, due to temperature difference); CIBSE Guide A,
    natural ventilation — from memory.
    """
    index = _index_of(area, height, temp_in, temp_out)
    a = _array(area, "area [m²]", minimum=0.0)
    h = _array(height, "height [m]", minimum=0.0)
    dt = _delta_t(temp_in, temp_out)
    q = _cd(discharge_coefficient) * a / 3.0 * np.sqrt(dt * GRAVITY * h
                                                       / _mean_absolute(temp_in, temp_out))
    return _wrap(q, index, "flow_m3s")


# --------------------------------------------------------------------------------------------
# two openings: stack, wind (cross ventilation), both
# --------------------------------------------------------------------------------------------
def stack_flow(area_1, area_2, height_difference, temp_in, temp_out,
               discharge_coefficient=0.61):
    """Stack-driven flow through two openings at different heights, BS 5925:1991 [m³/s].

    Parameters
    ----------
    area_1, area_2 : float, array or Series
        Free areas of the lower and upper openings [m²], ≥ 0.
    height_difference : float, array or Series
        Vertical distance between the centres of the openings h [m], ≥ 0.
    temp_in, temp_out : float, array or Series
        Indoor and outdoor air temperatures [°C].
    discharge_coefficient : float, default 0.61
        C_d [-], the same for both openings.

    Returns
    -------
    ndarray or Series
        Volume flow through the path [m³/s], ≥ 0 (in low and out high when the room is
        warmer, the reverse when it is colder).

    Notes
    -----
    .. math::

        Q = C_d A_b \\sqrt{\\frac{2 |\\Delta T| g h}{\\bar T}}, \\qquad
        \\frac{1}{A_b^2} = \\frac{1}{A_1^2} + \\frac{1}{A_2^2}

    T̄ is the mean of the indoor and outdoor absolute temperatures [K]. The flow grows as
    √ΔT and √h.

    References
    ----------
    BS 5925:1991, Table 9 (temperature difference only, openings at two heights); CIBSE
    Guide A, natural ventilation — from memory.
    """
    index = _index_of(area_1, area_2, height_difference, temp_in, temp_out)
    a_b = np.asarray(series_area(area_1, area_2))
    h = _array(height_difference, "height_difference [m]", minimum=0.0)
    dt = _delta_t(temp_in, temp_out)
    q = _cd(discharge_coefficient) * a_b * np.sqrt(2.0 * dt * GRAVITY * h
                                                    / _mean_absolute(temp_in, temp_out))
    return _wrap(q, index, "flow_m3s")


def cross_flow_wind(area_1, area_2, wind_speed, cp_1, cp_2, discharge_coefficient=0.61):
    """Wind-driven cross ventilation through openings in two façades, BS 5925:1991 [m³/s].

    Parameters
    ----------
    area_1, area_2 : float, array or Series
        Free areas of the openings in the two façades [m²], ≥ 0.
    wind_speed : float, array or Series
        Reference wind speed U_r at the height the pressure coefficients refer to [m/s], ≥ 0
        (see :func:`wind_speed_at_height`).
    cp_1, cp_2 : float, array or Series
        Wind pressure coefficients of the two façades [-] (e.g. +0.6 windward, −0.3 leeward;
        they depend on wind direction, building shape and shelter: take them from a
        published table for your case).
    discharge_coefficient : float, default 0.61
        C_d [-].

    Returns
    -------
    ndarray or Series
        Volume flow through the room [m³/s], ≥ 0.

    Notes
    -----
    .. math::

        Q = C_d A_w U_r \\sqrt{|\\Delta C_p|}, \\qquad
        \\frac{1}{A_w^2} = \\frac{1}{A_1^2} + \\frac{1}{A_2^2}

    References
    ----------
    BS 5925:1991, Table 9 (wind only, openings in opposite walls); CIBSE Guide A, natural
    ventilation — from memory.
    """
    index = _index_of(area_1, area_2, wind_speed, cp_1, cp_2)
    a_w = np.asarray(series_area(area_1, area_2))
    u = _array(wind_speed, "wind_speed [m/s]", minimum=0.0)
    dcp = np.abs(_array(cp_1, "cp_1 [-]") - _array(cp_2, "cp_2 [-]"))
    return _wrap(_cd(discharge_coefficient) * a_w * u * np.sqrt(dcp), index, "flow_m3s")


def two_opening_flow(area_1, area_2, temp_in, temp_out, *, wind_speed=0.0, cp_1=0.0, cp_2=0.0,
                     height_1=0.0, height_2=0.0, discharge_coefficient=0.61,
                     pressure=STANDARD_PRESSURE):
    """Flow through two openings in series driven by wind and stack together [m³/s].

    Parameters
    ----------
    area_1, area_2 : float, array or Series
        Free areas of openings 1 and 2 [m²], ≥ 0.
    temp_in, temp_out : float, array or Series
        Indoor and outdoor air temperatures [°C].
    wind_speed : float, array or Series, default 0
        Reference wind speed of the pressure coefficients [m/s], ≥ 0.
    cp_1, cp_2 : float, array or Series, default 0
        Wind pressure coefficients at openings 1 and 2 [-].
    height_1, height_2 : float, array or Series, default 0
        Heights of the opening centres [m].
    discharge_coefficient : float, default 0.61
        C_d [-], the same for both openings.
    pressure : float, default 101325
        Air pressure [Pa].

    Returns
    -------
    ndarray or Series
        Signed volume flow of outdoor air [m³/s]: positive when air enters through opening 1
        and leaves through opening 2, negative for the reverse. Use its magnitude for the
        heat conductance.

    Notes
    -----
    The driving pressure around the loop outdoors → 1 → room → 2 → outdoors is

    .. math::

        \\Delta p = \\tfrac12 \\rho_e U^2 (C_{p,1} - C_{p,2})
                    + g (z_2 - z_1) (\\rho_e - \\rho_i)

    and the same flow crosses both openings, each obeying the orifice equation
    (:func:`orifice_flow`), so the pressure drops add and
    Q = C_d A_s √(2|Δp|/ρ_e) with 1/A_s² = 1/A_1² + 1/A_2² (:func:`series_area`); both
    openings see the outdoor density (the Boussinesq approximation of BS 5925). With no wind
    this is :func:`stack_flow` up to BS 5925's approximation of (ρ_e − ρ_i)/ρ_e = ΔT/T_i by
    ΔT/T̄; with no stack it is :func:`cross_flow_wind` exactly. Wind and stack may oppose
    each other and cancel.

    References
    ----------
    BS 5925:1991, clause 9 eq. (2) (orifice equation) and clause 10 (pressures from wind and
    temperature difference); CIBSE AM10 (2005), natural ventilation in non-domestic buildings,
    pressure-loop method — from memory.
    """
    index = _index_of(area_1, area_2, temp_in, temp_out, wind_speed, cp_1, cp_2, height_1,
                      height_2)
    a_s = np.asarray(series_area(area_1, area_2))
    u = _array(wind_speed, "wind_speed [m/s]", minimum=0.0)
    rho_e = np.asarray(air_density(_array(temp_out, "temp_out [°C]"), pressure))
    rho_i = np.asarray(air_density(_array(temp_in, "temp_in [°C]"), pressure))
    dz = _array(height_2, "height_2 [m]") - _array(height_1, "height_1 [m]")
    dp = (0.5 * rho_e * u**2 * (_array(cp_1, "cp_1 [-]") - _array(cp_2, "cp_2 [-]"))
          + GRAVITY * dz * (rho_e - rho_i))
    q = _cd(discharge_coefficient) * a_s * np.sqrt(2.0 * np.abs(dp) / rho_e) * np.sign(dp)
    return _wrap(q, index, "flow_m3s")


# --------------------------------------------------------------------------------------------
# opening geometry
# --------------------------------------------------------------------------------------------
_HINGES = ("top", "bottom", "side")


def hinged_free_area(width, height, angle, hinge="top"):
    """Free area of a hinged sash opened by an angle: the gaps around the sash [m²].

    Parameters
    ----------
    width, height : float, array or Series
        Clear width and height of the opening (sash) [m], ≥ 0.
    angle : float, array or Series
        Opening angle α of the sash from the closed position [°], 0 … 90.
    hinge : {"top", "bottom", "side"}
        Top-hung and bottom-hung sashes turn about a horizontal edge (length = width), side-hung
        sashes about a vertical one (length = height).

    Returns
    -------
    ndarray or Series
        Free area [m²], at most width × height.

    Notes
    -----
    With L the length of the hinged edge and D the sash dimension across it, air passes the
    open sash through the gap at the far edge (a rectangle L × s, s = 2 D sin(α/2) the
    distance between the sash edge and the frame) and the two triangular gaps at the ends
    (two sides D enclosing α: ½ D² sin α each):

    .. math::

        A_{free} = \\min\\left(L D,\\;
                   2 L D \\sin\\tfrac{\\alpha}{2} + D^2 \\sin\\alpha\\right)

    The free area is the smallest area the air passes through, so it never exceeds the clear
    opening L·D (the definition of free area in CIBSE AM10 — from memory). Multiply by a
    discharge coefficient for the effective area of the orifice functions; the two
    single-sided correlations take an area directly.

    References
    ----------
    Plane geometry of the gaps; free-area definition from CIBSE AM10 (2005), Natural
    ventilation in non-domestic buildings — from memory.
    """
    if hinge not in _HINGES:
        raise AirflowError(f"hinge must be one of {_HINGES}, got {hinge!r}")
    index = _index_of(width, height, angle)
    w = _array(width, "width [m]", minimum=0.0)
    h = _array(height, "height [m]", minimum=0.0)
    alpha = np.radians(_array(angle, "angle [°]", minimum=0.0, maximum=90.0))
    length, depth = (w, h) if hinge in ("top", "bottom") else (h, w)
    gaps = 2.0 * length * depth * np.sin(alpha / 2.0) + depth**2 * np.sin(alpha)
    return _wrap(np.minimum(length * depth, gaps), index, "free_area")


def opening_angle_factor_en16798_7(angle):
    """Ratio of the effective to the fully open area of a hinged window, EN 16798-7 [-].

    Parameters
    ----------
    angle : float, array or Series
        Opening angle α of a top- or bottom-hung sash [°], 0 … 90.

    Returns
    -------
    ndarray or Series
        C_k(α) [-] (0 at 0°, 0.900 at 90°).

    Notes
    -----
    C_k(α) = 2.60·10⁻⁷ α³ − 1.19·10⁻⁴ α² + 1.86·10⁻² α, α in degrees; multiply the sash area
    by it for :func:`single_sided_en16798_7`.

    References
    ----------
    EN 16798-7:2017 and CEN/TR 16798-8:2017 (window opening angle) — from memory.
    """
    index = _index_of(angle)
    a = _array(angle, "angle [°]", minimum=0.0, maximum=90.0)
    return _wrap(2.60e-7 * a**3 - 1.19e-4 * a**2 + 1.86e-2 * a, index, "opening_factor")


def restricted_opening_angle(depth, gap):
    """Sash angle at which the free edge stands ``gap`` off the frame (a restrictor) [°].

    Parameters
    ----------
    depth : float, array or Series
        Sash dimension across the hinge D [m] (height for top/bottom-hung, width for
        side-hung), > 0.
    gap : float, array or Series
        Opening distance at the free edge the restrictor allows, s [m], 0 ≤ s ≤ D·√2 (90°).
        Security and fall-prevention restrictors commonly limit s to 0.1 m (common practice,
        no source).

    Returns
    -------
    ndarray or Series
        Opening angle α = 2·asin(s / 2D) [°], to use with :func:`hinged_free_area`.
    """
    index = _index_of(depth, gap)
    d = _array(depth, "depth [m]", minimum=0.0, strict=True)
    s = _array(gap, "gap [m]", minimum=0.0)
    too_wide = s > d * np.sqrt(2.0) * (1.0 + 1e-12)
    if too_wide.any():
        where = int(np.flatnonzero(too_wide.ravel())[0])
        raise AirflowError(f"gap [m] of {s.ravel()[where]} at position {where} exceeds "
                           f"depth·√2 = {np.broadcast_to(d, s.shape).ravel()[where] * 2**0.5:.4g}"
                           " m, the gap of a sash opened 90°; give a smaller gap")
    return _wrap(np.degrees(2.0 * np.arcsin(np.minimum(s / (2.0 * d), np.sqrt(0.5)))), index,
                 "angle")


# --------------------------------------------------------------------------------------------
# flow laws stepped by the engine: one scalar form for every method above
# --------------------------------------------------------------------------------------------
#: Names of the flow laws a window link can follow (:func:`flow_law_coefficients`).
FLOW_LAWS = ("de_gids_phaff", "en16798_7", "bs5925_single", "stack_two_openings",
             "cross_wind")

#: Each flow law in words, with its source (for tables and reports).
FLOW_LAW_NAMES = {
    "de_gids_phaff": "single-sided, de Gids & Phaff (1982)",
    "en16798_7": "single-sided, EN 16798-7:2017",
    "bs5925_single": "one opening, stack, BS 5925:1991",
    "stack_two_openings": "two openings, stack, BS 5925:1991",
    "cross_wind": "cross ventilation by wind, BS 5925:1991",
}

#: Length of a flow law's coefficient vector ``(k, w, s, c, p, mode, density)``.
LAW_SIZE = 7


def _law_required(law: str, given: dict, required: tuple, optional: dict) -> dict:
    unknown = sorted(set(given) - set(required) - set(optional))
    missing = [k for k in required if k not in given]
    if unknown or missing:
        raise AirflowError(
            f"flow law {law!r} takes {', '.join(required)} (required) and "
            f"{', '.join(optional) or 'nothing else'} (optional); "
            + (f"missing {', '.join(missing)}" if missing else "")
            + ("; " if missing and unknown else "")
            + (f"unknown {', '.join(unknown)}" if unknown else ""))
    out = dict(optional)
    out.update(given)
    return out


def _scalar(x, name, **kw) -> float:
    a = _array(x, name, **kw)
    if a.ndim:
        raise AirflowError(f"{name} of a flow law must be a single number, got an array of "
                           f"shape {a.shape}; use one window link per distinct opening")
    return float(a)


def flow_law_coefficients(law: str, **params) -> np.ndarray:
    """Coefficients of a flow law in the one scalar form the engine steps.

    Every method of this module that depends on the indoor temperature, the outdoor
    temperature and the wind speed can be written

    .. math::

        \\dot V = k \\, \\sqrt{D}\\, \\rho_r, \\qquad
        D = \\begin{cases} w U^2 + s |\\Delta T| / \\bar T^{\\,p} + c & (\\text{mode } 0)\\\\
                           \\max(w U^2,\\; s |\\Delta T| / \\bar T^{\\,p}) + c
                           & (\\text{mode } 1)\\end{cases}

    with U the meteorological wind speed [m/s], ΔT = T_i − T_e [K], T̄ the mean absolute
    temperature of the two sides [K] and ρ_r = (T_e + 273.15)/(20 + 273.15) when ``density``
    is 1 (else 1). :func:`law_flow` evaluates it; the tests check it against the named
    functions on random inputs.

    Parameters
    ----------
    law : {"de_gids_phaff", "en16798_7", "bs5925_single", "stack_two_openings", "cross_wind"}
        The method:

        * ``"de_gids_phaff"`` — :func:`single_sided_de_gids_phaff`; ``area`` [m²],
          ``height`` [m], optional ``c1`` [-], ``c2`` [m/(s²K)], ``c3`` [m²/s²];
        * ``"en16798_7"`` — :func:`single_sided_en16798_7`; ``area`` [m²], ``height`` [m],
          optional ``c_wind`` [-], ``c_stack`` [m/(s²K)], ``density_ratio`` (bool);
        * ``"bs5925_single"`` — :func:`single_opening_stack_bs5925`; ``area`` [m²],
          ``height`` [m], optional ``discharge_coefficient`` [-];
        * ``"stack_two_openings"`` — :func:`stack_flow`; ``area_1``, ``area_2`` [m²],
          ``height_difference`` [m], optional ``discharge_coefficient`` [-];
        * ``"cross_wind"`` — :func:`cross_flow_wind`; ``area_1``, ``area_2`` [m²], ``cp_1``,
          ``cp_2`` [-], optional ``discharge_coefficient`` [-] and ``wind_factor`` [-], the
          ratio of the wind speed at the openings' reference height to the meteorological
          one (e.g. ``wind_speed_at_height(1.0, z, terrain)``).
    **params
        The law's parameters, as listed.

    Returns
    -------
    ndarray (7,)
        ``k`` [m²], ``w`` [-], ``s`` [m²/(s²K)·K^p], ``c`` [m²/s²], ``p`` [-], ``mode``,
        ``density``.

    Raises
    ------
    AirflowError
        An unknown law, a missing or unknown parameter, a value out of range.

    References
    ----------
    The methods' own references: de Gids & Phaff (1982); EN 16798-7:2017 (from memory);
    BS 5925:1991 (see the functions named above).

    Examples
    --------
    >>> c = flow_law_coefficients("de_gids_phaff", area=1.0, height=1.2)
    >>> round(law_flow(c, 25.0, 15.0, 3.0), 5)
    0.12349
    """
    cd = {"discharge_coefficient": 0.61}
    if law == "de_gids_phaff":
        p = _law_required(law, params, ("area", "height"), {"c1": 0.001, "c2": 0.0035,
                                                             "c3": 0.01})
        a = _scalar(p["area"], "area [m²]", minimum=0.0)
        h = _scalar(p["height"], "height [m]", minimum=0.0)
        c1, c2, c3 = (_scalar(p[k], k, minimum=0.0) for k in ("c1", "c2", "c3"))
        return np.array([0.5 * a, c1, c2 * h, c3, 0.0, 0.0, 0.0])
    if law == "en16798_7":
        p = _law_required(law, params, ("area", "height"),
                          {"c_wind": 0.001, "c_stack": 0.0035, "density_ratio": True})
        a = _scalar(p["area"], "area [m²]", minimum=0.0)
        h = _scalar(p["height"], "height [m]", minimum=0.0)
        cw = _scalar(p["c_wind"], "c_wind [-]", minimum=0.0)
        cs = _scalar(p["c_stack"], "c_stack [m/(s²K)]", minimum=0.0)
        return np.array([0.5 * a, cw, cs * h, 0.0, 0.0, 1.0, float(bool(p["density_ratio"]))])
    if law == "bs5925_single":
        p = _law_required(law, params, ("area", "height"), cd)
        a = _scalar(p["area"], "area [m²]", minimum=0.0)
        h = _scalar(p["height"], "height [m]", minimum=0.0)
        k = float(_cd(p["discharge_coefficient"])) * a / 3.0
        return np.array([k, 0.0, GRAVITY * h, 0.0, 1.0, 0.0, 0.0])
    if law == "stack_two_openings":
        p = _law_required(law, params, ("area_1", "area_2", "height_difference"), cd)
        ab = float(np.asarray(series_area(_scalar(p["area_1"], "area_1 [m²]", minimum=0.0),
                                          _scalar(p["area_2"], "area_2 [m²]", minimum=0.0))))
        h = _scalar(p["height_difference"], "height_difference [m]", minimum=0.0)
        k = float(_cd(p["discharge_coefficient"])) * ab
        return np.array([k, 0.0, 2.0 * GRAVITY * h, 0.0, 1.0, 0.0, 0.0])
    if law == "cross_wind":
        p = _law_required(law, params, ("area_1", "area_2", "cp_1", "cp_2"),
                          dict(cd, wind_factor=1.0))
        aw = float(np.asarray(series_area(_scalar(p["area_1"], "area_1 [m²]", minimum=0.0),
                                          _scalar(p["area_2"], "area_2 [m²]", minimum=0.0))))
        dcp = abs(_scalar(p["cp_1"], "cp_1 [-]") - _scalar(p["cp_2"], "cp_2 [-]"))
        f = _scalar(p["wind_factor"], "wind_factor [-]", minimum=0.0)
        k = float(_cd(p["discharge_coefficient"])) * aw
        return np.array([k, dcp * f * f, 0.0, 0.0, 0.0, 0.0, 0.0])
    raise AirflowError(f"unknown flow law {law!r}; choose one of {', '.join(FLOW_LAWS)}")


def law_flow(coef, temp_in: float, temp_out: float, wind_speed: float) -> float:
    """Volume flow [m³/s] of a flow law (:func:`flow_law_coefficients`) at one instant.

    Plain scalar arithmetic, so that the engine compiles the same function into its
    stepping kernel.

    Parameters
    ----------
    coef : ndarray (7,)
        From :func:`flow_law_coefficients`.
    temp_in, temp_out : float
        Temperatures of the two sides [°C] (room, outdoors).
    wind_speed : float
        Meteorological wind speed [m/s] (negative values count as 0).

    Returns
    -------
    float
        Volume flow magnitude [m³/s], ≥ 0.
    """
    u = max(wind_speed, 0.0)
    dt = abs(temp_in - temp_out)
    t_mean = 0.5 * (temp_in + temp_out) + 273.15
    stack = coef[2] * dt
    if coef[4] != 0.0:
        stack = stack / t_mean ** coef[4]
    wind = coef[1] * u * u
    if coef[5] != 0.0:
        d = max(wind, stack) + coef[3]
    else:
        d = wind + stack + coef[3]
    q = coef[0] * np.sqrt(max(d, 0.0))
    if coef[6] != 0.0:
        q = q * (temp_out + 273.15) / (EN16798_REFERENCE_TEMPERATURE + 273.15)
    return q


def cross_wind_speed(wind_speed, wind_direction, facade_azimuths, cp_table):
    """Effective wind speed of cross ventilation with wind-direction-dependent C_p [m/s].

    For two openings in façades facing ``facade_azimuths``, the BS 5925 cross-flow
    (:func:`cross_flow_wind`) is ``Q = C_d A_w U √|C_p,1(θ₁) − C_p,2(θ₂)|`` with θ the angle
    between the wind's origin and each façade's outward normal. This returns
    ``U √|ΔC_p(t)|`` so that a window link with ``law="cross_wind", cp_1=1, cp_2=0`` and
    ``wind=`` this Series gives the direction-dependent flow.

    Parameters
    ----------
    wind_speed : pandas.Series
        Wind speed at the reference height of the C_p data [m/s], ≥ 0.
    wind_direction : pandas.Series
        Direction the wind comes from [°], clockwise from north (0 … 360), same index.
    facade_azimuths : tuple of float
        Outward normals of the two façades [°], clockwise from north.
    cp_table : tuple of (array_like, array_like)
        Angles between wind origin and façade normal [°] (increasing, within 0 … 180) and
        the façade's wind pressure coefficient C_p [-] at those angles; interpolated
        linearly and symmetric about the normal. Take the values from a published data set
        for the building's shape and exposure; none is built in.

    Returns
    -------
    pandas.Series
        Effective wind speed [m/s] on the same index.

    Raises
    ------
    AirflowError
        Different indexes, negative speed, directions outside 0 … 360°, a bad table.

    References
    ----------
    BS 5925:1991, cross ventilation by wind (the flow through two openings in series with the
    difference of their pressure coefficients) — from memory.
    """
    if not (isinstance(wind_speed, pd.Series) and isinstance(wind_direction, pd.Series)):
        raise AirflowError("cross_wind_speed: wind_speed and wind_direction must be Series "
                           "on the weather index")
    if not wind_speed.index.equals(wind_direction.index):
        raise AirflowError("cross_wind_speed: wind_speed and wind_direction must share one "
                           "index; align them first")
    u = _array(wind_speed, "wind_speed [m/s]", minimum=0.0)
    d = _array(wind_direction, "wind_direction [°]", minimum=0.0, maximum=360.0)
    angles = np.asarray(cp_table[0], dtype=float)
    cps = np.asarray(cp_table[1], dtype=float)
    if (angles.ndim != 1 or angles.shape != cps.shape or len(angles) < 2
            or not np.all(np.diff(angles) > 0) or angles[0] < 0 or angles[-1] > 180
            or not np.isfinite(cps).all()):
        raise AirflowError("cross_wind_speed: cp_table must be (angles, cp) of equal length "
                           "≥ 2, angles increasing within 0 … 180°, cp finite")
    if len(facade_azimuths) != 2:
        raise AirflowError(f"cross_wind_speed: give two façade azimuths, got {facade_azimuths!r}")

    def cp(normal):
        rel = np.abs((d - float(normal) + 180.0) % 360.0 - 180.0)
        return np.interp(rel, angles, cps)

    dcp = np.abs(cp(facade_azimuths[0]) - cp(facade_azimuths[1]))
    return pd.Series(u * np.sqrt(dcp), index=wind_speed.index, name="cross_wind_speed")
