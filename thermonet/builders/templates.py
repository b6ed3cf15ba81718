"""Templates: the ISO 13790:2008 simple hourly 5R1C zone built from ordinary nodes and links.

The 5R1C zone (ISO 13790:2008 Annex C, docs/references.md §7.1, from memory, high confidence) has
three free nodes and the outdoor air:

======== ================= ============================================================
node     capacitance       links
======== ================= ============================================================
air      0 (massless)      H_ve to the supply air (airflow links, added separately with
                           :func:`thermonet.builders.add_infiltration` / ``add_ventilation``),
                           H_tr,is = h_is·A_t to the star node (path ``"internal"``)
star θ_s 0 (massless)      H_tr,w to the outdoor air (windows, doors; ``"glazing"``),
                           H_tr,ms = h_ms·A_m to the mass node (``"internal"``)
mass θ_m C_m               H_tr,em = 1/(1/H_tr,op − 1/H_tr,ms) to the outdoor air (``"opaque"``)
======== ================= ============================================================

with h_is = 3.45 W/(m²K), A_t = 4.5·A_f, h_ms = 9.1 W/(m²K). Gains are split by the standard's
rules: Φ_ia = 0.5 Φ_int to the air, Φ_m = (A_m/A_t)(0.5 Φ_int + Φ_sol) to the mass,
Φ_st = [1 − A_m/A_t − H_tr,w/(9.1 A_t)](0.5 Φ_int + Φ_sol) to the star node. The split does not
conserve the gains: the share H_tr,w/(9.1 A_t) of (0.5 Φ_int + Φ_sol) is not applied (that is
the standard's rule); the balance shows the gains actually applied.

The network is solved by thermonet's exact stepper, not by the standard's Crank–Nicolson
formulas, so hourly values differ slightly from a hand implementation of Annex C; in steady
state both give the same node temperatures (tests/test_templates.py).
"""

from __future__ import annotations

import math
from dataclasses import asdict, dataclass, field

import pandas as pd

from thermonet import solar as _solar
from thermonet.builders.common import (
    META_KEY,
    check_num,
    check_orientation,
    meta_section,
    outdoor_boundary,
    resolve_construction,
    site_solar_position,
)
from thermonet.builders.elements import Element
from thermonet.builders.surfaces import heat_flow_direction
from thermonet.builders.windows import check_window, window_solar_gain
from thermonet.constructions import dynamic_characteristics, surface_resistances
from thermonet.errors import NetworkError, WeatherError
from thermonet.network import Network

__all__ = [
    "H_IS",
    "H_MS",
    "LAMBDA_AT",
    "MASS_CLASSES",
    "Iso13790Parameters",
    "Iso13790Zone",
    "add_iso13790_zone",
    "iso13790_from_room",
    "iso13790_parameters",
    "iso13790_zones",
]

#: Heat transfer coefficient between the air and the star node per A_t [W/(m²K)].
H_IS = 3.45
#: Heat transfer coefficient between the mass and the star node per A_m [W/(m²K)].
H_MS = 9.1
#: Ratio of the internal surface area A_t to the floor area A_f [-].
LAMBDA_AT = 4.5

#: ISO 13790:2008 Table 12 (from memory): mass class -> (A_m/A_f [-], C_m/A_f [J/(m²K)]).
MASS_CLASSES = {
    "very_light": (2.5, 80_000.0),
    "light": (2.5, 110_000.0),
    "medium": (2.5, 165_000.0),
    "heavy": (3.0, 260_000.0),
    "very_heavy": (3.5, 370_000.0),
}


