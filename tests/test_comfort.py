"""Tests of thermonet.comfort against the published definitions of the criteria.

Every check names its source. The expected numbers are worked out by hand from the published
equations in the comments beside them (docs/references.md §5 gives the provenance of each
definition: [C] confirmed, [M] from memory). Series are constructed so that the answer is
known exactly (e.g. exactly 3 % of the hours vs one hour more).

Time zone: "Etc/GMT-1" is the fixed offset UTC+1 (no daylight saving), so every local day has
24 h and every night window 9 h.
"""

from __future__ import annotations

import datetime as dt
import math

import numpy as np
import pandas as pd
import pytest

from thermonet import comfort as cf
from thermonet.errors import ScheduleError

TZ = "Etc/GMT-1"


def series(start: str, periods: int, value: float = 0.0, freq: str = "h") -> pd.Series:
    idx = pd.date_range(start, periods=periods, freq=freq, tz=TZ)
    return pd.Series(np.full(periods, float(value)), index=idx)


def year_2025(value: float = 20.0) -> pd.Series:
    # a complete hour-ending year: 2025-01-01 01:00 … 2026-01-01 00:00, 8760 rows
    return series("2025-01-01 01:00", 8760, value)


# ---------------------------------------------------------------------------------------------
# operative and mean radiant temperature
# ---------------------------------------------------------------------------------------------
def test_operative_temperature_plain_mean_low_air_speed():
    # ISO 7726:1998 / EN 16798-1:2019 (from memory): A = 0.5 for v < 0.2 m/s,
    # θop = 0.5·20 + 0.5·24 = 22 °C
    assert cf.operative_temperature(20.0, 24.0) == pytest.approx(22.0, abs=1e-12)
    # ISO 7726 / ISO 7730 (from memory): A = 0.7 for 0.6–1.0 m/s: 0.7·20 + 0.3·24 = 21.2 °C
    assert cf.operative_temperature(20.0, 24.0, weight_air=0.7) == pytest.approx(21.2, abs=1e-12)


def test_operative_temperature_series_keeps_index():
    air = series("2025-07-01 01:00", 2, 20.0)
    air.iloc[1] = 22.0
    mrt = pd.Series([24.0, 18.0], index=air.index)
    out = cf.operative_temperature(air, mrt)
    # hand: (20 + 24)/2 = 22, (22 + 18)/2 = 20 [°C]
    assert isinstance(out, pd.Series)
    assert out.index.equals(air.index)
    np.testing.assert_allclose(out.to_numpy(), [22.0, 20.0], atol=1e-12)
    # a scalar mean radiant temperature broadcasts onto the Series
    np.testing.assert_allclose(cf.operative_temperature(air, 20.0).to_numpy(), [20.0, 21.0])


def test_operative_temperature_refuses_bad_input():
    air = series("2025-07-01 01:00", 2, 20.0)
    shifted = air.copy()
    shifted.index = shifted.index + pd.Timedelta("1h")
    with pytest.raises(ScheduleError, match="mean_radiant"):
        cf.operative_temperature(air, shifted)
    with pytest.raises(ValueError, match="weight_air"):
        cf.operative_temperature(20.0, 24.0, weight_air=1.2)
    with pytest.raises(ScheduleError, match="air"):
        cf.operative_temperature(np.array([20.0, np.nan]), 24.0)


def test_mean_radiant_small_body_at_cube_centre():
    # ISO 7726:1998 (from memory): T_mr⁴ = Σ F_i T_i⁴. For a small body at the centre of a
    # cube every face is seen with view factor F = 1/6 (symmetry, exact), i.e. in proportion
    # to its area, so area weighting differs from the definition only by the linearisation
    # of T⁴, documented as well below 0.1 K for faces within ±10 K.
    faces = {"floor": 18.0, "ceiling": 19.0, "north": 20.0, "south": 26.0, "east": 21.0,
             "west": 22.0}
    df = pd.DataFrame({k: [v] for k, v in faces.items()})
    out = cf.mean_radiant_temperature(df, dict.fromkeys(faces, 9.0))
    kelvin = np.array(list(faces.values())) + 273.15
    exact = (np.mean(kelvin**4)) ** 0.25 - 273.15
    # hand: linear area-weighted mean = (18+19+20+26+21+22)/6 = 126/6 = 21.0 °C
    assert float(out.iloc[0]) == pytest.approx(21.0, abs=1e-12)
    assert abs(float(out.iloc[0]) - exact) < 0.1


def test_mean_radiant_area_weighting_unequal_areas():
    # ISO 52016-1:2017 area-weighted mean of internal surfaces (from memory):
    # sunlit floor 10 m² at 30 °C, other surfaces 50 m² at 20 °C → (300 + 1000)/60 = 21.667 °C
    df = pd.DataFrame({"rest": [20.0, 20.0], "floor": [30.0, 20.0]})
    out = cf.mean_radiant_temperature(df, {"floor": 10.0, "rest": 50.0})
    np.testing.assert_allclose(out.to_numpy(), [1300.0 / 60.0, 20.0], atol=1e-12)


def test_mean_radiant_refuses_bad_areas_and_nan():
    df = pd.DataFrame({"a": [20.0], "b": [22.0]})
    with pytest.raises(ValueError, match="b"):
        cf.mean_radiant_temperature(df, {"a": 1.0})
    with pytest.raises(ValueError, match="c"):
        cf.mean_radiant_temperature(df, {"a": 1.0, "b": 1.0, "c": 1.0})
    with pytest.raises(ValueError, match="> 0"):
        cf.mean_radiant_temperature(df, {"a": 1.0, "b": 0.0})
    with pytest.raises(ScheduleError, match="'b'"):
        cf.mean_radiant_temperature(pd.DataFrame({"a": [20.0], "b": [np.nan]}),
                                    {"a": 1.0, "b": 1.0})


