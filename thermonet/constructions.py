"""Materials, layered constructions, U-values, ISO 13786 dynamic characteristics and RC chains.

Everything here is per unit area of a plane, homogeneous, layered building element: a
thermal resistance in [m²K/W], an areal heat capacity in [J/(m²K)], a conductance in
[W/(m²K)]. A room builder multiplies by the element's area [m²] to obtain the [J/K] and
[W/K] of network nodes and links; nothing in this module needs a network.

Layer order
-----------
A :class:`Construction` lists its layers from the **inside** (side 1, the room whose
temperature is modelled) to the **outside** (side 2: outdoor air, ground or the
neighbouring room). Every result follows that order: side 1 of the ISO 13786 transfer
matrix is the internal side, ``rsi`` belongs to side 1, ``rse`` to side 2, and the first
node of an :class:`RCChain` is the inside surface. Use :meth:`Construction.reversed` for
the same element seen from the other side (an internal floor seen from the room below).

Sign convention
---------------
In the transfer matrix, the heat-flow density q [W/m²] is positive in the direction from
side 1 (inside) to side 2 (outside); θ [K] is a complex temperature amplitude. The
periodic thermal transmittance ``Y12`` is the heat flow density leaving the element into
side 1 per unit temperature amplitude on side 2 (ISO 13786), so ``Y12 → U`` (positive) in
the steady limit.

Functions
---------
:func:`register_material`, :func:`get_material`
    the material registry :data:`MATERIALS`.
:func:`surface_resistances`, :func:`surface_resistance`
    ISO 6946 surface resistances, tabulated.
:func:`radiative_coefficient`, :func:`external_convective_coefficient`
    ISO 6946 surface coefficients, from which the resistances follow.
:func:`thermal_resistance`, :func:`u_value`, :func:`areal_heat_capacity`
    steady-state quantities (ISO 6946).
:func:`penetration_depth`, :func:`layer_transfer_matrix`, :func:`resistance_transfer_matrix`
    ISO 13786 layer matrices.
:func:`transfer_matrix`, :func:`dynamic_characteristics`
    ISO 13786 periodic quantities of a whole element.
:func:`rc_chain`
    discretisation into a chain of nodes (capacities) and conductances.
"""

from __future__ import annotations

import cmath
import difflib
import math
from collections.abc import Iterable, Mapping
from dataclasses import dataclass, field

import numpy as np

from thermonet.constants import STEFAN_BOLTZMANN, ZERO_CELSIUS
from thermonet.errors import ConstructionError
from thermonet.parameters import Expr
from thermonet.parameters import default as _default

__all__ = [
    "DEFAULT_FRACTION_OF_PENETRATION_DEPTH",
    "DIRECTIONS",
    "EXTERIORS",
    "INTERNAL_CONVECTIVE_COEFFICIENTS",
    "MATERIALS",
    "PERIOD_DAY",
    "Construction",
    "DynamicCharacteristics",
    "Layer",
    "Material",
    "RCChain",
    "SurfaceResistances",
    "areal_heat_capacity",
    "dynamic_characteristics",
    "external_convective_coefficient",
    "get_material",
    "layer_transfer_matrix",
    "penetration_depth",
    "radiative_coefficient",
    "rc_chain",
    "register_material",
    "resistance_transfer_matrix",
    "surface_resistance",
    "surface_resistances",
    "thermal_resistance",
    "transfer_matrix",
    "u_value",
]

#: Period of the daily cycle [s] (24 h × 3600 s/h), the ISO 13786 default period.
PERIOD_DAY = 86400.0

#: Default largest cell thickness of :func:`rc_chain`, as a fraction of the layer's periodic
#: penetration depth δ at the 24 h period [–]. With cells ≤ δ/6 the chain's decrement factor
#: and admittance stay within about 1 % of the exact ISO 13786 values for common walls (see
#: the Notes of :func:`rc_chain` and tests/test_constructions.py).
DEFAULT_FRACTION_OF_PENETRATION_DEPTH = 1.0 / 6.0

_SOURCE_10456 = (
    "ISO 10456:2007 Table 3, λ and ρ [C] (scribd.com/document/522475495, "
    "'Thermal conductivities of materials EN ISO10456'); c = 1000 J/(kgK) from memory"
)
_SOURCE_USERDECK = (
    "EN ISO 10077-2 / prEN 12524:1998 design values [C] "
    "(userdeck.net '05.06 Material Properties', λ, ρ and c)"
)
_SOURCE_CIBSE = "CIBSE Guide A (2015) Table 3.36 [C] (scribd.com/document/852732613)"


def _number(value):
    """``value`` as a float, or a parameter expression kept as it is."""
    return value if isinstance(value, Expr) else float(value)


def _check_param(value, parameter: str, owner: str):
    """A finite number as a float, or a parameter expression finite at its defaults (kept)."""
    if isinstance(value, Expr):
        _check_finite(value.default, f"{parameter} (the expression {value!r} at its defaults)",
                      owner)
        return value
    return _check_finite(value, parameter, owner)


def _check_finite(value, parameter: str, owner: str) -> float:
    """Return ``value`` as a float, or raise naming the parameter if it is not a finite number."""
    if isinstance(value, bool):
        raise ConstructionError(f"{owner}: {parameter} must be a finite number, got {value!r}.")
    try:
        number = float(value)
    except (TypeError, ValueError):
        raise ConstructionError(
            f"{owner}: {parameter} must be a finite number, got {value!r}."
        ) from None
    if not math.isfinite(number):
        raise ConstructionError(f"{owner}: {parameter} must be a finite number, got {value!r}.")
    return number


# ---------------------------------------------------------------------------------------------
# Materials
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Material:
    """A homogeneous building material.

    Parameters
    ----------
    name : str
        Registry key and label, e.g. ``"concrete_2200"``.
    conductivity : float
        Design thermal conductivity λ [W/(m·K)], > 0.
    density : float
        Density ρ [kg/m³], ≥ 0.
    specific_heat : float
        Specific heat capacity c [J/(kg·K)], ≥ 0. ρ = 0 or c = 0 makes the material massless
        (it then only adds a resistance d/λ).
    source : str
        Where the values come from (standard and table, data sheet, or "from memory").

    Raises
    ------
    ConstructionError
        If the name is empty, λ ≤ 0, ρ < 0, c < 0 or any value is not finite.
    """

    name: str
    conductivity: float
    density: float
    specific_heat: float
    source: str = "user"

    def __post_init__(self):
        if not isinstance(self.name, str) or not self.name.strip():
            raise ConstructionError(f"Material name must be a non-empty string, got {self.name!r}.")
        owner = f"material {self.name!r}"
        lam = _check_finite(self.conductivity, "conductivity [W/(m·K)]", owner)
        rho = _check_finite(self.density, "density [kg/m³]", owner)
        c = _check_finite(self.specific_heat, "specific_heat [J/(kg·K)]", owner)
        if lam <= 0.0:
            raise ConstructionError(
                f"{owner}: conductivity must be > 0 W/(m·K), got {self.conductivity!r}. "
                "A layer that only has a thermal resistance (air gap, membrane) is written "
                "Layer.resistive(resistance)."
            )
        if rho < 0.0:
            raise ConstructionError(f"{owner}: density must be ≥ 0 kg/m³, got {self.density!r}.")
        if c < 0.0:
            raise ConstructionError(
                f"{owner}: specific_heat must be ≥ 0 J/(kg·K), got {self.specific_heat!r}."
            )
        object.__setattr__(self, "conductivity", lam)
        object.__setattr__(self, "density", rho)
        object.__setattr__(self, "specific_heat", c)

    @property
    def volumetric_heat_capacity(self) -> float:
        """ρ·c [J/(m³·K)]."""
        return self.density * self.specific_heat

    @property
    def diffusivity(self) -> float:
        """Thermal diffusivity a = λ/(ρc) [m²/s]; ``inf`` for a massless material."""
        rc = self.volumetric_heat_capacity
        return math.inf if rc == 0.0 else self.conductivity / rc


