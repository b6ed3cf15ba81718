"""Airflows of a zone: infiltration (from an airtightness test, ISO 13789), balanced
mechanical ventilation with heat recovery and bypass, window opening (airing, night
ventilation) and air exchange with a buffer space. Each is one airflow link from
:meth:`thermonet.network.Network.add_airflow`, with a switch where it is controlled."""

from __future__ import annotations

import functools

import numpy as np
import pandas as pd

from thermonet.builders.common import as_condition, check_num, check_zone
from thermonet.controls import Condition, above, hours, warmer
from thermonet.errors import NetworkError
from thermonet.network import Network
from thermonet.parameters import Expr

__all__ = ["add_buffer_exchange", "add_infiltration", "add_ventilation", "add_window_opening",
           "infiltration_rate", "night_ventilation"]

#: Shielding coefficients e [-] of the ISO 13789 / EN 832 infiltration estimate, by number
#: of exposed façades and shielding class (from memory, docs/references.md §4 [M]).
_SHIELDING_E = {
    ("several", "none"): 0.10, ("several", "moderate"): 0.07, ("several", "heavy"): 0.04,
    ("one", "none"): 0.03, ("one", "moderate"): 0.02, ("one", "heavy"): 0.01,
}
_SHIELDING_F = {"several": 15.0, "one": 20.0}


def unbalanced_rate(n50, *, e: float, f: float, dq: float, volume: float) -> np.ndarray:
    """Infiltration rate [1/h] from n50 with an unbalanced flow, element by element.

    ``n = n50·e / (1 + (f/e)·(Δq/(V·n50))²)``, 0 where n50 = 0 (see
    :func:`infiltration_rate`, which uses it for a parametric n50).

    Parameters
    ----------
    n50 : array_like
        Air change rates at 50 Pa [1/h], ≥ 0.
    e, f : float
        Shielding coefficient [-] and its companion factor [-] (ISO 13789, from memory).
    dq : float
        Unbalanced mechanical flow |supply − exhaust| [m³/h], > 0.
    volume : float
        Air volume V [m³], > 0.

    Returns
    -------
    ndarray
        Infiltration rates [1/h].
    """
    n = np.asarray(n50, dtype=float)
    with np.errstate(divide="ignore", invalid="ignore"):
        out = n * e / (1.0 + (f / e) * (dq / (volume * n)) ** 2)
    return np.where(n == 0.0, 0.0, out)


def infiltration_rate(n50=None, *, q50=None, envelope_area=None, volume=None,
                      method: str = "iso13789", shielding: str = "moderate",
                      exposed_facades: str = "several", unbalanced_flow_m3h: float = 0.0):
    """Average infiltration air change rate [1/h] from an airtightness test.

    Parameters
    ----------
    n50 : float or Expr, optional
        Air change rate at 50 Pa [1/h], ≥ 0; a parameter expression
        (:mod:`thermonet.parameters`) gives the rate as an expression.
    q50 : float, optional
        Air permeability at 50 Pa [m³/(h·m²)] of the envelope area, with ``envelope_area``
        [m²] and ``volume`` [m³]: n50 = q50·A_E/V.
    envelope_area : float, optional
        Envelope area A_E [m²] for ``q50``.
    volume : float, optional
        Air volume V [m³] for ``q50`` and for an unbalanced flow.
    method : {"iso13789", "divide20"}, default "iso13789"
        ``"iso13789"``: n = n50·e / (1 + (f/e)·(Δq/(V·n50))²) with shielding coefficient e and
        f (EN 832 / ISO 13789 / ISO 13790 style, from memory); Δq = ``unbalanced_flow_m3h``
        (0 for balanced mechanical ventilation or none), giving n = e·n50.
        ``"divide20"``: n = n50/20 (Kronvall and Persily's rule, Meier 1986 [C]).
    shielding : {"none", "moderate", "heavy"}, default "moderate"
        Shielding class of the building by its surroundings.
    exposed_facades : {"several", "one"}, default "several"
        Façades exposed to the wind; e = 0.10 / 0.07 / 0.04 (several façades: no /
        moderate / heavy shielding), 0.03 / 0.02 / 0.01 (one façade); f = 15 (several),
        20 (one) — from memory.
    unbalanced_flow_m3h : float, default 0
        abs(supply − exhaust) of mechanical ventilation [m³/h] (needs ``volume``).

    Returns
    -------
    float or Expr
        Infiltration rate [1/h].

    Raises
    ------
    NetworkError
        Neither or both of n50 and q50, negative values, missing area/volume, unknown keys.

    References
    ----------
    Meier, A. (1986, reprinted 1994), "Infiltration: Just ACH50 divided by 20?", Home Energy.
    ISO 13789:2017 / EN 832:1998 (infiltration from n50 with shielding coefficients).
    """
    if (n50 is None) == (q50 is None):
        raise NetworkError("give exactly one of n50= [1/h] or q50= [m³/(h·m²)]")
    if q50 is not None:
        if envelope_area is None or volume is None:
            raise NetworkError("q50= needs envelope_area= [m²] and volume= [m³]")
        n50 = (check_num(q50, "q50 [m³/(h·m²)]", low=0.0)
               * check_num(envelope_area, "envelope_area [m²]", low=0.0, low_open=True)
               / check_num(volume, "volume [m³]", low=0.0, low_open=True))
    n50 = check_num(n50, "n50 [1/h]", low=0.0)
    if method == "divide20":
        return n50 / 20.0
    if method != "iso13789":
        raise NetworkError(f"method must be 'iso13789' or 'divide20', got {method!r}")
    key = (exposed_facades, shielding)
    if key not in _SHIELDING_E:
        raise NetworkError(f"shielding must be 'none', 'moderate' or 'heavy' and exposed_facades "
                           f"'several' or 'one', got {shielding!r}, {exposed_facades!r}")
    e, f = _SHIELDING_E[key], _SHIELDING_F[exposed_facades]
    dq = check_num(unbalanced_flow_m3h, "unbalanced_flow_m3h [m³/h]", low=0.0)
    if dq == 0.0:
        return e * n50
    v = check_num(volume if volume is not None else -1.0, "volume [m³] (needed with an unbalanced "
             "flow)", low=0.0, low_open=True)
    if isinstance(n50, Expr):    # (a partial of a module function: picklable for executors)
        return n50.apply(functools.partial(unbalanced_rate, e=e, f=f, dq=dq, volume=v),
                         "infiltration_rate")
    if n50 == 0.0:
        return e * n50
    return n50 * e / (1.0 + (f / e) * (dq / (v * n50)) ** 2)


