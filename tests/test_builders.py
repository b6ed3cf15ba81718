"""Tests of thermonet.builders and thermonet.gains against standards and hand calculations.

Sources named beside each check:
- ISO 6946:2017 Table 7 surface resistances R_si = 0.10 / 0.13 / 0.17, R_se = 0.04 m²K/W [C]
  (wiki.indigud.de "RSI RSE"); internal elements R_se = R_si [C] (100gon.de/?p=222).
- ISO 13786:2017 transfer-matrix decrement factor and time shift (docs/references.md §1 [M],
  computed by thermonet.constructions.dynamic_characteristics, itself checked there).
- ISO 13789 / ISO 13790 ρ_a c_a = 1200 J/(m³K) (from memory); 0.33 Wh/(m³K) (common practice).
- Meier (1986) "Infiltration: just ACH50 divided by 20?" [C]; ISO 13789 / EN 832 shielding
  coefficient e (from memory, docs/references.md §4).
- ISO 13370:2017 slab-on-ground and heated-basement-wall formulas (from memory,
  docs/references.md).
- EN ISO 10077-1:2017 whole-window U_w from U_g, U_f and ψ_g (from memory).
- Dry-air ρ·c_p from the ideal gas law (R_d = 287.05 J/(kg·K)) and c_p = 1005 J/(kg·K)
  (both from memory).
- ISO 52016-1 convective fraction 0.4 of internal gains, 0.1 of solar gains (from memory).
"""

import math

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import gains as tg
from thermonet import solar
from thermonet.builders import (
    Adjacent,
    Door,
    Element,
    Soil,
    Window,
    add_buffer,
    add_buffer_exchange,
    add_infiltration,
    add_room,
    add_ventilation,
    add_window,
    add_window_opening,
    infiltration_rate,
    iso13370_basement_wall_u_value,
    iso13370_slab_u_value,
    night_ventilation,
    rooms,
    surface_coefficients,
    window_solar_gain,
    window_u_value,
)
from thermonet.constructions import Construction, dynamic_characteristics
from thermonet.errors import ConstructionError, NetworkError, ScheduleError, WeatherError

TZ = "Etc/GMT-1"
SITE = {"latitude": 48.14, "longitude": 11.58, "elevation": 520.0}

# Material values of the registry used in the hand calculations below (ISO 10456 [C]/[M],
# see thermonet.constructions): plaster λ = 0.57, concrete_2000 λ = 1.35, concrete_2200
# λ = 1.65, mineral wool λ = 0.035, EPS λ = 0.035, softwood λ = 0.13, plasterboard_700 λ = 0.21.
WALL = Construction("heavy wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.20),
                                   ("mineral_wool", 0.16)])
ROOF = Construction("roof", [("concrete_2200", 0.20), ("mineral_wool", 0.30)])
FLOOR_OUT = Construction("floor over air", [("softwood", 0.02), ("eps", 0.20)])
PARTITION = Construction("partition", [("gypsum_plasterboard_700", 0.0125),
                                       ("mineral_wool", 0.05),
                                       ("gypsum_plasterboard_700", 0.0125)])
LIGHT_WALL = Construction("light wall", [("gypsum_plasterboard_700", 0.0125),
                                         ("mineral_wool", 0.12), ("softwood", 0.02)])


def const_weather(n, freq="D", temp_air=-5.0, **cols):
    idx = pd.date_range("2025-01-01", periods=n, freq=freq, tz=TZ)
    data = {"temp_air": np.full(n, float(temp_air))}
    data.update({k: np.full(n, float(v)) for k, v in cols.items()})
    w = pd.DataFrame(data, index=idx)
    w.attrs["site"] = dict(SITE)
    return w


def sunny_weather(days=3, start="2025-03-20 01:00"):
    """A few clear-sky days from pvlib's Ineichen–Perez model (Linke turbidity 3)."""
    import pvlib

    idx = pd.date_range(start, periods=days * 24, freq="h", tz=TZ)
    sp = solar.solar_position(idx, SITE["latitude"], SITE["longitude"], SITE["elevation"])
    zen = sp["apparent_zenith"].to_numpy()
    am = pvlib.atmosphere.get_absolute_airmass(pvlib.atmosphere.get_relative_airmass(zen),
                                               pvlib.atmosphere.alt2pres(SITE["elevation"]))
    extra = pvlib.irradiance.get_extra_radiation(np.asarray(idx.day_of_year, dtype=float))
    with np.errstate(divide="ignore", invalid="ignore"):   # night rows (airmass NaN)
        cs = pvlib.clearsky.ineichen(zen, am, 3.0, altitude=SITE["elevation"], dni_extra=extra)
    mid = idx - pd.Timedelta("30min")
    hour = (mid.hour + mid.minute / 60).to_numpy()
    w = pd.DataFrame({k: np.nan_to_num(np.asarray(cs[k], dtype=float)) for k in
                      ("ghi", "dni", "dhi")}, index=idx)
    w["temp_air"] = 5.0 + 5.0 * np.sin(2 * np.pi * (hour - 9) / 24)
    w["temp_sky"] = w["temp_air"] - 10.0
    w.attrs["site"] = dict(SITE)
    return w


