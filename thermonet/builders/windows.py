"""Windows and doors: their description, whole-window U-value (EN ISO 10077-1), the solar
gain a window transmits with external and movable shading, and :func:`add_window`, one window
added to a hand-built network in one call. Inside a room, :func:`thermonet.builders.add_room`
gives each window two surface nodes and films instead (:mod:`thermonet.builders.elements`).
"""

from __future__ import annotations

import math
from collections.abc import Mapping
from dataclasses import dataclass, field

import pandas as pd

from thermonet import solar as _solar
from thermonet.builders.common import (
    check_num,
    check_orientation,
    kept_surface_irradiance,
    number,
    outdoor_boundary,
    site_solar_position,
)
from thermonet.controls import above, below, when
from thermonet.errors import NetworkError, ParameterError
from thermonet.network import Network
from thermonet.parameters import ScaledSeries, default, is_parametric

__all__ = ["AddedWindow", "Door", "Window", "add_window", "window_solar_gain",
           "window_u_value"]


@dataclass(frozen=True)
class Window:
    """A window in an element: whole-window U-value, g-value, frame and shading.

    Parameters
    ----------
    name : str
        Unique within the room.
    area : float or Expr
        Area of the opening including the frame [m²], > 0 (a parameter expression varies
        it per row of a study, :mod:`thermonet.parameters`).
    u_value : float or Expr
        Thermal transmittance U_w of the whole window, glazing and frame [W/(m²K)], air to
        air (as declared, e.g. per EN ISO 10077-1), > 0.
    g_value : float or Expr
        Total solar energy transmittance of the glazing at normal incidence [-], 0 … 1.
    frame_fraction : float, default 0.3
        Frame share of ``area`` [-], 0 ≤ f < 1 (0.3 is the default frame fraction of
        ISO 13790:2008 11.4.5, from memory).
    height, width : float, optional
        Glazed opening [m], needed for an overhang or fins.
    overhang : thermonet.solar.Overhang, optional
    fins : thermonet.solar.Fins, optional
        External shading devices (vertical windows only).
    horizon : (azimuths, elevations), optional
        Far-horizon profile [°], see :func:`thermonet.solar.horizon_shaded`.
    shading : thermonet.solar.MovableShading, optional
        Movable device (blind, shutter, curtain); external irradiance- or
        schedule-controlled ones become a factor series, temperature-controlled and
        internal ones (``position="internal"``) a network switch.
    iam_model : {"ashrae", "physical"}, default "ashrae"
        Incidence angle modifier of :func:`thermonet.solar.window_transmitted`.
    """

    name: str
    area: float
    u_value: float
    g_value: float
    frame_fraction: float = 0.3
    height: float | None = None
    width: float | None = None
    overhang: _solar.Overhang | None = None
    fins: _solar.Fins | None = None
    horizon: tuple | None = None
    shading: _solar.MovableShading | None = None
    iam_model: str = "ashrae"

    is_door = False


@dataclass(frozen=True)
class Door(Window):
    """A door: like :class:`Window` with ``g_value = 0`` by default and no frame split.

    Its transmission counts under ``"opaque"`` (to outdoor) instead of ``"glazing"``; a glazed
    door (``g_value > 0``) also admits solar gain.
    """

    g_value: float = 0.0
    frame_fraction: float = 0.0

    is_door = True


def check_window(win, elem_name):
    """Validate a Window or Door; ``elem_name`` None for a window added on its own.

    Parameters
    ----------
    win : Window or Door
    elem_name : str or None
        Name of the element holding it, for messages.
    """
    if not isinstance(win, Window):
        raise TypeError(f"element {elem_name!r}: windows must be Window or Door, got "
                        f"{type(win).__name__}")
    what = f"{'door' if win.is_door else 'window'} {win.name!r}"
    if elem_name is not None:
        what += f" in element {elem_name!r}"
    check_num(win.area, f"{what}: area [m²]", low=0.0, low_open=True)
    check_num(win.u_value, f"{what}: u_value [W/(m²K)]", low=0.0, low_open=True)
    check_num(win.g_value, f"{what}: g_value [-]", low=0.0, high=1.0)
    check_num(win.frame_fraction, f"{what}: frame_fraction [-]", low=0.0, high=1.0, high_open=True)
    for v, n in ((win.height, "height"), (win.width, "width")):
        if v is not None:
            check_num(v, f"{what}: {n} [m]", low=0.0, low_open=True)



