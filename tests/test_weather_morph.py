"""Warmer climates: shift/stretch morphing and hot spells on real typical-year data.

Reference data: NREL TMY3 station 723170 (Greensboro, NC), shipped with pvlib as
pvlib/data/723170TYA.CSV and read in place through thermonet.weather.read_tmy3.

Method: Belcher, S.E., Hacker, J.N., Powell, D.S. (2005), Constructing design weather data
for future climates, BSERT 26(1) 49–61: T = T0 + ΔT_m + α_m (T0 − ⟨T0⟩_m),
α_m = (ΔT_max,m − ΔT_min,m)/(⟨T0,max⟩_m − ⟨T0,min⟩_m). The monthly statistics the checks
compare are computed here independently with pandas (group by the interval mid-point's month
and day, hour-ending labels), not with the module's helpers. The monthly changes are inputs
chosen for the test, not check values.
"""

from __future__ import annotations

import math
import pathlib

import numpy as np
import pandas as pd
import pvlib
import pytest

from thermonet import weather as w
from thermonet.errors import WeatherError

TMY3_FILE = pathlib.Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"

# monthly changes [K] given to the morph (test inputs)
D_MEAN = np.array([1.2, 1.0, 1.5, 1.8, 2.0, 2.6, 3.1, 3.0, 2.4, 1.9, 1.4, 1.1])
D_MAX = np.array([1.5, 1.2, 1.9, 2.4, 2.8, 3.5, 4.0, 3.9, 3.0, 2.2, 1.6, 1.3])
D_MIN = np.array([1.0, 0.9, 1.2, 1.3, 1.5, 1.9, 2.3, 2.2, 1.9, 1.6, 1.2, 1.0])


@pytest.fixture(scope="module")
def tmy():
    return w.read_tmy3(TMY3_FILE)


def stats_by_hand(df, column="temp_air"):
    """Monthly mean, mean daily max and min, grouping rows by their interval mid-points."""
    mid = df.index - pd.Timedelta("1h") / 2
    t = pd.Series(df[column].to_numpy(), index=mid)
    daily_max = t.resample("D").max()
    daily_min = t.resample("D").min()
    return pd.DataFrame({
        "mean": t.resample("MS").mean().to_numpy(),
        "max": daily_max.resample("MS").mean().to_numpy(),
        "min": daily_min.resample("MS").mean().to_numpy(),
    }, index=range(1, 13))


def test_morph_shifts_monthly_means_exactly(tmy):
    before = stats_by_hand(tmy)
    morphed = w.morph_shift_stretch(tmy, D_MEAN, D_MAX, D_MIN)
    after = stats_by_hand(morphed)
    # Belcher et al. (2005): the monthly mean moves by exactly ΔT_m
    np.testing.assert_allclose(after["mean"] - before["mean"], D_MEAN, atol=1e-10)
    # and the monthly mean daily range by exactly ΔT_max − ΔT_min (stretch α_m)
    np.testing.assert_allclose((after["max"] - after["min"]) - (before["max"] - before["min"]),
                               D_MAX - D_MIN, atol=1e-10)
    # the stretch factor is α_m = (ΔT_max − ΔT_min)/(⟨T_max⟩ − ⟨T_min⟩) of the file
    np.testing.assert_allclose(morphed.attrs["morph"]["alpha"],
                               (D_MAX - D_MIN) / (before["max"] - before["min"]), rtol=1e-12)
    assert "Belcher" in morphed.attrs["source"]
    # other columns are untouched
    pd.testing.assert_series_equal(morphed["wind_speed"], tmy["wind_speed"])
    pd.testing.assert_series_equal(morphed["ghi"], tmy["ghi"])


