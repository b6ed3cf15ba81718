"""Tests of thermonet.templates: the ISO 13790:2008 5R1C zone.

Source: ISO 13790:2008 Annex C, simple hourly method (docs/references.md §7.1, from memory, high
confidence): H_tr,is = 3.45 A_t, A_t = 4.5 A_f, H_tr,ms = 9.1 A_m,
H_tr,em = 1/(1/H_tr,op − 1/H_tr,ms), Table 12 mass classes, the gain split and the node
equations (H_tr,1, H_tr,2, H_tr,3, Φ_mtot, θ_m, θ_s, θ_air).
"""

import math

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import solar
from thermonet.builders import Element, Window, add_infiltration, add_room
from thermonet.builders.templates import add_iso13790_zone, iso13790_from_room, iso13790_parameters
from thermonet.constructions import Construction
from thermonet.errors import NetworkError, WeatherError

TZ = "Etc/GMT-1"
SITE = {"latitude": 48.14, "longitude": 11.58, "elevation": 520.0}


def const_weather(n, freq="D", temp_air=2.0):
    idx = pd.date_range("2025-01-01", periods=n, freq=freq, tz=TZ)
    return pd.DataFrame({"temp_air": np.full(n, float(temp_air))}, index=idx)


def iso13790_steady(af, h_op, h_w, h_ve, a_m, phi_int, phi_sol, theta_e, phi_hc=0.0):
    """The standard's own equations (Annex C) with θ_m,t = θ_m,t−1 (steady state)."""
    a_t = 4.5 * af
    h_is, h_ms = 3.45 * a_t, 9.1 * a_m
    h_em = 1.0 / (1.0 / h_op - 1.0 / h_ms)
    phi_ia = 0.5 * phi_int
    phi_m = a_m / a_t * (0.5 * phi_int + phi_sol)
    phi_st = (1 - a_m / a_t - h_w / (9.1 * a_t)) * (0.5 * phi_int + phi_sol)
    h1 = 1.0 / (1.0 / h_ve + 1.0 / h_is)
    h2 = h1 + h_w
    h3 = 1.0 / (1.0 / h2 + 1.0 / h_ms)
    theta_sup = theta_e
    phi_mtot = phi_m + h_em * theta_e + h3 * (phi_st + h_w * theta_e
                                              + h1 * ((phi_ia + phi_hc) / h_ve + theta_sup)) / h2
    # θ_m,t [C_m/3600 + 0.5(H3 + H_em)] = θ_m,t−1 [C_m/3600 − 0.5(H3 + H_em)] + Φ_mtot
    theta_m = phi_mtot / (h3 + h_em)
    theta_s = (h_ms * theta_m + phi_st + h_w * theta_e + h1 * (theta_sup + (phi_ia + phi_hc)
                                                                / h_ve)) / (h_ms + h_w + h1)
    theta_air = (h_is * theta_s + h_ve * theta_sup + phi_ia + phi_hc) / (h_is + h_ve)
    return theta_air, theta_s, theta_m


AF, H_OP, H_W, FLOW = 50.0, 40.0, 20.0, 60.0     # m², W/K, W/K, m³/h
H_VE = 1200.0 / 3600.0 * FLOW                   # ρc = 1200 J/(m³K), ISO 13790 (from memory)
A_M = 2.5 * AF                                  # "medium" class, ISO 13790 Table 12


def _zone(net, **kw):
    z = add_iso13790_zone(net, "z", floor_area=AF, h_tr_op=H_OP, h_tr_w=H_W,
                          mass_class="medium", volume=125.0, **kw)
    add_infiltration(net, z, flow_m3h=FLOW)
    return z


def test_free_running_steady_state_matches_iso13790_equations():
    net = tn.Network()
    z = _zone(net, internal_gains=500.0, solar_gains=300.0)
    res = tn.simulate(net, const_weather(5), warmup_days=0)
    ta, ts, tm = iso13790_steady(AF, H_OP, H_W, H_VE, A_M, 500.0, 300.0, 2.0)
    t = res.temperatures.iloc[-1]
    assert t[z.air] == pytest.approx(ta, abs=1e-6)
    assert t[z.star] == pytest.approx(ts, abs=1e-6)
    assert t[z.mass] == pytest.approx(tm, abs=1e-6)
    assert net.nodes[z.air].capacitance == 0.0 and net.nodes[z.star].capacitance == 0.0
    assert net.nodes[z.mass].capacitance == pytest.approx(165_000.0 * AF)   # Table 12 medium