def window_solar_gain(weather, window: Window, tilt: float, azimuth: float, *, solpos=None,
                      latitude=None, longitude=None, sky_model="perez", with_device=True,
                      return_state=False):
    """Solar gain transmitted by one window [W], with external and movable shading.

    Parameters
    ----------
    weather : pandas.DataFrame
        ``ghi``, ``dni``, ``dhi`` [W/m²] on a tz-aware index; site in ``attrs["site"]``.
    window : Window
    tilt, azimuth : float
        Orientation of the window [°] (that of its element).
    solpos : pandas.DataFrame, optional
        Solar position on the weather index (computed when missing).
    latitude, longitude : float, optional
        Site [°] when ``solpos`` is not given and the weather has no site.
    sky_model : {"isotropic", "haydavies", "perez"}
    with_device : bool, default True
        Apply an irradiance- or schedule-controlled :class:`~thermonet.solar.MovableShading`
        (an internal device by the share that enters, ``factor + absorptance``); a
        temperature-controlled one is never applied here (the network switches it).
    return_state : bool, default False
        Also return the device's deployed state.

    Returns
    -------
    pandas.Series or ScaledSeries
        Transmitted gain [W] on the weather index; with a parametric area or g-value, the
        gain of 1 m² at g = 1 times ``area × g_value`` (a
        :class:`~thermonet.parameters.ScaledSeries`, exact since the gain is proportional
        to both).
    pandas.Series of bool or None
        With ``return_state``: the deployed state per step of an irradiance- or
        schedule-controlled device (None without one, or for temperature control).

    Notes
    -----
    :func:`thermonet.solar.surface_irradiance` → (overhang/fins: beam shaded fraction
    :func:`~thermonet.solar.combined_shaded_fraction` and diffuse factors
    :func:`~thermonet.solar.external_diffuse_factors`; far horizon:
    :func:`~thermonet.solar.horizon_shaded`, :func:`~thermonet.solar.horizon_diffuse_factor`)
    → :func:`thermonet.solar.window_transmitted` with the device's admitted fraction. An
    irradiance-controlled device switches on the total irradiance on the window after the
    external shading.
    """
    tilt, azimuth = check_orientation(tilt, azimuth, f"window {window.name!r}")
    if is_parametric(window.area) or is_parametric(window.g_value):
        import dataclasses

        unit, state = window_solar_gain(
            weather, dataclasses.replace(window, area=1.0, g_value=1.0), tilt, azimuth,
            solpos=solpos, latitude=latitude, longitude=longitude, sky_model=sky_model,
            with_device=with_device, return_state=True)
        scaled = ScaledSeries(unit, number(window.area) * number(window.g_value))
        return (scaled, state) if return_state else scaled
    if is_parametric(window.shading.factor if window.shading is not None else None) and \
            with_device and window.shading.control != "temperature":
        raise ParameterError(
            f"window {window.name!r}: a parametric shading factor ({window.shading.factor!r}) "
            "needs control='temperature' (a switch on the solar sources); for "
            f"{window.shading.control!r} control give a number")
    if solpos is None:
        solpos = site_solar_position(weather, latitude, longitude)
    irr = kept_surface_irradiance(weather, tilt, azimuth, model=sky_model, solpos=solpos)
    if window.overhang is not None or window.fins is not None:
        if abs(tilt - 90.0) > 1e-6:
            raise NetworkError(f"window {window.name!r}: overhangs and fins need a vertical "
                               f"window (tilt 90°), its element has tilt {tilt:g}°")
        if window.height is None or window.width is None:
            raise NetworkError(f"window {window.name!r}: an overhang or fins need height= and "
                               "width= of the glazed opening [m]")
        shaded = _solar.combined_shaded_fraction(
            solpos["apparent_zenith"], solpos["azimuth"], azimuth, window_height=window.height,
            window_width=window.width, overhang=window.overhang, fins=window.fins)
        f = _solar.external_diffuse_factors(window_height=window.height,
                                            window_width=window.width,
                                            overhang=window.overhang, fins=window.fins)
        irr = _solar.apply_external_shading(irr, shaded, f["sky"], ground_factor=f["ground"])
    if window.horizon is not None:
        az_p, el_p = window.horizon
        blocked = _solar.horizon_shaded(solpos["azimuth"], solpos["apparent_elevation"],
                                        az_p, el_p)
        fd = _solar.horizon_diffuse_factor(tilt, azimuth, az_p, el_p)
        irr = _solar.apply_external_shading(irr, blocked, fd)
    dev = window.shading
    state = None
    if dev is not None and dev.control != "temperature":
        state = (dev.deployed(irradiance=irr["total"]) if dev.control == "irradiance"
                 else dev.deployed(index=weather.index))
    admitted = dev.admitted_fraction(state) if with_device and state is not None else None
    gain = _solar.window_transmitted(irr, area=window.area, g_value=window.g_value,
                                     frame_fraction=window.frame_fraction,
                                     iam_model=window.iam_model, shading=admitted)
    return (gain, state) if return_state else gain