# ---------------------------------------------------------------- steady state, ISO 6946
def test_steady_heating_equals_sum_of_iso6946_ua_plus_ventilation():
    # ISO 6946:2017 Table 7: R_si 0.13 horizontal, 0.10 up, 0.17 down; R_se 0.04 outdoor;
    # R_se = R_si for an internal element (partition to a neighbour at 15 °C).
    u_wall = 1 / (0.13 + 0.015 / 0.57 + 0.20 / 1.35 + 0.16 / 0.035 + 0.04)
    u_roof = 1 / (0.10 + 0.20 / 1.65 + 0.30 / 0.035 + 0.04)
    u_floor = 1 / (0.17 + 0.02 / 0.13 + 0.20 / 0.035 + 0.04)
    u_part = 1 / (0.13 + 0.0125 / 0.21 + 0.05 / 0.035 + 0.0125 / 0.21 + 0.13)
    u_win, u_door = 0.8, 1.2
    a_s, a_n, a_e, a_roof, a_floor, a_part = 12.0, 12.0, 10.0, 20.0, 20.0, 10.0
    a_win, a_door = 4.0, 2.0
    net = tn.Network()
    room = add_room(net, "r", floor_area=20, height=2.5, sky_temperature="temp_air", elements=[
        Element("south", WALL, a_s, 90, 180, windows=[Window("win", a_win, u_win, 0.5)]),
        Element("north", WALL, a_n, 90, 0, windows=[Door("door", a_door, u_door)]),
        Element("east", WALL, a_e, 90, 90),
        Element("roof", ROOF, a_roof, 0, 180),
        Element("floor", FLOOR_OUT, a_floor, 180, 0),
        Element("west", PARTITION, a_part, 90, 270, boundary=Adjacent(15.0, name="neighbour")),
    ])
    add_infiltration(net, room, ach=0.5)                         # 25 m³/h
    add_ventilation(net, room, flow_m3h=30.0, heat_recovery=0.8)
    # ISO 6946 U-values assume the mean radiant temperature of the room equals the air
    # temperature; hold the radiant star node at 20 °C as well as the air.
    net.add_thermostat(room.air, heating_setpoint=20.0)
    net.add_thermostat(room.star, heating_setpoint=20.0)
    w = const_weather(300, temp_air=-5.0)
    res = tn.simulate(net, w, warmup_days=300)
    dt = 25.0
    ua = (u_wall * (a_s - a_win + a_n - a_door + a_e) + u_roof * a_roof + u_floor * a_floor
          + u_win * a_win + u_door * a_door)
    h_ve = 1200.0 / 3600.0 * (25.0 + 30.0 * (1 - 0.8))          # ρc = 1200 J/(m³K), ISO 13789
    expected = ua * dt + h_ve * dt + u_part * a_part * 5.0
    assert res.heating.iloc[-1] == pytest.approx(expected, rel=1e-6)
    b = res.balance_w(room.nodes).iloc[-1]
    assert -b["glazing"] == pytest.approx(u_win * a_win * dt, rel=1e-6)
    assert -b["adjacent"] == pytest.approx(u_part * a_part * 5.0, rel=1e-6)
    assert -b["infiltration"] == pytest.approx(1200 / 3600 * 25.0 * dt, rel=1e-6)
    assert "internal" not in b and "solar" not in b       # links inside the zone cancel


def test_inside_film_split_adds_up_to_rsi():
    # h_ci (ISO 6946 Annex A, from memory) + h_ri = 1/R_si of ISO 6946 Table 7.
    for direction, rsi, hc in (("up", 0.10, 5.0), ("horizontal", 0.13, 2.5), ("down", 0.17, 0.7)):
        c, r = surface_coefficients(direction)
        assert c == hc
        assert 1.0 / (c + r) == pytest.approx(rsi, abs=1e-12)
        assert r == pytest.approx(5.13, rel=0.026)   # ISO 52016-1 ε·h_r0 = 5.13 (from memory)


# ---------------------------------------------------------------- ISO 13786 dynamics
@pytest.mark.parametrize("cons", [WALL, LIGHT_WALL], ids=["heavy", "light"])
def test_built_wall_reproduces_iso13786_decrement_and_time_shift(cons):
    # ISO 13786 (transfer matrix with R_si = 0.13, R_se = 0.04): decrement factor f and time
    # shift of the periodic transmittance; the built wall is simulated under a 24 h sinusoid
    # (10 min step, input defined at interval mid-points) with the inside held at 20 °C by a
    # 1e9 W/K link of the room air and radiant star to a 20 °C boundary — a fixed temperature,
    # not a thermostat (a thermostat meets its setpoint only at the end of each step).
    ref = dynamic_characteristics(cons)
    step = pd.Timedelta("10min")
    idx = pd.date_range("2025-01-01 00:10", periods=6 * 144, freq=step, tz=TZ)
    t_mid = ((idx - step / 2) - idx[0].normalize()).total_seconds().to_numpy()
    omega = 2 * np.pi / 86400.0
    w = pd.DataFrame({"temp_air": 20.0 + 10.0 * np.sin(omega * t_mid)}, index=idx)
    net = tn.Network()
    room = add_room(net, "r", floor_area=10, height=2.5, sky=None,
                    elements=[Element("wall", cons, 10.0)])
    net.add_boundary("inside", temperature=20.0)
    for node in (room.air, room.star):
        net.add_link(node, "inside", conductance=1e9, path="held")
    res = tn.simulate(net, w, warmup_days=6)
    q = (res.flows["r.wall:conv"] + res.flows["r.wall:rad"]).to_numpy()[-144:] / 10.0
    t = t_mid[-144:]
    basis = np.column_stack([np.sin(omega * t), np.cos(omega * t), np.ones_like(t)])
    (s, c, _), *_ = np.linalg.lstsq(basis, q, rcond=None)
    amp = math.hypot(s, c) / 10.0                                   # per K of outdoor swing
    lag_h = (-math.atan2(c, s) / omega / 3600.0) % 24.0
    assert amp / ref.u_value == pytest.approx(ref.decrement_factor, rel=0.02)
    assert lag_h == pytest.approx(ref.time_shift, abs=0.1)