def _builtin_materials() -> dict[str, Material]:
    rows = [
        # name, λ [W/(mK)], ρ [kg/m³], c [J/(kgK)], source
        ("concrete_1800", 1.15, 1800.0, 1000.0, _SOURCE_10456 + " (medium density)"),
        ("concrete_2000", 1.35, 2000.0, 1000.0, _SOURCE_10456 + " (medium density)"),
        ("concrete_2200", 1.65, 2200.0, 1000.0, _SOURCE_10456 + " (medium density)"),
        ("concrete_2400", 2.00, 2400.0, 1000.0, _SOURCE_10456 + " (high density)"),
        ("concrete_reinforced_1pct", 2.30, 2300.0, 1000.0, _SOURCE_10456 + " (1 % steel)"),
        ("concrete_reinforced_2pct", 2.50, 2400.0, 1000.0, _SOURCE_10456 + " (2 % steel)"),
        ("glass_soda_lime", 1.00, 2500.0, 750.0, _SOURCE_USERDECK),
        ("glass_soda_lime_cibse", 1.05, 2500.0, 840.0, _SOURCE_CIBSE),
        ("softwood", 0.13, 500.0, 1600.0, _SOURCE_USERDECK),
        ("hardwood", 0.18, 700.0, 1600.0, _SOURCE_USERDECK),
        ("steel", 50.0, 7800.0, 450.0, _SOURCE_USERDECK),
        ("steel_cibse", 45.0, 7800.0, 480.0, _SOURCE_CIBSE),
        ("stainless_steel", 17.0, 7900.0, 460.0, _SOURCE_USERDECK),
        ("aluminium_alloy", 160.0, 2800.0, 880.0, _SOURCE_USERDECK + " (Si alloys)"),
        ("aluminium_cibse", 230.0, 2700.0, 880.0, _SOURCE_CIBSE),
        ("copper", 380.0, 8900.0, 380.0, _SOURCE_USERDECK),
        ("pvc_rigid", 0.17, 1390.0, 900.0, _SOURCE_USERDECK),
        ("gypsum_plasterboard_700", 0.21, 700.0, 1000.0, "ISO 10456:2007 Table 3, from memory"),
        ("gypsum_plasterboard_900", 0.25, 900.0, 1000.0, "ISO 10456:2007 Table 3, from memory"),
        ("gypsum_plaster_1000", 0.40, 1000.0, 1000.0, "ISO 10456:2007 Table 3, from memory"),
        ("gypsum_plaster_1300", 0.57, 1300.0, 1000.0, "ISO 10456:2007 Table 3, from memory"),
        (
            "mineral_wool",
            0.035,
            30.0,
            1030.0,
            "c: ISO 10456:2007 Table 3, from memory; λ = 0.035 W/(mK) and ρ = 30 kg/m³ a "
            "typical declared product value (common practice, no source) — use the product's "
            "declared λ",
        ),
        (
            "eps",
            0.035,
            20.0,
            1450.0,
            "expanded polystyrene; c: ISO 10456:2007 Table 3, from memory; λ = 0.035 W/(mK) "
            "and ρ = 20 kg/m³ a typical declared product value (common practice, no source)",
        ),
        (
            "brick_clay",
            0.80,
            1700.0,
            800.0,
            "λ and ρ: upper end of the ranges 0.6–0.8 W/(mK) and 1500–1700 kg/m³ of a "
            "clay-brick data sheet [C] (paperzz.com/doc/8712520); c: CIBSE Guide A, brickwork "
            "(outer leaf), from memory (which gives λ = 0.84 W/(mK), just above the sheet's "
            "range)",
        ),
        ("air_still", 0.025, 1.23, 1008.0, "ISO 10456:2007 Table 3 (air), from memory"),
        ("water", 0.60, 1000.0, 4190.0, "ISO 10456:2007 Table 3 (water at 10 °C), from memory"),
    ]
    return {name: Material(name, lam, rho, c, src) for name, lam, rho, c, src in rows}


#: Registry of known materials, name -> :class:`Material`. Extend it with
#: :func:`register_material`; look names up with :func:`get_material`.
MATERIALS: dict[str, Material] = _builtin_materials()


def register_material(material: Material, overwrite: bool = False) -> Material:
    """Add a material to :data:`MATERIALS` under its name.

    Parameters
    ----------
    material : Material
        The material to add.
    overwrite : bool, default False
        Replace an existing material of the same name.

    Returns
    -------
    Material
        The registered material.

    Raises
    ------
    TypeError
        If ``material`` is not a :class:`Material`.
    ConstructionError
        If the name is taken and ``overwrite`` is False.
    """
    if not isinstance(material, Material):
        raise TypeError(
            f"register_material expects a Material, got {type(material).__name__}; "
            "build one with Material(name, conductivity, density, specific_heat, source)."
        )
    if material.name in MATERIALS and not overwrite:
        raise ConstructionError(
            f"material {material.name!r} is already registered "
            f"({MATERIALS[material.name]}); choose another name or pass overwrite=True."
        )
    MATERIALS[material.name] = material
    return material


def get_material(name: str) -> Material:
    """Return the registered material called ``name``.

    Parameters
    ----------
    name : str
        Registry key, e.g. ``"concrete_2200"`` (a :class:`Material` is returned unchanged).

    Returns
    -------
    Material

    Raises
    ------
    ConstructionError
        If no material has that name; the message lists close matches.
    """
    if isinstance(name, Material):
        return name
    try:
        return MATERIALS[name]
    except (KeyError, TypeError):
        pass
    close = difflib.get_close_matches(str(name), list(MATERIALS), n=5, cutoff=0.5)
    hint = (
        f" Did you mean {', '.join(repr(c) for c in close)}?"
        if close
        else f" Known materials: {', '.join(sorted(MATERIALS))}."
    )
    raise ConstructionError(
        f"unknown material {name!r}.{hint} Add your own with register_material(Material(...))."
    )