# ---------------------------------------------------------------------------------------------
# fixed thresholds
# ---------------------------------------------------------------------------------------------
def test_hours_and_degree_hours_above_hourly_and_half_hourly():
    values = [24.0, 25.0, 25.5, 27.0, 30.0]
    t = series("2025-07-01 01:00", 5)
    t[:] = values
    # "above 25 °C" is strict: 25.0 does not count. Hours: 25.5, 27, 30 → 3 h.
    assert cf.hours_above(t, 25.0) == 3.0
    # degree-hours: (0.5 + 2 + 5) K × 1 h = 7.5 K·h
    assert cf.degree_hours_above(t, 25.0) == pytest.approx(7.5, abs=1e-12)
    # the same values at 30-min steps: each row weighs 0.5 h → 1.5 h and 3.75 K·h
    t30 = series("2025-07-01 00:30", 5, freq="30min")
    t30[:] = values
    assert cf.hours_above(t30, 25.0) == 1.5
    assert cf.degree_hours_above(t30, 25.0) == pytest.approx(3.75, abs=1e-12)
    # occupancy: the 30 °C row unoccupied → 2 h and 2.5 K·h
    occ = pd.Series([True, True, True, True, False], index=t.index)
    assert cf.hours_above(t, 25.0, occ) == 2.0
    assert cf.degree_hours_above(t, 25.0, occ) == pytest.approx(2.5, abs=1e-12)
    # a threshold Series: 26 °C on rows 3–4 only → 27 and 30 above by 1 and 4 K
    thr = pd.Series([30.0, 30.0, 30.0, 26.0, 26.0], index=t.index)
    assert cf.hours_above(t, thr) == 2.0
    assert cf.degree_hours_above(t, thr) == pytest.approx(5.0, abs=1e-12)


@pytest.mark.parametrize(("n_hot", "passed"), [(876, True), (877, False)])
def test_very_low_energy_overheating_frequency_10_percent(n_hot, passed):
    # Passive House criterion (docs/references.md §5.5 [C]): share of hours above 25 °C ≤ 10 %.
    # 10 % of 8760 h = 876 h: 876 h pass, 877 h fail. Rows at exactly 25.0 °C are not above.
    t = year_2025(20.0)
    t.iloc[:n_hot] = 26.0
    t.iloc[5000:6000] = 25.0
    freq = cf.overheating_frequency(t)
    assert freq == pytest.approx(n_hot / 8760, abs=1e-15)
    verdict = cf.very_low_energy_overheating(t)
    assert verdict.passed is passed
    assert verdict.limit == 0.10
    assert verdict.value == pytest.approx(n_hot / 8760, abs=1e-15)


def test_overheating_frequency_over_occupied_hours():
    t = series("2025-07-01 01:00", 10, 20.0)
    t.iloc[[0, 1, 2]] = 26.0
    occ = pd.Series([True] * 4 + [False] * 6, index=t.index)
    # 3 hot of 4 occupied hours → 0.75
    assert cf.overheating_frequency(t, occupied=occ) == pytest.approx(0.75)
    with pytest.raises(ScheduleError, match="occupied"):
        cf.overheating_frequency(t, occupied=pd.Series(False, index=t.index))


# ---------------------------------------------------------------------------------------------
# hour-ending convention: windows and days
# ---------------------------------------------------------------------------------------------
def test_night_window_hourly_hour_ending():
    # labels 21:00 … 09:00: the 22:00–07:00 window holds the hours 22–23, …, 06–07, i.e. the
    # rows labelled 23:00, 00:00, …, 07:00 (9 rows); 22:00 (21–22 h) and 08:00 (07–08 h) are out.
    idx = pd.date_range("2025-06-01 21:00", "2025-06-02 09:00", freq="h", tz=TZ)
    w = cf.in_time_window(idx, "22:00", "07:00")
    inside = [t.strftime("%H:%M") for t in idx[w.to_numpy()]]
    assert inside == ["23:00", "00:00", "01:00", "02:00", "03:00", "04:00", "05:00", "06:00",
                      "07:00"]


def test_night_window_half_hourly():
    idx = pd.date_range("2025-06-01 21:30", "2025-06-02 08:00", freq="30min", tz=TZ)
    w = cf.in_time_window(idx, dt.time(22, 0), 7.0).set_axis(idx.strftime("%H:%M"))
    # 22:00 is the interval 21:30–22:00 (out); 22:30 is 22:00–22:30 (in);
    # 07:00 is 06:30–07:00 (in); 07:30 is 07:00–07:30 (out)
    assert not w["22:00"]
    assert w["22:30"]
    assert w["07:00"]
    assert not w["07:30"]
    assert int(w.sum()) == 18  # 9 h of 30-min rows


def test_window_edges_start_inclusive_end_exclusive():
    # documented rule start <= mid-point < end, visible with a 2-h step whose mid-points fall
    # on the edges: label 23:00 = 21:00–23:00, mid 22:00 → in; label 08:00 = 06:00–08:00,
    # mid 07:00 → out
    odd = pd.date_range("2025-06-01 21:00", periods=2, freq="2h", tz=TZ)  # 21:00, 23:00
    even = pd.date_range("2025-06-02 06:00", periods=2, freq="2h", tz=TZ)  # 06:00, 08:00
    assert cf.in_time_window(odd, "22:00", "07:00").tolist() == [False, True]
    assert cf.in_time_window(even, "22:00", "07:00").tolist() == [True, False]


