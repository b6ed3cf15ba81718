"""Internal blinds and curtains: the convective/radiative split of the solar gain they absorb.

Checks:

* energy bookkeeping of the device (an invariant of the model, docs/references.md §10): with
  the device down the room receives the transmitted share τ plus the absorbed share α of the
  gain the glazing transmits (τ·G on the room's surfaces and air as before, α·f_c·G on the
  air, α·(1 − f_c)·G on the radiant star), with it up the whole gain G; the room's balance
  still closes (docs/glossary.md "Balance columns");
* direction: the same solar energy entering the room warms the room air sooner when part of
  it is released convectively by the blind than when it all arrives on the surfaces (heat
  on the air node reaches the air at once; heat on the surfaces only through their films
  and after warming their capacity) — a direction check of the model, no value quoted;
* published qualitative fact: an internal device admits more heat than an external one of
  the same transmittance, because what it absorbs is released inside (European Solar-Shading
  Organization, "Internal shading", and the web textbook "Internal shading devices", both
  [C] in docs/references.md §10).

Weather: five June days of the INVENTED Fernhollow sample year (demo data, used only to
drive both sides of each comparison).
"""

from __future__ import annotations

import math

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import solar
from thermonet import weather as tw
from thermonet.builders import Element, Window, add_room, add_window, window_solar_gain
from thermonet.constructions import Construction
from thermonet.errors import NetworkError
from thermonet.scenarios.sample_weather import load_sample_weather

WALL = Construction("wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.15),
                             ("mineral_wool", 0.14)])


def _weather() -> pd.DataFrame:
    w = load_sample_weather()
    attrs = dict(w.attrs)
    part = w.loc["2025-06-20 01:00":"2025-06-25 00:00"].copy()
    part.attrs = attrs
    return tw.add_sky_temperature(part)


W = _weather()
_MID = W.index - pd.Timedelta("30min")
MIDDAY = pd.Series((_MID.hour >= 10) & (_MID.hour < 16), index=W.index, name="midday")
ALWAYS = pd.Series(True, index=W.index, name="always")
GLASS = dict(area=3.0, u_value=1.1, g_value=0.6)


def device(schedule, factor, **kw):
    return solar.MovableShading(factor, "schedule", schedule=schedule, **kw)


def room_with(dev):
    net = tn.Network()
    room = add_room(net, "r", floor_area=15.0, height=2.5, weather=W, initial=20.0, elements=[
        Element("south", WALL, 10.0, 90, 180, windows=[Window("glass", **GLASS, shading=dev)]),
        Element("floor", WALL, 15.0, 180, 0, boundary="outdoor")])
    net.add_airflow("outdoor", room.air, ach=0.5, path="infiltration")
    return net, room


def solar_sources(net, room):
    return [s for s in room.sources if net.sources[s].path == "solar"]


#: The gain the glazing transmits with no device [W] (the reference G of the shares).
G0 = window_solar_gain(W, Window("glass", **GLASS), 90, 180)