def test_stretch_reproduces_monthly_max_and_min_changes(tmy):
    # with the monthly mean change consistent with ΔT_max and ΔT_min (Belcher's relation
    # ΔT_max = ΔT_m + α_m(⟨T_max⟩ − ⟨T⟩), worked here from the hand statistics) the morph
    # moves the mean daily maximum by ΔT_max and the minimum by ΔT_min exactly
    before = stats_by_hand(tmy)
    alpha = (D_MAX - D_MIN) / (before["max"] - before["min"]).to_numpy()
    d_mean = D_MAX - alpha * (before["max"] - before["mean"]).to_numpy()
    np.testing.assert_allclose(w.mean_change_for(tmy, D_MAX, D_MIN), d_mean, rtol=1e-12)
    after = stats_by_hand(w.morph_shift_stretch(tmy, d_mean, D_MAX, D_MIN))
    np.testing.assert_allclose(after["max"] - before["max"], D_MAX, atol=1e-10)
    np.testing.assert_allclose(after["min"] - before["min"], D_MIN, atol=1e-10)


def test_zero_change_is_the_identity(tmy):
    same = w.morph_shift_stretch(tmy, 0.0, 0.0, 0.0)
    np.testing.assert_allclose(same["temp_air"], tmy["temp_air"], atol=1e-12)
    np.testing.assert_allclose(same["temp_dew"], tmy["temp_dew"], atol=1e-9)


def magnus_es(t):
    # saturation vapour pressure over water, Magnus form with the WMO coefficients
    # 6.112 hPa, 17.62, 243.12 °C (WMO-No. 8 (2023), quoted by pvlib.atmosphere)
    return 6.112 * np.exp(17.62 * t / (243.12 + t))


def test_humidity_handled_consistently(tmy):
    # "relative": relative humidity kept, dew point moved: e'/e_s(T') = e/e_s(T)
    m = w.morph_shift_stretch(tmy, D_MEAN, D_MAX, D_MIN, humidity="relative")
    rh_before = magnus_es(tmy["temp_dew"]) / magnus_es(tmy["temp_air"])
    rh_after = magnus_es(m["temp_dew"]) / magnus_es(m["temp_air"])
    np.testing.assert_allclose(rh_after, rh_before, rtol=1e-9)
    pd.testing.assert_series_equal(m["relative_humidity"], tmy["relative_humidity"])
    assert (m["temp_dew"] > tmy["temp_dew"]).mean() > 0.99      # warmer air holds more water
    # "dew_point": vapour pressure kept, RH scaled by e_s(T)/e_s(T')
    d = w.morph_shift_stretch(tmy, D_MEAN, D_MAX, D_MIN, humidity="dew_point")
    pd.testing.assert_series_equal(d["temp_dew"], tmy["temp_dew"])
    np.testing.assert_allclose(
        d["relative_humidity"],
        tmy["relative_humidity"] * magnus_es(tmy["temp_air"]) / magnus_es(d["temp_air"]),
        rtol=1e-9)


def test_irradiance_stretch(tmy):
    frac = np.linspace(-0.05, 0.08, 12)
    m = w.morph_shift_stretch(tmy, D_MEAN, D_MAX, D_MIN, irradiance_change=frac)
    mid = tmy.index - pd.Timedelta("30min")
    for col in ("ghi", "dni", "dhi"):
        before = pd.Series(tmy[col].to_numpy(), index=mid).resample("MS").mean().to_numpy()
        after = pd.Series(m[col].to_numpy(), index=mid).resample("MS").mean().to_numpy()
        np.testing.assert_allclose(after, before * (1.0 + frac), rtol=1e-12)
    # diffuse fraction kept where there is light
    lit = tmy["ghi"] > 0
    np.testing.assert_allclose((m["dhi"] / m["ghi"])[lit], (tmy["dhi"] / tmy["ghi"])[lit],
                               rtol=1e-12)


def test_monthly_changes_as_mapping(tmy):
    by_month = {m + 1: float(v) for m, v in enumerate(D_MEAN)}
    a = w.morph_shift_stretch(tmy, by_month, D_MAX, D_MIN)
    b = w.morph_shift_stretch(tmy, D_MEAN, D_MAX, D_MIN)
    pd.testing.assert_frame_equal(a, b)


