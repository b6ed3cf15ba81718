"""Ground contact (ISO 13370): soil descriptions, slab-on-ground and basement-wall
transmittances, the depth of the 1-D soil column that reproduces them, and the column of
soil nodes a ground element gets in :func:`thermonet.builders.add_room`."""

from __future__ import annotations

import math
from dataclasses import dataclass

from thermonet.builders.common import check_num
from thermonet.builders.surfaces import add_positive_link
from thermonet.errors import NetworkError
from thermonet.network import Network

__all__ = ["SLAB_SOIL_DEPTH_FACTOR", "SOIL_CLAY_SILT", "SOIL_ROCK", "SOIL_SAND_GRAVEL", "Soil",
           "basement_wall_soil_depth", "iso13370_basement_wall_u_value",
           "iso13370_slab_u_value", "slab_soil_depth"]


#: Depth of the soil column under a slab per B' = A/(0.5 P) [-] (plus w + λR_se); see
#: :func:`slab_soil_depth` for the choice and its accuracy against ISO 13370.
SLAB_SOIL_DEPTH_FACTOR = 0.4


@dataclass(frozen=True)
class Soil:
    """Soil under or beside ground elements, modelled as a column of a few soil nodes.

    Parameters
    ----------
    conductivity : float, default 2.0
        λ_g [W/(mK)] (ISO 13370: 2.0 for sand or gravel and when unknown, from memory).
    heat_capacity : float, default 2.0e6
        ρc [J/(m³K)] (ISO 13370 sand or gravel, from memory).
    depth : float, optional
        Thickness of the soil column from the element to the deep-ground boundary [m];
        default :func:`slab_soil_depth` (floors) or :func:`basement_wall_soil_depth` (walls).
    first_cell : float, default 0.5
        Thickness of the first soil cell [m]; the following ones double in thickness until
        the column is full (e.g. 0.5 + 1.5 m for a 2 m column).
    """

    conductivity: float = 2.0
    heat_capacity: float = 2.0e6
    depth: float | None = None
    first_cell: float = 0.5

    def __post_init__(self):
        check_num(self.conductivity, "soil conductivity [W/(mK)]", low=0.0, low_open=True)
        check_num(self.heat_capacity, "soil heat_capacity [J/(m³K)]", low=0.0)
        check_num(self.first_cell, "soil first_cell [m]", low=0.0, low_open=True)
        if self.depth is not None:
            check_num(self.depth, "soil depth [m]", low=0.0, low_open=True)


#: ISO 13370:2017 Table 7 soil categories (from memory): clay or silt λ = 1.5 W/(mK),
#: ρc = 3.0 MJ/(m³K); sand or gravel 2.0, 2.0; homogeneous rock 3.5, 2.0.
SOIL_CLAY_SILT = Soil(1.5, 3.0e6)
SOIL_SAND_GRAVEL = Soil(2.0, 2.0e6)
SOIL_ROCK = Soil(3.5, 2.0e6)

def iso13370_slab_u_value(area, exposed_perimeter, wall_thickness, floor_resistance, *,
                          soil_conductivity=2.0, rsi=0.17, rse=0.04):
    """Thermal transmittance of a slab-on-ground floor, ISO 13370 (from memory) [W/(m²K)].

    Parameters
    ----------
    area : float
        Floor area A [m²], > 0.
    exposed_perimeter : float
        Exposed perimeter P [m], > 0.
    wall_thickness : float
        Total thickness w of the walls at the perimeter [m], ≥ 0.
    floor_resistance : float
        Thermal resistance R_f of the floor construction (all layers) [m²K/W], ≥ 0.
    soil_conductivity : float, default 2.0
        λ [W/(mK)].
    rsi, rse : float, default 0.17, 0.04
        Surface resistances [m²K/W] (downward heat flow; outside).

    Returns
    -------
    float
        U [W/(m²K)].

    Notes
    -----
    Characteristic dimension B' = A/(0.5 P); equivalent thickness d_t = w + λ(R_si + R_f + R_se).
    For d_t < B' (uninsulated and moderately insulated floors)
    U = 2λ/(πB' + d_t) · ln(πB'/d_t + 1); otherwise (well insulated) U = λ/(0.457 B' + d_t).

    References
    ----------
    ISO 13370:2017, Thermal performance of buildings — Heat transfer via the ground —
    Calculation methods, 9.1 (slab-on-ground floor) — formulas from memory, not verified.
    """
    a = check_num(area, "area [m²]", low=0.0, low_open=True)
    p = check_num(exposed_perimeter, "exposed_perimeter [m]", low=0.0, low_open=True)
    w = check_num(wall_thickness, "wall_thickness [m]", low=0.0)
    rf = check_num(floor_resistance, "floor_resistance [m²K/W]", low=0.0)
    lam = check_num(soil_conductivity, "soil_conductivity [W/(mK)]", low=0.0, low_open=True)
    b = a / (0.5 * p)
    dt = w + lam * (rsi + rf + rse)
    if dt < b:
        return 2.0 * lam / (math.pi * b + dt) * math.log(math.pi * b / dt + 1.0)
    return lam / (0.457 * b + dt)