# ---------------------------------------------------------------------------------------------
# Layers and constructions
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class Layer:
    """One plane layer of a construction: a material of some thickness, or a pure resistance.

    Parameters
    ----------
    material : Material, str or None
        The material, or its name in :data:`MATERIALS` (looked up at once). ``None`` for a
        resistive-only layer (air gap, membrane), which then needs ``resistance``.
    thickness : float or Expr
        Thickness d [m]; > 0 for a material layer. For a resistive layer it only places the
        following nodes geometrically (≥ 0; 0 allowed when unknown). A parameter expression
        (:mod:`thermonet.parameters`, e.g. an insulation thickness varied in a study) keeps
        the number of nodes of its default in :func:`rc_chain`; the capacities and
        conductances of its cells follow the expression.
    resistance : float or Expr, optional
        Thermal resistance R [m²K/W], ≥ 0, of a resistive-only (massless) layer, e.g. an
        unventilated air layer from ISO 6946 Table 8. Must be None for a material layer.
    name : str, optional
        Label used in messages and node labels; default: the material's name, or
        ``"resistive layer"``.

    Raises
    ------
    ConstructionError
        Non-positive thickness of a material layer, unknown material name, neither or both
        of ``material`` and ``resistance`` given, negative resistance.
    """

    material: Material | str | None
    thickness: float
    resistance: float | None = None
    name: str | None = None

    def __post_init__(self):
        label = self.name
        if label is None:
            if isinstance(self.material, Material):
                label = self.material.name
            elif isinstance(self.material, str):
                label = self.material
            else:
                label = "resistive layer"
        owner = f"layer {label!r}"
        if self.material is not None:
            if isinstance(self.material, str):
                object.__setattr__(self, "material", get_material(self.material))
            elif not isinstance(self.material, Material):
                raise TypeError(
                    f"{owner}: material must be a Material, a registered name or None, "
                    f"got {type(self.material).__name__}."
                )
            if self.resistance is not None:
                raise ConstructionError(
                    f"{owner}: give either a material (resistance d/λ follows from it) or a "
                    f"resistance for a massless layer, not both (resistance={self.resistance!r})."
                )
            d = _check_param(self.thickness, "thickness [m]", owner)
            if _default(d) <= 0.0:
                raise ConstructionError(
                    f"{owner}: thickness must be > 0 m, got {self.thickness!r}."
                )
        else:
            if self.resistance is None:
                raise ConstructionError(
                    f"{owner}: a layer without material needs resistance [m²K/W] "
                    "(e.g. Layer.resistive(0.18) for an air gap)."
                )
            r = _check_param(self.resistance, "resistance [m²K/W]", owner)
            if _default(r) < 0.0:
                raise ConstructionError(
                    f"{owner}: resistance must be ≥ 0 m²K/W, got {self.resistance!r}."
                )
            object.__setattr__(self, "resistance", r)
            d = _check_param(self.thickness, "thickness [m]", owner)
            if _default(d) < 0.0:
                raise ConstructionError(
                    f"{owner}: thickness must be ≥ 0 m, got {self.thickness!r}."
                )
        object.__setattr__(self, "thickness", d)
        object.__setattr__(self, "name", label)

    @classmethod
    def resistive(cls, resistance: float, thickness: float = 0.0, name: str = "air gap") -> Layer:
        """A massless layer with only a thermal resistance (air gap, membrane, foil).

        Parameters
        ----------
        resistance : float
            Thermal resistance R [m²K/W], ≥ 0.
        thickness : float, default 0
            Geometric thickness [m], ≥ 0 (not used thermally).
        name : str, default "air gap"
            Label.
        """
        return cls(None, thickness, resistance=resistance, name=name)

    @property
    def thermal_resistance(self) -> float:
        """R = d/λ for a material layer, or the given resistance [m²K/W]."""
        if self.material is None:
            return self.resistance
        return self.thickness / self.material.conductivity

    @property
    def areal_heat_capacity(self) -> float:
        """ρ·c·d [J/(m²K)]; 0 for a resistive or massless layer."""
        if self.material is None:
            return 0.0
        return self.material.volumetric_heat_capacity * self.thickness

    @property
    def is_massive(self) -> bool:
        """True if the layer stores heat (ρ·c·d > 0; at the defaults of a parameter)."""
        return _default(self.areal_heat_capacity) > 0.0


def _as_layer(item, index: int, construction: str) -> Layer:
    if isinstance(item, Layer):
        return item
    if isinstance(item, tuple) and len(item) == 2:
        return Layer(item[0], item[1])
    raise TypeError(
        f"construction {construction!r}, layer {index}: expected a Layer or a "
        f"(material, thickness) tuple, got {item!r}."
    )


@dataclass(frozen=True)
class Construction:
    """A plane building element made of layers listed from the INSIDE to the OUTSIDE.

    Parameters
    ----------
    name : str
        Label of the construction.
    layers : sequence of Layer or (material, thickness) tuples
        Layers in order **from the inside surface (side 1) to the outside surface (side
        2)**. A tuple ``("concrete_2200", 0.2)`` is read as ``Layer("concrete_2200", 0.2)``.
    description : str, optional
        Free text.

    Raises
    ------
    ConstructionError
        If there are no layers, or a layer is invalid.

    Examples
    --------
    >>> wall = Construction("heavy wall", [("gypsum_plaster_1300", 0.015),
    ...                                    ("concrete_2000", 0.20),
    ...                                    ("mineral_wool", 0.16)])
    >>> round(wall.u_value(), 4)  # 1/(0.13 + 0.015/0.57 + 0.2/1.35 + 0.16/0.035 + 0.04)
    0.2034
    """

    name: str
    layers: tuple[Layer, ...]
    description: str = ""

    def __post_init__(self):
        if isinstance(self.layers, (Layer, str)) or not isinstance(self.layers, Iterable):
            raise TypeError(
                f"construction {self.name!r}: layers must be a list of Layer, got "
                f"{type(self.layers).__name__}."
            )
        layers = tuple(_as_layer(x, i, self.name) for i, x in enumerate(self.layers))
        if not layers:
            raise ConstructionError(
                f"construction {self.name!r} has no layers; give at least one Layer, listed "
                "from the inside to the outside."
            )
        object.__setattr__(self, "layers", layers)

    @property
    def thickness(self) -> float:
        """Total thickness Σd [m]."""
        return sum(layer.thickness for layer in self.layers)

    @property
    def thermal_resistance(self) -> float:
        """Surface-to-surface thermal resistance Σ d/λ + ΣR [m²K/W]."""
        return thermal_resistance(self)

    @property
    def areal_heat_capacity(self) -> float:
        """Total areal heat capacity Σ ρ c d [J/(m²K)]."""
        return areal_heat_capacity(self)

    def reversed(self, name: str | None = None) -> Construction:
        """The same element seen from the other side (layers in reverse order).

        Parameters
        ----------
        name : str, optional
            Name of the reversed construction; default ``"<name> (reversed)"``.
        """
        return Construction(
            name if name is not None else f"{self.name} (reversed)",
            tuple(reversed(self.layers)),
            self.description,
        )

    def u_value(self, direction="horizontal", rsi=None, rse=None, exterior=None) -> float:
        """Thermal transmittance [W/(m²K)]; see :func:`u_value`.

        Parameters
        ----------
        direction : str, default "horizontal"
            Direction of heat flow (``"up"``, ``"horizontal"``, ``"down"``).
        rsi, rse : float, optional
            Surface resistances [m²K/W]; default ISO 6946 values for ``direction``.
        exterior : {"outdoor", "ground", "internal"}, optional
            What the outside face meets (sets Rse).
        """
        return u_value(self, direction=direction, rsi=rsi, rse=rse, exterior=exterior)

    def dynamic_characteristics(
        self, period=PERIOD_DAY, direction="horizontal", rsi=None, rse=None, exterior=None
    ) -> DynamicCharacteristics:
        """ISO 13786 periodic characteristics; see :func:`dynamic_characteristics`.

        Parameters
        ----------
        period : float, default 86400
            Period T [s].
        direction : str, default "horizontal"
            Direction of heat flow for the surface resistances.
        rsi, rse : float, optional
            Surface resistances [m²K/W].
        exterior : {"outdoor", "ground", "internal"}, optional
            What the outside face meets (sets Rse).
        """
        return dynamic_characteristics(
            self, period=period, direction=direction, rsi=rsi, rse=rse, exterior=exterior
        )

    def rc_chain(self, **kwargs) -> RCChain:
        """Discretise into an RC chain; see :func:`rc_chain` for the keywords."""
        return rc_chain(self, **kwargs)

    def _repr_html_(self):
        """Layers with U-value, decrement factor and time shift (a notebook's view)."""
        from thermonet.display import construction_html  # display reads attributes only

        return construction_html(self)


def _as_construction(construction) -> Construction:
    if isinstance(construction, Construction):
        return construction
    if isinstance(construction, Layer):
        return Construction("construction", (construction,))
    if isinstance(construction, (list, tuple)):
        return Construction("construction", tuple(construction))
    raise TypeError(
        f"expected a Construction or a list of Layer, got {type(construction).__name__}."
    )


# ---------------------------------------------------------------------------------------------
# Surface resistances (ISO 6946)
# ---------------------------------------------------------------------------------------------

#: Conventional internal surface resistance Rsi [m²K/W] by direction of heat flow,
#: ISO 6946:2017 Table 7 (Table 1 in ISO 6946:2007). "horizontal" covers ±30° from the
#: horizontal plane. Confirmed [C] in wiki.indigud.de "RSI RSE".
_RSI = {"up": 0.10, "horizontal": 0.13, "down": 0.17}