def add_infiltration(net: Network, zone, *, ach=None, flow_m3h=None, n50=None, q50=None,
                     envelope_area=None, method: str = "iso13789", shielding: str = "moderate",
                     exposed_facades: str = "several", name: str | None = None) -> str:
    """Add infiltration (outdoor ↔ zone air, path ``"infiltration"``); returns the link name.

    Give one of ``ach`` [1/h], ``flow_m3h`` [m³/h], ``n50`` [1/h] or ``q50`` [m³/(h·m²)] with
    ``envelope_area`` [m²]; the test results are converted with :func:`infiltration_rate`
    (``method``, ``shielding``, ``exposed_facades``). The conductance is ρc·V̇ with
    ρc = 1200 J/(m³K) (ISO 13789, from memory): 0.333 W per m³/h per K.

    Parameters
    ----------
    net : Network
        Network holding the zone.
    zone : Room
        The zone (from :func:`~thermonet.builders.add_room` or a template zone).
    ach : float or pandas.Series, optional
        Infiltration air change rate [1/h].
    flow_m3h : float or pandas.Series, optional
        Infiltration airflow [m³/h].
    n50 : float or Expr, optional
        Air change rate at 50 Pa [1/h] (converted with :func:`infiltration_rate`); a
        parameter expression (:mod:`thermonet.parameters`) varies it per row of a study.
    q50 : float, optional
        Air permeability at 50 Pa [m³/(h·m²)], with ``envelope_area``.
    envelope_area : float, optional
        Envelope area [m²] for ``q50``.
    method, shielding, exposed_facades : str
        Passed to :func:`infiltration_rate` (``"iso13789"``, ``"moderate"``,
        ``"several"`` by default).
    name : str, optional
        Link name; default ``"<zone>:infiltration"``.

    Returns
    -------
    str
        Link name.

    Raises
    ------
    NetworkError
        Not exactly one of ``ach``, ``flow_m3h``, ``n50``, ``q50``, or invalid values.
    """
    zone = check_zone(zone, "add_infiltration")
    given = [k for k, v in dict(ach=ach, flow_m3h=flow_m3h, n50=n50, q50=q50).items()
             if v is not None]
    if len(given) != 1:
        raise NetworkError(f"add_infiltration({zone.name!r}): give exactly one of ach=, "
                           f"flow_m3h=, n50=, q50=; got {given or 'none'}")
    if n50 is not None or q50 is not None:
        ach = infiltration_rate(n50, q50=q50, envelope_area=envelope_area, volume=zone.volume,
                                method=method, shielding=shielding,
                                exposed_facades=exposed_facades)
    kw = dict(ach=ach, volume=zone.volume) if ach is not None else dict(flow_m3h=flow_m3h)
    ln = net.add_airflow(zone.outdoor, zone.air, path="infiltration",
                         name=name or f"{zone.name}:infiltration", **kw)
    zone.links.append(ln)
    return ln