# ---------------------------------------------------------------- airflows
def test_infiltration_heat_flow_is_033_w_per_m3h_k():
    # 0.33 Wh/(m³K) (common practice) and ρc = 1200 J/(m³K) (ISO 13789, from memory):
    # 0.3333 / 0.33 = 1.0101, so 1.1 % tolerance against the rounded rule.
    net = tn.Network()
    room = add_room(net, "r", floor_area=40, height=2.5, sky=None,
                    elements=[Element("wall", WALL, 30.0)])
    ln = add_infiltration(net, room, flow_m3h=100.0)
    ln2 = add_infiltration(net, room, ach=0.4, name="r:infiltration2")   # 40 m³/h
    net.add_thermostat(room.air, heating_setpoint=20.0)
    res = tn.simulate(net, const_weather(60, temp_air=0.0), warmup_days=60)
    # ρ·c_p of dry air at 20 °C and 101 325 Pa from its properties: ρ = p/(R_d T) with
    # R_d = 287.05 J/(kg·K) (ideal gas, from memory) = 1.2041 kg/m³, c_p = 1005 J/(kg·K)
    # (from memory) -> 1210.1 J/(m³K); the builders' 1200 lies within 1 % of it.
    rho_cp_20 = 101_325.0 / (287.05 * 293.15) * 1005.0
    for name, flow in ((ln, 100.0), (ln2, 40.0)):
        q = res.flows[name].iloc[-1]           # positive outdoor → room: a loss is negative
        assert -q == pytest.approx(0.33 * flow * 20.0, rel=0.011)
        assert -q == pytest.approx(1200.0 / 3600.0 * flow * 20.0, rel=1e-9)
        assert -q == pytest.approx(rho_cp_20 / 3600.0 * flow * 20.0, rel=0.01)


def test_infiltration_from_airtightness():
    # Meier (1986): n ≈ n50/20 [C]; ISO 13789/EN 832 balanced: n = e·n50, e = 0.07 for
    # several façades, moderate shielding, 0.07 × 0.6 = 0.042 1/h (docs/references.md §4 [M]).
    assert infiltration_rate(3.0, method="divide20") == pytest.approx(0.15)
    assert infiltration_rate(0.6) == pytest.approx(0.042)
    assert infiltration_rate(2.0, shielding="none", exposed_facades="one") == pytest.approx(0.06)
    # q50 = 1.5 m³/(h m²) over 300 m² of envelope, 250 m³: n50 = 1.8 1/h
    assert infiltration_rate(q50=1.5, envelope_area=300, volume=250,
                             method="divide20") == pytest.approx(1.8 / 20)
    # unbalanced mechanical flow lowers the estimate (EN 832 form, from memory): with
    # Δq = V·n50 the denominator is 1 + f/e = 1 + 15/0.07
    assert infiltration_rate(1.0, volume=100, unbalanced_flow_m3h=100) == pytest.approx(
        0.07 / (1 + 15 / 0.07))


def test_ventilation_heat_recovery_and_summer_bypass():
    # G = ρc V̇ (1 − η) with ρc = 1200 J/(m³K) (ISO 13789, from memory); bypassed: ρc V̇.
    w = const_weather(48, freq="h", temp_air=5.0)
    bypass = pd.Series(np.arange(48) >= 24, index=w.index)
    net = tn.Network()
    room = add_room(net, "r", floor_area=20, height=2.5, sky=None,
                    elements=[Element("wall", WALL, 20.0)])
    sched = pd.Series(np.where(np.arange(48) % 24 < 12, 1.0, 0.5), index=w.index)
    ln = add_ventilation(net, room, flow_m3h=120.0, heat_recovery=0.75, schedule=sched,
                         bypass=bypass)
    net.add_thermostat(room.air, heating_setpoint=20.0)
    res = tn.simulate(net, w, warmup_days=0)
    tm = res.mean_temperatures
    g = res.flows[ln] / (tm["outdoor"] - tm["r"])
    expected = 1200 / 3600 * 120.0 * sched * np.where(bypass, 1.0, 0.25)
    np.testing.assert_allclose(g.to_numpy(), expected.to_numpy(), rtol=1e-9)
    assert ln + ":bypass" in room.switches


def test_night_ventilation_only_at_night_and_when_warm():
    w = const_weather(72, freq="h", temp_air=15.0)
    net = tn.Network()
    room = add_room(net, "r", floor_area=20, height=2.5, sky=None,
                    elements=[Element("wall", LIGHT_WALL, 20.0)])
    net.add_source(room.air, power=600.0, path="internal")        # keeps the room warm
    ln = add_window_opening(net, room, ach=3.0,
                            open_when=night_ventilation(room.air, indoor_above=24.0))
    res = tn.simulate(net, w, warmup_days=0)
    flow = res.flows[ln].abs()
    mid = w.index - pd.Timedelta("30min")
    night = (mid.hour >= 22) | (mid.hour < 7)
    t_prev = res.temperatures["r"].shift(1).to_numpy()
    is_open = flow.to_numpy() > 1e-9
    assert is_open.any() and not is_open[~night].any()
    assert (t_prev[is_open][1:] > 24.0).all()
    # an open window carries ρc·n·V·ΔT (ISO 13789, from memory)
    tm = res.mean_temperatures
    g = (flow[is_open] / (tm["r"] - tm["outdoor"])[is_open]).to_numpy()
    np.testing.assert_allclose(g, 1200 / 3600 * 3.0 * 50.0, rtol=1e-9)