#: Conventional external surface resistance Rse [m²K/W] to outdoor air, ISO 6946:2017 Table 7.
_RSE_OUTDOOR = 0.04

#: Valid directions of heat flow (plus the shorthands "ground" and "internal").
DIRECTIONS = ("up", "horizontal", "down", "ground", "internal")

#: Valid kinds of the outside (side 2) of an element.
EXTERIORS = ("outdoor", "ground", "internal")

#: Convective coefficient at internal surfaces hci [W/(m²K)] by heat-flow direction,
#: ISO 6946:2007 Annex A (informative), from memory (docs/references.md §2.4).
INTERNAL_CONVECTIVE_COEFFICIENTS = {"up": 5.0, "horizontal": 2.5, "down": 0.7}

_ALIASES = {"ground": ("down", "ground"), "internal": ("horizontal", "internal")}


@dataclass(frozen=True)
class SurfaceResistances:
    """Internal and external surface resistances of an element [m²K/W].

    Attributes
    ----------
    rsi : float
        Internal (side 1) surface resistance [m²K/W].
    rse : float
        External (side 2) surface resistance [m²K/W].
    direction : str
        Direction of heat flow, "up", "horizontal" or "down".
    exterior : str
        What side 2 faces: "outdoor", "ground" or "internal".
    """

    rsi: float
    rse: float
    direction: str
    exterior: str


def _resolve_direction(direction, exterior) -> tuple[str, str]:
    if direction in _ALIASES:
        base, implied = _ALIASES[direction]
        if exterior is not None and exterior != implied:
            raise ConstructionError(
                f"direction={direction!r} already means exterior={implied!r} (heat flow "
                f"{base!r}); got exterior={exterior!r}. Give direction='up', 'horizontal' or "
                f"'down' together with exterior={exterior!r} instead."
            )
        return base, implied
    if direction not in _RSI:
        raise ConstructionError(
            f"unknown direction of heat flow {direction!r}; valid: "
            f"{', '.join(repr(d) for d in DIRECTIONS)}."
        )
    if exterior is None:
        exterior = "outdoor"
    if exterior not in EXTERIORS:
        raise ConstructionError(
            f"unknown exterior {exterior!r}; valid: {', '.join(repr(e) for e in EXTERIORS)}."
        )
    return direction, exterior


def surface_resistances(direction: str = "horizontal", exterior: str | None = None):
    """Conventional surface resistances Rsi and Rse of ISO 6946.

    Parameters
    ----------
    direction : {"horizontal", "up", "down", "ground", "internal"}
        Direction of the heat flow. "horizontal" applies within ±30° of the horizontal
        plane (walls), "up" to roofs and ceilings, "down" to floors. Shorthands:
        "ground" = ("down", exterior "ground"), a floor on the ground;
        "internal" = ("horizontal", exterior "internal"), an internal partition wall.
    exterior : {"outdoor", "ground", "internal"}, optional
        What the outside (side 2) of the element faces; default "outdoor".

    Returns
    -------
    SurfaceResistances
        ``rsi`` and ``rse`` [m²K/W].

    Raises
    ------
    ConstructionError
        Unknown direction or exterior (the valid ones are listed).

    Notes
    -----
    ISO 6946:2017 Table 7 (ISO 6946:2007 Table 1): Rsi = 0.10 (up), 0.13 (horizontal),
    0.17 (down); Rse = 0.04 m²K/W for all directions.

    - exterior "ground": Rse = 0, no air film at a face in contact with the soil (ISO 6946;
      the soil itself is modelled separately, e.g. per ISO 13370).
    - exterior "internal": Rse = Rsi of the same direction, both faces are internal
      (ISO 6946 rule for internal elements; the same value is used for a well-ventilated
      air layer's outer face).

    Confirmed [C] in the summaries wiki.indigud.de "RSI RSE" and 100gon.de/?p=222
    (Rse = 0 against the ground; Rsi = Rse for internal elements).

    References
    ----------
    ISO 6946:2017, Building components and building elements — Thermal resistance and
    thermal transmittance — Calculation methods, 6.8 and Table 7.
    """
    direction, exterior = _resolve_direction(direction, exterior)
    rsi = _RSI[direction]
    rse = {"outdoor": _RSE_OUTDOOR, "ground": 0.0, "internal": rsi}[exterior]
    return SurfaceResistances(rsi=rsi, rse=rse, direction=direction, exterior=exterior)


def radiative_coefficient(emissivity, temperature):
    """Linearised long-wave radiative surface coefficient h_r = ε·4σT_mn³ [W/(m²K)].

    Parameters
    ----------
    emissivity : float or array_like
        Hemispherical emissivity ε of the surface [–], 0 ≤ ε ≤ 1.
    temperature : float or array_like
        Mean temperature of the surface and its surroundings [°C].

    Returns
    -------
    float or ndarray
        h_r [W/(m²K)].

    Notes
    -----
    h_r = ε·h_r0 with h_r0 = 4σT_mn³, T_mn in [K] (ISO 6946:2007 Annex A, from memory).

    References
    ----------
    ISO 6946:2007, Annex A (informative) "Surface resistance", Formula (A.3).
    """
    eps = np.asarray(emissivity, dtype=float)
    if np.any(~np.isfinite(eps)) or np.any(eps < 0.0) or np.any(eps > 1.0):
        raise ConstructionError(f"emissivity must lie in [0, 1], got {emissivity!r}.")
    t = np.asarray(temperature, dtype=float) + ZERO_CELSIUS
    if np.any(~np.isfinite(t)) or np.any(t <= 0.0):
        raise ConstructionError(
            f"temperature must be a finite temperature above −273.15 °C, got {temperature!r}."
        )
    h = eps * 4.0 * STEFAN_BOLTZMANN * t**3
    return float(h) if h.ndim == 0 else h


def external_convective_coefficient(wind_speed):
    """External convective coefficient h_ce = 4 + 4v [W/(m²K)].

    Parameters
    ----------
    wind_speed : float or array_like
        Wind speed adjacent to the surface v [m/s], ≥ 0.

    Returns
    -------
    float or ndarray
        h_ce [W/(m²K)]; 20 W/(m²K) at the conventional v = 4 m/s.

    References
    ----------
    ISO 6946:2007, Annex A (informative), Formula (A.2), from memory (docs/references.md §2.4).
    """
    v = np.asarray(wind_speed, dtype=float)
    if np.any(~np.isfinite(v)) or np.any(v < 0.0):
        raise ConstructionError(f"wind_speed must be finite and ≥ 0 m/s, got {wind_speed!r}.")
    h = 4.0 + 4.0 * v
    return float(h) if h.ndim == 0 else h


def surface_resistance(hc, emissivity, temperature):
    """Surface resistance from convective and radiative coefficients, Rs = 1/(h_c + ε·h_r0).

    Parameters
    ----------
    hc : float or array_like
        Convective coefficient h_c [W/(m²K)], ≥ 0 (see
        :data:`INTERNAL_CONVECTIVE_COEFFICIENTS`, :func:`external_convective_coefficient`).
    emissivity : float or array_like
        Hemispherical emissivity of the surface [–].
    temperature : float or array_like
        Mean temperature of the surface and its surroundings [°C].

    Returns
    -------
    float or ndarray
        R_s [m²K/W].

    Notes
    -----
    R_s = 1/(h_c + h_r), h_r = ε·4σT_mn³ (ISO 6946:2007 Annex A, Formula (A.1), from memory).
    With h_c = 2.5, ε = 0.9, 20 °C this gives 0.131 m²K/W, the 0.13 of Table 7.

    References
    ----------
    ISO 6946:2007, Annex A (informative) "Surface resistance".
    """
    h = np.asarray(hc, dtype=float)
    if np.any(~np.isfinite(h)) or np.any(h < 0.0):
        raise ConstructionError(f"hc must be finite and ≥ 0 W/(m²K), got {hc!r}.")
    total = h + radiative_coefficient(emissivity, temperature)
    if np.any(total <= 0.0):
        raise ConstructionError(
            "hc + ε·h_r0 is zero: a surface with no convection and no radiation has an "
            f"infinite resistance (hc={hc!r}, emissivity={emissivity!r})."
        )
    r = 1.0 / total
    return float(r) if np.ndim(r) == 0 else r