def window_u_value(glazing_u, frame_u, frame_fraction, *, psi=0.0, glazing_perimeter=0.0,
                   area=None):
    """Thermal transmittance U_w of a whole window from its glazing and frame, ISO 10077-1.

    Parameters
    ----------
    glazing_u : float
        U_g of the glazing (centre of pane) [W/(m²K)], > 0.
    frame_u : float
        U_f of the frame [W/(m²K)], > 0.
    frame_fraction : float
        Frame share A_f/A_w of the window area [-], 0 ≤ f < 1.
    psi : float, default 0
        Linear thermal transmittance ψ_g of the glazing edge (spacer) [W/(mK)], ≥ 0.
    glazing_perimeter : float, default 0
        Visible perimeter l_g of the glazing [m], ≥ 0; with ``psi > 0`` also give ``area``.
    area : float, optional
        Window area A_w [m²] (opening including the frame), needed when ψ_g·l_g > 0.

    Returns
    -------
    float
        U_w [W/(m²K)], the value :class:`Window` takes as ``u_value``.

    Notes
    -----
    .. math:: U_w = \\frac{A_g U_g + A_f U_f + l_g \\psi_g}{A_g + A_f}
              = (1 - f) U_g + f U_f + \\frac{l_g \\psi_g}{A_w}

    (EN ISO 10077-1:2017, single window, from memory).

    References
    ----------
    EN ISO 10077-1:2017, Thermal performance of windows, doors and shutters — Calculation
    of thermal transmittance — Part 1: General (from memory).
    """
    ug = check_num(glazing_u, "glazing_u [W/(m²K)]", low=0.0, low_open=True)
    uf = check_num(frame_u, "frame_u [W/(m²K)]", low=0.0, low_open=True)
    f = check_num(frame_fraction, "frame_fraction [-]", low=0.0, high=1.0, high_open=True)
    ps = check_num(psi, "psi [W/(mK)]", low=0.0)
    lg = check_num(glazing_perimeter, "glazing_perimeter [m]", low=0.0)
    edge = ps * lg
    if edge > 0.0:
        if area is None:
            raise NetworkError("window_u_value: psi·glazing_perimeter > 0 needs area= [m²] of "
                               "the window (opening including the frame)")
        edge /= check_num(area, "area [m²]", low=0.0, low_open=True)
    return (1.0 - f) * ug + f * uf + edge