# ---------------------------------------------------------------- buffer spaces
def test_buffer_space_between_indoor_and_outdoor_and_balance_closes():
    net = tn.Network()
    glazing = [Window("sun_glass", 8.0, 1.1, 0.6)]
    buf = add_buffer(net, "sunspace", floor_area=8, height=2.5, sky=None, elements=[
        Element("front", LIGHT_WALL, 10.0, 90, 180, windows=glazing),
        Element("sides", LIGHT_WALL, 10.0, 90, 90),
        Element("roof", ROOF, 8.0, 0, 180),
    ])
    room = add_room(net, "living", floor_area=30, height=2.5, sky=None, elements=[
        Element("to_sunspace", WALL, 10.0, 90, 180, boundary=buf,
                windows=[Door("glass_door", 2.0, 1.3, g_value=0.5)]),
        Element("north", WALL, 25.0, 90, 0),
        Element("roof", ROOF, 30.0, 0, 180),
    ])
    add_infiltration(net, buf, ach=1.0)
    add_infiltration(net, room, ach=0.3)
    add_buffer_exchange(net, room, buf, flow_m3h=20.0)
    net.add_thermostat(room.air, heating_setpoint=20.0)
    res = tn.simulate(net, const_weather(200, temp_air=0.0), warmup_days=200)
    t_buf = res.temperatures[buf.air].iloc[-1]
    assert 0.0 < t_buf < 20.0
    assert net.nodes[buf.air].kind == "buffer"
    b_room = res.balance(room.nodes)
    b_buf = res.balance(buf.nodes)
    assert b_room["buffer"].iloc[-1] < 0                 # the room loses heat to the buffer
    assert b_room["buffer"].iloc[-1] == pytest.approx(-b_buf["buffer"].iloc[-1], rel=1e-12)
    both = res.balance(room.nodes + buf.nodes)
    terms = both.drop(columns="residual").abs().to_numpy().max()
    # measured 3.9e-13 of the largest term; 1e-11 leaves a margin of ~25
    assert np.abs(both["residual"]).max() <= 1e-11 * terms
    assert "buffer" not in both.columns or np.abs(both["buffer"]).max() <= 1e-9 * terms


# ---------------------------------------------------------------- ground
@pytest.mark.parametrize("insulation,band", [(0.0, 0.04), (0.14, 0.04)])
def test_slab_on_ground_steady_loss_vs_iso13370(insulation, band):
    # ISO 13370:2017 slab on ground (from memory): B' = A/(0.5 P), d_t = w + λ(R_si + R_f + R_se),
    # U = 2λ/(πB' + d_t) ln(πB'/d_t + 1) for d_t < B', else λ/(0.457 B' + d_t).
    # Documented band of the builder's soil column (slab_soil_depth, D = 0.4 B' + w + λR_se):
    # about −3 % (uninsulated) and +3 % (R_f ≈ 4 m²K/W) at B' = 5 m; asserted within 4 %.
    layers = [("concrete_2200", 0.05)] + ([("eps", insulation)] if insulation else []) + [
        ("concrete_2200", 0.15)]
    slab = Construction("slab", layers)
    area, perimeter, w_wall, lam = 100.0, 40.0, 0.3, 2.0
    r_f = 0.05 / 1.65 + insulation / 0.035 + 0.15 / 1.65
    b_ = area / (0.5 * perimeter)
    d_t = w_wall + lam * (0.17 + r_f + 0.04)
    if d_t < b_:
        u_iso = 2 * lam / (math.pi * b_ + d_t) * math.log(math.pi * b_ / d_t + 1)
    else:
        u_iso = lam / (0.457 * b_ + d_t)
    assert iso13370_slab_u_value(area, perimeter, w_wall, r_f) == pytest.approx(u_iso, rel=1e-12)
    net = tn.Network()
    room = add_room(net, "r", floor_area=area, height=2.5, sky=None, ground_temperature=0.0,
                    soil=Soil(conductivity=lam, heat_capacity=2.0e6), elements=[
                        Element("slab", slab, area, 180, 0, boundary="ground",
                                perimeter=perimeter)])
    net.add_thermostat(room.air, heating_setpoint=20.0)
    net.add_thermostat(room.star, heating_setpoint=20.0)
    res = tn.simulate(net, const_weather(800, temp_air=0.0), warmup_days=800)
    loss = -res.balance_w(room.nodes)["ground"].iloc[-1]
    iso = u_iso * area * 20.0
    print(f"R_f = {r_f:.2f} m²K/W: network {loss:.1f} W, ISO 13370 {iso:.1f} W, "
          f"{100 * (loss / iso - 1):+.1f} %")
    assert loss == pytest.approx(iso, rel=band)
    assert len(room.soil_nodes) == 3 and all(net.nodes[n].kind == "ground"
                                             for n in room.soil_nodes)


