"""Surface films of the builders: ISO 6946 inside and outside coefficients, and the links
that join an element's faces to the room air and radiant star node, to outdoor air and sky,
to another zone or to a fixed-temperature neighbour (see :mod:`thermonet.builders.room`
for the model)."""

from __future__ import annotations

import math

from thermonet.builders.common import check_num
from thermonet.constructions import INTERNAL_CONVECTIVE_COEFFICIENTS, surface_resistances
from thermonet.errors import NetworkError
from thermonet.network import Network
from thermonet.parameters import default

__all__ = ["EXTERNAL_RADIATIVE_COEFFICIENT_BLACK", "heat_flow_direction",
           "surface_coefficients"]

#: h_r0 = 4σT³ at 0 °C [W/(m²K)] used for exterior long-wave exchange, h_re = ε·h_r0
#: (ISO 6946:2007 Annex A table, from memory; 4σT³ = 4.62 at 273.15 K).
EXTERNAL_RADIATIVE_COEFFICIENT_BLACK = 4.6


def heat_flow_direction(tilt: float) -> str:
    """ISO 6946 direction of heat flow (inside → outside) of an element of given tilt.

    Parameters
    ----------
    tilt : float
        [°] 0 = facing up (roof) … 180 = facing down (floor).

    Returns
    -------
    str
        ``"up"`` for tilt < 60°, ``"horizontal"`` for 60 … 120° (within ±30° of the
        horizontal plane, ISO 6946:2017 Table 7 note), ``"down"`` beyond 120°.
    """
    t = check_num(tilt, "tilt [°]", low=0.0, high=180.0)
    return "up" if t < 60.0 else ("down" if t > 120.0 else "horizontal")


def surface_coefficients(direction: str = "horizontal") -> tuple[float, float]:
    """Inside convective and radiative coefficients (h_ci, h_ri) [W/(m²K)] of the builder.

    Parameters
    ----------
    direction : {"up", "horizontal", "down"}

    Returns
    -------
    (float, float)
        h_ci from ISO 6946:2007 Annex A (5.0 / 2.5 / 0.7, from memory) and h_ri = 1/R_si − h_ci
        with R_si of ISO 6946:2017 Table 7 (0.10 / 0.13 / 0.17 m²K/W), so h_ci + h_ri = 1/R_si.

    Notes
    -----
    h_ri = 5.00 (up), 5.19 (horizontal), 5.18 (down) W/(m²K); ISO 52016-1 uses ε·h_r0 = 5.13
    (from memory), which would give R_si = 0.1311 / 0.0987 / 0.1715 instead of the table.
    """
    if direction not in INTERNAL_CONVECTIVE_COEFFICIENTS:
        raise NetworkError(f"direction must be one of {sorted(INTERNAL_CONVECTIVE_COEFFICIENTS)}"
                           f", got {direction!r}")
    hc = INTERNAL_CONVECTIVE_COEFFICIENTS[direction]
    return hc, 1.0 / surface_resistances(direction).rsi - hc


def exterior_coefficients(emissivity: float, tilt: float) -> tuple[float, float, float]:
    """(h_ce, h_re·F_sky, h_re·F_ground) [W/(m²K)]; the three sum to 1/R_se = 25.

    Parameters
    ----------
    emissivity : float
        Long-wave emissivity ε of the outside surface [-].
    tilt : float
        [°]; F_sky = (1 + cos β)/2.
    """
    rse = surface_resistances("horizontal").rse
    hre = emissivity * EXTERNAL_RADIATIVE_COEFFICIENT_BLACK
    f_sky = 0.5 * (1.0 + math.cos(math.radians(tilt)))
    return 1.0 / rse - hre, hre * f_sky, hre * (1.0 - f_sky)


def add_positive_link(net: Network, rec, a: str, b: str, g: float, path: str,
                      name: str) -> None:
    """Add link ``a``–``b`` of conductance ``g`` [W/K] to ``net`` and ``rec.links`` if g > 0.

    Parameters
    ----------
    net : Network
    rec : Room
        Zone record whose ``links`` list gets the name.
    a, b : str
        Nodes or boundaries.
    g : float or Expr
        Conductance [W/K]; nothing is added for g ≤ 0 (a parameter expression: at its
        defaults).
    path, name : str
        Heat path and link name.
    """
    if default(g) > 0.0:
        rec.links.append(net.add_link(a, b, conductance=g, path=path, name=name))


def add_inside_films(net: Network, rec, node: str, direction: str, area: float,
                     base: str) -> None:
    """Convection to the zone air and radiation to its star node from an inside face.

    Parameters
    ----------
    net : Network
    rec : Room
        The zone (``air``, ``star``, ``links``).
    node : str
        Inside surface node.
    direction : {"up", "horizontal", "down"}
        Heat-flow direction of the element (:func:`surface_coefficients`).
    area : float
        Face area [m²].
    base : str
        Prefix of the link names (``base + ":conv"``, ``":rad"``).
    """
    hc, hr = surface_coefficients(direction)
    add_positive_link(net, rec, node, rec.air, hc * area, "internal", f"{base}:conv")
    add_positive_link(net, rec, node, rec.star, hr * area, "internal", f"{base}:rad")


def add_outside_films(net: Network, rec, node: str, emissivity: float, tilt: float,
                      area: float, path: str, base: str, outdoor: str, sky: str | None) -> None:
    """Outside film of a face to outdoor air and sky (R_se; ground view at the air).

    Parameters
    ----------
    net : Network
    rec : Room
        Zone record whose ``links`` list gets the names.
    node : str
        Outside surface node.
    emissivity : float
        Long-wave emissivity [-].
    tilt : float
        [°] of the face.
    area : float
        Face area [m²].
    path : str
        Heat path of the links.
    base : str
        Prefix of the link names (``base + ":ext"``, ``":sky"``).
    outdoor : str
        Outdoor-air boundary.
    sky : str or None
        Sky boundary; None: the long-wave exchange goes to the outdoor air too.
    """
    hce, hsky, hgnd = exterior_coefficients(float(emissivity), tilt)
    if sky is None:
        add_positive_link(net, rec, node, outdoor, (hce + hsky + hgnd) * area, path,
                          f"{base}:ext")
    else:
        add_positive_link(net, rec, node, outdoor, (hce + hgnd) * area, path, f"{base}:ext")
        add_positive_link(net, rec, node, sky, hsky * area, path, f"{base}:sky")


def add_films_to_zone(net: Network, rec, node: str, other, direction: str, area: float,
                      path: str, base: str) -> None:
    """Links from a far face ``node`` to another zone's air and star (film R_si).

    Parameters
    ----------
    net : Network
    rec : Room
        Zone whose element it is (its ``links`` list gets the names).
    node : str
        Far (outside) surface node.
    other : Room
        The zone on the other side.
    direction : {"up", "horizontal", "down"}
    area : float
        Face area [m²].
    path : str
        ``"buffer"`` or ``"interzone"``.
    base : str
        Prefix of the link names (``base + ":conv_far"``, ``":rad_far"``).
    """
    hc, hr = surface_coefficients(direction)
    rec.links.append(net.add_link(node, other.air, conductance=hc * area, path=path,
                                  name=f"{base}:conv_far"))
    rec.links.append(net.add_link(node, other.star, conductance=hr * area, path=path,
                                  name=f"{base}:rad_far"))
