"""ISO 13786 dynamic characteristics checked by an implementation written here, independently.

Nothing of thermonet.constructions is used below to compute the reference: the layer and
surface matrices are written from ISO 13786:2017 clause 6 (heat-transfer matrix of a
homogeneous layer, of a surface resistance, and their product from side 1 to side 2) and
the characteristics from clause 7 (Y11 = −Z11/Z12, Y22 = −Z22/Z12, Y12 = −1/Z12, decrement
factor f = |Y12|/U, time shift from arg Y). Only the material data (λ, ρ, c) are read from
thermonet's table, since those are inputs.

The layer matrix is written in the compact complex form Z11 = Z22 = cosh((1+i)ξ),
Z12 = −δ/((1+i)λ)·sinh((1+i)ξ), Z21 = −(1+i)λ/δ·sinh((1+i)ξ), ξ = d/δ, δ = √(λT/(πρc));
the standard prints the real and imaginary parts of these (cosh ξ cos ξ + i sinh ξ sin ξ,
...), which :func:`test_compact_form_equals_the_expanded_form_of_the_standard` confirms. A
second, purely numerical reference (each layer cut into 2000 lumped R–C slices, the
frequency-domain product of their matrices) checks both without any hyperbolic function.

Surface resistances 0.13 and 0.04 m²K/W: ISO 6946:2017 Table 7, horizontal heat flow.
"""

from __future__ import annotations

import cmath
import math

import numpy as np
import pytest

from thermonet import constructions as cons

T = 86400.0          # period [s], ISO 13786 daily cycle
RSI, RSE = 0.13, 0.04


def layer_matrix(lam, rho, c, d, period=T):
    """ISO 13786:2017 §6.3 layer matrix, compact complex form (see module docstring)."""
    delta = math.sqrt(lam * period / (math.pi * rho * c))
    k = (1 + 1j) * d / delta
    return np.array([[cmath.cosh(k), -delta / ((1 + 1j) * lam) * cmath.sinh(k)],
                     [-(1 + 1j) * lam / delta * cmath.sinh(k), cmath.cosh(k)]])


def surface_matrix(r):
    """ISO 13786:2017 §6.4: a surface (or any massless) resistance R [m²K/W]."""
    return np.array([[1.0, -r], [0.0, 1.0]], dtype=complex)


def sliced_matrix(lam, rho, c, d, n=2000, period=T):
    """Numerical layer matrix: n slices, each R/2 – C – R/2 (no hyperbolic functions)."""
    w = 2 * math.pi / period
    r, cap = d / lam / n, rho * c * d / n
    half = surface_matrix(r / 2)
    cell = half @ np.array([[1.0, 0.0], [-1j * w * cap, 1.0]]) @ half
    return np.linalg.matrix_power(cell, n)


def wall_matrix(layers, layer_fn=layer_matrix):
    """Z = Z_se · Z_N ⋯ Z_1 · Z_si, layer 1 on the inside (ISO 13786 §6.5)."""
    z = surface_matrix(RSI)
    for name, d in layers:
        m = cons.get_material(name)
        z = layer_fn(m.conductivity, m.density, m.specific_heat, d) @ z
    return surface_matrix(RSE) @ z


def characteristics(z, layers):
    """ISO 13786 §7: Y11, Y12, decrement factor, time shift of Y12 [h] (lag, 0 … 24 h)."""
    y11, y12 = -z[0, 0] / z[0, 1], -1.0 / z[0, 1]
    u = 1.0 / (RSI + RSE + sum(d / cons.get_material(n).conductivity for n, d in layers))
    lag_h = ((-cmath.phase(y12)) * T / (2 * math.pi) % T) / 3600.0
    shift11_h = cmath.phase(y11) * T / (2 * math.pi) / 3600.0
    return {"y11": y11, "y12": y12, "f": abs(y12) / u, "lag_h": lag_h, "shift11_h": shift11_h,
            "u": u}


WALLS = {
    "heavy inside": [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.20),
                     ("mineral_wool", 0.16)],
    "insulation inside": [("mineral_wool", 0.16), ("concrete_2000", 0.20),
                          ("gypsum_plaster_1300", 0.015)],
    "brick cavity": [("gypsum_plaster_1000", 0.013), ("brick_clay", 0.105), ("eps", 0.10),
                     ("brick_clay", 0.105)],
    "timber frame": [("gypsum_plasterboard_900", 0.0125), ("mineral_wool", 0.14),
                     ("softwood", 0.018)],
    "solid concrete": [("concrete_2400", 0.30)],
}


def test_compact_form_equals_the_expanded_form_of_the_standard():
    # ISO 13786:2017 §6.3 printed form, written out term by term
    for xi in (0.05, 0.7, 1.9, 4.0):
        lam, delta = 1.3, 0.14
        rho_c = lam * T / (math.pi * delta**2)
        z = layer_matrix(lam, rho_c, 1.0, xi * delta)
        ch, sh, co, si = math.cosh(xi), math.sinh(xi), math.cos(xi), math.sin(xi)
        z11 = complex(ch * co, sh * si)
        z12 = -delta / (2 * lam) * complex(sh * co + ch * si, ch * si - sh * co)
        z21 = -lam / delta * complex(sh * co - ch * si, sh * co + ch * si)
        assert z[0, 0] == pytest.approx(z11, rel=1e-12)
        assert z[0, 1] == pytest.approx(z12, rel=1e-12)
        assert z[1, 0] == pytest.approx(z21, rel=1e-12)