# ---------------------------------------------------------------- solar
def test_window_solar_gain_distribution_and_shading():
    w = sunny_weather()
    win = Window("w", 4.0, 0.8, 0.5, frame_fraction=0.25)
    net = tn.Network()
    room = add_room(net, "r", floor_area=20, height=2.5, weather=w, elements=[
        Element("south", WALL, 12.0, 90, 180, windows=[win], solar_absorptance=0.0),
        Element("floor", FLOOR_OUT, 20.0, 180, 0, solar_absorptance=0.0),
        Element("roof", ROOF, 20.0, 0, 180, solar_absorptance=0.0)])
    # the transmitted gain straight from the solar module (pvlib POA + window_transmitted)
    irr = solar.surface_irradiance(w, 90, 180)
    direct = solar.window_transmitted(irr, area=4.0, g_value=0.5, frame_fraction=0.25)
    total = sum(net.sources[s].power for s in room.sources)
    np.testing.assert_allclose(total.to_numpy(), direct.to_numpy(), rtol=1e-9, atol=1e-9)
    # 0.1 to the air (ISO 52016-1, from memory), 0.6 to the floor (common practice)
    to_air = net.sources["r:solar>r"].power
    to_floor = net.sources["r:solar>r.floor.si"].power
    np.testing.assert_allclose(to_air.to_numpy(), 0.1 * direct.to_numpy(), atol=1e-9)
    np.testing.assert_allclose(to_floor.to_numpy(), 0.6 * direct.to_numpy(), atol=1e-9)
    # an overhang and an irradiance-controlled blind both cut the gain
    shaded = Window("w2", 4.0, 0.8, 0.5, height=1.6, width=2.5,
                    overhang=solar.Overhang(1.0, 0.2, 0.5),
                    shading=solar.MovableShading(0.2, "irradiance", on_above=300,
                                                 off_below=200))
    g2 = window_solar_gain(w, shaded, 90, 180)
    assert g2.sum() < 0.7 * direct.sum()
    deployed = shaded.shading.deployed(irradiance=irr["total"])
    assert deployed.any()


def test_temperature_controlled_blind_is_a_switch():
    w = sunny_weather(days=2)
    blind = solar.MovableShading(0.2, "temperature", on_above=23.0, off_below=22.0, node="r")
    net = tn.Network()
    room = add_room(net, "r", floor_area=15, height=2.5, weather=w, elements=[
        Element("south", LIGHT_WALL, 10.0, 90, 180,
                windows=[Window("big", 6.0, 1.0, 0.6, shading=blind)]),
        Element("floor", FLOOR_OUT, 15.0, 180, 0)])
    assert "r.big:shading" in room.switches
    res = tn.simulate(net, w, warmup_days=0)
    src = [s for s in room.sources if s.startswith("r.big:solar")]
    applied = res.sources[src].sum(axis=1)
    nominal = sum(net.sources[s].power for s in src)
    ratio = (applied / nominal)[nominal > 1.0]
    assert set(np.round(ratio.unique(), 9)) <= {0.2, 1.0} and (ratio < 0.5).any()


# ---------------------------------------------------------------- internal gains
def test_internal_gains_split_and_energy():
    w = const_weather(24 * 7, freq="h", temp_air=10.0)
    net = tn.Network()
    room = add_room(net, "r", floor_area=50, height=2.5, sky=None,
                    elements=[Element("wall", WALL, 40.0)])
    gl = [tg.occupants(3), tg.lighting(2.0), tg.appliances(3.0, profile=tg.CONSTANT)]
    names = tg.add_internal_gains(net, room, gl, w.index)
    res = tn.simulate(net, w, warmup_days=0)
    # the week 2025-01-01 (Wednesday) … 01-07: 5 weekdays + 2 weekend days.
    # occupancy: weekday 7·1 + 0.5 + 9·0.1 + 0.5 + 6·1 = 14.9 h; weekend 9 + 3·0.6 + 2·0.8 +
    # 4·0.5 + 6 = 20.4 h (profile table of thermonet.gains, common practice, no source)
    occ_kwh = 3 * 70.0 * (5 * 14.9 + 2 * 20.4) / 1000
    app_kwh = 3.0 * 50 * 168 / 1000
    b = res.balance(room.nodes).sum()
    lig = tg.gain_table(gl[1], w.index, 50).sum().sum() / 1000
    assert b["internal"] == pytest.approx(occ_kwh + app_kwh + lig, rel=1e-9)
    # convective 0.4 to the air (ISO 52016-1, from memory), radiative 0.6 to the star
    conv = res.sources[[n for n in names if n.endswith("convective")]].sum().sum()
    rad = res.sources[[n for n in names if n.endswith("radiative")]].sum().sum()
    assert conv / (conv + rad) == pytest.approx(0.4, rel=1e-12)
    assert all(net.sources[n].node == (room.air if n.endswith("convective") else room.star)
               for n in names)


def test_gain_errors():
    with pytest.raises(ScheduleError, match="24 hourly"):
        tg.GainProfile((1.0,) * 23, (1.0,) * 24)
    with pytest.raises(ScheduleError, match="0 … 1"):
        tg.GainProfile((1.5,) * 24, (1.0,) * 24)
    with pytest.raises(NetworkError, match="exactly one"):
        tg.Gain("x", 100.0, 2.0, 1.0)
    with pytest.raises(NetworkError, match="convective_fraction"):
        tg.lighting(2.0, convective_fraction=1.2)
    with pytest.raises(NetworkError, match="people"):
        tg.occupants(-1)
    with pytest.raises(NetworkError, match="duplicate"):
        tg.gain_table([tg.lighting(1.0), tg.lighting(2.0)], const_weather(24, "h").index, 10)
    with pytest.raises(NetworkError, match="floor_area"):
        tg.gain_table(tg.lighting(1.0), const_weather(24, "h").index)


# ---------------------------------------------------------------- errors
def _room(net=None, **kw):
    net = net or tn.Network()
    args = dict(floor_area=20, height=2.5, sky=None, elements=[Element("wall", WALL, 10.0)])
    args.update(kw)
    return add_room(net, "r", **args)