def test_heated_steady_state_matches_iso13790_equations():
    net = tn.Network()
    z = _zone(net, internal_gains=400.0, solar_gains=0.0)
    net.add_thermostat(z.air, heating_setpoint=20.0)
    res = tn.simulate(net, const_weather(300, temp_air=-3.0), warmup_days=300)
    # Φ_HC such that θ_air = 20 °C: θ_air is affine in Φ_HC
    t0 = iso13790_steady(AF, H_OP, H_W, H_VE, A_M, 400.0, 0.0, -3.0, 0.0)
    t1 = iso13790_steady(AF, H_OP, H_W, H_VE, A_M, 400.0, 0.0, -3.0, 1.0)
    phi_hc = (20.0 - t0[0]) / (t1[0] - t0[0])
    ta, ts, tm = iso13790_steady(AF, H_OP, H_W, H_VE, A_M, 400.0, 0.0, -3.0, phi_hc)
    t = res.temperatures.iloc[-1]
    assert ta == pytest.approx(20.0, abs=1e-9)
    assert t[z.star] == pytest.approx(ts, abs=1e-6)
    assert t[z.mass] == pytest.approx(tm, abs=1e-6)
    assert res.heating.iloc[-1] == pytest.approx(phi_hc, rel=1e-6)


def test_gain_split_and_parameters():
    p = iso13790_parameters(AF, H_OP, H_W, mass_class="heavy")
    # Table 12 heavy: A_m = 3.0 A_f, C_m = 260 000 J/(m²K) × A_f (from memory)
    assert (p.a_m, p.c_m) == (3.0 * AF, 260_000.0 * AF)
    assert p.h_tr_is == pytest.approx(3.45 * 4.5 * AF)
    assert p.h_tr_ms == pytest.approx(9.1 * 3.0 * AF)
    assert 1 / p.h_tr_em + 1 / p.h_tr_ms == pytest.approx(1 / H_OP)   # series = H_tr,op
    net = tn.Network()
    z = _zone(net, internal_gains=500.0, solar_gains=300.0)
    total = sum(net.sources[s].power for s in z.sources)
    a_t = 4.5 * AF
    applied = 0.5 * 500 + (1 - H_W / (9.1 * a_t)) * (0.5 * 500 + 300)   # standard's split
    assert total == pytest.approx(applied, rel=1e-12)
    assert {net.sources[s].path for s in z.sources} == {"internal", "solar"}


WALL = Construction("heavy wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.20),
                                   ("mineral_wool", 0.16)])
ROOF = Construction("roof", [("concrete_2200", 0.20), ("mineral_wool", 0.30)])
FLOOR = Construction("floor over air", [("concrete_2200", 0.15), ("eps", 0.20)])


def winter_sun(days=4):
    """Clear-sky days from pvlib's Ineichen–Perez model (Linke turbidity 3), 0 … −6 °C."""
    import pvlib

    idx = pd.date_range("2025-02-10 01:00", periods=days * 24, freq="h", tz=TZ)
    sp = solar.solar_position(idx, SITE["latitude"], SITE["longitude"], SITE["elevation"])
    zen = sp["apparent_zenith"].to_numpy()
    am = pvlib.atmosphere.get_absolute_airmass(pvlib.atmosphere.get_relative_airmass(zen),
                                               pvlib.atmosphere.alt2pres(SITE["elevation"]))
    extra = pvlib.irradiance.get_extra_radiation(np.asarray(idx.day_of_year, dtype=float))
    with np.errstate(divide="ignore", invalid="ignore"):   # night rows (airmass NaN)
        cs = pvlib.clearsky.ineichen(zen, am, 3.0, altitude=SITE["elevation"], dni_extra=extra)
    hour = ((idx - pd.Timedelta("30min")).hour).to_numpy()
    w = pd.DataFrame({k: np.nan_to_num(np.asarray(cs[k], dtype=float)) for k in
                      ("ghi", "dni", "dhi")}, index=idx)
    w["temp_air"] = -3.0 + 3.0 * np.sin(2 * np.pi * (hour - 9) / 24)
    w.attrs["site"] = dict(SITE)
    return w