@pytest.mark.parametrize("wall", sorted(WALLS))
def test_closed_form_and_sliced_references_agree(wall):
    # the slicing error falls as 1/n²; 2000 slices per layer leave < 1e-6 relative
    a = characteristics(wall_matrix(WALLS[wall]), WALLS[wall])
    b = characteristics(wall_matrix(WALLS[wall], sliced_matrix), WALLS[wall])
    assert b["y11"] == pytest.approx(a["y11"], rel=1e-6)
    assert b["y12"] == pytest.approx(a["y12"], rel=1e-6)


@pytest.mark.parametrize("wall", sorted(WALLS))
def test_thermonet_matches_the_independent_implementation(wall):
    layers = WALLS[wall]
    ref = characteristics(wall_matrix(layers), layers)
    got = cons.dynamic_characteristics(cons.Construction(wall, layers), rsi=RSI, rse=RSE)
    # both are closed forms of the same equations: agreement to rounding (measured ~1e-15;
    # 1e-12 leaves a margin of ~1000 for other platforms' libm)
    assert got.y11 == pytest.approx(ref["y11"], rel=1e-12)
    assert got.y12 == pytest.approx(ref["y12"], rel=1e-12)
    assert got.u_value == pytest.approx(ref["u"], rel=1e-12)
    assert got.decrement_factor == pytest.approx(ref["f"], rel=1e-12)
    assert got.time_shift == pytest.approx(ref["lag_h"], abs=1e-9)
    assert got.y11_time_shift == pytest.approx(ref["shift11_h"], abs=1e-9)


def test_same_layers_in_opposite_orders_differ_inside_not_through():
    a, b = WALLS["heavy inside"], WALLS["insulation inside"]
    assert b == a[::-1]
    ra, rb = characteristics(wall_matrix(a), a), characteristics(wall_matrix(b), b)
    ga = cons.dynamic_characteristics(cons.Construction("a", a), rsi=RSI, rse=RSE)
    gb = cons.dynamic_characteristics(cons.Construction("b", b), rsi=RSI, rse=RSE)
    # ISO 13786: the internal admittance depends on what lies near the inside surface ...
    assert abs(ra["y11"]) > 5 * abs(rb["y11"])
    assert ga.y11_magnitude == pytest.approx(abs(ra["y11"]), rel=1e-12)
    assert gb.y11_magnitude == pytest.approx(abs(rb["y11"]), rel=1e-12)
    # ... with the surface resistances swapped too, the periodic transmittance would be
    # reciprocal; here Rsi ≠ Rse, so only |Y12| close to each other is expected, and
    # thermonet must reproduce both values
    assert gb.y12 == pytest.approx(rb["y12"], rel=1e-12)
    assert ga.y12 == pytest.approx(ra["y12"], rel=1e-12)


def test_reciprocity_with_symmetric_surfaces():
    # ISO 13786 §6: det Z = 1 for every layer, so with equal surface resistances on both
    # sides the periodic transmittance does not depend on the direction (reciprocity)
    a = WALLS["heavy inside"]
    za = surface_matrix(0.1)
    zb = surface_matrix(0.1)
    for name, d in a:
        m = cons.get_material(name)
        za = layer_matrix(m.conductivity, m.density, m.specific_heat, d) @ za
    for name, d in a[::-1]:
        m = cons.get_material(name)
        zb = layer_matrix(m.conductivity, m.density, m.specific_heat, d) @ zb
    za, zb = surface_matrix(0.1) @ za, surface_matrix(0.1) @ zb
    assert np.linalg.det(za) == pytest.approx(1.0, abs=1e-9)
    assert za[0, 1] == pytest.approx(zb[0, 1], rel=1e-12)
    ga = cons.dynamic_characteristics(cons.Construction("a", a), rsi=0.1, rse=0.1)
    gb = cons.dynamic_characteristics(cons.Construction("b", a[::-1]), rsi=0.1, rse=0.1)
    assert ga.y12 == pytest.approx(gb.y12, rel=1e-12)
    assert ga.y11 != pytest.approx(gb.y11, rel=0.5)


RANGES = {
    # material: (low, high) λ [W/(m·K)] as the material's own source text states a range
    "brick_clay": (0.6, 0.8),
}


def test_every_material_lies_inside_the_range_its_source_states():
    import re

    for name, mat in cons.MATERIALS.items():
        for lo, hi in re.findall(r"(\d+(?:\.\d+)?)\s*[–-]\s*(\d+(?:\.\d+)?)\s*W/\(m·?K\)",
                                 mat.source):
            assert float(lo) <= mat.conductivity <= float(hi), (name, mat.conductivity,
                                                                 mat.source)
    lo, hi = RANGES["brick_clay"]
    assert lo <= cons.get_material("brick_clay").conductivity <= hi