def test_daylight_saving_days_are_complete_and_nights_keep_3285_hours():
    # local clock of a zone with daylight saving: March 30 2025 has 23 h, October 26 has
    # 25 h; both are complete days, and the year still holds 365 × 9 = 3285 clock hours in
    # 22:00–07:00 (one night loses an hour, another gains one) — TM59 count, docs/references.md §5.4
    idx = pd.date_range("2025-01-01 01:00", "2026-01-01 00:00", freq="h", tz="Europe/London")
    t = pd.Series(20.0, index=idx)
    assert len(cf.daily_mean(t)) == 365
    assert int(cf.in_time_window(idx, "22:00", "07:00").sum()) == 3285


def test_daily_mean_row_labelled_midnight_belongs_to_previous_day():
    t = series("2025-06-01 01:00", 48, 10.0)
    t.iloc[24:] = 20.0
    # the row labelled 2025-06-02 00:00 is the hour 23:00–24:00 of June 1
    t[pd.Timestamp("2025-06-02 00:00", tz=TZ)] = 34.0
    means = cf.daily_mean(t)
    # June 1: (23·10 + 34)/24 = 264/24 = 11; June 2: 20
    assert list(means.index.date) == [dt.date(2025, 6, 1), dt.date(2025, 6, 2)]
    np.testing.assert_allclose(means.to_numpy(), [11.0, 20.0], atol=1e-12)


def test_daily_mean_refuses_partial_days_unless_allowed():
    # a series starting with the row labelled 00:00 starts with the last hour of May 31
    t = series("2025-06-01 00:00", 48, 10.0)
    with pytest.raises(ScheduleError, match="2025-05-31"):
        cf.daily_mean(t)
    means = cf.daily_mean(t, partial_days="allow")
    assert list(means.index.date) == [dt.date(2025, 5, 31), dt.date(2025, 6, 1),
                                      dt.date(2025, 6, 2)]


def test_bedroom_only_row_labelled_2300_hot_counts_in_night_window():
    # CIBSE TM59 criterion (b): 22:00–07:00. Only the row labelled 23:00 (22:00–23:00) is hot.
    out = series("2025-07-01 01:00", 48, 15.0)
    t = series("2025-07-01 01:00", 48, 20.0)
    t[pd.Timestamp("2025-07-01 23:00", tz=TZ)] = 28.0
    r = cf.tm59(t, out, room_type="bedroom")
    assert r.hours_above_26 == 1.0
    # the row labelled 22:00 is the hour 21:00–22:00: not in the window
    t2 = series("2025-07-01 01:00", 48, 20.0)
    t2[pd.Timestamp("2025-07-01 22:00", tz=TZ)] = 28.0
    assert cf.tm59(t2, out, room_type="bedroom").hours_above_26 == 0.0


def test_bedroom_night_window_half_hourly_weights():
    # 30-min rows, 2025-07-01 00:30 … 2025-07-03 00:00 (two whole days). Night window hours:
    # Jul 1 00:00–07:00 (7 h) + Jul 1 22:00 – Jul 2 07:00 (9 h) + Jul 2 22:00–24:00 (2 h) = 18 h
    out = series("2025-07-01 00:30", 96, 15.0, freq="30min")
    t = series("2025-07-01 00:30", 96, 20.0, freq="30min")
    for label in ["2025-07-01 07:00", "2025-07-01 07:30", "2025-07-01 22:00",
                  "2025-07-01 22:30"]:
        t[pd.Timestamp(label, tz=TZ)] = 28.0
    r = cf.tm59(t, out, room_type="bedroom")
    assert r.night_hours == 18.0
    # in: 07:00 (06:30–07:00) and 22:30 (22:00–22:30), 0.5 h each; out: 07:30 and 22:00
    assert r.hours_above_26 == 1.0


# ---------------------------------------------------------------------------------------------
# EN 16798-1 running mean and adaptive comfort
# ---------------------------------------------------------------------------------------------
DAILY = [10.0, 12.0, 14.0, 16.0, 18.0, 20.0, 22.0, 24.0, 26.0]


def outdoor_from_daily(daily, start="2025-06-01 01:00") -> pd.Series:
    # each day: 23 rows at m − 1 and the row labelled 00:00 of the next day at m + 23, so the
    # hour-ending daily mean is (23(m − 1) + m + 23)/24 = m, while grouping by the label date
    # would give very different means.
    rows = []
    for m in daily:
        rows += [m - 1.0] * 23 + [m + 23.0]
    idx = pd.date_range(start, periods=len(rows), freq="h", tz=TZ)
    return pd.Series(rows, index=idx)


def test_running_mean_exponential_by_hand():
    # EN 16798-1:2019 / EN 15251 (docs/references.md §5.1 [M]): θrm,n = 0.2 θed,n−1 + 0.8 θrm,n−1,
    # history before day 1 = θed,1 = 10 ("first_day"):
    #   θrm1 = 10
    #   θrm2 = 0.2·10 + 0.8·10     = 10
    #   θrm3 = 0.2·12 + 0.8·10     = 2.4 + 8      = 10.4
    #   θrm4 = 0.2·14 + 0.8·10.4   = 2.8 + 8.32   = 11.12
    #   θrm5 = 0.2·16 + 0.8·11.12  = 3.2 + 8.896  = 12.096
    #   θrm6 = 0.2·18 + 0.8·12.096 = 3.6 + 9.6768 = 13.2768
    #   θrm7 = 0.2·20 + 0.8·13.2768 = 4 + 10.62144 = 14.62144
    #   θrm8 = 0.2·22 + 0.8·14.62144 = 4.4 + 11.697152 = 16.097152
    #   θrm9 = 0.2·24 + 0.8·16.097152 = 4.8 + 12.8777216 = 17.6777216
    trm = cf.running_mean_outdoor(outdoor_from_daily(DAILY))
    expected = [10.0, 10.0, 10.4, 11.12, 12.096, 13.2768, 14.62144, 16.097152, 17.6777216]
    np.testing.assert_allclose(trm.to_numpy(), expected, rtol=0, atol=1e-9)
    assert trm.index[0] == pd.Timestamp("2025-06-01", tz=TZ)
    # EN 16798-1 comfort temperature θc = 0.33 θrm + 18.8 on day 8:
    # 0.33·16.097152 + 18.8 = 5.31206016 + 18.8 = 24.11206016 °C
    assert cf.adaptive_comfort_temperature(trm).iloc[7] == pytest.approx(24.11206016, abs=1e-9)