def add_ventilation(net: Network, zone, *, flow_m3h, heat_recovery: float = 0.0,
                    schedule: pd.Series | None = None, bypass=None, supply: str | None = None,
                    name: str | None = None) -> str:
    """Add balanced mechanical ventilation with heat recovery (path ``"ventilation"``).

    Parameters
    ----------
    net : Network
    zone : Room
    flow_m3h : float
        Nominal supply = exhaust flow [m³/h], ≥ 0.
    heat_recovery : float, default 0
        Temperature efficiency η of the heat exchanger [-], 0 ≤ η < 1.
    schedule : pandas.Series, optional
        Flow fraction per step [-], ≥ 0, on the weather index (few distinct values: each
        gets a cached discretisation).
    bypass : Condition or bool Series, optional
        While true the heat recovery is bypassed (summer bypass): a switch multiplies the
        link by 1/(1 − η), e.g. ``tn.above(room.air, 23) & tn.warmer(room.air, "outdoor", 2)``
        or a bool Series of the summer months.
    supply : str, optional
        Supply-air boundary; default the zone's outdoor boundary.
    name : str, optional
        Link name (default ``"<zone>:ventilation"``); the bypass switch is ``name + ":bypass"``.

    Returns
    -------
    str
        Link name. Conductance ρc·V̇·(1 − η) [W/K].
    """
    zone = check_zone(zone, "add_ventilation")
    q = check_num(flow_m3h, f"ventilation of {zone.name!r}: flow_m3h [m³/h]", low=0.0)
    eta = check_num(heat_recovery, f"ventilation of {zone.name!r}: heat_recovery [-]", low=0.0,
               high=1.0, high_open=True)
    flow = q
    if schedule is not None:
        if not isinstance(schedule, pd.Series):
            raise TypeError(f"ventilation of {zone.name!r}: schedule must be a pandas Series "
                            f"of flow fractions [-] on the weather index, got "
                            f"{type(schedule).__name__}")
        vals = np.asarray(schedule, dtype=float)
        if not np.isfinite(vals).all() or (vals < 0).any():
            raise NetworkError(f"ventilation of {zone.name!r}: schedule fractions must be finite "
                               "and ≥ 0")
        flow = (schedule.astype(float) * q).rename(None)
    ln = net.add_airflow(supply or zone.outdoor, zone.air, path="ventilation", flow_m3h=flow,
                         heat_recovery=eta, name=name or f"{zone.name}:ventilation")
    zone.links.append(ln)
    if bypass is not None:
        if eta == 0.0:
            raise NetworkError(f"ventilation of {zone.name!r}: a bypass needs heat_recovery > 0")
        sw = net.add_switch(on=as_condition(bypass, "bypass"),
                            links={ln: (1.0, 1.0 / (1.0 - eta))}, name=f"{ln}:bypass")
        if hasattr(zone, "switches"):
            zone.switches.append(sw)
    return ln


def night_ventilation(air: str, outdoor: str = "outdoor", *, indoor_above: float = 24.0,
                      warmer_by: float = 1.0, start: int = 22, end: int = 7) -> Condition:
    """Condition for night ventilation: indoor warm, warmer than outdoors, and at night.

    ``tn.above(air, indoor_above) & tn.warmer(air, outdoor, warmer_by) & tn.hours(start, end)``
    (thresholds [°C], [K], clock hours; common practice, no source).

    Parameters
    ----------
    air : str
        Indoor air node.
    outdoor : str, default "outdoor"
        Outdoor-air boundary.
    indoor_above : float, default 24.0
        Indoor air temperature above which to ventilate [°C].
    warmer_by : float, default 1.0
        Required excess of indoor over outdoor air temperature [K].
    start, end : int, default 22 and 7
        Clock hours of the night window [h], wrapping midnight when ``start > end``.

    Returns
    -------
    Condition
    """
    return above(air, indoor_above) & warmer(air, outdoor, warmer_by) & hours(start, end)