@dataclass(frozen=True)
class Iso13790Parameters:
    """Conductances [W/K], areas [m²] and capacity [J/K] of a 5R1C zone.

    Attributes
    ----------
    floor_area : float
        Conditioned floor area A_f [m²].
    a_t : float
        Area of all surfaces facing the zone A_t = Λ_at·A_f [m²].
    a_m : float
        Effective mass area A_m [m²].
    c_m : float
        Internal heat capacity C_m [J/K].
    h_tr_is : float
        Coupling air – star node H_tr,is = h_is·A_t [W/K].
    h_tr_ms : float
        Coupling star – mass node H_tr,ms = h_ms·A_m [W/K].
    h_tr_em : float
        Outdoor – mass node H_tr,em [W/K].
    h_tr_op : float
        Transmission of the opaque elements H_tr,op [W/K].
    h_tr_w : float
        Transmission of windows and light elements H_tr,w [W/K].
    """

    floor_area: float
    a_t: float
    a_m: float
    c_m: float
    h_tr_is: float
    h_tr_ms: float
    h_tr_em: float
    h_tr_op: float
    h_tr_w: float

    @property
    def mass_share(self) -> float:
        """A_m/A_t [-]: share of (0.5 Φ_int + Φ_sol) to the mass node."""
        return self.a_m / self.a_t

    @property
    def star_share(self) -> float:
        """1 − A_m/A_t − H_tr,w/(9.1 A_t) [-]: share of (0.5 Φ_int + Φ_sol) to the star node."""
        return 1.0 - self.a_m / self.a_t - self.h_tr_w / (H_MS * self.a_t)


def iso13790_parameters(floor_area, h_tr_op, h_tr_w, *, mass_class="medium", a_m=None,
                        c_m=None) -> Iso13790Parameters:
    """Conductances of the ISO 13790 5R1C model.

    Parameters
    ----------
    floor_area : float
        Conditioned floor area A_f [m²], > 0.
    h_tr_op : float
        Transmission coefficient of the opaque elements H_tr,op [W/K], ≥ 0, < H_tr,ms.
    h_tr_w : float
        Transmission coefficient of windows, doors and light elements H_tr,w [W/K], ≥ 0.
    mass_class : {"very_light", "light", "medium", "heavy", "very_heavy"}, default "medium"
        Class of ISO 13790 Table 12 giving A_m and C_m per floor area, unless ``a_m`` and
        ``c_m`` are given.
    a_m, c_m : float, optional
        Effective mass area [m²] and internal heat capacity [J/K], e.g. from the elements
        (see :func:`iso13790_from_room`).

    Returns
    -------
    Iso13790Parameters

    Raises
    ------
    NetworkError
        Non-positive floor area, unknown class, H_tr,op ≥ H_tr,ms (H_tr,em would not be
        positive), or a negative star share (windows too large for the floor area).

    Notes
    -----
    A_t = 4.5 A_f, H_tr,is = 3.45 A_t, H_tr,ms = 9.1 A_m, H_tr,em = 1/(1/H_tr,op − 1/H_tr,ms)
    (ISO 13790:2008 7.2.2 and 12.2.2, from memory).

    References
    ----------
    ISO 13790:2008, Energy performance of buildings — Calculation of energy use for space
    heating and cooling, Annex C (simple hourly method), 12.2 and 12.3 (mass classes).
    """
    af = check_num(floor_area, "floor_area [m²]", low=0.0, low_open=True)
    hop = check_num(h_tr_op, "h_tr_op [W/K]", low=0.0)
    hw = check_num(h_tr_w, "h_tr_w [W/K]", low=0.0)
    if (a_m is None) != (c_m is None):
        raise NetworkError("give both a_m [m²] and c_m [J/K], or neither (mass_class)")
    if a_m is None:
        if mass_class not in MASS_CLASSES:
            raise NetworkError(f"mass_class must be one of {list(MASS_CLASSES)}, got "
                               f"{mass_class!r}")
        am_per, cm_per = MASS_CLASSES[mass_class]
        am, cm = am_per * af, cm_per * af
    else:
        am = check_num(a_m, "a_m [m²]", low=0.0, low_open=True)
        cm = check_num(c_m, "c_m [J/K]", low=0.0, low_open=True)
    at = LAMBDA_AT * af
    hms = H_MS * am
    if hop >= hms:
        raise NetworkError(f"h_tr_op = {hop:g} W/K must be below H_tr,ms = 9.1·A_m = {hms:g} W/K "
                           "for a positive H_tr,em; check the units or the mass area")
    hem = 0.0 if hop == 0.0 else 1.0 / (1.0 / hop - 1.0 / hms)
    p = Iso13790Parameters(af, at, am, cm, H_IS * at, hms, hem, hop, hw)
    if p.star_share < 0:
        raise NetworkError(f"the ISO 13790 gain split gives a negative star share "
                           f"({p.star_share:.3f}): A_m/A_t + H_tr,w/(9.1 A_t) > 1")
    return p