@pytest.mark.parametrize("sunny,offset,rel", [(True, -9.0, 0.10), (False, 0.0, 0.03)])
def test_template_from_room_description_vs_detailed_room(sunny, offset, rel):
    # Same description, same weather, infiltration 0.5 1/h, 300 W of gains, thermostat 20 °C
    # at the air node of each. Documented in iso13790_from_room: heating within 10 % on
    # cold clear days (−12 ± 3 °C), within 3 % on overcast days (no solar at all), where
    # only the conductances and the warm-up differ. Tolerances: common practice, no source
    # (a simplified method is expected within ~10 % of a detailed one on heating energy).
    w = winter_sun()
    w["temp_air"] += offset
    if not sunny:
        w[["ghi", "dni", "dhi"]] = 0.0
    desc = dict(floor_area=20.0, height=2.5, weather=w, sky=None, elements=[
        Element("south", WALL, 12.5, 90, 180, windows=[Window("win", 4.5, 0.8, 0.5)]),
        Element("north", WALL, 12.5, 90, 0),
        Element("east", WALL, 10.0, 90, 90),
        Element("west", WALL, 10.0, 90, 270),
        Element("roof", ROOF, 20.0, 0, 180),
        Element("floor", FLOOR, 20.0, 180, 0)])
    results = {}
    for label in ("detailed", "iso13790"):
        net = tn.Network()
        if label == "detailed":
            z = add_room(net, "z", **desc)
            net.add_source(z.air, power=0.4 * 300.0, path="internal")
            net.add_source(z.star, power=0.6 * 300.0, path="internal")
        else:
            z = iso13790_from_room(net, "z", internal_gains=300.0, **desc)
        add_infiltration(net, z, ach=0.5)
        net.add_thermostat(z.air, heating_setpoint=20.0)
        res = tn.simulate(net, w, warmup_days=4)
        b = res.balance(z.nodes).sum()
        results[label] = b
    d, t = results["detailed"], results["iso13790"]
    print("\n", pd.DataFrame(results).round(3))
    assert d["heating"] > 10.0   # a real heating load, so the comparison means something
    assert t["heating"] == pytest.approx(d["heating"], rel=rel)
    if sunny:
        assert d["solar"] > 0 and t["solar"] > 0


def test_errors():
    with pytest.raises(NetworkError, match="mass_class"):
        iso13790_parameters(AF, H_OP, H_W, mass_class="stone")
    with pytest.raises(NetworkError, match="h_tr_op"):
        iso13790_parameters(AF, 5000.0, H_W)
    with pytest.raises(NetworkError, match="floor_area"):
        iso13790_parameters(0.0, H_OP, H_W)
    with pytest.raises(NetworkError, match="both a_m"):
        iso13790_parameters(AF, H_OP, H_W, a_m=100.0)
    with pytest.raises(NetworkError, match="negative star share"):
        iso13790_parameters(10.0, 10.0, 500.0)
    with pytest.raises(NetworkError, match="'outdoor' only"):
        iso13790_from_room(tn.Network(), "z", floor_area=10, height=2.5, elements=[
            Element("f", WALL, 10.0, 180, boundary="ground", perimeter=10)])
    with pytest.raises(NetworkError, match="heated=False"):
        iso13790_from_room(tn.Network(), "z", floor_area=10, height=2.5, heated=False,
                           elements=[Element("e", WALL, 10.0)])
    w = winter_sun(1)
    with pytest.raises(WeatherError, match="temp_sky"):
        iso13790_from_room(tn.Network(), "z", floor_area=10, height=2.5, weather=w,
                           elements=[Element("e", WALL, 10.0)])
    blind = solar.MovableShading(0.2, "temperature", on_above=24, off_below=23, node="z")
    with pytest.raises(NetworkError, match="temperature-controlled"):
        iso13790_from_room(tn.Network(), "z", floor_area=10, height=2.5, weather=w, sky=None,
                           elements=[Element("e", WALL, 10.0,
                                             windows=[Window("w", 2, 1, 0.5, shading=blind)])])
    assert math.isfinite(iso13790_parameters(AF, 0.0, H_W).h_tr_em)


def test_zone_records_are_kept_and_checked():
    from thermonet.builders.templates import iso13790_zones

    net = tn.Network()
    z = _zone(net, internal_gains=100.0)
    rec = iso13790_zones(net)["z"]
    assert rec == z and rec.parameters == z.parameters
    assert any(ln in rec.links for ln in net.links if ln.startswith("z:infiltration"))
    net.meta["builders"]["iso13790_zones"]["z"]["nodes"].append("ghost")
    with pytest.raises(NetworkError, match=r"zone 'z'.*\['ghost'\].*rebuild"):
        iso13790_zones(net)
    net.meta["builders"]["iso13790_zones"]["z"]["nodes"].pop()
    del net.meta["builders"]["iso13790_zones"]["z"]["parameters"]["c_m"]
    with pytest.raises(NetworkError, match=r"\['parameters'\] is malformed"):
        iso13790_zones(net)