def _surface_pair(direction, exterior, rsi, rse) -> tuple[float, float]:
    table = surface_resistances(direction, exterior)
    rsi_v = table.rsi if rsi is None else _check_finite(rsi, "rsi [m²K/W]", "surface")
    rse_v = table.rse if rse is None else _check_finite(rse, "rse [m²K/W]", "surface")
    if rsi_v < 0.0 or rse_v < 0.0:
        raise ConstructionError(
            f"surface resistances must be ≥ 0 m²K/W, got rsi={rsi_v!r}, rse={rse_v!r}."
        )
    return rsi_v, rse_v


# ---------------------------------------------------------------------------------------------
# Steady state (ISO 6946)
# ---------------------------------------------------------------------------------------------


def thermal_resistance(construction) -> float:
    """Surface-to-surface thermal resistance R = Σ d_j/λ_j + Σ R_k [m²K/W].

    Parameters
    ----------
    construction : Construction or list of Layer

    Returns
    -------
    float
        [m²K/W], without surface resistances.

    References
    ----------
    ISO 6946:2017, 6.7 (thermal resistance of homogeneous layers, R = d/λ).
    """
    c = _as_construction(construction)
    return sum(layer.thermal_resistance for layer in c.layers)


def u_value(construction, direction="horizontal", rsi=None, rse=None, exterior=None) -> float:
    """Thermal transmittance U = 1/(Rsi + Σ d/λ + ΣR + Rse) [W/(m²K)].

    Parameters
    ----------
    construction : Construction or list of Layer
        Layers from the inside to the outside.
    direction : str, default "horizontal"
        Direction of heat flow for the tabulated surface resistances, see
        :func:`surface_resistances`.
    rsi, rse : float, optional
        Override the tabulated internal / external surface resistance [m²K/W] (0 allowed).
    exterior : {"outdoor", "ground", "internal"}, optional
        What the outside faces; default "outdoor".

    Returns
    -------
    float
        U [W/(m²K)].

    Raises
    ------
    ConstructionError
        Unknown direction, negative resistances, or a total resistance of zero.

    Notes
    -----
    R_T = R_si + Σ R_j + R_se, U = 1/R_T (ISO 6946:2017, 6.9, Formula (7)/(8) — clause
    numbers from memory). Valid for plane, thermally homogeneous layers; no corrections for
    air voids, fixings or precipitation are applied.

    References
    ----------
    ISO 6946:2017, Building components and building elements — Thermal resistance and
    thermal transmittance — Calculation methods.
    """
    c = _as_construction(construction)
    rsi_v, rse_v = _surface_pair(direction, exterior, rsi, rse)
    total = rsi_v + thermal_resistance(c) + rse_v
    if _default(total) <= 0.0:
        raise ConstructionError(
            f"construction {c.name!r}: total thermal resistance is zero, U would be infinite."
        )
    return 1.0 / total


def areal_heat_capacity(construction) -> float:
    """Total areal heat capacity Σ ρ_j c_j d_j [J/(m²K)].

    Parameters
    ----------
    construction : Construction or list of Layer

    Returns
    -------
    float
        [J/(m²K)]. For the capacity that takes part in the daily cycle on one side use
        ``dynamic_characteristics(...).kappa1`` (ISO 13786).
    """
    c = _as_construction(construction)
    return sum(layer.areal_heat_capacity for layer in c.layers)


# ---------------------------------------------------------------------------------------------
# ISO 13786 transfer matrices
# ---------------------------------------------------------------------------------------------


def _check_period(period) -> float:
    t = _check_finite(period, "period [s]", "dynamic characteristics")
    if t <= 0.0:
        raise ConstructionError(f"period must be > 0 s, got {period!r}.")
    return t


def penetration_depth(conductivity, density, specific_heat, period=PERIOD_DAY):
    """Periodic penetration depth δ = sqrt(λT/(πρc)) [m].

    Parameters
    ----------
    conductivity : float or array_like
        λ [W/(m·K)], > 0.
    density : float or array_like
        ρ [kg/m³], > 0.
    specific_heat : float or array_like
        c [J/(kg·K)], > 0.
    period : float, default 86400
        Period T [s].

    Returns
    -------
    float or ndarray
        δ [m]: the depth at which a periodic temperature wave is damped by 1/e
        (δ = sqrt(2a/ω), a = λ/(ρc), ω = 2π/T).

    References
    ----------
    ISO 13786:2017, definition of the periodic penetration depth; Carslaw, H.S., Jaeger,
    J.C., Conduction of Heat in Solids, 2nd ed., Oxford, 1959, §2.6.
    """
    t = _check_period(period)
    lam = np.asarray(conductivity, dtype=float)
    rc = np.asarray(density, dtype=float) * np.asarray(specific_heat, dtype=float)
    if np.any(~(lam > 0)) or np.any(~(rc > 0)):
        raise ConstructionError(
            "penetration depth needs conductivity > 0 and density·specific_heat > 0, got "
            f"λ={conductivity!r}, ρ={density!r}, c={specific_heat!r}."
        )
    d = np.sqrt(lam * t / (math.pi * rc))
    return float(d) if d.ndim == 0 else d


#: Largest total ξ = Σ d/δ accepted before cosh/sinh overflow double precision [–].
_XI_MAX = 600.0


def layer_transfer_matrix(conductivity, density, specific_heat, thickness, period=PERIOD_DAY):
    """ISO 13786 heat-transfer matrix of a plane homogeneous layer.

    Parameters
    ----------
    conductivity : float
        λ [W/(m·K)], > 0.
    density : float
        ρ [kg/m³], ≥ 0.
    specific_heat : float
        c [J/(kg·K)], ≥ 0.
    thickness : float
        d [m], > 0.
    period : float, default 86400
        Period T [s].

    Returns
    -------
    ndarray, shape (2, 2), complex
        Z such that [θ₂, q₂] = Z·[θ₁, q₁]; Z11, Z22 [–], Z12 [m²K/W], Z21 [W/(m²K)].
        q is positive from side 1 to side 2.

    Raises
    ------
    ConstructionError
        Non-positive λ or d, negative ρ or c, or d/δ so large (> 600) that the hyperbolic
        functions overflow.

    Notes
    -----
    With δ = sqrt(λT/(πρc)) and ξ = d/δ (ISO 13786, docs/references.md §1.1):

    - Z11 = Z22 = cosh ξ cos ξ + i sinh ξ sin ξ
    - Z12 = −(δ/2λ)·{sinh ξ cos ξ + cosh ξ sin ξ + i[cosh ξ sin ξ − sinh ξ cos ξ]}
    - Z21 = −(λ/δ)·{sinh ξ cos ξ − cosh ξ sin ξ + i[sinh ξ cos ξ + cosh ξ sin ξ]}

    equivalently Z11 = cosh(kd), Z12 = −sinh(kd)/(λk), Z21 = −λk·sinh(kd) with
    k = (1 + i)/δ; det Z = 1. A massless layer (ρc = 0) gives the limit [[1, −d/λ], [0, 1]].

    References
    ----------
    ISO 13786:2017, Thermal performance of building components — Dynamic thermal
    characteristics — Calculation methods (transfer matrix of a homogeneous layer).
    Pipes, L.A., "Matrix analysis of heat transfer problems", J. Franklin Inst. 263(3),
    195–206, 1957 (from memory).
    """
    owner = "layer transfer matrix"
    t = _check_period(period)
    lam = _check_finite(conductivity, "conductivity [W/(m·K)]", owner)
    rho = _check_finite(density, "density [kg/m³]", owner)
    c = _check_finite(specific_heat, "specific_heat [J/(kg·K)]", owner)
    d = _check_finite(thickness, "thickness [m]", owner)
    if lam <= 0.0:
        raise ConstructionError(f"{owner}: conductivity must be > 0, got {conductivity!r}.")
    if rho < 0.0 or c < 0.0:
        raise ConstructionError(
            f"{owner}: density and specific_heat must be ≥ 0, got {density!r}, {specific_heat!r}."
        )
    if d <= 0.0:
        raise ConstructionError(f"{owner}: thickness must be > 0 m, got {thickness!r}.")
    if rho * c == 0.0:
        return resistance_transfer_matrix(d / lam)
    delta = math.sqrt(lam * t / (math.pi * rho * c))
    xi = d / delta
    if xi > _XI_MAX:
        raise ConstructionError(
            f"{owner}: thickness/penetration depth = {xi:.0f} exceeds {_XI_MAX:.0f}; the "
            "periodic wave is fully damped long before the far face. Use a thinner layer or "
            "a longer period."
        )
    ch, sh, co, si = math.cosh(xi), math.sinh(xi), math.cos(xi), math.sin(xi)
    z11 = complex(ch * co, sh * si)
    z12 = -(delta / (2.0 * lam)) * complex(sh * co + ch * si, ch * si - sh * co)
    z21 = -(lam / delta) * complex(sh * co - ch * si, sh * co + ch * si)
    return np.array([[z11, z12], [z21, z11]], dtype=complex)