@dataclass
class Iso13790Zone:
    """What :func:`add_iso13790_zone` created.

    Attributes
    ----------
    name, air, star, mass, outdoor : str
        Zone name and the names of its air, star and mass nodes and outdoor boundary.
    volume : float or None
        Air volume [m³] (for airflows given in air changes).
    floor_area : float
        Conditioned floor area [m²].
    parameters : Iso13790Parameters
        The 5R1C conductances and capacity.
    heated : bool, default True
        Whether the zone is heated (air node kind).
    nodes, links, sources, switches : list of str
        Everything created for the zone, including later airflows and gains.
    """

    name: str
    air: str
    star: str
    mass: str
    outdoor: str
    volume: float | None
    floor_area: float
    parameters: Iso13790Parameters
    heated: bool = True
    nodes: list = field(default_factory=list)
    links: list = field(default_factory=list)
    sources: list = field(default_factory=list)
    switches: list = field(default_factory=list)


def _check_gain(value, what):
    if isinstance(value, pd.Series):
        return value.astype(float).rename(None)
    return check_num(value, what, low=-math.inf)


def add_iso13790_zone(net: Network, name: str, *, floor_area: float, h_tr_op: float,
                      h_tr_w: float, mass_class: str = "medium", a_m=None, c_m=None,
                      internal_gains=0.0, solar_gains=0.0, volume: float | None = None,
                      outdoor: str = "outdoor", outdoor_temperature="temp_air",
                      initial: float | None = None) -> Iso13790Zone:
    """Add an ISO 13790:2008 5R1C zone to ``net`` (see the module docstring).

    Parameters
    ----------
    net : Network
    name : str
        Zone name = air node name; the others are ``"<name>.star"``, ``"<name>.mass"``.
    floor_area, h_tr_op, h_tr_w, mass_class, a_m, c_m
        See :func:`iso13790_parameters`.
    internal_gains : float or Series, default 0
        Φ_int [W] (e.g. :func:`thermonet.gains.total_gains`), path ``"internal"``.
    solar_gains : float or Series, default 0
        Φ_sol [W], path ``"solar"``.
    volume : float, optional
        Air volume [m³] (for airflows given as air changes per hour).
    outdoor, outdoor_temperature
        Outdoor boundary, reused or created (default column ``"temp_air"``).
    initial : float, optional
        Initial mass temperature [°C].

    Returns
    -------
    Iso13790Zone
        Add airflows with :func:`thermonet.builders.add_infiltration` and
        :func:`~thermonet.builders.add_ventilation` (H_ve), a thermostat at ``zone.air``.
    """
    p = iso13790_parameters(floor_area, h_tr_op, h_tr_w, mass_class=mass_class, a_m=a_m,
                            c_m=c_m)
    q_int = _check_gain(internal_gains, "internal_gains [W]")
    q_sol = _check_gain(solar_gains, "solar_gains [W]")
    if volume is not None:
        volume = check_num(volume, "volume [m³]", low=0.0, low_open=True)
    out = outdoor_boundary(net, outdoor, outdoor_temperature, "air", f"zone {name!r}")
    z = Iso13790Zone(name, name, f"{name}.star", f"{name}.mass", out, volume, p.floor_area, p)
    net.add_node(z.air, kind="air", capacitance=0.0, volume=volume)
    net.add_node(z.star, kind="surface", capacitance=0.0)
    net.add_node(z.mass, kind="mass", capacitance=p.c_m, initial=initial)
    z.nodes = [z.air, z.star, z.mass]

    def link(a, b, g, path, lname):
        if g > 0:
            z.links.append(net.add_link(a, b, conductance=g, path=path, name=f"{name}:{lname}"))

    link(z.star, z.air, p.h_tr_is, "internal", "h_tr_is")
    link(z.star, out, p.h_tr_w, "glazing", "h_tr_w")
    link(z.mass, z.star, p.h_tr_ms, "internal", "h_tr_ms")
    link(z.mass, out, p.h_tr_em, "opaque", "h_tr_em")

    def source(node, power, path, lname):
        if isinstance(power, pd.Series) or power != 0.0:
            z.sources.append(net.add_source(node, power=power, path=path, name=f"{name}:{lname}"))

    source(z.air, 0.5 * q_int, "internal", "phi_ia")
    source(z.star, p.star_share * 0.5 * q_int, "internal", "phi_st_int")
    source(z.mass, p.mass_share * 0.5 * q_int, "internal", "phi_m_int")
    source(z.star, p.star_share * q_sol, "solar", "phi_st_sol")
    source(z.mass, p.mass_share * q_sol, "solar", "phi_m_sol")
    _keep_zone(net, z)
    return z