def test_running_mean_matches_general_series_form():
    # docs/references.md §5.1 [C] (designingbuildings.co.uk):
    # θrm = (1 − α)(θed−1 + α θed−2 + α² θed−3 + …). Day 9 with history 10 °C before day 1:
    # the finite sum over days 8 … 1 plus the
    # geometric tail of the history, 10·α⁸/(1 − α)·(1 − α).
    a = 0.8
    past = DAILY[7::-1]  # θed−1 … θed−8 seen from day 9: 24, 22, …, 10
    direct = (1 - a) * sum(a**k * v for k, v in enumerate(past)) + 10.0 * a**8
    trm = cf.running_mean_outdoor(outdoor_from_daily(DAILY))
    assert trm.iloc[8] == pytest.approx(direct, abs=1e-12)


def test_running_mean_seven_day_formula_by_hand():
    # EN 15251 / EN 16798-1 approximation (docs/references.md §5.1 [M]):
    # θrm = (θed−1 + 0.8θed−2 + 0.6θed−3 + 0.5θed−4 + 0.4θed−5 + 0.3θed−6 + 0.2θed−7)/3.8
    # day 8: (22 + 0.8·20 + 0.6·18 + 0.5·16 + 0.4·14 + 0.3·12 + 0.2·10)/3.8
    #      = (22 + 16 + 10.8 + 8 + 5.6 + 3.6 + 2)/3.8 = 68/3.8 = 17.894736842…
    # day 9: (24 + 17.6 + 12 + 9 + 6.4 + 4.2 + 2.4)/3.8 = 75.6/3.8 = 19.894736842…
    # day 3 (history 10): (12 + 0.8·10 + (0.6 + 0.5 + 0.4 + 0.3 + 0.2)·10)/3.8 = 40/3.8
    trm = cf.running_mean_outdoor(outdoor_from_daily(DAILY), method="seven_day")
    assert trm.iloc[7] == pytest.approx(68 / 3.8, abs=1e-12)
    assert trm.iloc[8] == pytest.approx(75.6 / 3.8, abs=1e-12)
    assert trm.iloc[2] == pytest.approx(40 / 3.8, abs=1e-12)
    assert trm.iloc[0] == pytest.approx(10.0, abs=1e-12)
    with pytest.raises(ValueError, match="alpha"):
        cf.running_mean_outdoor(outdoor_from_daily(DAILY), alpha=0.7, method="seven_day")


def test_running_mean_periodic_and_given_initialisation():
    # periodic two-day series a = 10, b = 19 repeating …a b a b…: by the general form
    # θrm(day 1) = (1 − α)(b + αa + α²b + α³a + …) = (b + αa)/(1 + α) = (19 + 8)/1.8 = 15
    # θrm(day 2) = (a + αb)/(1 + α) = (10 + 15.2)/1.8 = 14  (= 0.2·10 + 0.8·15)
    out = outdoor_from_daily([10.0, 19.0])
    trm = cf.running_mean_outdoor(out, init="periodic")
    np.testing.assert_allclose(trm.to_numpy(), [15.0, 14.0], atol=1e-12)
    # a known history of 12 °C: θrm1 = 12, θrm2 = 0.2·10 + 0.8·12 = 11.6
    trm = cf.running_mean_outdoor(out, init=12.0)
    np.testing.assert_allclose(trm.to_numpy(), [12.0, 11.6], atol=1e-12)


def test_daily_to_index_hour_ending():
    out = outdoor_from_daily([10.0, 19.0])
    trm = cf.running_mean_outdoor(out, init=12.0)
    hourly = cf.daily_to_index(trm, out.index)
    # the row labelled 2025-06-02 00:00 belongs to June 1 → 12.0; 01:00 belongs to June 2
    assert hourly[pd.Timestamp("2025-06-02 00:00", tz=TZ)] == pytest.approx(12.0)
    assert hourly[pd.Timestamp("2025-06-02 01:00", tz=TZ)] == pytest.approx(11.6)


def test_adaptive_limits_categories_and_applicability():
    # EN 16798-1:2019 (docs/references.md §5.2 [M]): θc(20) = 0.33·20 + 18.8 = 25.4 °C;
    # upper/lower: I 27.4/22.4, II 28.4/21.4, III 29.4/20.4 °C
    for cat, (up, low) in {"I": (27.4, 22.4), "II": (28.4, 21.4), "III": (29.4, 20.4)}.items():
        lim = cf.adaptive_limits(20.0, cat)
        assert lim["comfort"].iloc[0] == pytest.approx(25.4, abs=1e-12)
        assert lim["upper"].iloc[0] == pytest.approx(up, abs=1e-12)
        assert lim["lower"].iloc[0] == pytest.approx(low, abs=1e-12)
    # applicability: upper 10 < θrm < 30, lower 15 < θrm < 30 (strict)
    lim = cf.adaptive_limits(np.array([10.0, 10.5, 15.0, 15.5, 29.9, 30.0]))
    assert lim["upper_applicable"].tolist() == [False, True, True, True, True, False]
    assert lim["lower_applicable"].tolist() == [False, False, False, True, True, False]
    with pytest.raises(ValueError, match="category"):
        cf.adaptive_limits(20.0, "IV")


