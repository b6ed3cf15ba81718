"""Window and opening airflow (thermonet.airflow) against the published equations.

Every value check is the cited equation worked by hand (the arithmetic is written beside it),
not a call of the implementation's own helpers. Sources:

* de Gids, W., Phaff, H. (1982), Air Infiltration Review 4(1) 4–5: Q = ½·A·√(C1·U² + C2·H·ΔT
  + C3), C1 = 0.001, C2 = 0.0035, C3 = 0.01 (from memory).
* EN 16798-7:2017, window opening, single-sided: q = (ρ_ref/ρ_e)·(A/2)·√max(C_wnd·u²,
  C_st·h·ΔT), and the opening-angle factor C_k(α) (from memory).
* BS 5925:1991 clause 9 eq. (2), orifice Q = C_d·A·√(2Δp/ρ) (confirmed: the 1995 amendment
  text), and Table 9 (single opening, stack; two openings, stack; cross ventilation, wind)
  (from memory).
* BS 5925 / CIBSE Guide A terrain law U_z = U_10·k·z^a, urban k = 0.35, a = 0.25 (printed in
  Faber & Kell, Heating and Air-Conditioning of Buildings, Table 2.10).
* ISO 13789:2017 H_ve = ρ_a·c_a·q_v with ρ_a·c_a = 1200 J/(m³K) (from memory).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import airflow as af
from thermonet.errors import AirflowError

IDX = pd.date_range("2025-07-01 01:00", periods=3, freq="h", tz="Etc/GMT-1")


def as_kind(value, kind):
    """The same value as a scalar, a 3-element array or a 3-row Series."""
    if kind == "scalar":
        return value
    arr = np.full(3, float(value))
    return arr if kind == "array" else pd.Series(arr, index=IDX)


def check_kind(result, expected, kind, rtol=1e-9):
    if kind == "series":
        assert isinstance(result, pd.Series)
        assert result.index.equals(IDX)
    else:
        assert isinstance(result, np.ndarray) and not isinstance(result, pd.Series)
        assert np.shape(result) == (() if kind == "scalar" else (3,))
    np.testing.assert_allclose(np.asarray(result, dtype=float), expected, rtol=rtol)


KINDS = ["scalar", "array", "series"]


# --------------------------------------------------------------------------------------------
# formula values by hand, over scalar / array / Series
# --------------------------------------------------------------------------------------------
@pytest.mark.parametrize("kind", KINDS)
def test_de_gids_phaff_by_hand(kind):
    # de Gids & Phaff (1982): A = 1.5 m², H = 1.2 m, T_i = 26, T_e = 18 °C, U = 4 m/s
    # 0.001·4² + 0.0035·1.2·8 + 0.01 = 0.016 + 0.0336 + 0.01 = 0.0596; √ = 0.244131
    # Q = ½·1.5·0.244131 = 0.183098 m³/s (659 m³/h)
    q = af.single_sided_de_gids_phaff(as_kind(1.5, kind), 1.2, as_kind(26.0, kind), 18.0,
                                      as_kind(4.0, kind))
    check_kind(q, 0.183098334, kind, rtol=1e-8)


@pytest.mark.parametrize("kind", KINDS)
def test_en16798_7_single_sided_by_hand(kind):
    # EN 16798-7 (from memory): A = 1.5 m², h = 1.2 m, θ_i = 26, θ_e = 18 °C
    # u = 4 m/s: max(0.001·16 = 0.016, 0.0035·1.2·8 = 0.0336) = 0.0336 (stack wins);
    # ½·1.5·√0.0336 = 0.137477; × (18 + 273.15)/(20 + 273.15) = 0.993178 → 0.136539 m³/s
    q = af.single_sided_en16798_7(as_kind(1.5, kind), 1.2, 26.0, as_kind(18.0, kind),
                                  as_kind(4.0, kind))
    check_kind(q, 0.13653934, kind, rtol=1e-7)
    # u = 8 m/s: max(0.064, 0.0336) = 0.064 (wind wins); 0.75·0.252982·0.993178 = 0.188442
    q8 = af.single_sided_en16798_7(1.5, 1.2, 26.0, 18.0, as_kind(8.0, kind))
    np.testing.assert_allclose(np.asarray(q8), 0.18844219, rtol=1e-7)
    # without the density ratio: 0.75·√0.0336 = 0.137477
    np.testing.assert_allclose(
        af.single_sided_en16798_7(1.5, 1.2, 26.0, 18.0, 4.0, density_ratio=False),
        0.13747727, rtol=1e-7)


@pytest.mark.parametrize("kind", KINDS)
def test_bs5925_single_opening_stack_by_hand(kind):
    # BS 5925 Table 9, one opening, stack (from memory): Q = C_d·(A/3)·√(ΔT·g·h/T̄)
    # A = 1 m², h = 1.5 m, 25/15 °C: T̄ = 293.15 K; 10·9.80665·1.5/293.15 = 0.501790;
    # √ = 0.708371; Q = 0.61/3·0.708371 = 0.144036 m³/s
    q = af.single_opening_stack_bs5925(as_kind(1.0, kind), 1.5, 25.0, as_kind(15.0, kind))
    check_kind(q, 0.14403552, kind, rtol=1e-7)


@pytest.mark.parametrize("kind", KINDS)
def test_bs5925_stack_two_openings_by_hand(kind):
    # BS 5925 Table 9, two openings, stack (from memory): Q = C_d·A_b·√(2ΔT·g·h/T̄),
    # 1/A_b² = 1/0.5² + 1/0.5² = 8 → A_b = 0.353553 m²; h = 3 m, 25/15 °C, T̄ = 293.15 K:
    # 2·10·9.80665·3/293.15 = 2.007160; √ = 1.416743; Q = 0.61·0.353553·1.416743 = 0.305545
    q = af.stack_flow(as_kind(0.5, kind), 0.5, as_kind(3.0, kind), 25.0, 15.0)
    check_kind(q, 0.30554547, kind, rtol=1e-7)


@pytest.mark.parametrize("kind", KINDS)
def test_bs5925_cross_ventilation_by_hand(kind):
    # BS 5925 Table 9, wind only (from memory): Q = C_d·A_w·U·√ΔC_p,
    # 1/A_w² = 1/1² + 1/0.5² = 5 → A_w = 0.447214 m²; U = 3 m/s; C_p +0.6 / −0.3 → √0.9
    # = 0.948683; Q = 0.61·0.447214·3·0.948683 = 0.776403 m³/s
    q = af.cross_flow_wind(1.0, as_kind(0.5, kind), as_kind(3.0, kind), 0.6, -0.3)
    check_kind(q, 0.77640325, kind, rtol=1e-7)


@pytest.mark.parametrize("kind", KINDS)
def test_orifice_equation_by_hand(kind):
    # BS 5925:1991 + A1 clause 9 eq. (2): Q = C_d·A·√(2Δp/ρ); A = 0.2 m², Δp = 4 Pa,
    # ρ = 1.2 kg/m³: √(8/1.2) = 2.581989; Q = 0.61·0.2·2.581989 = 0.315003 m³/s
    q = af.orifice_flow(as_kind(0.2, kind), as_kind(4.0, kind), 0.61, density=1.2)
    check_kind(q, 0.31500265, kind, rtol=1e-7)
    # the sign of Δp is the sign of the flow
    np.testing.assert_allclose(af.orifice_flow(0.2, -4.0, 0.61, density=1.2), -0.31500265,
                               rtol=1e-7)


@pytest.mark.parametrize("kind", KINDS)
def test_wind_speed_at_height_by_hand(kind):
    # terrain law (BS 5925 / CIBSE Guide A; Faber & Kell Table 2.10): urban k = 0.35,
    # a = 0.25; U_10 = 5 m/s at z = 10 m: 5·0.35·10^0.25 = 1.75·1.778279 = 3.111989 m/s
    check_kind(af.wind_speed_at_height(as_kind(5.0, kind), 10.0, "urban"), 3.11198897, kind,
               rtol=1e-7)


@pytest.mark.parametrize("kind", KINDS)
def test_conductance_of_a_flow(kind):
    # ISO 13789: H_ve = ρ_a·c_a·q_v = 1200 J/(m³K) · 0.1 m³/s = 120 W/K; 360 m³/h = 0.1 m³/s
    check_kind(af.flow_conductance(as_kind(0.1, kind)), 120.0, kind)
    check_kind(af.flow_conductance(af.from_m3h(as_kind(360.0, kind))), 120.0, kind)
    check_kind(af.to_m3h(as_kind(0.1, kind)), 360.0, kind)
    # direction does not matter for the conductance
    np.testing.assert_allclose(af.flow_conductance(-0.1), 120.0)


def test_air_density_textbook():
    # dry air at 20 °C and 101 325 Pa: 1.204 kg/m³ (textbook value, from memory)
    assert float(af.air_density(20.0)) == pytest.approx(1.204, abs=5e-4)


# --------------------------------------------------------------------------------------------
# opening geometry
# --------------------------------------------------------------------------------------------
def triangle_area(p, q, r):
    return 0.5 * np.linalg.norm(np.cross(np.subtract(q, p), np.subtract(r, p)))


def gaps_by_coordinates(length, depth, angle_deg):
    """Gap area around a sash hinged along the x axis, from 3-D corner coordinates.

    Hinge at z = 0 along x from 0 to ``length``; the frame opening extends to z = −depth in the
    wall plane y = 0; the sash swings out to y = depth·sin α, z = −depth·cos α.
    """
    a = math.radians(angle_deg)
    hinge = (0.0, 0.0, 0.0)
    frame_corner = (0.0, 0.0, -depth)
    sash_corner = (0.0, depth * math.sin(a), -depth * math.cos(a))
    end_gap = triangle_area(hinge, frame_corner, sash_corner)            # each end
    edge_gap = length * math.dist(frame_corner, sash_corner)             # far edge rectangle
    return min(length * depth, edge_gap + 2.0 * end_gap)


@pytest.mark.parametrize("kind", KINDS)
def test_hinged_free_area_by_hand(kind):
    # plane geometry: width 0.8 m, height 1.2 m, α = 20°
    # top-hung (L = 0.8, D = 1.2): 2·0.8·1.2·sin10° = 0.333404 + 1.2²·sin20° = 0.492509
    #   → 0.825914 m² (< 0.96 m² clear)
    # side-hung (L = 1.2, D = 0.8): 0.333404 + 0.8²·sin20° = 0.218893 → 0.552297 m²
    top = af.hinged_free_area(as_kind(0.8, kind), 1.2, as_kind(20.0, kind), hinge="top")
    check_kind(top, 0.82591351, kind, rtol=1e-7)
    side = af.hinged_free_area(0.8, as_kind(1.2, kind), 20.0, hinge="side")
    check_kind(side, 0.55229739, kind, rtol=1e-7)
    # bottom-hung has the same gaps as top-hung
    np.testing.assert_allclose(af.hinged_free_area(0.8, 1.2, 20.0, hinge="bottom"), 0.82591351,
                               rtol=1e-7)


@pytest.mark.parametrize("angle", [0.0, 2.0, 5.0, 10.0, 20.0, 35.0, 60.0, 90.0])
@pytest.mark.parametrize("hinge", ["top", "side"])
def test_hinged_free_area_against_corner_coordinates(angle, hinge):
    # independent: the gap triangles from 3-D corner coordinates and a cross product
    width, height = 0.9, 1.4
    length, depth = (width, height) if hinge == "top" else (height, width)
    expected = gaps_by_coordinates(length, depth, angle)
    assert float(af.hinged_free_area(width, height, angle, hinge=hinge)) == pytest.approx(
        expected, rel=1e-12, abs=1e-15)


def test_free_area_limits():
    # closed sash: no area; wide open: never more than the clear opening
    assert float(af.hinged_free_area(1.0, 1.0, 0.0)) == 0.0
    assert float(af.hinged_free_area(1.0, 1.0, 90.0)) == 1.0
    angles = np.linspace(0.0, 90.0, 91)
    area = af.hinged_free_area(1.0, 1.5, angles, hinge="side")
    assert np.all(np.diff(area) >= 0.0) and area.max() == pytest.approx(1.5)


def test_restricted_opening_angle():
    # chord of a sash of depth D opened by α is 2·D·sin(α/2): a 0.1 m restrictor on a
    # 1.2 m top-hung sash gives α = 2·asin(0.1/2.4) = 4.776031°
    alpha = float(af.restricted_opening_angle(1.2, 0.1))
    assert alpha == pytest.approx(4.776031, abs=1e-6)
    # the far-edge gap then is width × 0.1 m: the coordinates agree (0.8 m wide)
    assert float(af.hinged_free_area(0.8, 1.2, alpha)) == pytest.approx(
        gaps_by_coordinates(0.8, 1.2, alpha), rel=1e-12)
    with pytest.raises(AirflowError, match="gap"):
        af.restricted_opening_angle(0.5, 0.8)


@pytest.mark.parametrize("kind", KINDS)
def test_en16798_opening_angle_factor_by_hand(kind):
    # C_k(α) = 2.60e-7·α³ − 1.19e-4·α² + 1.86e-2·α (EN 16798-7 / CEN/TR 16798-8, from memory)
    # α = 30°: 0.00702 − 0.1071 + 0.558 = 0.45792
    check_kind(af.opening_angle_factor_en16798_7(as_kind(30.0, kind)), 0.45792, kind)
    # α = 90°: 0.18954 − 0.9639 + 1.674 = 0.89964
    assert float(af.opening_angle_factor_en16798_7(90.0)) == pytest.approx(0.89964, abs=1e-12)


# --------------------------------------------------------------------------------------------
# limits and invariants
# --------------------------------------------------------------------------------------------
def test_no_temperature_difference_and_no_wind_gives_no_flow():
    assert float(af.single_sided_en16798_7(2.0, 1.2, 20.0, 20.0, 0.0)) == 0.0
    assert float(af.single_opening_stack_bs5925(2.0, 1.2, 20.0, 20.0)) == 0.0
    assert float(af.stack_flow(1.0, 1.0, 3.0, 20.0, 20.0)) == 0.0
    assert float(af.cross_flow_wind(1.0, 1.0, 0.0, 0.6, -0.3)) == 0.0
    assert float(af.two_opening_flow(1.0, 1.0, 20.0, 20.0, height_2=3.0, cp_1=0.6)) == 0.0
    # a shut opening closes a path of openings in series
    assert float(af.stack_flow(0.0, 0.5, 3.0, 25.0, 15.0)) == 0.0
    assert float(af.cross_flow_wind(0.8, 0.0, 4.0, 0.6, -0.3)) == 0.0
    # de Gids & Phaff keep their turbulence term C3 = 0.01 m²/s²: Q = ½·A·0.1 = 0.05·A
    assert float(af.single_sided_de_gids_phaff(2.0, 1.2, 20.0, 20.0, 0.0)) == pytest.approx(0.1)
    assert float(af.single_sided_de_gids_phaff(2.0, 1.2, 20.0, 20.0, 0.0, c3=0.0)) == 0.0


def test_stack_flow_grows_as_root_of_delta_t():
    # BS 5925: Q ∝ √ΔT at a fixed mean temperature T̄ (20 °C here): ΔT × 4 → Q × 2
    for fn in (lambda ti, te: af.stack_flow(0.4, 0.6, 2.5, ti, te),
               lambda ti, te: af.single_opening_stack_bs5925(0.8, 1.4, ti, te)):
        q1 = float(fn(21.0, 19.0))     # ΔT = 2 K
        q4 = float(fn(24.0, 16.0))     # ΔT = 8 K
        assert q4 / q1 == pytest.approx(2.0, rel=1e-12)


def test_single_sided_symmetric_in_sign_of_delta_t():
    for fn in (af.single_sided_de_gids_phaff, af.single_sided_en16798_7):
        warm_in = float(fn(1.2, 1.4, 27.0, 17.0, 1.5, **({"density_ratio": False}
                                                        if fn is af.single_sided_en16798_7
                                                        else {})))
        warm_out = float(fn(1.2, 1.4, 17.0, 27.0, 1.5, **({"density_ratio": False}
                                                         if fn is af.single_sided_en16798_7
                                                         else {})))
        assert warm_in == pytest.approx(warm_out, rel=1e-15)
    assert float(af.single_opening_stack_bs5925(1.0, 1.5, 25.0, 15.0)) == pytest.approx(
        float(af.single_opening_stack_bs5925(1.0, 1.5, 15.0, 25.0)), rel=1e-15)


@pytest.mark.parametrize("fn", [
    lambda a, cd: af.single_opening_stack_bs5925(a, 1.2, 25.0, 18.0, cd),
    lambda a, cd: af.stack_flow(a, 0.5, 2.0, 25.0, 18.0, cd),
    lambda a, cd: af.cross_flow_wind(a, 0.5, 3.0, 0.5, -0.4, cd),
    lambda a, cd: af.two_opening_flow(a, 0.5, 25.0, 18.0, wind_speed=2.0, cp_1=0.5,
                                      cp_2=-0.4, height_2=2.0, discharge_coefficient=cd),
    lambda a, cd: af.single_sided_de_gids_phaff(a, 1.2, 25.0, 18.0, 3.0),
    lambda a, cd: af.single_sided_en16798_7(a, 1.2, 25.0, 18.0, 3.0),
])
def test_monotonic_in_area_and_discharge_coefficient(fn):
    areas = np.linspace(0.05, 2.0, 40)
    assert np.all(np.diff(np.asarray(fn(areas, 0.61))) > 0.0)
    cds = np.linspace(0.2, 1.0, 17)
    by_cd = np.array([float(fn(0.7, cd)) for cd in cds])
    assert np.all(np.diff(by_cd) >= 0.0)


def test_two_opening_flow_reduces_to_the_bs5925_cases():
    # no stack: ½ρU²ΔC_p through the orifice equation is exactly C_d·A_w·U·√ΔC_p
    wind = af.two_opening_flow(1.0, 0.5, 20.0, 20.0, wind_speed=3.0, cp_1=0.6, cp_2=-0.3)
    assert float(wind) == pytest.approx(0.77640325, rel=1e-7)            # value above
    # no wind: BS 5925's stack formula up to its Boussinesq step (ρ_e − ρ_i)/ρ_e = ΔT/T_i
    # against ΔT/T̄: the ratio is √(T̄/T_i) = √(293.15/298.15) = 0.991579
    stack = af.two_opening_flow(0.5, 0.5, 25.0, 15.0, height_1=0.0, height_2=3.0)
    assert float(stack) / 0.30554547 == pytest.approx(0.991579, rel=1e-5)
    # a warm room draws air in low and out high: positive in through the low opening 1
    assert float(stack) > 0.0
    assert float(af.two_opening_flow(0.5, 0.5, 25.0, 15.0, height_1=3.0, height_2=0.0)) < 0.0


def test_wind_against_stack_can_cancel():
    # stack pressure g·h·(ρ_e − ρ_i) balanced by wind ½ρ_e·U²·(C_p1 − C_p2) from the leeward
    # side: U = √(2·g·h·(ρ_e − ρ_i)/(ρ_e·ΔC_p)) gives no flow (BS 5925 clause 10 pressures)
    rho_e = 101325.0 / (287.058 * 288.15)
    rho_i = 101325.0 / (287.058 * 298.15)
    u = math.sqrt(2 * 9.80665 * 3.0 * (rho_e - rho_i) / (rho_e * 0.9))
    q = af.two_opening_flow(0.5, 0.5, 25.0, 15.0, wind_speed=u, cp_1=-0.3, cp_2=0.6,
                            height_1=0.0, height_2=3.0)
    assert abs(float(q)) < 1e-6


def test_flow_conductance_enters_a_network():
    # the conductance of a flow, used as a fixed link, carries ρc_p·V̇·ΔT (ISO 13789): a
    # one-node room at steady state with 100 W inside and 0.05 m³/s of outdoor air sits
    # 100/(1200·0.05) = 1.667 K above outdoors
    idx = pd.date_range("2025-07-01 01:00", periods=24 * 5, freq="h", tz="Etc/GMT-1")
    weather = pd.DataFrame({"temp_air": 18.0}, index=idx)
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.0e5)
    net.add_link("outdoor", "room", conductance=float(af.flow_conductance(0.05)),
                 path="window_ventilation")
    net.add_source("room", power=100.0, path="internal")
    res = tn.simulate(net, weather, warmup_days=2)
    np.testing.assert_allclose(res.temperatures["room"].iloc[-1], 18.0 + 100.0 / 60.0,
                               atol=1e-9)


def test_wind_driven_cross_flow_as_a_scheduled_airflow():
    # cross ventilation by wind does not depend on the room state, so it can be used today as a
    # scheduled airflow (m³/h at the edge); its heat flow is ρc_p·V̇·(T_e − T_i) (ISO 13789)
    idx = pd.date_range("2025-07-01 01:00", periods=24 * 4, freq="h", tz="Etc/GMT-1")
    rng = np.random.default_rng(7)
    weather = pd.DataFrame({"temp_air": 20.0 + 5.0 * np.sin(np.arange(len(idx)) / 24 * 2 * np.pi),
                            "wind_speed": rng.uniform(0.0, 6.0, len(idx))}, index=idx)
    u_roof = af.wind_speed_at_height(weather["wind_speed"], 6.0, "urban")
    flow = af.cross_flow_wind(0.3, 0.4, u_roof, 0.4, -0.2)
    assert isinstance(flow, pd.Series) and flow.index.equals(idx)
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=2e5)
    net.add_link("outdoor", "room", conductance=20.0, path="opaque")
    net.add_source("room", power=300.0, path="internal")
    name = net.add_airflow("outdoor", "room", flow_m3h=af.to_m3h(flow), path="window_ventilation")
    res = tn.simulate(net, weather, warmup_days=1)
    # step means of both sides (outdoor air is interpolated between its labels)
    expected = 1200.0 * flow * (res.mean_temperatures["outdoor"] - res.mean_temperatures["room"])
    np.testing.assert_allclose(res.flows[name], expected, rtol=1e-9, atol=1e-9)


# --------------------------------------------------------------------------------------------
# bad input
# --------------------------------------------------------------------------------------------
@pytest.mark.parametrize("call, match", [
    (lambda: af.stack_flow(-0.1, 0.5, 2.0, 25.0, 15.0), "area 1"),
    (lambda: af.orifice_flow(0.1, 2.0, discharge_coefficient=1.3), "discharge_coefficient"),
    (lambda: af.single_sided_de_gids_phaff(1.0, 1.0, np.nan, 15.0, 2.0), "temp_in"),
    (lambda: af.single_sided_en16798_7(1.0, 1.0, 20.0, 15.0, -2.0), "wind_speed"),
    (lambda: af.hinged_free_area(1.0, 1.0, 120.0), "angle"),
    (lambda: af.hinged_free_area(1.0, 1.0, 30.0, hinge="pivot"), "hinge"),
    (lambda: af.wind_speed_at_height(3.0, 10.0, terrain="forest"), "terrain"),
    (lambda: af.cross_flow_wind(pd.Series([1.0], index=IDX[:1]),
                                pd.Series([1.0], index=IDX[1:2]), 3.0, 0.6, -0.3), "index"),
])
def test_bad_input_names_the_parameter(call, match):
    with pytest.raises(AirflowError, match=match):
        call()