_ZONE_FIELDS = ("air", "star", "mass", "outdoor", "volume", "floor_area", "heated", "nodes",
                "links", "sources", "switches")


def _keep_zone(net: Network, z: Iso13790Zone) -> None:
    """Record ``z`` in ``net.meta`` (plain JSON, lists shared with the zone)."""
    rec = {k: getattr(z, k) for k in _ZONE_FIELDS}
    rec["parameters"] = asdict(z.parameters)
    meta_section(net, "iso13790_zones")[z.name] = rec


def iso13790_zones(net: Network) -> dict[str, Iso13790Zone]:
    """The 5R1C zones built by :func:`add_iso13790_zone` in ``net``, by name.

    Kept in ``net.meta["builders"]["iso13790_zones"]`` (plain JSON), so they survive a model
    file round trip (:func:`thermonet.io.save_model` / :func:`~thermonet.io.load_model`);
    the returned zones share their lists with the record.

    Parameters
    ----------
    net : Network
        The network to read the records from.

    Raises
    ------
    NetworkError
        If a record is malformed or names nodes the network does not have.
    """
    section = (getattr(net, "meta", None) or {}).get(META_KEY, {}).get("iso13790_zones", {})
    out = {}
    for name, d in section.items():
        where = f"net.meta['{META_KEY}']['iso13790_zones'][{name!r}]"
        if not isinstance(d, dict) or any(k not in d for k in (*_ZONE_FIELDS, "parameters")):
            raise NetworkError(f"{where} must be an object with keys "
                               f"{[*_ZONE_FIELDS, 'parameters']}; rebuild the zone")
        unknown = [n for n in d["nodes"] if n not in net.nodes]
        if unknown:
            raise NetworkError(f"zone {name!r}: its record names node(s) {unknown} that are "
                               "not in the network; rebuild the zone")
        try:
            params = Iso13790Parameters(**d["parameters"])
        except TypeError as exc:
            raise NetworkError(f"{where}['parameters'] is malformed ({exc})") from None
        out[name] = Iso13790Zone(name, parameters=params, **{k: d[k] for k in _ZONE_FIELDS})
    return out


#: Radiative coefficient of the sky term of ISO 13790 11.3.5, h_r ≈ 5ε [W/(m²K)] (from memory).
_ISO13790_HR_PER_EPS = 5.0


