"""thermonet's comfort functions against an open reference library, pythermalcomfort.

Source: pythermalcomfort (Tartarini & Schiavon 2020, SoftwareX 12, 100578; installed from
PyPI through the ``test`` extra), which implements EN 16798-1:2019 adaptive comfort
(``models.adaptive_en``), the running mean outdoor temperature of EN 16798-1 / EN 15251
(``environment.running_mean_outdoor_temperature``) and the operative temperature of ISO 7726 /
ASHRAE 55 (``environment.operative_tmp``). See docs/references.md §12.
"""

import numpy as np
import pandas as pd
import pytest

from thermonet import comfort

ptc_models = pytest.importorskip("pythermalcomfort.models")
ptc_env = pytest.importorskip("pythermalcomfort.environment")


@pytest.mark.parametrize("category", ["I", "II", "III"])
def test_adaptive_limits_match_pythermalcomfort(category):
    trm = np.array([10.5, 12.0, 15.5, 18.0, 20.0, 24.0, 27.5, 29.5])  # inside 10–30 °C
    ours = comfort.adaptive_limits(trm, category)
    ref = ptc_models.adaptive_en(tdb=25.0, tr=25.0, t_running_mean=trm, v=0.1,
                                 round_output=False)
    key = category.lower()
    np.testing.assert_allclose(ours["comfort"], ref.tmp_cmf, atol=1e-9)
    np.testing.assert_allclose(ours["upper"], getattr(ref, f"tmp_cmf_cat_{key}_up"), atol=1e-9)
    low_ok = ours["lower_applicable"].to_numpy()  # the lower limits apply above 15 °C
    np.testing.assert_allclose(ours["lower"][low_ok],
                               np.asarray(getattr(ref, f"tmp_cmf_cat_{key}_low"))[low_ok],
                               atol=1e-9)


def test_running_mean_matches_pythermalcomfort_on_sixty_days():
    rng = np.random.default_rng(7)
    daily = rng.uniform(5.0, 25.0, 61)              # arbitrary daily means [°C]
    index = pd.date_range("2025-03-01 01:00", periods=61 * 24, freq="h", tz="Etc/GMT-1")
    hourly = pd.Series(np.repeat(daily, 24), index=index)
    trm = comfort.running_mean_outdoor(hourly, alpha=0.8)
    # the reference weights the given days (most recent first) by 0.8^i and normalises:
    # with 60 days of history the truncation differs from the infinite series by
    # 0.8^60 ≈ 1.5e-6 of a day's mean; the reference rounds to 0.1 K
    ref = ptc_env.running_mean_outdoor_temperature(list(daily[:60][::-1]), alpha=0.8)
    assert trm.iloc[60] == pytest.approx(ref, abs=0.05 + 1e-4)


@pytest.mark.parametrize(("v", "weight_air"), [(0.1, 0.5), (0.4, 0.6), (0.8, 0.7)])
def test_operative_temperature_matches_the_ashrae_weights(v, weight_air):
    # pythermalcomfort's "ASHRAE" operative temperature takes A = 0.5 / 0.6 / 0.7 for air
    # speeds below 0.2, 0.2–0.6 and 0.6–1.0 m/s (the ISO 7730 / ASHRAE 55 table, from memory)
    air = np.array([18.0, 22.0, 26.0, 30.0])
    mrt = np.array([24.0, 21.0, 31.0, 27.5])
    ref = ptc_env.operative_tmp(tdb=air, tr=mrt, v=v, standard="ashrae")
    np.testing.assert_allclose(comfort.operative_temperature(air, mrt, weight_air=weight_air),
                               ref, atol=1e-12)