@pytest.mark.parametrize("elem,match", [
    (Element("e", WALL, 10.0, tilt=200), "e.*tilt"),
    (Element("e", WALL, 10.0, tilt=float("nan")), "e.*tilt"),
    (Element("e", WALL, 10.0, azimuth=-5), "e.*azimuth"),
    (Element("e", WALL, 10.0, azimuth=361), "e.*azimuth"),
    (Element("e", WALL, 0.0), "e.*area"),
    (Element("e", WALL, 10.0, windows=[Window("w", 11.0, 1.0, 0.5)]), "e.*larger"),
    (Element("e", WALL, 10.0, windows=[Window("w", 2.0, 6.0, 0.5)]), "w.*u_value"),
    (Element("e", WALL, 10.0, windows=[Window("w", 2.0, 1.0, 1.5)]), "w.*g_value"),
    (Element("e", WALL, 10.0, windows=[Window("w", 2.0, 1.0, 0.5, frame_fraction=1.0)]),
     "w.*frame_fraction"),
    (Element("e", WALL, 10.0, windows=[Window("w", -2.0, 1.0, 0.5)]), "w.*area"),
    (Element("e", WALL, 10.0, solar_absorptance=1.2), "e.*solar_absorptance"),
    (Element("e", WALL, 10.0, boundary="attic"), "e.*unknown boundary"),
    (Element("e", WALL, 10.0, 180, boundary="ground"), "e.*perimeter"),
    (Element("e", WALL, 10.0, 90, boundary="ground"), "e.*depth"),
    (Element("e", WALL, 10.0, 0, boundary="ground", perimeter=10), "e.*floors"),
    (Element("e", WALL, 10.0, 180, boundary="ground", perimeter=10,
             windows=[Window("w", 1.0, 1.0, 0.5)]), "e.*windows"),
])
def test_element_errors_name_the_element(elem, match):
    with pytest.raises(NetworkError, match=match):
        _room(elements=[elem], ground_temperature=8.0)


def test_room_level_errors():
    with pytest.raises(ConstructionError, match="e.*unknown construction 'brick'"):
        _room(elements=[Element("e", "brick", 10.0)])
    with pytest.raises(ConstructionError, match="e.*Construction"):
        _room(elements=[Element("e", 42, 10.0)])
    assert _room(elements=[Element("e", "w", 10.0)], constructions={"w": WALL}).u_values["e"] \
        == pytest.approx(WALL.u_value())
    with pytest.raises(NetworkError, match="floor_area"):
        _room(floor_area=0)
    with pytest.raises(NetworkError, match="height"):
        _room(height=-1)
    with pytest.raises(NetworkError, match="duplicate"):
        _room(elements=[Element("e", WALL, 10.0), Element("e", WALL, 10.0)])
    with pytest.raises(NetworkError, match="ground_temperature"):
        _room(elements=[Element("f", WALL, 10.0, 180, boundary="ground", perimeter=10)])
    with pytest.raises(NetworkError, match="at least one"):
        _room(elements=[])
    w = const_weather(24, "h", ghi=0.0, dni=0.0, dhi=0.0)
    with pytest.raises(WeatherError, match="temp_sky"):
        _room(sky="sky", weather=w)
    vertical_only = Window("w", 1.0, 1.0, 0.5, height=1, width=1, overhang=solar.Overhang(0.5))
    with pytest.raises(NetworkError, match="w.*vertical"):
        _room(weather=w, elements=[Element("roof", ROOF, 10.0, 30, 180, windows=[vertical_only])])
    no_dims = Window("w", 1.0, 1.0, 0.5, overhang=solar.Overhang(0.5))
    with pytest.raises(NetworkError, match="w.*height"):
        _room(weather=w, elements=[Element("e", WALL, 10.0, windows=[no_dims])])
    with pytest.raises(NetworkError, match="sum to"):
        _room(weather=w, elements=[Element("e", WALL, 10.0, windows=[Window("w", 1, 1, 0.5)])],
              solar_distribution={"air": 0.5, "e": 0.4})
    with pytest.raises(NetworkError, match="'nope'"):
        _room(weather=w, elements=[Element("e", WALL, 10.0, windows=[Window("w", 1, 1, 0.5)])],
              solar_distribution={"air": 0.5, "nope": 0.5})
    with pytest.raises(NetworkError, match="heated"):
        add_buffer(tn.Network(), "b", heated=True, floor_area=5, height=2, elements=[])
    with pytest.raises(NetworkError, match="duplicate"):
        net = tn.Network()
        _room(net)
        _room(net)


def test_airflow_errors():
    net = tn.Network()
    room = _room(net)
    with pytest.raises(NetworkError, match="exactly one of n50"):
        infiltration_rate(1.0, q50=2.0)
    with pytest.raises(NetworkError, match="envelope_area"):
        infiltration_rate(q50=2.0)
    with pytest.raises(NetworkError, match="method"):
        infiltration_rate(1.0, method="guess")
    with pytest.raises(NetworkError, match="shielding"):
        infiltration_rate(1.0, shielding="some")
    with pytest.raises(NetworkError, match="n50"):
        infiltration_rate(-1.0)
    with pytest.raises(NetworkError, match="exactly one of ach"):
        add_infiltration(net, room, ach=0.5, n50=1.0)
    with pytest.raises(NetworkError, match="heat_recovery"):
        add_ventilation(net, room, flow_m3h=100, heat_recovery=1.0)
    with pytest.raises(NetworkError, match="bypass needs"):
        add_ventilation(net, room, flow_m3h=100, bypass=tn.above("r", 24))
    idx = const_weather(24, "h").index
    with pytest.raises(NetworkError, match="schedule"):
        add_ventilation(net, room, flow_m3h=100, schedule=pd.Series(-1.0, index=idx))
    with pytest.raises(NetworkError, match="exactly one of flow_m3h"):
        add_window_opening(net, room, open_when=tn.above("r", 24))
    with pytest.raises(TypeError, match="Room"):
        add_infiltration(net, "r", ach=1.0)