def add_window_opening(net: Network, zone, *, open_when: Condition, close_when=None,
                       flow_m3h=None, ach=None, law: str | None = None,
                       wind: str | float = "wind_speed", open_fraction: float = 1.0,
                       path: str = "window_ventilation", name: str | None = None,
                       **law_params) -> str:
    """Add an airflow that exists only while windows are open (airing, night ventilation).

    The flow while open is either fixed (``flow_m3h`` or ``ach``) or follows a published
    flow law from the room and outdoor temperatures and the wind, re-evaluated every step
    (``law=`` with the opening's geometry, :meth:`thermonet.Network.add_window_flow`).

    Parameters
    ----------
    net : Network
        Network holding the zone.
    zone : Room
        The zone whose air is exchanged with its outdoor boundary.
    open_when : Condition
        Opens the windows, e.g. :func:`night_ventilation` or
        ``tn.above(room.air, 24) & tn.warmer(room.air, "outdoor", 1) & tn.hours(22, 7)``.
    close_when : Condition, optional
        Closes them again (hysteresis); default: as soon as ``open_when`` no longer holds.
    flow_m3h, ach : float
        Fixed airflow while open [m³/h] or [1/h] (one of these or ``law``).
    law : str, optional
        Flow law (:data:`thermonet.airflow.FLOW_LAWS`, e.g. ``"de_gids_phaff"`` with
        ``area=`` [m²] and ``height=`` [m] of the opening).
    wind : str or float, default "wind_speed"
        Weather column of the wind speed [m/s], or a constant (with ``law``).
    open_fraction : float, default 1
        Share of the full flow while open [-], in (0, 1] (a partly open or restricted sash).
    path : str, default "window_ventilation"
        Balance path of the airflow.
    name : str, optional
        Link name; default ``"<zone>:window_opening"``.
    **law_params
        The flow law's parameters (:func:`thermonet.airflow.flow_law_coefficients`).

    Returns
    -------
    str
        Link name; the switch is ``name + ":open"``, acting on the link with factors
        (0 while shut, ``open_fraction`` while open).

    References
    ----------
    The flow laws' own: de Gids & Phaff (1982); EN 16798-7:2017 (from memory); BS 5925:1991.
    """
    zone = check_zone(zone, "add_window_opening")
    if not isinstance(open_when, Condition):
        raise TypeError(f"window opening of {zone.name!r}: open_when must be a thermonet "
                        f"Condition (e.g. night_ventilation(...)), got "
                        f"{type(open_when).__name__}")
    if sum(x is not None for x in (flow_m3h, ach, law)) != 1:
        raise NetworkError(f"window opening of {zone.name!r}: give exactly one of flow_m3h= "
                           "[m³/h], ach= [1/h] or law= (a flow law with the opening's geometry)")
    if law is None and law_params:
        raise NetworkError(f"window opening of {zone.name!r}: {', '.join(law_params)} belong "
                           "to a flow law; pass law= too, or drop them")
    f = float(open_fraction)
    if not 0.0 < f <= 1.0:
        raise NetworkError(f"window opening of {zone.name!r}: open_fraction must be in (0, 1], "
                           f"got {open_fraction!r}")
    lname = name or f"{zone.name}:window_opening"
    if law is not None:
        ln = net.add_window_flow(zone.air, zone.outdoor, law=law, wind=wind, path=path,
                                 name=lname, **law_params)
    else:
        kw = dict(ach=ach, volume=zone.volume) if ach is not None else dict(flow_m3h=flow_m3h)
        ln = net.add_airflow(zone.outdoor, zone.air, path=path, name=lname, **kw)
    zone.links.append(ln)
    sw = net.add_switch(on=open_when, off=close_when, links={ln: (0.0, f)},
                        name=f"{ln}:open")
    if hasattr(zone, "switches"):
        zone.switches.append(sw)
    return ln


def add_buffer_exchange(net: Network, room, buffer, *, flow_m3h, schedule=None,
                        name: str | None = None) -> str:
    """Add air exchange between a room and a buffer space (path ``"buffer"``).

    Parameters
    ----------
    net : Network
        Network holding both zones.
    room, buffer : Room
        The heated room and the buffer space (:func:`~thermonet.builders.add_buffer`).
    flow_m3h : float
        Exchange flow each way [m³/h], ≥ 0.
    schedule : pandas.Series, optional
        Fraction per step [-], ≥ 0 (e.g. a vestibule door opening schedule).
    name : str, optional
        Link name; default ``"<room>-<buffer>:exchange"``.

    Returns
    -------
    str
        Link name.
    """
    for z, w in ((room, "room"), (buffer, "buffer")):
        check_zone(z, f"add_buffer_exchange {w}")
    what = f"air exchange {room.name!r} ↔ {buffer.name!r}"
    if room.air == buffer.air:
        raise NetworkError(f"{what}: room and buffer are the same zone; pass the buffer space "
                           "built with add_buffer")
    q = check_num(flow_m3h, f"{what}: flow_m3h [m³/h]", low=0.0)
    flow = q
    if schedule is not None:
        if not isinstance(schedule, pd.Series):
            raise TypeError(f"{what}: schedule must be a pandas Series of fractions [-] on the "
                            f"weather index, got {type(schedule).__name__}")
        vals = np.asarray(schedule, dtype=float)
        if not np.isfinite(vals).all() or (vals < 0).any():
            raise NetworkError(f"{what}: schedule fractions must be finite and ≥ 0 (a door "
                               "opening share, 0 = shut)")
        flow = (schedule.astype(float) * q).rename(None)
    ln = net.add_airflow(room.air, buffer.air, path="buffer", flow_m3h=flow,
                         name=name or f"{room.name}-{buffer.name}:exchange")
    room.links.append(ln)
    return ln