def test_adaptive_assessment_counts():
    # θrm = 20 °C every day (constant outdoor, first-day history) → limits as above.
    out = series("2025-06-01 01:00", 48, 20.0)
    t = series("2025-06-01 01:00", 48, 25.0)
    t.iloc[[3, 4, 30, 31]] = [30.0, 29.0, 21.0, 19.9]
    res = cf.adaptive_assessment(t, out, category="II")
    tab = res.table
    # cat I (27.4 / 22.4): above 2.6 + 1.6 = 4.2 K·h; below 1.4 + 2.5 = 3.9 K·h
    # cat II (28.4 / 21.4): above 1.6 + 0.6 = 2.2; below 0.4 + 1.5 = 1.9
    # cat III (29.4 / 20.4): above 0.6 (30.0 only); below 0.5 (19.9 only)
    expect = {
        "I": (2, 4.2, 2, 3.9, 44),
        "II": (2, 2.2, 2, 1.9, 44),
        "III": (1, 0.6, 1, 0.5, 46),
    }
    for cat, (ha, dha, hb, dhb, hin) in expect.items():
        row = tab.loc[cat]
        assert row["hours_above_upper"] == ha
        assert row["degree_hours_above_upper"] == pytest.approx(dha, abs=1e-9)
        assert row["hours_below_lower"] == hb
        assert row["degree_hours_below_lower"] == pytest.approx(dhb, abs=1e-9)
        assert row["hours_in_category"] == hin
        assert row["share_in_category"] == pytest.approx(hin / 48)
        assert row["hours_no_limit_applicable"] == 0
    assert res.share_in_category == pytest.approx(44 / 48)
    assert res.hourly["upper"].iloc[0] == pytest.approx(28.4, abs=1e-12)


def test_adaptive_assessment_outside_applicability():
    t = series("2025-06-01 01:00", 48, 25.0)
    t.iloc[[3, 4, 30]] = [30.0, 29.0, 15.0]
    # θrm = 12 °C: only the upper limit applies (10 < 12 < 30, not 15 < 12);
    # cat II upper = 0.33·12 + 18.8 + 3 = 25.76 °C → 30 and 29 above, 15 °C not judged
    res = cf.adaptive_assessment(t, series("2025-06-01 01:00", 48, 12.0))
    row = res.table.loc["II"]
    assert row["hours_above_upper"] == 2
    assert row["hours_below_lower"] == 0
    assert row["hours_lower_not_applicable"] == 48
    assert row["hours_upper_not_applicable"] == 0
    assert res.share_in_category == pytest.approx(46 / 48)
    # θrm = 32 °C: no limit applies
    res = cf.adaptive_assessment(t, series("2025-06-01 01:00", 48, 32.0))
    assert res.table.loc["II", "hours_no_limit_applicable"] == 48
    assert math.isnan(res.share_in_category)


# ---------------------------------------------------------------------------------------------
# CIBSE TM52
# ---------------------------------------------------------------------------------------------
# Outdoor constant 20 °C → Trm = 20 °C → Tmax = 0.33·20 + 21.8 = 28.4 °C (cat II, docs/references.md
# §5.3 [C]); Tupp = Tmax + 4 = 32.4 °C. ΔT = round(Top − Tmax), halves up (TM52 [M]).
JULY = "2025-07-01 01:00"


def tm52_case(days: int = 10):
    return series(JULY, 24 * days, 20.0), series(JULY, 24 * days, 25.0)


@pytest.mark.parametrize(("n_hot", "c1_passed"), [(6, True), (7, False)])
def test_tm52_criterion1_exactly_3_percent(n_hot, c1_passed):
    # 200 occupied hours: 3 % = 6 h pass, 7 h (3.5 %) fail. ΔT = 1 K (Top = 29.4 °C), one hour
    # per day (We = 1 per day). Unoccupied hours at ΔT = 5 K do not count in any criterion.
    out, t = tm52_case()
    occ = pd.Series(np.arange(240) < 200, index=t.index)
    for d in range(n_hot):
        t.iloc[24 * d + 12] = 29.4
    t.iloc[210:215] = 33.4
    r = cf.tm52(t, out, occupied=occ)
    assert r.assessed_hours == 200
    assert r.exceedance_hours == n_hot
    assert r.exceedance_percent == pytest.approx(100 * n_hot / 200)
    assert r.criteria[0].passed is c1_passed
    assert r.criteria[1].passed and r.criteria[2].passed
    assert r.n_failed == (0 if c1_passed else 1)
    assert r.passed  # fails only when two or more criteria fail