def test_basement_wall_steady_loss_is_iso13370():
    # ISO 13370:2017 heated basement wall (from memory, docs/references.md): with
    # d_w = λ(R_si + R_w + R_se) and the floor's d_t (here d_t = d_w, the builder's default),
    # U_bw = 2λ/(πz) · (1 + 0.5 d_t/(d_t + z)) · ln(z/d_w + 1). Hand value for λ = 2 W/(mK),
    # z = 2 m, R_w = 0.2 m²K/W: d_w = 0.74 m, 0.63662 × 1.135036 × ln 3.7027 = 0.94591.
    assert iso13370_basement_wall_u_value(2.0, 0.2) == pytest.approx(0.94591, abs=5e-6)
    # a better-insulated floor (d_t < d_w) lowers the factor; d_t > d_w is replaced by d_w
    lam, z, r_w = 2.0, 2.0, 0.2
    d_w = lam * (0.13 + r_w + 0.04)
    u_dt = 2 * lam / (math.pi * z) * (1 + 0.5 * 0.3 / (0.3 + z)) * math.log(z / d_w + 1)
    assert iso13370_basement_wall_u_value(2.0, 0.2, floor_equivalent_thickness=0.3) == (
        pytest.approx(u_dt, rel=1e-12))
    assert iso13370_basement_wall_u_value(2.0, 0.2, floor_equivalent_thickness=5.0) == (
        pytest.approx(0.94591, abs=5e-6))
    # the built wall (soil column to a deep-ground boundary at the outdoor annual mean)
    # loses exactly U_bw·A·ΔT in steady state, for an uninsulated and an insulated wall
    for layers in ([("concrete_2200", 0.30)], [("concrete_2200", 0.25), ("eps", 0.12)]):
        wall = Construction("basement wall", layers)
        r_w = wall.thermal_resistance
        d_w = lam * (0.13 + r_w + 0.04)
        u_iso = 2 * lam / (math.pi * z) * (1 + 0.5 * d_w / (d_w + z)) * math.log(z / d_w + 1)
        net = tn.Network()
        room = add_room(net, "cellar", floor_area=30, height=2.4, sky=None,
                        ground_temperature=0.0, elements=[
                            Element("wall", wall, 40.0, 90, 0, boundary="ground", depth=z)])
        net.add_thermostat(room.air, heating_setpoint=20.0)
        net.add_thermostat(room.star, heating_setpoint=20.0)
        res = tn.simulate(net, const_weather(800, temp_air=0.0), warmup_days=800)
        loss = -res.balance_w(room.nodes)["ground"].iloc[-1]
        assert loss == pytest.approx(u_iso * 40.0 * 20.0, rel=1e-6)


def test_window_u_value_hand_calculation():
    # EN ISO 10077-1 (from memory): U_w = (A_g U_g + A_f U_f + l_g ψ_g) / A_w.
    # A_w = 2.5 m², frame fraction 0.3, U_g = 0.6, U_f = 1.0 W/(m²K), ψ_g = 0.04 W/(mK),
    # l_g = 6.0 m: 0.7·0.6 + 0.3·1.0 + 0.04·6.0/2.5 = 0.42 + 0.30 + 0.096 = 0.816 W/(m²K).
    assert window_u_value(0.6, 1.0, 0.3, psi=0.04, glazing_perimeter=6.0, area=2.5) == (
        pytest.approx(0.816, rel=1e-12))
    assert window_u_value(1.1, 1.1, 0.25) == pytest.approx(1.1, rel=1e-12)
    with pytest.raises(NetworkError, match="area"):
        window_u_value(0.6, 1.0, 0.3, psi=0.04, glazing_perimeter=6.0)
    with pytest.raises(NetworkError, match="frame_fraction"):
        window_u_value(0.6, 1.0, 1.0)
    with pytest.raises(NetworkError, match="glazing_u"):
        window_u_value(0.0, 1.0, 0.3)


def _hand_net():
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.2e5, volume=50.0)
    net.add_node("floor", kind="mass", capacitance=4e6)
    net.add_link("room", "floor", conductance=80.0, path="internal")
    return net


def test_add_window_one_call_for_a_hand_built_network():
    w = sunny_weather()
    win = Window("south", 3.0, 0.8, 0.5, frame_fraction=0.25, height=1.5, width=1.6,
                 overhang=solar.Overhang(0.6),
                 shading=solar.MovableShading(0.3, "irradiance", on_above=300, off_below=200))
    net = _hand_net()
    added = add_window(net, "room", win, tilt=90, azimuth=180, weather=w,
                       receivers={"room": 0.1, "floor": 0.9})
    link = net.links[added.link]
    assert (link.a, link.b, link.path) == ("outdoor", "room", "glazing")
    assert link.conductance == pytest.approx(0.8 * 3.0, rel=1e-15)   # U_w·A, air to air
    gain = window_solar_gain(w, win, 90, 180)
    np.testing.assert_allclose(added.gain, gain, rtol=1e-15)
    assert gain.max() > 100.0                                     # the sun is really there
    assert [net.sources[s].node for s in added.sources] == ["room", "floor"]
    np.testing.assert_allclose(net.sources[added.sources[1]].power, 0.9 * gain, rtol=1e-15)
    assert {net.sources[s].path for s in added.sources} == {"solar"}
    # the balance of room + floor shows exactly the transmitted solar under "solar"
    res = tn.simulate(net, w, warmup_days=0)
    b = res.balance(["room", "floor"]).sum()
    assert b["solar"] == pytest.approx(gain.sum() / 1000.0, rel=1e-12)