def test_internal_blind_energy_is_conserved_and_the_balance_closes():
    tau, alpha, fc = 0.3, 0.4, 0.7
    net, room = room_with(device(MIDDAY, tau, position="internal", absorptance=alpha,
                                 convective_fraction=fc))
    res = tn.simulate(net, W, warmup_days=0.0)
    src = res.sources
    down = MIDDAY.to_numpy()
    g0 = G0.to_numpy()
    total = src[solar_sources(net, room)].sum(axis=1).to_numpy()
    np.testing.assert_allclose(total, g0 * np.where(down, tau + alpha, 1.0), rtol=1e-9,
                               atol=1e-9)
    through = src[[s for s in room.sources if s.startswith("r.glass:solar>")]].sum(axis=1)
    np.testing.assert_allclose(through, g0 * np.where(down, tau, 1.0), rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(src["r.glass:device_convective>r"], g0 * alpha * fc * down,
                               rtol=1e-9, atol=1e-9)
    np.testing.assert_allclose(src["r.glass:device_radiative>r.star"],
                               g0 * alpha * (1 - fc) * down, rtol=1e-9, atol=1e-9)
    assert (g0[down] > 100.0).any()        # the blind is down in sunshine
    b = res.balance(room.nodes).sum()
    scale = b.drop("residual").abs().max()
    assert abs(b["residual"]) <= 1e-9 * scale
    assert math.isclose(b["solar"], total.sum() / 1000.0, rel_tol=1e-9)   # W·h → kWh
    shares = solar.internal_device_shares(tau, alpha, fc)
    assert math.isclose(math.fsum(shares.values()), 1.0, rel_tol=1e-15)


def test_internal_blind_warms_the_air_sooner_than_the_same_energy_all_radiant():
    # the same energy enters both rooms: τ + α = 0.7 of G, always
    conv, room_c = room_with(device(ALWAYS, 0.3, position="internal", absorptance=0.4,
                                    convective_fraction=1.0))
    rad, room_r = room_with(device(ALWAYS, 0.7))
    a = tn.simulate(conv, W, warmup_days=0.0)
    b = tn.simulate(rad, W, warmup_days=0.0)
    np.testing.assert_allclose(a.sources[solar_sources(conv, room_c)].sum(axis=1),
                               b.sources[solar_sources(rad, room_r)].sum(axis=1), rtol=1e-9,
                               atol=1e-9)
    first_day = W.index < W.index[0] + pd.Timedelta("1D")
    sunny = first_day & (G0.to_numpy() > 100.0)
    # from the same start, the air of the room with the convective share leads in sunshine
    dT = (a.temperatures["r"] - b.temperatures["r"])[sunny]
    assert (dT > 0).all() and dT.max() > 0.3


def test_internal_blind_admits_more_heat_than_an_external_one_of_equal_transmittance():
    internal, room_i = room_with(device(ALWAYS, 0.2, position="internal", absorptance=0.3))
    external, room_e = room_with(device(ALWAYS, 0.2))
    a = tn.simulate(internal, W, warmup_days=1.0)
    b = tn.simulate(external, W, warmup_days=1.0)
    gain_i = a.balance(room_i.nodes).sum()["solar"]
    gain_e = b.balance(room_e.nodes).sum()["solar"]
    assert math.isclose(gain_i / gain_e, (0.2 + 0.3) / 0.2, rel_tol=1e-9)
    assert a.mean_temperatures["r"].mean() > b.mean_temperatures["r"].mean() + 0.2


def test_hand_built_window_and_temperature_control_and_bad_values():
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.5e5)
    net.add_node("floor", kind="mass", capacitance=3e6)
    net.add_link("room", "floor", conductance=100.0, path="internal")
    blind = solar.MovableShading(0.4, "temperature", on_above=23.0, off_below=22.0,
                                 node="room", position="internal", absorptance=0.35)
    added = add_window(net, "room", Window("w", **GLASS, shading=blind), weather=W,
                       receivers={"room": 0.1, "floor": 0.9})
    assert "w:device_convective>room" in added.sources
    assert "w:device_radiative>floor" in added.sources and added.switches == ["w:shading"]
    res = tn.simulate(net, W, warmup_days=0.0)
    total = res.sources[added.sources].sum(axis=1) / G0
    ratio = set(np.round(total[G0 > 1.0].unique(), 9))
    assert ratio == {0.75, 1.0}                 # τ + α = 0.75 while down, 1 while up
    with pytest.raises(NetworkError, match="absorptance=0.3 is used for internal"):
        solar.MovableShading(0.2, "temperature", on_above=24.0, off_below=22.0, node="r",
                             absorptance=0.3)
    with pytest.raises(NetworkError, match="exceeds 1"):
        solar.MovableShading(0.6, "schedule", schedule=ALWAYS, position="internal",
                             absorptance=0.5)
    with pytest.raises(NetworkError, match="position must be one of"):
        solar.MovableShading(0.6, "schedule", schedule=ALWAYS, position="between")


def test_irradiance_controlled_internal_blind_follows_the_irradiance_on_the_window():
    dev = solar.MovableShading(0.3, "irradiance", on_above=300.0, off_below=200.0,
                               position="internal", absorptance=0.2)
    net, room = room_with(dev)
    res = tn.simulate(net, W, warmup_days=0.0)
    ratio = (res.sources[solar_sources(net, room)].sum(axis=1) / G0)[G0 > 1.0]
    irr = solar.surface_irradiance(W, 90, 180)["total"]
    down = dev.deployed(irradiance=irr)[G0 > 1.0]
    np.testing.assert_allclose(ratio, np.where(down, 0.5, 1.0), rtol=1e-9)
    assert down.any() and not down.all()