def slab_soil_depth(area, exposed_perimeter, wall_thickness=0.3, soil_conductivity=2.0,
                    rse=0.04):
    """Default soil column depth under a slab [m]: D = 0.4 B' + w + λ_g R_se.

    Parameters
    ----------
    area, exposed_perimeter : float
        Floor area A [m²] and exposed perimeter P [m]; B' = A/(0.5 P).
    wall_thickness : float, default 0.3
        Thickness w of the walls at the perimeter [m] (ISO 13370's w; 0.3 m typical,
        common practice, no source).
    soil_conductivity : float, default 2.0
        λ_g [W/(mK)].
    rse : float, default 0.04
        External surface resistance of the ground surface [m²K/W] (ISO 13370's R_se).

    Returns
    -------
    float
        D [m].

    Notes
    -----
    The ground loss of a slab leaves through the soil to the outdoor air beyond the
    perimeter, passing beneath the perimeter walls and through the ground-surface film; the
    mean heat-path length grows with B'. In its well-insulated limit ISO 13370 gives
    U = λ/(0.457 B' + d_t), d_t = w + λ(R_si + R_f + R_se), which a 1-D column
    R_si + R_f + D/λ reproduces exactly with D = 0.457 B' + w + λR_se. Less insulated floors
    lose more near the edge (shorter paths): ISO's equivalent soil layer λ/U − d_t is
    0.32–0.46 B'. With the factor 0.4 (:data:`SLAB_SOIL_DEPTH_FACTOR`) the steady loss of the
    column (to a deep boundary at the annual mean temperature) is, against
    :func:`iso13370_slab_u_value` for B' = 2 … 20 m, λ = 2 W/(mK), w = 0.3 m (computed here):
    within ±4 % for R_f ≥ 1 m²K/W; −8 … +3 % for R_f = 0.5; and −12 … +1 % for an uninsulated
    slab with B' ≤ 12 m (−19 % at B' = 20 m, where ISO's perimeter-dominated loss is least
    like a uniform column). The column is 1-D: it has no separate edge path, so the
    distribution of the loss over the floor and its annual lag are approximate.
    """
    a = check_num(area, "area [m²]", low=0.0, low_open=True)
    p = check_num(exposed_perimeter, "exposed_perimeter [m]", low=0.0, low_open=True)
    w = check_num(wall_thickness, "wall_thickness [m]", low=0.0)
    lam = check_num(soil_conductivity, "soil_conductivity [W/(mK)]", low=0.0, low_open=True)
    return SLAB_SOIL_DEPTH_FACTOR * a / (0.5 * p) + w + lam * check_num(rse, "rse [m²K/W]", low=0.0)


def iso13370_basement_wall_u_value(depth, wall_resistance, *, floor_equivalent_thickness=None,
                                   soil_conductivity=2.0, rsi=0.13, rse=0.04):
    """Thermal transmittance of the wall of a heated basement, ISO 13370 (from memory).

    Parameters
    ----------
    depth : float
        Depth z of the basement floor below the ground surface [m], > 0.
    wall_resistance : float
        Thermal resistance R_w of the wall construction (all layers) [m²K/W], ≥ 0.
    floor_equivalent_thickness : float, optional
        Equivalent thickness d_t of the basement floor [m] (ISO 13370's
        d_t = w + λ(R_si + R_f + R_se)); default None: d_t = d_w (the wall's own, see Notes).
    soil_conductivity : float, default 2.0
        λ [W/(mK)].
    rsi, rse : float, default 0.13, 0.04
        Surface resistances [m²K/W] (horizontal heat flow; outside).

    Returns
    -------
    float
        U_bw [W/(m²K)] per m² of wall below ground.

    Notes
    -----
    With d_w = λ(R_si + R_w + R_se):

    .. math:: U_{bw} = \\frac{2\\lambda}{\\pi z}\\left(1 + \\frac{0.5\\,d_t}{d_t + z}\\right)
              \\ln\\left(\\frac{z}{d_w} + 1\\right)

    valid for d_w ≥ d_t; when d_w < d_t, d_t is replaced by d_w (ISO 13370's rule). Without
    the floor's d_t, thermonet takes d_t = d_w, the largest value the rule allows (the
    loss is then at most (1 + 0.5 d_w/(d_w + z))/(1 + 0.5 d_t/(d_t + z)) ≤ 1.5 times the
    value for a better-insulated floor; pass the floor's d_t for the exact figure).

    References
    ----------
    ISO 13370:2017, Thermal performance of buildings — Heat transfer via the ground —
    Calculation methods, heated basement, walls — formula from memory, not verified.
    """
    z = check_num(depth, "basement wall depth [m]", low=0.0, low_open=True)
    lam = check_num(soil_conductivity, "soil conductivity [W/(mK)]", low=0.0, low_open=True)
    rw = check_num(wall_resistance, "wall resistance [m²K/W]", low=0.0)
    dw = lam * (check_num(rsi, "rsi [m²K/W]", low=0.0) + rw
                + check_num(rse, "rse [m²K/W]", low=0.0))
    if dw <= 0.0:
        raise NetworkError("basement wall: R_si + R_w + R_se must be > 0 m²K/W")
    dt = dw if floor_equivalent_thickness is None else check_num(
        floor_equivalent_thickness, "floor_equivalent_thickness [m]", low=0.0, low_open=True)
    dt = min(dt, dw)
    return 2.0 * lam / (math.pi * z) * (1.0 + 0.5 * dt / (dt + z)) * math.log(z / dw + 1.0)