def test_morph_refuses_what_it_cannot_do(tmy):
    with pytest.raises(WeatherError, match="12 monthly values"):
        w.morph_shift_stretch(tmy, [1.0, 2.0], 1.0, 1.0)
    with pytest.raises(WeatherError, match="α"):
        # ΔT_max − ΔT_min of −20 K would turn January's daily cycle upside down
        w.morph_shift_stretch(tmy, 1.0, -10.0, 10.0)
    with pytest.raises(WeatherError, match="temp_sky"):
        w.morph_shift_stretch(w.add_sky_temperature(tmy), 1.0, 1.0, 1.0)
    with pytest.raises(WeatherError, match="whole days"):
        w.morph_shift_stretch(tmy.iloc[5:], 1.0, 1.0, 1.0)
    with pytest.raises(WeatherError, match="humidity"):
        w.morph_shift_stretch(tmy, 1.0, 1.0, 1.0, humidity="absolute")


def test_hottest_spell_against_brute_force(tmy):
    mid = tmy.index - pd.Timedelta("30min")
    daily = pd.Series(tmy["temp_air"].to_numpy(), index=mid).resample("D").mean()
    best, best_start = -math.inf, None
    for i in range(len(daily) - 5 + 1):         # every 5-day window, one by one
        m = float(np.mean(daily.to_numpy()[i:i + 5]))
        if m > best + 1e-12:
            best, best_start = m, daily.index[i]
    spell = w.hottest_spell(tmy, 5)
    assert spell.attrs["spell"]["first_day"] == best_start.date().isoformat()
    assert spell.attrs["spell"]["mean"] == pytest.approx(best, abs=1e-12)
    assert len(spell) == 5 * 24
    assert spell["temp_air"].mean() == pytest.approx(best, abs=1e-12)


def test_civil_time_zone_with_daylight_saving(tmy):
    # the same year on New York civil time: days of 23 and 25 rows are still whole days
    civil = tmy.tz_convert("America/New_York")
    spell = w.hottest_spell(civil, 5)
    assert spell.attrs["spell"]["mean"] == pytest.approx(
        w.hottest_spell(tmy, 5).attrs["spell"]["mean"], abs=0.2)
    morphed = w.morph_shift_stretch(civil, D_MEAN, D_MAX, D_MIN)
    mid = civil.index - pd.Timedelta("30min")
    shift = (pd.Series(morphed["temp_air"].to_numpy() - civil["temp_air"].to_numpy(), index=mid)
             .groupby(mid.month).mean())
    np.testing.assert_allclose(shift.to_numpy(), D_MEAN, atol=1e-10)


def test_insert_warm_spell_plateau_and_smooth_edges(tmy):
    start, days, offset, ramp = "2025-07-20", 4, 5.0, 12
    hot = w.insert_warm_spell(tmy, start, days, offset, ramp_hours=ramp)
    added = (hot["temp_air"] - tmy["temp_air"]).to_numpy()
    mid = tmy.index - pd.Timedelta("30min")
    t0 = pd.Timestamp(start, tz=tmy.index.tz)
    t1 = t0 + pd.Timedelta(days=days)
    plateau = (mid >= t0) & (mid < t1)
    outside = (mid < t0 - pd.Timedelta(hours=ramp)) | (mid > t1 + pd.Timedelta(hours=ramp))
    np.testing.assert_allclose(added[plateau], offset, atol=1e-12)
    assert plateau.sum() == days * 24
    np.testing.assert_array_equal(added[outside], 0.0)
    edges = ~plateau & ~outside
    assert edges.sum() == 2 * ramp and np.all((added[edges] > 0) & (added[edges] < offset))
    # raised cosine ½A(1 − cos(πx)): steepest slope πA/2 per ramp length, A = 5 K over 12 h
    assert np.abs(np.diff(added)).max() <= math.pi * offset / (2 * ramp) + 1e-12
    # the rising edge mirrors the falling one
    rise = added[(mid < t0) & edges]
    fall = added[(mid >= t1) & edges]
    np.testing.assert_allclose(rise, fall[::-1], atol=1e-12)
    with pytest.raises(WeatherError, match="does not lie within"):
        w.insert_warm_spell(tmy, "2025-12-30", 3, 5.0)