def resistance_transfer_matrix(resistance):
    """ISO 13786 matrix of a pure thermal resistance (surface film, air layer): [[1, −R],[0, 1]].

    Parameters
    ----------
    resistance : float
        R [m²K/W], ≥ 0.

    Returns
    -------
    ndarray, shape (2, 2), complex

    References
    ----------
    ISO 13786:2017 (transfer matrix of a boundary layer / air layer).
    """
    r = _check_finite(resistance, "resistance [m²K/W]", "resistance transfer matrix")
    if r < 0.0:
        raise ConstructionError(f"resistance must be ≥ 0 m²K/W, got {resistance!r}.")
    return np.array([[1.0, -r], [0.0, 1.0]], dtype=complex)


def _layer_matrix(layer: Layer, period: float) -> np.ndarray:
    if layer.material is None or not layer.is_massive:
        return resistance_transfer_matrix(layer.thermal_resistance)
    m = layer.material
    try:
        return layer_transfer_matrix(
            m.conductivity, m.density, m.specific_heat, layer.thickness, period
        )
    except ConstructionError as err:
        raise ConstructionError(f"layer {layer.name!r}: {err}") from None


def transfer_matrix(construction, period=PERIOD_DAY, rsi=0.0, rse=0.0):
    """ISO 13786 heat-transfer matrix of a layered element, Z = Z_s2·Z_N⋯Z_1·Z_s1.

    Parameters
    ----------
    construction : Construction or list of Layer
        Layers from the inside (side 1, layer 1) to the outside (side 2, layer N).
    period : float, default 86400
        Period T [s].
    rsi, rse : float, default 0
        Surface resistances on side 1 (inside) and side 2 (outside) [m²K/W].

    Returns
    -------
    ndarray, shape (2, 2), complex
        [θ₂, q₂] = Z·[θ₁, q₁], θ the air (environmental) temperature amplitudes when
        surface resistances are included, q positive from side 1 to side 2.

    Raises
    ------
    ConstructionError
        Invalid period, resistances, or a layer too thick for the period.

    Notes
    -----
    The product is taken from side 1: Z = Z_s2 · Z_N · … · Z_1 · Z_s1 (ISO 13786).

    References
    ----------
    ISO 13786:2017, Thermal performance of building components — Dynamic thermal
    characteristics — Calculation methods.
    """
    c = _as_construction(construction)
    t = _check_period(period)
    xi_total = 0.0
    for layer in c.layers:
        if layer.is_massive:
            m = layer.material
            xi_total += layer.thickness / penetration_depth(
                m.conductivity, m.density, m.specific_heat, t
            )
    if xi_total > _XI_MAX:
        raise ConstructionError(
            f"construction {c.name!r}: Σ thickness/penetration depth = {xi_total:.0f} exceeds "
            f"{_XI_MAX:.0f} at period {t} s; the result would overflow. Use a longer period."
        )
    z = resistance_transfer_matrix(rsi)
    for layer in c.layers:
        z = _layer_matrix(layer, t) @ z
    return resistance_transfer_matrix(rse) @ z


@dataclass(frozen=True)
class DynamicCharacteristics:
    """ISO 13786 periodic thermal characteristics of an element (per unit area).

    Side 1 is the inside (first layer), side 2 the outside (last layer).

    Attributes
    ----------
    period : float
        Period T [s].
    u_value : float
        Steady thermal transmittance U [W/(m²K)] with the same surface resistances.
    y11 : complex
        Internal thermal admittance Y11 = −Z11/Z12 [W/(m²K)].
    y22 : complex
        External thermal admittance Y22 = −Z22/Z12 [W/(m²K)].
    y12 : complex
        Periodic thermal transmittance Y12 = −1/Z12 [W/(m²K)].
    y11_magnitude, y22_magnitude, y12_magnitude : float
        ``|Y|`` [W/(m²K)].
    y11_time_shift, y22_time_shift : float
        Time shift of the admittances, (T/2π)·arg(Y) [h]; positive: the heat flow into the
        surface leads the temperature.
    decrement_factor : float
        f = ``|Y12|``/U [–].
    time_shift : float
        Lag of the heat flow through the element behind the outside temperature,
        (−arg(Y12)·T/2π) mod T [h], in [0, T).
    kappa1, kappa2 : float
        Internal and external areal heat capacities κ1 = (T/2π)·abs((Z11 − 1)/Z12),
        κ2 = (T/2π)·abs((Z22 − 1)/Z12) [J/(m²K)], from the same matrix Z as the admittances,
        i.e. including ``rsi`` and ``rse``; pass ``rsi=0, rse=0`` to
        :func:`dynamic_characteristics` for the surface-to-surface values.
    rsi, rse : float
        Surface resistances used [m²K/W].
    matrix : ndarray, shape (2, 2), complex
        The transfer matrix Z including the surface resistances.
    """

    period: float
    u_value: float
    y11: complex
    y22: complex
    y12: complex
    y11_magnitude: float
    y11_time_shift: float
    y22_magnitude: float
    y22_time_shift: float
    y12_magnitude: float
    decrement_factor: float
    time_shift: float
    kappa1: float
    kappa2: float
    rsi: float
    rse: float
    matrix: np.ndarray = field(repr=False, compare=False)

    def __str__(self):
        from thermonet.display import dynamic_characteristics_text

        return dynamic_characteristics_text(self)

    def _repr_html_(self):
        from thermonet.display import dynamic_characteristics_html

        return dynamic_characteristics_html(self)