@dataclass
class AddedWindow:
    """What :func:`add_window` created.

    Attributes
    ----------
    name : str
        The window's name (prefix of everything it created).
    link : str
        Transmission link outdoor → node, conductance U_w·A [W/K].
    sources : list of str
        Solar sources (path ``"solar"``), one per receiving node; for an internal device
        also the sources of the heat it absorbs (``<name>:device_convective>…`` on
        ``node``, ``<name>:device_radiative>…`` on the receivers).
    switches : list of str
        The shading switch of a temperature-controlled or internal device (else empty).
    gain : pandas.Series or None
        Transmitted solar gain [W] with external shading and an external irradiance- or
        schedule-controlled device applied (temperature-controlled and internal devices
        act through the switch); None without weather or with g = 0.
    """

    name: str
    link: str
    sources: list = field(default_factory=list)
    switches: list = field(default_factory=list)
    gain: pd.Series | None = None


def add_window(net: Network, node: str, window: Window, *, tilt: float = 90.0,
               azimuth: float = 180.0, weather=None, receivers: Mapping | None = None,
               outdoor: str = "outdoor", outdoor_temperature="temp_air", sky_model="perez",
               latitude=None, longitude=None, solpos=None) -> AddedWindow:
    """Add one window (or door) to a hand-built network in one call.

    Adds the air-to-air transmission link ``outdoor → node`` with conductance U_w·A (path
    ``"glazing"``, ``"opaque"`` for a :class:`Door`) and, with ``weather``, the transmitted
    solar gain as sources (path ``"solar"``) on the receiving nodes, including external
    shading (overhang, fins, far horizon) and movable shading; a temperature-controlled
    device, and an internal one (:attr:`thermonet.solar.MovableShading.internal`) with any
    control, becomes a switch on those sources (an internal one with the sources of the
    heat it absorbs: the convective part on ``node``, the long-wave part on the receivers
    by their shares). Use it for networks wired by hand;
    :func:`add_room` does the same for the windows of its elements (with surface nodes and
    films instead of one air-to-air link).

    Parameters
    ----------
    net : Network
    node : str
        Free node the window's indoor side is coupled to: the room air (U_w is an air-to-air
        transmittance), or the node that stands for the indoor temperature in a simple model.
    window : Window or Door
    tilt, azimuth : float, default 90, 180
        Orientation of the window [°] (pvlib's convention, 180 = south).
    weather : pandas.DataFrame, optional
        ``ghi``, ``dni``, ``dhi`` [W/m²] with the site in ``attrs["site"]``; without it only
        the transmission link is added.
    receivers : mapping, optional
        Node → share [-] of the transmitted solar, shares summing to 1 (e.g. ``{"room":
        0.1, "floor": 0.9}``); default ``{node: 1.0}``.
    outdoor, outdoor_temperature : str, and str, float or Series
        Outdoor-air boundary, reused if it exists, else created (default weather column
        ``"temp_air"``).
    sky_model : {"isotropic", "haydavies", "perez"}, default "perez"
    latitude, longitude : float, optional
        Site [°] when the weather has no ``attrs["site"]``.
    solpos : pandas.DataFrame, optional
        Solar position on the weather index (see :func:`thermonet.solar.solar_position`),
        to share between windows.

    Returns
    -------
    AddedWindow

    Raises
    ------
    NetworkError
        Unknown node or receiver (the known free nodes are listed), shares not summing to 1,
        invalid window values, orientation out of range, a temperature-controlled shading
        device on a node that does not exist, a name already used.
    WeatherError
        Weather without site coordinates or irradiance columns.

    Examples
    --------
    >>> import thermonet as tn
    >>> from thermonet.builders import Window, add_window
    >>> net = tn.Network()
    >>> net.add_boundary("outdoor", temperature="temp_air")
    >>> net.add_node("room", kind="air", capacitance=1.2e5)
    >>> added = add_window(net, "room", Window("south", 3.0, 0.8, 0.5))
    >>> round(net.links[added.link].conductance, 9)   # U_w·A = 0.8 × 3.0 [W/K]
    2.4
    """
    if not isinstance(net, Network):
        raise TypeError(f"net must be a thermonet Network, got {type(net).__name__}")
    if not isinstance(window, Window):
        raise TypeError(f"window must be a Window or Door, got {type(window).__name__}")
    what = f"{'door' if window.is_door else 'window'} {window.name!r}"
    check_free_node(net, node, "node", what)
    check_window(window, None)
    tilt, azimuth = check_orientation(tilt, azimuth, what)
    shares = receiver_shares(net, node, receivers, what)
    dev = window.shading
    if dev is not None and dev.control == "temperature":
        check_free_node(net, dev.node, "shading control node", what)
    out = outdoor_boundary(net, outdoor, outdoor_temperature, "air", what)
    path = "opaque" if window.is_door else "glazing"
    rec = AddedWindow(window.name, net.add_link(
        out, node, conductance=number(window.u_value) * number(window.area), path=path,
        name=f"{window.name}:transmission"))
    check_parametric_g(window, what)
    if weather is None or default(window.g_value) == 0.0:
        return rec
    if not isinstance(weather, pd.DataFrame):
        raise TypeError("weather must be a pandas DataFrame")
    if solpos is None:
        solpos = site_solar_position(weather, latitude, longitude)
    switched = dev is not None and (dev.control == "temperature" or dev.internal)
    gain, state = window_solar_gain(weather, window, tilt, azimuth, solpos=solpos,
                                    sky_model=sky_model, with_device=not switched,
                                    return_state=True)
    gain = gain.rename(None)
    rec.gain = gain
    for n, share in shares.items():
        if share > 0.0:
            rec.sources.append(net.add_source(n, power=gain * share, path="solar",
                                              name=f"{window.name}:solar>{n}"))
    if switched:
        through = list(rec.sources)
        absorbed = internal_device_sources(net, dev, gain, {node: 1.0}, shares,
                                           window.name)
        rec.sources += absorbed
        rec.switches.append(add_shading_switch(net, dev, through, f"{window.name}:shading",
                                               state=state, absorbed=absorbed))
    return rec


