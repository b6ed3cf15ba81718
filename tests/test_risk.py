"""Overheating risk under uncertainty (thermonet.studies.risk) and comfort outputs per
variant (thermonet.studies.outputs).

Reference values come from outside the code under test:

* an analytic toy: one air node at steady state, T = T_out + w + Q/UA (the steady state of a
  single RC node, heat balance UA (T − T_out) = Q), with the gain Q uniform on 0–1000 W and
  the warming w uniform on 0–2 K, so that P(T > 26 °C) = 1 − 5·UA/1000 exactly (derivation
  beside the test);
* published confidence limits of Newcombe (1998), and the exact coverage of the binomial
  intervals computed from the binomial distribution (scipy.stats.binom);
* the single-run functions of thermonet.comfort (TM52, TM59, adaptive, hours above) and
  Results.summary() on the same series.
"""

from __future__ import annotations

import math

import matplotlib.pyplot as plt
import numpy as np
import pandas as pd
import pytest
from scipy import stats

import thermonet as tn
from thermonet import comfort, studies
from thermonet.constants import CAUTION
from thermonet.errors import StudyError, StudyWarning

TZ = "Etc/GMT-1"

# ----------------------------------------------------------------- the analytic toy
TOY_IDX = pd.date_range("2025-07-01 01:00", periods=48, freq="h", tz=TZ)
TOY_WEATHER = pd.DataFrame({"temp_air": np.full(48, 20.0)}, index=TOY_IDX)
GAIN = (0.0, 1000.0)      # [W], uniform
WARM = (0.0, 2.0)         # [K], uniform
OPTIONS = {"light": {"ua": 50.0}, "heavy": {"ua": 100.0}}


def toy_room(ua=50.0, gain=0.0, colour=0.0):
    """One air node between outdoor air (20 °C) and a constant gain; ``colour`` is unused."""
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1e5)
    net.add_link("out", "room", conductance=ua, path="opaque")
    net.add_source("room", power=gain, path="internal")
    return net


def exact_probability(ua: float) -> float:
    """P(20 + w + Q/UA > 26) for Q ~ U(0, 1000) W and w ~ U(0, 2) K, independent.

    Given w, the run fails when Q > UA (6 − w), probability 1 − UA (6 − w)/1000 (while
    UA (6 − w) lies in 0 … 1000, true for UA ≤ 166 W/K); the mean over w (E w = 1 K) is
    1 − 5 UA/1000: 0.75 for UA = 50 W/K, 0.50 for UA = 100 W/K.
    """
    assert ua * 6.0 <= 1000.0
    return 1.0 - 5.0 * ua / 1000.0


def toy_risk(**kw):
    args = dict(criteria=[studies.hours_above_criterion(26.0, max_hours=0.0)],
                warming=WARM, n_samples=64, seed=11, warmup_days=0.0, progress=False)
    args.update(kw)
    return studies.overheating_risk(toy_room, OPTIONS, {"gain": GAIN, "colour": (0.0, 1.0)},
                                    TOY_WEATHER, temperature="room", **args)


@pytest.fixture(scope="module")
def toy():
    return toy_risk()


def test_toy_probability_within_its_interval(toy):
    r = toy.risk.set_index("option")
    for option, fixed in OPTIONS.items():
        p = exact_probability(fixed["ua"])
        row = r.loc[option]
        assert row["n_runs"] == 64 and row["n_errors"] == 0
        assert row["ci_low"] <= p <= row["ci_high"], (option, p, row)
        assert row["probability"] == row["n_failed"] / row["n_runs"]
    # the heavier option is safer, by about the exact difference of 0.25
    diff = r.loc["light", "probability"] - r.loc["heavy", "probability"]
    assert abs(diff - 0.25) < 0.1


def test_toy_each_run_matches_the_steady_state(toy):
    runs = toy.runs
    ua = runs["ua"].to_numpy()
    t_room = 20.0 + runs[studies.WARMING].to_numpy() + runs["gain"].to_numpy() / ua
    hot = t_room > 26.0
    # every hour of a run sits at its steady state: 48 h above 26 °C or none
    np.testing.assert_allclose(runs["hours_above_26_h"], np.where(hot, 48.0, 0.0))
    assert (runs["failed:hours_above_26_h"].to_numpy(dtype=bool) == hot).all()