def test_add_window_steady_loss_is_u_a_delta_t_and_door_is_opaque():
    # U_w is the air-to-air transmittance (EN ISO 10077-1 definition, from memory): in steady
    # state, with no sun, the thermostat replaces exactly U_w·A·ΔT.
    net = _hand_net()
    add_window(net, "room", Window("w", 2.0, 1.1, 0.6))
    door = add_window(net, "room", Door("front door", 2.2, 1.3))
    assert net.links[door.link].path == "opaque" and door.gain is None
    net.add_thermostat("room", heating_setpoint=20.0)
    res = tn.simulate(net, const_weather(60, temp_air=-5.0), warmup_days=60)
    assert res.heating.iloc[-1] == pytest.approx((1.1 * 2.0 + 1.3 * 2.2) * 25.0, rel=1e-9)


def test_add_window_temperature_controlled_blind_is_a_switch():
    w = sunny_weather(days=2)
    blind = solar.MovableShading(0.2, "temperature", on_above=23.0, off_below=22.0,
                                 node="room")
    net = _hand_net()
    added = add_window(net, "room", Window("big", 6.0, 1.0, 0.6, shading=blind), weather=w)
    assert added.switches == ["big:shading"]
    res = tn.simulate(net, w, warmup_days=0)
    applied = res.sources[added.sources].sum(axis=1)
    ratio = (applied / added.gain)[added.gain > 1.0]
    assert set(np.round(ratio.unique(), 9)) <= {0.2, 1.0} and (ratio < 0.5).any()


@pytest.mark.parametrize("kwargs,match", [
    (dict(node="kitchen"), r"window 'w'.*node 'kitchen' is not a free node.*'room'"),
    (dict(node="outdoor"), r"node 'outdoor' is not a free node"),
    (dict(receivers={"room": 0.5, "floor": 0.4}), r"shares must sum to 1.*room=0.5"),
    (dict(receivers={"room": 0.5, "attic": 0.5}), r"receiver 'attic' is not a free node"),
    (dict(receivers={"room": 1.5, "floor": -0.5}), r"share of receiver 'room'"),
    (dict(tilt=190), r"window 'w'.*tilt"),
    (dict(azimuth=-10), r"window 'w'.*azimuth"),
    (dict(window=Window("w", 2.0, 1.0, 1.4)), r"window 'w'.*g_value"),
    (dict(window=Window("w", 2.0, 1.0, 0.5, shading=solar.MovableShading(
        0.2, "temperature", on_above=24, off_below=23, node="loft"))),
     r"shading control node 'loft'"),
])
def test_add_window_errors_name_the_window_and_the_fix(kwargs, match):
    net = _hand_net()
    args = dict(node="room", window=Window("w", 2.0, 1.0, 0.5))
    args.update(kwargs)
    with pytest.raises(NetworkError, match=match):
        add_window(net, args.pop("node"), args.pop("window"), **args)
    assert "w:transmission" not in net.links           # nothing half-added


def test_add_window_twice_is_a_duplicate():
    net = _hand_net()
    add_window(net, "room", Window("w", 2.0, 1.0, 0.5))
    with pytest.raises(NetworkError, match="w:transmission"):
        add_window(net, "room", Window("w", 2.0, 1.0, 0.5))


def test_room_records_travel_in_net_meta():
    net = tn.Network()
    room = add_room(net, "r", floor_area=20, height=2.5, sky=None,
                    elements=[Element("wall", WALL, 10.0, windows=[Window("w", 2, 1, 0.5)])])
    ln = add_infiltration(net, room, ach=0.5)
    names = tg.add_internal_gains(net, room, [tg.occupants(2)],
                                  const_weather(24, "h").index)
    rec = rooms(net)["r"]
    assert rec == room
    assert ln in rec.links and set(names) <= set(rec.sources)   # later additions recorded
    import json

    json.dumps(net.meta)                                         # plain JSON
    net.meta["builders"]["rooms"]["r"].pop("star")
    with pytest.raises(NetworkError, match=r"rooms'\]\['r'\] lacks \['star'\]"):
        rooms(net)
    assert rooms(tn.Network()) == {}


def test_room_description_type_errors_and_nothing_half_built():
    # every mistake is caught before the network is touched, and names the room or element
    net = tn.Network()
    with pytest.raises(TypeError, match=r"room 'r': elements must be a list.*wrap"):
        add_room(net, "r", floor_area=20, height=2.5, elements=Element("e", WALL, 10.0))
    with pytest.raises(TypeError, match=r"element 'e' of room 'r': windows must be a list"):
        _room(net, elements=[Element("e", WALL, 10.0, windows=Window("w", 1, 1, 0.5))])
    with pytest.raises(NetworkError, match=r"room 'r': solar_distribution must be"):
        _room(net, solar_distribution="walls")
    with pytest.raises(NetworkError, match=r"room 'r': sky_model must be one of"):
        _room(net, sky_model="klucher")
    with pytest.raises(NetworkError, match=r"rc_options \['cells'\] are not keywords"):
        _room(net, rc_options={"cells": 3})
    with pytest.raises(ConstructionError, match="nodes_per_layer"):
        _room(net, elements=[Element("a", WALL, 10.0), Element("b", WALL, 10.0)],
              rc_options={"nodes_per_layer": 1})
    assert not net.nodes and not net.boundaries and not net.links
    room = _room(net)
    with pytest.raises(NetworkError, match="same zone"):
        add_buffer_exchange(net, room, room, flow_m3h=10.0)
    buf = add_buffer(net, "b", floor_area=5, height=2.5, sky=None,
                     elements=[Element("e", LIGHT_WALL, 8.0)])
    with pytest.raises(TypeError, match=r"air exchange 'r' ↔ 'b': schedule must be a pandas"):
        add_buffer_exchange(net, room, buf, flow_m3h=10.0, schedule=[1.0, 0.5])