def iso13790_from_room(net: Network, name: str, *, floor_area: float, height: float,
                       elements, weather=None, constructions=None, internal_gains=0.0,
                       mass_class: str | None = None, outdoor: str = "outdoor",
                       outdoor_temperature="temp_air", sky="sky", sky_temperature="temp_sky",
                       sky_model: str = "perez", latitude=None, longitude=None,
                       **ignored) -> Iso13790Zone:
    """The 5R1C equivalent of a room description of :func:`thermonet.builders.add_room`.

    Parameters
    ----------
    net, name, floor_area, height, elements, weather, constructions, outdoor,
    outdoor_temperature, sky_model, latitude, longitude
        As for :func:`thermonet.builders.add_room` (only elements to ``"outdoor"``).
    internal_gains : float or Series
        Φ_int [W].
    mass_class : str, optional
        Use a class of ISO 13790 Table 12; default None: from the constructions,
        C_m = Σ κ_j A_j and A_m = C_m²/Σ κ_j² A_j (ISO 13790:2008 12.3.1.2, from memory) with
        κ_j the internal areal heat capacity κ1 of ISO 13786 (including surface resistances).
    sky, sky_temperature : str or None, and str
        As for :func:`~thermonet.builders.add_room`: with ``sky=None`` there is no sky term;
        otherwise the weather column ``sky_temperature`` gives θ_sky for it.
    **ignored
        Other :func:`~thermonet.builders.add_room` keywords (``sky``, ``solar_distribution``,
        ``rc_options`` ...) are accepted and have no meaning here; ``heated=False`` and ground
        parameters are refused.

    Returns
    -------
    Iso13790Zone

    Notes
    -----
    * H_tr,op = Σ U_j A_j of the opaque parts (ISO 6946 U with the tabulated R_si, R_se by
      direction of heat flow); H_tr,w = Σ U_w A_w of windows and doors.
    * Φ_sol = Σ windows :func:`thermonet.builders.window_solar_gain` + Σ opaque
      α R_se U A I_sol − Σ F_r R_se U A h_r (θ_air − θ_sky) over all elements and windows,
      F_r = (1 + cos β)/2, h_r = 5ε (ISO 13790:2008 11.3.4–11.3.5, from memory).

    **How far from the detailed room, and why.** For the test room of
    tests/test_templates.py (20 m², heavy walls, 4.5 m² south window, 0.5 h⁻¹, thermostat
    20 °C at the air node, 4 February days) the 5R1C heating energy is 1.5 % below the
    detailed :func:`~thermonet.builders.add_room` network on overcast days (27.1 vs
    27.5 kWh) and 9 % below on clear days at −12 ± 3 °C (15.4 vs 16.9 kWh); the test prints
    both and asserts 3 % and 10 %. The differences come from (1) one mass node with
    A_m = C_m²/Σκ²A instead of a chain per element (different short-term storage), (2) the
    fixed coupling h_is = 3.45 W/(m²K) × 4.5 A_f between air and star instead of the
    elements' own films and areas, (3) the gain split, which does not apply the share
    H_tr,w/(9.1 A_t) of the radiative and solar gains, and (4) the sky and opaque solar
    terms folded into Φ_sol.

    Raises
    ------
    NetworkError
        Elements not to ``"outdoor"``, temperature-controlled shading, ``heated=False``.
    """
    if ignored.get("heated", True) is False:
        raise NetworkError("the ISO 13790 template models a conditioned zone; heated=False is "
                           "not supported")
    for key in ("ground_temperature", "soil"):
        if ignored.get(key) is not None:
            raise NetworkError(f"the ISO 13790 template has no ground model; drop {key}=")
    h = check_num(height, "height [m]", low=0.0, low_open=True)
    af = check_num(floor_area, "floor_area [m²]", low=0.0, low_open=True)
    use_sky = weather is not None and sky is not None
    if use_sky and sky_temperature not in weather.columns:
        raise WeatherError(f"the weather has no column {sky_temperature!r} for the sky term; "
                           "add it with thermonet.weather.add_sky_temperature(df), or pass "
                           "sky=None")
    s = Iso13790Sums()
    for elem in elements:
        add_element_to_sums(s, elem, constructions, weather, sky_model=sky_model,
                            latitude=latitude, longitude=longitude,
                            sky_temperature=sky_temperature if use_sky else None)
    h_op, h_w, kappa_a, kappa2_a, phi_sol = s.h_tr_op, s.h_tr_w, s.kappa_a, s.kappa2_a, s.phi_sol
    if mass_class is None:
        if kappa_a <= 0:
            raise NetworkError("no opaque element to derive the mass from; give mass_class=")
        c_m, a_m = kappa_a, kappa_a ** 2 / kappa2_a
        kw = dict(a_m=a_m, c_m=c_m)
    else:
        kw = dict(mass_class=mass_class)
    if isinstance(phi_sol, pd.Series):
        phi_sol = phi_sol.rename(None)
    return add_iso13790_zone(net, name, floor_area=af, h_tr_op=h_op, h_tr_w=h_w,
                             internal_gains=internal_gains, solar_gains=phi_sol,
                             volume=af * h, outdoor=outdoor,
                             outdoor_temperature=outdoor_temperature, **kw)


@dataclass
class Iso13790Sums:
    """Running sums over the elements of a room description (see
    :func:`iso13790_from_room`).

    Attributes
    ----------
    h_tr_op, h_tr_w : float
        Σ U A of opaque parts and of windows and doors [W/K].
    kappa_a, kappa2_a : float
        Σ κ1 A [J/K] and Σ κ1² A [J²/(m²K²)] of opaque parts.
    phi_sol : float or pandas.Series
        Φ_sol [W].
    solpos : pandas.DataFrame or None
        Solar position, computed on first need.
    """

    h_tr_op: float = 0.0
    h_tr_w: float = 0.0
    kappa_a: float = 0.0
    kappa2_a: float = 0.0
    phi_sol: object = 0.0
    solpos: pd.DataFrame | None = None