@pytest.mark.parametrize(("n_hot", "c1_passed"), [(110, True), (111, False)])
def test_tm52_criterion1_full_season(n_hot, c1_passed):
    # 1 May – 30 Sep = 153 days = 3672 h; 3 % = 110.16 h → 110 pass, 111 fail.
    # The series runs Apr 30 … Oct 1. Season membership by the interval mid-point:
    #   row labelled 2025-05-01 00:00 = Apr 30, 23–24 h → outside (hot, ΔT 5, must not count)
    #   row labelled 2025-10-02 00:00 = Oct 1, 23–24 h → outside (hot, must not count)
    #   row labelled 2025-10-01 00:00 = Sep 30, 23–24 h → inside (one of the hot hours)
    start = "2025-04-30 01:00"
    n = 24 * (1 + 153 + 1)
    out, t = series(start, n, 20.0), series(start, n, 25.0)
    t[pd.Timestamp("2025-05-01 00:00", tz=TZ)] = 33.4
    t[pd.Timestamp("2025-10-02 00:00", tz=TZ)] = 33.4
    t[pd.Timestamp("2025-10-01 00:00", tz=TZ)] = 29.4
    days = pd.date_range("2025-05-01 12:00", periods=n_hot - 1, freq="D", tz=TZ)
    t[days] = 29.4
    r = cf.tm52(t, out)
    assert r.assessed_hours == 3672
    assert r.exceedance_hours == n_hot
    assert r.criteria[0].passed is c1_passed
    assert r.max_delta_t == 1.0  # the ΔT = 5 K hours lie outside the season


@pytest.mark.parametrize(("extra_hour", "we", "c2_passed"), [(False, 6.0, True),
                                                             (True, 7.0, False)])
def test_tm52_criterion2_daily_weighted_exceedance(extra_hour, we, c2_passed):
    # We = Σ he·ΔT: two hours at ΔT = 3 K (Top = 31.4) → We = 6 (pass); one more hour at
    # ΔT = 1 K → 7 (fail). The rows labelled 2025-07-02 23:00 and 2025-07-03 00:00 both
    # belong to July 2 (hour ending).
    out, t = tm52_case()
    t[pd.Timestamp("2025-07-02 23:00", tz=TZ)] = 31.4
    t[pd.Timestamp("2025-07-03 00:00", tz=TZ)] = 31.4
    if extra_hour:
        t[pd.Timestamp("2025-07-02 22:00", tz=TZ)] = 29.4
    r = cf.tm52(t, out)
    assert r.worst_we == pytest.approx(we)
    assert r.worst_day == pd.Timestamp("2025-07-02", tz=TZ)
    assert r.criteria[1].passed is c2_passed
    assert r.days_we_above_6 == (0 if c2_passed else 1)
    assert r.criteria[0].passed and r.criteria[2].passed
    assert r.passed


@pytest.mark.parametrize(("top", "max_dt", "c3_passed"), [(32.8, 4.0, True),
                                                          (32.9, 5.0, False)])
def test_tm52_criterion3_rounding(top, max_dt, c3_passed):
    # a single hour with ΔT = 32.8 − 28.4 = 4.4 K → rounds to 4 → pass;
    # ΔT = 32.9 − 28.4 = 4.5 K → rounds (half up) to 5 → fail (TM52: ΔT ≤ 4 K)
    out, t = tm52_case()
    t.iloc[40] = top
    r = cf.tm52(t, out)
    assert r.max_delta_t == max_dt
    assert r.criteria[2].passed is c3_passed
    assert r.hours_above_upper == (0.0 if c3_passed else 1.0)
    assert r.criteria[0].passed and r.criteria[1].passed
    assert r.passed


def test_tm52_round_half_up_not_to_even():
    # ΔT 2.5 K → 3 (half up; Python's round(2.5) would give 2); 0.5 → 1 (counts as ≥ 1 K in
    # criterion 1); 0.45 → 0 (does not count)
    out, t = tm52_case()
    t.iloc[[10, 40, 70]] = [30.9, 28.9, 28.85]
    r = cf.tm52(t, out)
    assert r.hourly["delta_t"].iloc[[10, 40, 70]].tolist() == [3.0, 1.0, 0.0]
    assert r.exceedance_hours == 2.0


def test_tm52_two_failures_fail_overall():
    # one day: an hour at ΔT = 5 K (Top 33.4) and an hour at ΔT = 2 K (30.4): We = 7 > 6 and
    # ΔT > 4 K → criteria 2 and 3 fail → overheating
    out, t = tm52_case()
    t.iloc[[30, 31]] = [33.4, 30.4]
    r = cf.tm52(t, out)
    assert [c.passed for c in r.criteria] == [True, False, False]
    assert r.n_failed == 2
    assert not r.passed
    assert r.table().loc["TM52 criterion 2: daily weighted exceedance", "value"] == 7.0


def test_tm52_category_and_running_mean_vary():
    # outdoor: day 1 20 °C, day 2 30 °C, day 3 30 °C (first-day history):
    # Trm: day 1 20; day 2 0.2·20 + 0.8·20 = 20; day 3 0.2·30 + 0.8·20 = 22
    # Tmax cat II: 28.4, 28.4, 0.33·22 + 21.8 = 29.06 °C; cat I: 27.4 on day 1
    out = series("2025-07-01 01:00", 72, 20.0)
    out.iloc[24:] = 30.0
    t = series("2025-07-01 01:00", 72, 25.0)
    r = cf.tm52(t, out)
    np.testing.assert_allclose(r.hourly["t_max"].iloc[[0, 30, 60]], [28.4, 28.4, 29.06],
                               atol=1e-12)
    r1 = cf.tm52(t, out, category="I")
    assert r1.hourly["t_max"].iloc[0] == pytest.approx(27.4, abs=1e-12)


def test_tm52_outdoor_may_start_earlier_but_must_cover():
    out = series("2025-06-01 01:00", 24 * 40, 20.0)  # June 1 … July 10
    t = series(JULY, 24 * 5, 25.0)
    assert cf.tm52(t, out).passed
    with pytest.raises(ScheduleError, match="temp_air_outdoor"):
        cf.tm52(series(JULY, 24 * 50, 25.0), out)  # t_op runs past the end of the outdoor data
    shifted = out.copy()
    shifted.index = shifted.index + pd.Timedelta("30min")
    with pytest.raises(ScheduleError, match="temp_air_outdoor"):
        cf.tm52(t, shifted)