def basement_wall_soil_depth(depth, wall_resistance, soil_conductivity=2.0, rsi=0.13, rse=0.04,
                             floor_equivalent_thickness=None):
    """Default soil thickness behind a basement wall [m], from ISO 13370 (from memory).

    Parameters
    ----------
    depth : float
        Depth z of the basement below ground [m].
    wall_resistance : float
        R_w of the wall construction [m²K/W].
    soil_conductivity : float, default 2.0
        λ [W/(mK)].
    rsi, rse : float, default 0.13, 0.04
        Surface resistances [m²K/W].
    floor_equivalent_thickness : float, optional
        d_t of the basement floor [m]; see :func:`iso13370_basement_wall_u_value`.

    Returns
    -------
    float
        D [m] such that the 1-D column R_si + R_w + D/λ has the steady transmittance U_bw of
        :func:`iso13370_basement_wall_u_value`: D = λ/U_bw − λ(R_si + R_w) (at least 1 mm).

    Notes
    -----
    The wall's steady loss to a deep-ground boundary at the annual mean outdoor temperature
    is then exactly ISO 13370's U_bw·A·ΔT; the 1-D column has no separate path near the
    ground surface, so the distribution of the loss over the wall depth and its seasonal lag
    are approximate.
    """
    lam = check_num(soil_conductivity, "soil conductivity [W/(mK)]", low=0.0, low_open=True)
    u = iso13370_basement_wall_u_value(depth, wall_resistance,
                                       floor_equivalent_thickness=floor_equivalent_thickness,
                                       soil_conductivity=lam, rsi=rsi, rse=rse)
    return max(lam / u - lam * (rsi + float(wall_resistance)), 1e-3)


def soil_cells(depth: float, first: float) -> list[float]:
    """Thicknesses [m] of the soil cells of a column: ``first``, doubling, the rest last.

    Parameters
    ----------
    depth : float
        Column thickness [m].
    first : float
        Thickness of the first cell [m].
    """
    cells, rest, t = [], depth, first
    while rest > 1.5 * t:
        cells.append(t)
        rest -= t
        t *= 2.0
    cells.append(rest)
    return cells


def element_soil_depth(elem, soil: Soil, direction: str, area: float, layers_resistance: float,
                       rsi: float) -> float:
    """Soil column depth D [m] of a ground element: the soil's own depth, else ISO 13370's.

    Parameters
    ----------
    elem : thermonet.builders.Element
        The floor (``perimeter``, ``wall_thickness``) or basement wall (``depth``).
    soil : Soil
    direction : {"down", "horizontal"}
        Floor or wall.
    area : float
        Element area [m²].
    layers_resistance : float
        R of the construction [m²K/W].
    rsi : float
        Inside surface resistance [m²K/W].
    """
    lam = soil.conductivity
    if soil.depth is not None:
        return soil.depth
    if direction == "down":
        return slab_soil_depth(area, elem.perimeter, elem.wall_thickness, lam)
    return basement_wall_soil_depth(elem.depth, layers_resistance, lam, rsi)


def add_soil_column(net: Network, rec, face: str, base: str, soil: Soil, depth: float,
                    area: float, boundary: str, initial: float | None) -> None:
    """Soil nodes (kind ``"ground"``) from an element's outer ``face`` to the deep ground.

    Parameters
    ----------
    net : Network
    rec : Room
        Zone record (``soil_nodes`` and ``links`` get the names).
    face : str
        Outer surface node of the element.
    base : str
        Prefix of node and link names (``base + ".soil1"`` ...).
    soil : Soil
    depth : float
        Column thickness [m] (:func:`soil_cells` splits it).
    area : float
        Area of the column [m²].
    boundary : str
        Deep-ground boundary.
    initial : float or None
        Initial temperature of the soil nodes [°C].
    """
    lam = soil.conductivity
    prev, r_prev = face, 0.0
    for k, t in enumerate(soil_cells(depth, soil.first_cell)):
        sn = f"{base}.soil{k + 1}"
        net.add_node(sn, kind="ground", capacitance=soil.heat_capacity * t * area,
                     initial=initial)
        rec.soil_nodes.append(sn)
        add_positive_link(net, rec, prev, sn, area / (r_prev + 0.5 * t / lam), "ground",
                          f"{base}:soil{k + 1}")
        prev, r_prev = sn, 0.5 * t / lam
    add_positive_link(net, rec, prev, boundary, area / r_prev, "ground", f"{base}:deep")