def test_toy_drivers_rank_the_gain_first_and_not_the_unused_input(toy):
    d = toy.drivers
    for option in OPTIONS:
        sub = d[(d["option"] == option)].set_index("input")
        assert sub.index[0] == "gain"
        assert sub.loc["gain", "rank"] == 1
        assert sub.loc["gain", "direction"] == "higher fails more"
        assert sub.loc["gain", "ks_pvalue"] < 1e-6
        # colour does not enter the model: no evidence that it drives failure
        assert sub.loc["colour", "ks_pvalue"] > 0.05
        assert sub.loc["colour", "ks_statistic"] < sub.loc["gain", "ks_statistic"]


@pytest.mark.parametrize("sampler", ["sobol", "random"])
def test_toy_other_samplers_and_clopper_pearson(sampler):
    r = toy_risk(sampler=sampler, interval="clopper-pearson", seed=5).risk.set_index("option")
    for option, fixed in OPTIONS.items():
        p = exact_probability(fixed["ua"])
        assert r.loc[option, "ci_low"] <= p <= r.loc[option, "ci_high"]
        assert r.loc[option, "interval"] == "clopper-pearson"


def test_same_seed_same_tables_and_recorded_seed():
    a, b = toy_risk(seed=123, n_samples=16), toy_risk(seed=123, n_samples=16)
    pd.testing.assert_frame_equal(a.runs, b.runs)
    pd.testing.assert_frame_equal(a.risk, b.risk)
    pd.testing.assert_frame_equal(a.drivers, b.drivers)
    assert a.summary() == b.summary()
    c = toy_risk(seed=124, n_samples=16)
    assert not np.array_equal(a.samples.to_numpy(), c.samples.to_numpy())
    # seed=None draws a seed and records it: giving it back repeats the study
    d = toy_risk(seed=None, n_samples=16)
    pd.testing.assert_frame_equal(d.runs, toy_risk(seed=d.seed, n_samples=16).runs)


def test_samples_are_common_to_the_options_and_stratified(toy):
    runs = toy.runs
    light = runs.loc["light", ["gain", "colour", studies.WARMING]].to_numpy()
    heavy = runs.loc["heavy", ["gain", "colour", studies.WARMING]].to_numpy()
    np.testing.assert_array_equal(light, heavy)
    # Latin hypercube (McKay et al. 1979): one sample in each of the n equal-probability
    # strata of every input
    for col, (lo, hi) in (("gain", GAIN), (studies.WARMING, WARM)):
        strata = np.floor((toy.samples[col].to_numpy() - lo) / (hi - lo) * 64).astype(int)
        assert sorted(strata) == list(range(64))


def test_sample_inputs_maps_distributions_by_their_inverse_cdf():
    s = studies.sample_inputs({"g": stats.norm(0.5, 0.05), "n50": (1.0, 3.0)}, 256,
                              sampler="sobol", seed=2)
    # scrambled Sobol' points: means close to the distributions' means (0.5, 2.0)
    assert abs(s["g"].mean() - 0.5) < 0.005 and abs(s["n50"].mean() - 2.0) < 0.01
    assert s["n50"].between(1.0, 3.0).all()


# ------------------------------------------------------------------ intervals
@pytest.mark.parametrize("k, n, wilson, exact", [
    # Newcombe (1998), Statistics in Medicine 17:857–872, Table II, methods 3 (Wilson score)
    # and 5 (Clopper–Pearson), from memory.
    (81, 263, (0.2553, 0.3662), (0.2527, 0.3676)),
    (15, 148, (0.0624, 0.1605), (0.0578, 0.1617)),
    (0, 20, (0.0, 0.1611), (0.0, 0.1684)),
    (1, 29, (0.0061, 0.1718), (0.0009, 0.1776)),
])
def test_binomial_interval_published_values(k, n, wilson, exact):
    np.testing.assert_allclose(studies.binomial_interval(k, n, 0.95, "wilson"), wilson,
                               atol=6e-5)
    np.testing.assert_allclose(studies.binomial_interval(k, n, 0.95, "clopper-pearson"), exact,
                               atol=6e-5)