def test_tm52_refuses_no_occupied_season_hours():
    out = series("2025-01-01 01:00", 48, 5.0)
    t = series("2025-01-01 01:00", 48, 20.0)
    with pytest.raises(ScheduleError, match="season"):
        cf.tm52(t, out)
    # months=None assesses every row: Tmax = 0.33·5 + 21.8 = 23.45 °C, 20 °C never exceeds it
    r = cf.tm52(t, out, months=None)
    assert r.assessed_hours == 48 and r.exceedance_hours == 0 and r.passed


# ---------------------------------------------------------------------------------------------
# CIBSE TM59
# ---------------------------------------------------------------------------------------------
@pytest.mark.parametrize(("n_hot", "b_passed"), [(32, True), (33, False)])
def test_tm59_bedroom_criterion_b_32_vs_33_hours(n_hot, b_passed):
    # TM59 (docs/references.md §5.4): 22:00–07:00 window, 365 × 9 = 3285 h a year; 1 % = 32.85 h:
    # 32 h above 26 °C pass, 33 h fail. Hot rows labelled 23:00 in January/February, outside
    # the TM52 season, so criterion (a) is untouched. Outdoor 15 °C → Tmax = 0.33·15 + 21.8 =
    # 26.75 °C; 27 °C gives ΔT = round(0.25) = 0, no exceedance for (a) either way.
    out = year_2025(15.0)
    t = year_2025(20.0)
    hot = pd.date_range("2025-01-01 23:00", periods=n_hot, freq="D", tz=TZ)
    t[hot] = 27.0
    r = cf.tm59(t, out, room_type="bedroom")
    assert r.night_hours == 3285
    assert r.hours_above_26 == n_hot
    assert r.criteria[0].passed
    assert r.criteria[1].passed is b_passed
    assert r.criteria[1].limit == pytest.approx(32.85)
    assert r.passed is b_passed
    assert r.tm52.assessed_hours == 3672  # bedrooms occupied all day (TM59 default, from memory)


@pytest.mark.parametrize(("n_hot", "a_passed"), [(59, True), (60, False)])
def test_tm59_living_room_criterion_a(n_hot, a_passed):
    # TM59 criterion (a) = TM52 criterion 1 on occupied hours. Living rooms occupied
    # 09:00–22:00 (TM59 profile, from memory): 13 h a day; May–Sep 153 × 13 = 1989 h;
    # 3 % = 59.67 h → 59 pass, 60 fail. Hot hours at ΔT = 1 K (29.4 °C, Tmax 28.4) labelled
    # 12:00; hot hours labelled 23:00 (unoccupied) must not count.
    out = year_2025(20.0)
    t = year_2025(25.0)
    t[pd.date_range("2025-05-01 12:00", periods=n_hot, freq="D", tz=TZ)] = 29.4
    t[pd.date_range("2025-06-01 23:00", periods=90, freq="D", tz=TZ)] = 29.4
    r = cf.tm59(t, out, room_type="living")
    assert r.occupied_hours == 13 * 365
    assert r.tm52.assessed_hours == 1989
    assert r.tm52.exceedance_hours == n_hot
    assert len(r.criteria) == 1
    assert r.passed is a_passed


@pytest.mark.parametrize(("n_hot", "passed"), [(142, True), (143, False)])
def test_tm59_mechanical_26C_3_percent(n_hot, passed):
    # TM59 mechanically ventilated homes (CIBSE Guide A fixed criterion, from memory):
    # θop > 26 °C for no more than 3 % of annual occupied hours. Living room 13 × 365 = 4745 h;
    # 3 % = 142.35 h → 142 pass, 143 fail. Rows at exactly 26.0 °C do not exceed 26 °C.
    t = year_2025(24.0)
    t[pd.date_range("2025-01-01 12:00", periods=n_hot, freq="D", tz=TZ)] = 26.5
    t[pd.date_range("2025-01-01 15:00", periods=300, freq="D", tz=TZ)] = 26.0
    r = cf.tm59(t, None, room_type="living", ventilation="mechanical")
    assert r.hours_above_26 == n_hot
    assert r.passed is passed


def test_tm59_user_occupancy_and_errors():
    out = series(JULY, 48, 20.0)
    t = series(JULY, 48, 25.0)
    t.iloc[[2, 30]] = 29.4  # ΔT = 1 K
    occ = pd.Series(np.arange(48) >= 24, index=t.index)  # only day 2 occupied
    r = cf.tm59(t, out, room_type="kitchen", occupied=occ)
    assert r.occupied_hours == 24
    assert r.tm52.exceedance_hours == 1  # only the hour on day 2
    with pytest.raises(ValueError, match="temp_air_outdoor"):
        cf.tm59(t, None, room_type="living")
    with pytest.raises(ValueError, match="room_type"):
        cf.tm59(t, out, room_type="attic")
    with pytest.raises(ValueError, match="ventilation"):
        cf.tm59(t, out, ventilation="hybrid")