def dynamic_characteristics(
    construction, period=PERIOD_DAY, direction="horizontal", rsi=None, rse=None, exterior=None
) -> DynamicCharacteristics:
    """ISO 13786 admittances, periodic transmittance, decrement factor, time shift, κ1, κ2.

    Parameters
    ----------
    construction : Construction or list of Layer
        Layers from the inside (side 1) to the outside (side 2).
    period : float, default 86400
        Period T [s].
    direction : str, default "horizontal"
        Direction of heat flow for the tabulated ISO 6946 surface resistances
        (:func:`surface_resistances`).
    rsi, rse : float, optional
        Override the surface resistances [m²K/W]; pass 0 for none.
    exterior : {"outdoor", "ground", "internal"}, optional
        What the outside faces; default "outdoor".

    Returns
    -------
    DynamicCharacteristics

    Raises
    ------
    ConstructionError
        Invalid period, direction or resistances.

    Notes
    -----
    With Z = Z_s2·Z_N⋯Z_1·Z_s1 (:func:`transfer_matrix`), ω = 2π/T (ISO 13786):

    - Y11 = −Z11/Z12, Y22 = −Z22/Z12, Y12 = −1/Z12 [W/(m²K)]
    - f = ``|Y12|``/U, Δt = (T/2π)·arg(Y); for Y12 the lag −arg(Y12)·T/2π is reported mod T
    - κ1 = (T/2π)·abs((Z11 − 1)/Z12), κ2 = (T/2π)·abs((Z22 − 1)/Z12) [J/(m²K)]

    For a layer much thicker than δ without surface resistance, Y11 → λ(1 + i)/δ: the
    admittance leads the temperature by exactly T/8 (3 h at 24 h).

    References
    ----------
    ISO 13786:2017, Thermal performance of building components — Dynamic thermal
    characteristics — Calculation methods.
    """
    c = _as_construction(construction)
    t = _check_period(period)
    rsi_v, rse_v = _surface_pair(direction, exterior, rsi, rse)
    z = transfer_matrix(c, t, rsi_v, rse_v)
    z11, z12, z22 = complex(z[0, 0]), complex(z[0, 1]), complex(z[1, 1])
    if z12 == 0:
        raise ConstructionError(
            f"construction {c.name!r}: Z12 = 0 (no thermal resistance at all); the "
            "admittances are infinite."
        )
    y11, y22, y12 = -z11 / z12, -z22 / z12, -1.0 / z12
    scale = t / (2.0 * math.pi)
    to_h = scale / 3600.0  # radians -> [h]: (T/2π) [s] / 3600 [s/h]
    lag = (-cmath.phase(y12) * scale) % t
    u = u_value(c, direction=direction, rsi=rsi_v, rse=rse_v, exterior=exterior)
    return DynamicCharacteristics(
        period=t,
        u_value=u,
        y11=y11,
        y22=y22,
        y12=y12,
        y11_magnitude=abs(y11),
        y11_time_shift=cmath.phase(y11) * to_h,
        y22_magnitude=abs(y22),
        y22_time_shift=cmath.phase(y22) * to_h,
        y12_magnitude=abs(y12),
        decrement_factor=abs(y12) / u,
        time_shift=lag / 3600.0,
        kappa1=scale * abs((z11 - 1.0) / z12),
        kappa2=scale * abs((z22 - 1.0) / z12),
        rsi=rsi_v,
        rse=rse_v,
        matrix=z,
    )


# ---------------------------------------------------------------------------------------------
# RC chain
# ---------------------------------------------------------------------------------------------


@dataclass(frozen=True)
class RCChain:
    """A construction discretised into a chain of nodes, per unit area.

    Nodes run from the inside surface (index 0) to the outside surface (index n − 1).
    A builder multiplies by the element area A [m²]: node capacity C·A [J/K], link
    conductance G·A [W/K] (see :meth:`for_area`).

    Attributes
    ----------
    construction : str
        Name of the construction.
    capacitances : tuple of float
        Areal heat capacity of each node [J/(m²K)], length n. Interior nodes are > 0;
        a surface node is 0 only when the layer at that face is massless.
    conductances : tuple of float
        Conductance between node j and j + 1 [W/(m²K)], length n − 1.
    positions : tuple of float
        Depth of each node from the inside surface [m].
    labels : tuple of str
        Readable node labels ("inside surface", "concrete_2200 2/4", ...).
    inside_resistance, outside_resistance : float or None
        Rsi and Rse [m²K/W] between the surface nodes and the air on each side, when asked
        for with ``include_surface_resistances=True``; None otherwise (the builder then
        attaches its own convection and radiation to the surface nodes). A value of 0
        (ground contact) means the surface node takes the boundary temperature.
    """

    construction: str
    capacitances: tuple[float, ...]
    conductances: tuple[float, ...]
    positions: tuple[float, ...]
    labels: tuple[str, ...]
    inside_resistance: float | None = None
    outside_resistance: float | None = None

    @property
    def n_nodes(self) -> int:
        """Number of nodes n."""
        return len(self.capacitances)

    @property
    def total_capacitance(self) -> float:
        """Σ C [J/(m²K)], equal to Σ ρ c d of the construction."""
        return _number(sum(self.capacitances))

    @property
    def total_resistance(self) -> float:
        """Σ 1/G surface to surface [m²K/W], equal to Σ d/λ + ΣR."""
        return _number(sum(1.0 / g for g in self.conductances))

    def for_area(self, area: float) -> tuple[np.ndarray, np.ndarray]:
        """Node capacities [J/K] and link conductances [W/K] of an element of ``area`` [m²].

        Parameters
        ----------
        area : float or Expr
            Element area [m²], > 0.

        Returns
        -------
        capacities, conductances : ndarray, or lists of float and Expr
            [J/K] and [W/K]; lists when the area or the chain depends on parameters
            (:mod:`thermonet.parameters`; zero capacities stay plain zeros).
        """
        a = _check_param(area, "area [m²]", f"RC chain of {self.construction!r}")
        if _default(a) <= 0.0:
            raise ConstructionError(f"area must be > 0 m², got {area!r}.")
        if isinstance(a, Expr) or any(isinstance(v, Expr) for v in
                                      self.capacitances + self.conductances):
            return ([0.0 if (not isinstance(c, Expr) and c == 0.0) else c * a
                     for c in self.capacitances], [g * a for g in self.conductances])
        return np.asarray(self.capacitances) * a, np.asarray(self.conductances) * a


def _cells_for_layer(
    index: int, layer: Layer, nodes_per_layer, fraction: float, max_h, period: float
) -> int:
    """Number of cells of a massive layer (nodes at both faces and n − 1 inside)."""
    if nodes_per_layer is not None:
        if isinstance(nodes_per_layer, Mapping):
            key = index if index in nodes_per_layer else layer.name
            n_nodes = nodes_per_layer.get(key)
        else:
            n_nodes = nodes_per_layer
        if n_nodes is not None:
            if isinstance(n_nodes, bool) or not isinstance(n_nodes, (int, np.integer)):
                raise ConstructionError(
                    f"nodes_per_layer for layer {index} ({layer.name!r}) must be an integer ≥ 2, "
                    f"got {n_nodes!r}."
                )
            if n_nodes < 2:
                raise ConstructionError(
                    f"nodes_per_layer for layer {index} ({layer.name!r}) must be ≥ 2 (one node "
                    f"at each face of the layer), got {n_nodes!r}."
                )
            return int(n_nodes) - 1
    m = layer.material
    h = fraction * penetration_depth(m.conductivity, m.density, m.specific_heat, period)
    if max_h is not None:
        h = min(h, max_h)
    return max(1, math.ceil(_default(layer.thickness) / h - 1e-9))