def test_interval_coverage_from_the_binomial_distribution():
    """Exact coverage Σ_k P(K = k)·[p ∈ CI(k)] over a grid of true probabilities."""
    n = 64
    ps = np.linspace(0.05, 0.95, 46)
    ks = np.arange(n + 1)
    for method in ("wilson", "clopper-pearson"):
        cis = np.array([studies.binomial_interval(int(k), n, 0.95, method) for k in ks])
        cov = np.array([stats.binom.pmf(ks, n, p)[(cis[:, 0] <= p) & (p <= cis[:, 1])].sum()
                        for p in ps])
        if method == "clopper-pearson":
            # never below the nominal level (Clopper & Pearson 1934, by construction)
            assert cov.min() >= 0.95 - 1e-12
        else:
            # close to nominal on average (Brown, Cai & DasGupta 2001, Statistical Science
            # 16:101–133, from memory); the floor of 0.92 is a sanity bound (common
            # practice, no source)
            assert abs(cov.mean() - 0.95) < 0.005 and cov.min() > 0.92


# ------------------------------------------------------------- comfort per variant
H = 24 * 21
IDX = pd.date_range("2025-06-10 01:00", periods=H, freq="h", tz=TZ)
_t = np.arange(H)
_rng = np.random.default_rng(5)
WEATHER = pd.DataFrame({
    "temp_air": 18 + 6 * np.sin(2 * np.pi * (_t - 9) / 24) + 3 * np.sin(2 * np.pi * _t / 216)
    + _rng.normal(0.0, 0.5, H),
    "ghi": np.clip(750 * np.sin(2 * np.pi * (_t - 6) / 24), 0, None) * _rng.uniform(0.5, 1, H),
}, index=IDX)
OCCUPIED = ("09:00", "22:00")


def sunny_room(aperture=1.0, gains=150.0, heat=False):
    """Air, a massless wall surface taking the sun, a slab; optional heating to 20 °C."""
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("air", kind="air", capacitance=2.5e5, volume=75.0)
    net.add_node("wall", kind="surface", capacitance=0.0)
    net.add_node("slab", kind="mass", capacitance=6e6)
    net.add_link("air", "wall", conductance=150.0, path="internal")
    net.add_link("wall", "slab", conductance=300.0, path="internal")
    net.add_link("out", "air", conductance=25.0, path="opaque")
    net.add_airflow("out", "air", ach=0.5, path="infiltration")
    net.add_source("wall", power=WEATHER["ghi"] * aperture, path="solar")
    net.add_source("air", power=gains, path="internal")
    if heat:
        net.add_thermostat("air", heating_setpoint=22.0, max_heating_w=2000.0)
    return net


def operative(res, handles=None):
    m = res.mean_temperatures
    return comfort.operative_temperature(m["air"], m["wall"])


def test_outputs_per_variant_equal_the_single_run_functions():
    params = pd.DataFrame({"aperture": [0.6, 0.9, 1.2]})
    traces = studies.variant_traces(sunny_room, params, WEATHER, warmup_days=3)
    table = studies.outputs_table(traces, operative, WEATHER, occupied=OCCUPIED,
                                  tm59_room="bedroom")
    occ = comfort.in_time_window(IDX, *OCCUPIED)
    out = WEATHER["temp_air"]
    for label, res in traces.items():
        top = operative(res)
        row = table.loc[label]
        r52 = comfort.tm52(top, out, occ, "II")
        assert row["tm52_c1_exceedance_pct"] == r52.criteria[0].value
        assert row["tm52_c2_worst_we_kelvin_hours"] == r52.worst_we
        assert row["tm52_c3_max_dt_k"] == r52.max_delta_t
        assert row["tm52_failed_criteria"] == r52.n_failed
        assert row["tm52_ok"] == r52.passed
        r59 = comfort.tm59(top, out, "bedroom", occ, "natural")
        assert row["tm59_a_pct"] == r59.criteria[0].value
        assert row["tm59_b_night_hours_above_26_h"] == r59.hours_above_26
        assert row["tm59_b_limit_h"] == 0.01 * r59.night_hours
        assert row["tm59_ok"] == r59.passed
        assert row["hours_above_26_h"] == comfort.hours_above(top, 26.0, occ)
        dh = comfort.degree_hours_above(top, 25.0, occ)
        assert row["degree_hours_above_25_kelvin_hours"] == dh
        ad = comfort.adaptive_assessment(top, out, "II", occ).table.loc["II"]
        assert row["adaptive_ii_hours_above_h"] == ad["hours_above_upper"]
        assert row["occupied_hours_h"] == float(occ.sum())
    # the three variants are judged differently (the comparison can fail)
    assert table["tm52_ok"].tolist() == [True, False, False]