def add_element_to_sums(s: Iso13790Sums, elem, constructions, weather, *, sky_model: str,
                        latitude, longitude, sky_temperature: str | None) -> None:
    """Add one element (opaque part, windows, sun and sky) to the 5R1C sums ``s``.

    Parameters
    ----------
    s : Iso13790Sums
    elem : Element
        Facing ``"outdoor"``.
    constructions : mapping, optional
        Name -> Construction.
    weather : pandas.DataFrame or None
        For Φ_sol; None: no solar or sky terms.
    sky_model : str
    latitude, longitude : float or None
        Site [°].
    sky_temperature : str or None
        Weather column of θ_sky [°C]; None: no sky term.
    """
    if not isinstance(elem, Element):
        raise TypeError(f"elements must be Element, got {type(elem).__name__}")
    ew = f"element {elem.name!r}"
    if not (isinstance(elem.boundary, str) and elem.boundary == "outdoor"):
        raise NetworkError(f"{ew}: the ISO 13790 template helper supports elements to "
                           f"'outdoor' only, got {elem.boundary!r}")
    tilt, az = check_orientation(elem.tilt, elem.azimuth, ew)
    area = check_num(elem.area, f"{ew}: area [m²]", low=0.0, low_open=True)
    cons = resolve_construction(elem, constructions)
    direction = heat_flow_direction(tilt)
    sr = surface_resistances(direction)
    a_win = 0.0
    for win in elem.windows:
        check_window(win, elem.name)
        a_win += float(win.area)
    if a_win > area * (1 + 1e-12):
        raise NetworkError(f"{ew}: its windows and doors ({a_win:g} m²) are larger than the "
                           f"element ({area:g} m²)")
    a_op = area - a_win
    u = 1.0 / (sr.rsi + cons.thermal_resistance + sr.rse)
    s.h_tr_op += u * a_op
    if a_op > 0:
        k1 = dynamic_characteristics(cons, direction=direction).kappa1
        s.kappa_a += k1 * a_op
        s.kappa2_a += k1 * k1 * a_op
    if weather is not None:
        add_element_solar(s, elem, weather, tilt, az, u, a_op, sr.rse, sky_model=sky_model,
                          latitude=latitude, longitude=longitude,
                          sky_temperature=sky_temperature)
    s.h_tr_w += sum(float(w.u_value) * float(w.area) for w in elem.windows)


def add_element_solar(s: Iso13790Sums, elem, weather, tilt: float, azimuth: float, u: float,
                      a_op: float, rse: float, *, sky_model: str, latitude, longitude,
                      sky_temperature: str | None) -> None:
    """Add an element's Φ_sol terms to ``s.phi_sol`` (ISO 13790:2008 11.3.4–11.3.5).

    Parameters
    ----------
    s : Iso13790Sums
    elem : Element
    weather : pandas.DataFrame
    tilt, azimuth : float
        [°].
    u : float
        U of the opaque part [W/(m²K)].
    a_op : float
        Opaque area [m²].
    rse : float
        R_se [m²K/W].
    sky_model : str
    latitude, longitude : float or None
        Site [°].
    sky_temperature : str or None
        Weather column of θ_sky [°C]; None: no sky term.
    """
    f_r = 0.5 * (1.0 + math.cos(math.radians(tilt)))
    parts = [(u, a_op, float(elem.emissivity))] + [
        (float(w.u_value), float(w.area), float(elem.emissivity)) for w in elem.windows]
    if s.solpos is None:
        s.solpos = site_solar_position(weather, latitude, longitude)
    irr = _solar.surface_irradiance(weather, tilt, azimuth, model=sky_model,
                                    solpos=s.solpos)["total"]
    s.phi_sol = s.phi_sol + float(elem.solar_absorptance) * rse * u * a_op * irr
    for win in elem.windows:
        if win.shading is not None and win.shading.control == "temperature":
            raise NetworkError(f"window {win.name!r}: temperature-controlled shading is "
                               "not supported by the ISO 13790 template")
        if win.g_value > 0:
            s.phi_sol = s.phi_sol + window_solar_gain(weather, win, tilt, azimuth,
                                                      solpos=s.solpos, sky_model=sky_model)
    if sky_temperature is not None:
        dth = weather["temp_air"] - weather[sky_temperature]
        for uu, aa, eps in parts:
            s.phi_sol = s.phi_sol - f_r * rse * uu * aa * _ISO13790_HR_PER_EPS * eps * dth