# ---------------------------------------------------------------------------------------------
# demand summary
# ---------------------------------------------------------------------------------------------
def test_demand_summary_energy_peak_and_dates():
    heat = year_2025(0.0)
    heat.iloc[:10] = 1000.0
    heat[pd.Timestamp("2025-01-02 00:00", tz=TZ)] = 2500.0  # the last hour of January 1
    cool = year_2025(0.0)
    cool.iloc[4000:4004] = -3000.0  # project sign: heat into the zone negative
    s = cf.demand_summary(heat, cool, 50.0)
    # 10 h × 1000 W + 1 h × 2500 W = 12 500 Wh = 12.5 kWh; per 50 m²: 0.25 kWh/m²
    assert s.heating_kwh == pytest.approx(12.5)
    assert s.heating_kwh_m2 == pytest.approx(0.25)
    assert s.heating_peak_w == 2500.0
    assert s.heating_peak_w_m2 == pytest.approx(50.0)
    assert s.heating_peak_time == pd.Timestamp("2025-01-02 00:00", tz=TZ)
    assert s.heating_peak_date == dt.date(2025, 1, 1)
    # cooling as heat removed: 4 h × 3000 W = 12 kWh
    assert s.cooling_kwh == pytest.approx(12.0)
    assert s.cooling_peak_w == 3000.0
    assert s.period_hours == 8760
    assert s.very_low_energy is None


def test_demand_summary_half_hourly_energy():
    heat = series("2025-01-01 00:30", 96, 0.0, freq="30min")
    heat.iloc[:4] = 1000.0
    # 4 rows × 0.5 h × 1000 W = 2 kWh
    assert cf.demand_summary(heat, None, 10.0).heating_kwh == pytest.approx(2.0)


@pytest.mark.parametrize(
    ("hours", "power", "extra_w", "demand_ok", "load_ok"),
    [
        (1000, 1500.0, 0.0, True, False),  # 1500 kWh → 15 kWh/m² pass; 15 W/m² fail
        (1000, 1500.0, 1000.0, False, False),  # 1501 kWh → 15.01 fail; 15 W/m² fail
        (2000, 1000.0, 0.0, False, True),  # 2000 kWh → 20 fail; 10 W/m² pass
    ],
)
def test_demand_summary_very_low_energy_criteria(hours, power, extra_w, demand_ok, load_ok):
    # Passive House (docs/references.md §5.5 [C]): heating demand ≤ 15 kWh/(m²a) OR load ≤ 10 W/m²;
    # floor area 100 m²
    heat = year_2025(0.0)
    heat.iloc[:hours] = power
    heat.iloc[5000] = extra_w
    s = cf.demand_summary(heat, None, 100.0, very_low_energy=True)
    demand, load = s.very_low_energy
    assert demand.passed is demand_ok
    assert load.passed is load_ok
    assert s.very_low_energy_passed is (demand_ok or load_ok)


def test_demand_summary_refuses_bad_input():
    heat = year_2025(100.0)
    mixed = year_2025(0.0)
    mixed.iloc[0], mixed.iloc[1] = 10.0, -10.0
    with pytest.raises(ScheduleError, match="cooling_w"):
        cf.demand_summary(heat, mixed, 100.0)
    neg = heat.copy()
    neg.iloc[3] = -1.0
    with pytest.raises(ScheduleError, match="heating_w"):
        cf.demand_summary(neg, None, 100.0)
    with pytest.raises(ValueError, match="floor_area"):
        cf.demand_summary(heat, None, 0.0)
    with pytest.raises(ScheduleError, match="one year"):
        cf.demand_summary(heat.iloc[:48], None, 100.0, very_low_energy=True)


# ---------------------------------------------------------------------------------------------
# input validation
# ---------------------------------------------------------------------------------------------
def test_validation_of_time_series():
    t = series(JULY, 24, 25.0)
    naive = t.tz_localize(None)
    with pytest.raises(ScheduleError, match="temp.*tz-naive"):
        cf.hours_above(naive, 25.0)
    irregular = t.drop(t.index[5])
    with pytest.raises(ScheduleError, match="temp.*constant step"):
        cf.hours_above(irregular, 25.0)
    nan = t.copy()
    nan.iloc[3] = np.nan
    with pytest.raises(ScheduleError, match="temp.*NaN"):
        cf.degree_hours_above(nan, 25.0)
    with pytest.raises(ScheduleError, match="temp.*not increasing"):
        cf.hours_above(t.iloc[::-1], 25.0)
    with pytest.raises(ScheduleError, match="duplicate"):
        cf.hours_above(pd.concat([t, t.iloc[-1:]]), 25.0)
    with pytest.raises(ScheduleError, match="at least 2 rows"):
        cf.hours_above(t.iloc[:1], 25.0)
    with pytest.raises(TypeError, match="temp"):
        cf.hours_above(t.to_numpy(), 25.0)
    with pytest.raises(ScheduleError, match="numbers"):
        cf.hours_above(t > 20, 25.0)


def test_validation_of_occupied_and_alignment():
    t = series(JULY, 24, 25.0)
    with pytest.raises(ScheduleError, match="occupied.*boolean"):
        cf.hours_above(t, 25.0, occupied=pd.Series(1, index=t.index))
    with pytest.raises(ScheduleError, match="occupied.*same index"):
        cf.hours_above(t, 25.0, occupied=pd.Series(True, index=t.index[:-1]))
    other_zone = pd.Series(True, index=t.index.tz_convert("UTC"))  # same instants, other zone
    with pytest.raises(ScheduleError, match="occupied"):
        cf.hours_above(t, 25.0, occupied=other_zone)
    with pytest.raises(ScheduleError, match="missing"):
        cf.hours_above(t, 25.0, occupied=pd.Series([True] * 23 + [None], index=t.index,
                                                   dtype="boolean"))
    with pytest.raises(TypeError, match="occupied"):
        cf.hours_above(t, 25.0, occupied=np.ones(24, dtype=bool))
    with pytest.raises(ScheduleError, match="threshold"):
        cf.hours_above(t, pd.Series(25.0, index=t.index[:-1]), None)
    with pytest.raises(ValueError, match="init"):
        cf.running_mean_outdoor(t, init="warm")
    with pytest.raises(ValueError, match="start and end"):
        cf.in_time_window(t.index, "07:00", "07:00")