def test_tm59_living_room_and_mechanical_ventilation():
    res = tn.simulate(sunny_room(0.9), WEATHER, warmup_days=3)
    top = operative(res)
    living = studies.comfort_outputs(top, WEATHER["temp_air"], tm59_room="living")
    # occupied=None: TM59 uses its own living-room occupancy
    r59 = comfort.tm59(top, WEATHER["temp_air"], "living")
    assert living["tm59_a_pct"] == r59.criteria[0].value and living["tm59_ok"] == r59.passed
    assert "tm59_b_ok" not in living
    mech = studies.comfort_outputs(top, None, tm59_room="living", tm59_ventilation="mechanical",
                                   adaptive_category=None, tm52_category=None,
                                   prefix="living:")
    m59 = comfort.tm59(top, None, "living", ventilation="mechanical")
    assert mech["living:tm59_mech_hours_above_26_pct"] == m59.criteria[0].value
    assert mech["living:tm59_ok"] == m59.passed


def test_energy_outputs_equal_results_summary():
    res = tn.simulate(sunny_room(0.3, heat=True), WEATHER, warmup_days=3)
    e = studies.energy_outputs(res, floor_area=25.0)
    s = res.summary()
    assert s["heating_kwh"] > 1.0   # the thermostat works in this case
    for k in ("heating_kwh", "cooling_kwh", "peak_heating_w", "peak_cooling_w"):
        assert math.isclose(e[k], s[k], rel_tol=1e-12, abs_tol=1e-9), k
    assert math.isclose(e["heating_kwh_m2"], s["heating_kwh"] / 25.0, rel_tol=1e-12)


def test_tm52_without_summer_is_not_judged():
    idx = pd.date_range("2025-01-10 01:00", periods=72, freq="h", tz=TZ)
    t = pd.Series(22.0, index=idx)
    out = studies.comfort_outputs(t, pd.Series(5.0, index=idx))
    assert math.isnan(out["tm52_c1_exceedance_pct"]) and out["tm52_ok"] is pd.NA


def test_risk_tm52_values_equal_the_single_run_function():
    risk = studies.overheating_risk(
        sunny_room, {"base": {}}, {"aperture": (0.5, 1.3)}, WEATHER, temperature=operative,
        criteria=[studies.tm52_criterion(occupied=OCCUPIED),
                  studies.hours_above_criterion(26.0, max_pct=3.0, occupied=OCCUPIED)],
        n_samples=8, seed=4, warmup_days=3, progress=False)
    occ = comfort.in_time_window(IDX, *OCCUPIED)
    runs = risk.runs.loc["base"]
    for i in (0, 5):
        res = tn.simulate(sunny_room(aperture=runs.loc[i, "aperture"]), WEATHER, warmup_days=3)
        top = operative(res)
        assert runs.loc[i, "tm52_failed_criteria"] == comfort.tm52(top, WEATHER["temp_air"],
                                                                   occ).n_failed
        share = 100.0 * comfort.hours_above(top, 26.0, occ) / occ.sum()
        assert math.isclose(runs.loc[i, "hours_above_26_pct"], share, rel_tol=1e-12)
    fails = runs["failed:tm52_failed_criteria"].to_numpy(dtype=bool)
    assert fails.any() and not fails.all()   # the sample straddles the verdict
    assert (fails == (runs["tm52_failed_criteria"] >= 2)).all()