def check_parametric_g(window: Window, what: str) -> None:
    """Refuse a parametric g-value whose default is 0 (no solar source would be made).

    Parameters
    ----------
    window : Window or Door
    what : str
        The window, for the message.
    """
    if is_parametric(window.g_value) and default(window.g_value) == 0.0:
        raise ParameterError(f"{what}: the g-value {window.g_value!r} is 0 at its defaults, so "
                             "no solar source is added and other rows' g-values would have no "
                             "effect; give the parameter a default > 0")


def check_free_node(net: Network, node: str, role: str, what: str) -> str:
    """``node`` if it is a free node of ``net``, else a NetworkError listing the free nodes.

    Parameters
    ----------
    net : Network
    node : str
    role : str
        What the node is for (``"receiver"`` ...), for the message.
    what : str
        The window, for the message.
    """
    if node not in net.nodes:
        shown = ", ".join(repr(k) for k in list(net.nodes)[:20])
        raise NetworkError(f"{what}: {role} {node!r} is not a free node of the network; "
                           f"add it first with net.add_node (free nodes: {shown or 'none'})")
    return node


def receiver_shares(net: Network, node: str, receivers: Mapping | None, what: str) -> dict:
    """Checked node -> share [-] of a window's solar gain (default all on ``node``).

    Parameters
    ----------
    net : Network
    node : str
        The window's node, the receiver when ``receivers`` is None.
    receivers : mapping of str to float, optional
        Node -> share [-], shares summing to 1 (within 1e-9).
    what : str
        The window, for messages.
    """
    shares = {node: 1.0} if receivers is None else dict(receivers)
    if not shares:
        raise NetworkError(f"{what}: receivers is empty; give node -> share, shares summing "
                           "to 1")
    for n, v in shares.items():
        check_free_node(net, n, "receiver", what)
        shares[n] = check_num(v, f"{what}: solar share of receiver {n!r} [-]", low=0.0, high=1.0)
    total = math.fsum(shares.values())
    if abs(total - 1.0) > 1e-9:
        listed = ", ".join(f"{n}={v:g}" for n, v in shares.items())
        raise NetworkError(f"{what}: receiver shares must sum to 1, got {total:.6g} "
                           f"({listed}); scale them")
    return shares