def rc_chain(
    construction,
    *,
    max_node_thickness: float | None = None,
    fraction_of_penetration_depth: float = DEFAULT_FRACTION_OF_PENETRATION_DEPTH,
    nodes_per_layer: int | Mapping | None = None,
    period: float = PERIOD_DAY,
    direction: str | None = None,
    exterior: str | None = None,
    rsi: float | None = None,
    rse: float | None = None,
    include_surface_resistances: bool = False,
) -> RCChain:
    """Discretise a construction into a chain of capacities and conductances (per m²).

    Parameters
    ----------
    construction : Construction or list of Layer
        Layers from the inside to the outside.
    max_node_thickness : float, optional
        Upper bound on the cell thickness h [m] in every massive layer, on top of the
        penetration-depth criterion.
    fraction_of_penetration_depth : float, default 1/6
        Cells are at most this fraction of the layer's periodic penetration depth δ at
        ``period`` [–], 0 < value ≤ 1.
    nodes_per_layer : int or dict, optional
        Override the automatic choice: the number of nodes of a massive layer **counting
        both of its faces** (≥ 2; 2 = one cell, capacity split half to each face). An int
        applies to every massive layer; a dict maps a layer index (0 = innermost) or a
        layer name to the count, other layers stay automatic.
    period : float, default 86400
        Period T [s] for the penetration depth of the automatic criterion.
    direction, exterior, rsi, rse : optional
        Surface resistances as in :func:`u_value`; only with
        ``include_surface_resistances=True``.
    include_surface_resistances : bool, default False
        Store Rsi and Rse in the result (``inside_resistance``, ``outside_resistance``);
        the node chain itself is always surface to surface.

    Returns
    -------
    RCChain
        Capacities [J/(m²K)] of the nodes from the inside surface to the outside surface
        and conductances [W/(m²K)] between consecutive nodes.

    Raises
    ------
    ConstructionError
        Invalid refinement options, unknown layer in ``nodes_per_layer`` (or one naming a
        massless layer), surface options without ``include_surface_resistances``, or a
        zero total resistance.

    Notes
    -----
    **Scheme** (vertex-centred finite volumes). A massive layer of thickness d with n cells
    of h = d/n has nodes at depths 0, h, …, d. Each cell contributes ρch/2 to each of its
    two end nodes and a conductance λ/h between them, so faces carry half a cell and
    inside nodes a whole cell. Two adjacent massive layers share their interface node
    (which collects half a cell from each). Massless layers (resistive layers, ρc = 0) get
    no node: consecutive ones are summed into one resistance R between the face nodes of
    the neighbouring massive layers, G = 1/ΣR. Hence no interior node has zero capacity;
    a surface node has zero capacity only when the layer at that face is massless, and a
    fully massless construction is two zero-capacity surface nodes joined by 1/ΣR.
    Σ C = Σ ρcd and Σ 1/G = Σ d/λ + ΣR exactly.

    **Cell size.** In a periodic regime of period T the temperature in a layer varies as
    exp(−(1 + i)x/δ), δ = sqrt(λT/(πρc)). The lumped scheme replaces the wavenumber
    k = (1 + i)/δ by κ with 2(cosh κh − 1) = (kh)², i.e. κ ≈ k·(1 − (kh)²/24): the error is
    second order in h/δ (derived here), and it accumulates with the number of penetration
    depths the wave crosses. Each massive layer therefore gets n = max(1, ⌈d/h_max⌉) cells
    with h_max = min(fraction·δ, max_node_thickness), δ taken at ``period`` (24 h by
    default, the dominant cycle of room temperatures). With the default fraction 1/6 the
    decrement factor of five common walls (heavy insulated, light timber-frame, bare
    concrete, externally insulated concrete, plastered brick) stays within 0.4 % and the
    internal admittance within 0.2 % of the exact ISO 13786 values; 1/4 gives about 0.8 %
    and 1/2 about 3 % (measured against the exact periodic solution of the chain; the heavy
    and light walls are checked in tests/test_constructions.py). The time shift of light
    walls is least accurate (0.03 h on a 2 h lag with one cell of plasterboard). The default
    amounts to about six nodes per penetration depth (δ ≈ 0.14 m for dense concrete,
    ≈ 0.17 m for mineral wool at 24 h). Shorter periods (solar peaks, hourly steps) are
    resolved less well; refine with ``max_node_thickness`` when the inside surface response
    within the hour matters. The time step of a simulation adds its own error.

    References
    ----------
    ISO 13786:2017 (periodic penetration depth); Carslaw, H.S., Jaeger, J.C., Conduction
    of Heat in Solids, 2nd ed., Oxford, 1959, §2.6 (periodic temperature wave).
    """
    c = _as_construction(construction)
    t = _check_period(period)
    frac = _check_finite(
        fraction_of_penetration_depth, "fraction_of_penetration_depth [–]", "rc_chain"
    )
    if not 0.0 < frac <= 1.0:
        raise ConstructionError(
            "fraction_of_penetration_depth must lie in (0, 1], got "
            f"{fraction_of_penetration_depth!r}."
        )
    max_h = None
    if max_node_thickness is not None:
        max_h = _check_finite(max_node_thickness, "max_node_thickness [m]", "rc_chain")
        if max_h <= 0.0:
            raise ConstructionError(
                f"max_node_thickness must be > 0 m, got {max_node_thickness!r}."
            )
    if isinstance(nodes_per_layer, Mapping):
        known = {i for i in range(len(c.layers))} | {layer.name for layer in c.layers}
        for key in nodes_per_layer:
            if key not in known:
                raise ConstructionError(
                    f"nodes_per_layer names layer {key!r}, which construction {c.name!r} does "
                    f"not have; layers: {[layer.name for layer in c.layers]} "
                    f"(or indices 0–{len(c.layers) - 1})."
                )
            layers = [
                layer
                for i, layer in enumerate(c.layers)
                if key == i or (isinstance(key, str) and key == layer.name)
            ]
            if not any(layer.is_massive for layer in layers):
                raise ConstructionError(
                    f"nodes_per_layer names layer {key!r}, which is massless and gets no nodes "
                    "(its resistance joins the neighbouring nodes)."
                )
    if include_surface_resistances:
        rsi_v, rse_v = _surface_pair(
            "horizontal" if direction is None else direction, exterior, rsi, rse
        )
    else:
        given = {
            k: v
            for k, v in {
                "direction": direction,
                "exterior": exterior,
                "rsi": rsi,
                "rse": rse,
            }.items()
            if v is not None
        }
        if given:
            raise ConstructionError(
                f"rc_chain got {', '.join(given)} but include_surface_resistances=False; pass "
                "include_surface_resistances=True to store surface resistances, or drop them."
            )
        rsi_v = rse_v = None

    caps = [0.0]
    conds: list[float] = []
    pos = [0.0]
    labels = ["inside surface"]
    pending_r = 0.0
    x = 0.0
    for index, layer in enumerate(c.layers):
        if not layer.is_massive:
            pending_r += layer.thermal_resistance
            x += _default(layer.thickness)
            continue
        if _default(pending_r) > 0.0:
            # massless layers before this one: new face node joined by their resistance
            conds.append(1.0 / pending_r)
            caps.append(0.0)
            pos.append(x)
            labels.append(f"{layer.name} inner face")
            pending_r = 0.0
        n = _cells_for_layer(index, layer, nodes_per_layer, frac, max_h, t)
        m = layer.material
        h = layer.thickness / n
        half = 0.5 * m.volumetric_heat_capacity * h
        d0 = _default(layer.thickness)
        for j in range(n):
            caps[-1] += half
            caps.append(half)
            conds.append(m.conductivity / h)
            # the last cell ends exactly at the layer's far face (x + d, not x + n·(d/n),
            # which may round past the next layer's start)
            pos.append(x + d0 if j == n - 1 else x + (j + 1) * (d0 / n))
            labels.append(f"{layer.name} {j + 1}/{n}")
        x += d0
    if _default(pending_r) > 0.0 or len(caps) == 1:
        if _default(pending_r) <= 0.0:
            raise ConstructionError(
                f"construction {c.name!r} has neither heat capacity nor thermal resistance; "
                "its surfaces would coincide."
            )
        conds.append(1.0 / pending_r)
        caps.append(0.0)
        pos.append(x)
        labels.append("outside surface")
    labels[0] = "inside surface"
    labels[-1] = "outside surface"
    return RCChain(
        construction=c.name,
        capacitances=tuple(_number(v) for v in caps),
        conductances=tuple(_number(v) for v in conds),
        positions=tuple(float(v) for v in pos),
        labels=tuple(labels),
        inside_resistance=rsi_v,
        outside_resistance=rse_v,
    )