def test_warming_reaches_the_weather_and_handles_reach_the_temperature():
    seen = []

    def build(ua=50.0, gain=0.0, weather=None):
        seen.append(float(weather["temp_air"].iloc[0]))
        return toy_room(ua, gain), {"node": "room"}

    def temperature(res, handles):
        return res.mean_temperatures[handles["node"]]

    r = studies.overheating_risk(build, {"a": {"ua": 50.0}}, {"gain": GAIN}, TOY_WEATHER,
                                 temperature=temperature, warming=(1.0, 3.0), n_samples=4,
                                 seed=1, pass_weather=True, warmup_days=0.0, progress=False)
    np.testing.assert_allclose(sorted(seen), sorted(20.0 + r.samples[studies.WARMING]))


def test_resumed_study_equals_the_uninterrupted_one(tmp_path):
    calls = []

    def build(ua=50.0, gain=0.0, colour=0.0):
        calls.append(gain)
        return toy_room(ua, gain)

    kw = dict(warming=WARM, n_samples=16, seed=9, warmup_days=0.0, progress=False,
              criteria=[studies.hours_above_criterion(26.0, max_hours=0.0)])
    args = (build, OPTIONS, {"gain": GAIN, "colour": (0.0, 1.0)}, TOY_WEATHER)
    first = studies.overheating_risk(*args, temperature="room", out=tmp_path, **kw)
    assert len(calls) == 32
    again = studies.overheating_risk(*args, temperature="room", out=tmp_path, **kw)
    assert len(calls) == 32          # every run was read back from the folder
    pd.testing.assert_frame_equal(first.runs, again.runs)
    pd.testing.assert_frame_equal(first.risk, again.risk)


# ------------------------------------------------------------------ report
def test_summary_and_plot(toy):
    text = toy.summary()
    assert CAUTION in text and "estimates" in text.lower()
    assert "Wilson score" in text and "seed 11" in text and "gain" in text
    fig, ax = toy.plot()
    try:
        assert len(ax.patches) == len(OPTIONS)    # one criterion, one bar per option
        colours = {p.get_facecolor() for p in ax.patches}
        assert len(colours) == len(OPTIONS)
        assert "[%]" in ax.get_ylabel()
        assert [t.get_text() for t in ax.get_legend().get_texts()] == list(OPTIONS)
    finally:
        plt.close(fig)


# ------------------------------------------------------------------ bad input
def test_bad_input_is_refused_with_names():
    with pytest.raises(StudyError, match="'b'.*different"):
        studies.overheating_risk(toy_room, {"a": {"ua": 50.0}, "b": {}}, {"gain": GAIN},
                                 TOY_WEATHER, temperature="room")
    with pytest.raises(StudyError, match="power of 2"):
        toy_risk(sampler="sobol", n_samples=48)
    with pytest.raises(StudyError, match="'gain'.*frozen scipy.stats"):
        studies.overheating_risk(toy_room, OPTIONS, {"gain": (5.0, 1.0)}, TOY_WEATHER,
                                 temperature="room")
    with pytest.raises(StudyError, match="warming_columns.*temp_sky"):
        toy_risk(warming_columns=("temp_air", "temp_sky"))
    with pytest.raises(StudyError, match="both option parameters and uncertain"):
        studies.overheating_risk(toy_room, OPTIONS, {"ua": (10.0, 20.0)}, TOY_WEATHER,
                                 temperature="room")
    with pytest.warns(StudyWarning, match="8 of 8 variants failed"):
        failed = studies.overheating_risk(toy_room, OPTIONS, {"gain": GAIN}, TOY_WEATHER,
                                          temperature="kitchen", n_samples=4, seed=0,
                                          warmup_days=0.0, progress=False)
    assert (failed.risk["n_errors"] == 4).all() and failed.risk["probability"].isna().all()
    assert "no run finished" in failed.summary()
    assert "'kitchen' is not a node" in failed.runs["error"].iloc[0]
    with pytest.raises(StudyError, match="'kitchen' is not a node"):
        studies.overheating_risk(toy_room, OPTIONS, {"gain": GAIN}, TOY_WEATHER,
                                 temperature="kitchen", n_samples=2, seed=0,
                                 warmup_days=0.0, progress=False, errors="raise")