def internal_device_sources(net: Network, device, gain: pd.Series, air: Mapping,
                            surfaces: Mapping, tag: str) -> list:
    """Sources of the heat an internal device absorbs (at full power; the switch gates them).

    Parameters
    ----------
    net : Network
    device : thermonet.solar.MovableShading
        The device; nothing is added for an external one or one that absorbs nothing.
    gain : pandas.Series
        Solar gain the glazing transmits with the device up [W].
    air : mapping of str to float
        Node(s) receiving the convective part, with shares summing to 1 (the room air).
    surfaces : mapping of str to float
        Node(s) receiving the long-wave part, with shares summing to 1 (the room's radiant
        star node, or the window's receivers in a hand-built network).
    tag : str
        Prefix of the source names (``<tag>:device_convective>…``,
        ``<tag>:device_radiative>…``).

    Returns
    -------
    list of str
        The sources added (path ``"solar"``), powers ``gain × α·f_c × share`` and
        ``gain × α·(1 − f_c) × share`` [W] (:func:`thermonet.solar.internal_device_shares`).
    """
    if device is None or not device.internal:
        return []
    split = _solar.internal_device_shares(device.factor, device.absorptance, device.convective)
    out = []
    for part, receivers in (("convective", air), ("radiative", surfaces)):
        for node, share in receivers.items():
            if split[part] * share > 0.0:
                out.append(net.add_source(node, power=(gain * (split[part] * share)).rename(
                    None), path="solar", name=f"{tag}:device_{part}>{node}"))
    return out


def add_shading_switch(net: Network, device, sources, name: str, *, state=None,
                       absorbed=()) -> str:
    """Switch of a movable shading device on solar ``sources``.

    Parameters
    ----------
    net : Network
    device : thermonet.solar.MovableShading
        With ``control="temperature"``: down above ``on_above`` [°C] at ``node``, up below
        ``off_below`` [°C]. Irradiance- or schedule-controlled devices (switched here when
        internal) follow ``state``. While down the sources are scaled by ``factor`` [-].
    sources : list of str
        Solar sources the device acts on (the gain the glazing transmits).
    name : str
        Switch name.
    state : pandas.Series of bool, optional
        Deployed state per step (required unless ``control="temperature"``).
    absorbed : sequence of str
        Sources of the heat an internal device absorbs (:func:`internal_device_sources`):
        off (factor 0) while the device is up, at full power while it is down.

    Returns
    -------
    str
        The switch name.

    Raises
    ------
    NetworkError
        An irradiance- or schedule-controlled device without ``state``.
    """
    if device.control == "temperature":
        on, off = above(device.node, device.on_above), below(device.node, device.off_below)
    elif state is None:
        raise NetworkError(f"shading switch {name!r}: a {device.control}-controlled device "
                           "needs state= its deployed state per step")
    else:
        on, off = when(state.rename(f"{name}:deployed")), None
    factors = {s: number(device.factor) for s in sources}
    factors.update({s: (0.0, 1.0) for s in absorbed})
    return net.add_switch(on=on, off=off, sources=factors, name=name)


