"""Kept solar positions and diffuse incidence modifiers give the numbers computed afresh.

The builders keep solar positions per weather and site (a study builds one network per
variant on the same weather) and the diffuse incidence modifiers per (model, tilt); these
tests check that a kept value equals a fresh computation, that a kept table cannot be changed
through what a caller received, and that a change of what it depends on (the air temperature
used for refraction) is a different entry.
"""

from __future__ import annotations

import numpy as np
import pandas as pd
import pvlib

from thermonet import solar
from thermonet.builders import common
from thermonet.scenarios.sample_weather import load_sample_weather


def _weather(days=3):
    w = load_sample_weather()
    part = w.iloc[24 * 170:24 * (170 + days)].copy()
    part.attrs = dict(w.attrs)
    return part


def test_kept_solar_positions_equal_fresh_ones_and_are_copies():
    w = _weather()
    site = w.attrs["site"]
    first = common.site_solar_position(w, None, None)
    fresh = solar.solar_position(w.index, site["latitude"], site["longitude"],
                                 site.get("elevation") or 0.0,
                                 w["pressure"].to_numpy(dtype=float),
                                 w["temp_air"].to_numpy(dtype=float))
    pd.testing.assert_frame_equal(first, fresh)
    first.iloc[:, :] = np.nan                        # the caller's copy only
    pd.testing.assert_frame_equal(common.site_solar_position(w, None, None), fresh)
    warm = w.copy()
    warm["temp_air"] = warm["temp_air"] + 15.0       # refraction depends on temperature
    hot = common.site_solar_position(warm, None, None)
    fresh_hot = solar.solar_position(w.index, site["latitude"], site["longitude"],
                                     site.get("elevation") or 0.0,
                                     w["pressure"].to_numpy(dtype=float),
                                     warm["temp_air"].to_numpy(dtype=float))
    pd.testing.assert_frame_equal(hot, fresh_hot)
    assert not hot["apparent_zenith"].equals(fresh["apparent_zenith"])
    assert len(common.SOLAR_POSITIONS) <= common.SOLAR_POSITIONS_KEPT


def test_kept_diffuse_modifiers_equal_pvlib():
    for model, tilt in (("ashrae", 90.0), ("physical", 35.0), ("ashrae", 90.0)):
        got = solar.diffuse_incidence_modifiers(tilt, model)
        kw = dict(solar.IAM_MODELS[model])
        with np.errstate(invalid="ignore", divide="ignore"):
            ref = pvlib.iam.marion_diffuse(model, tilt, **kw)
        assert got == {k: float(np.asarray(v)) for k, v in ref.items()}


def test_kept_plane_irradiance_equals_fresh_and_follows_the_weather():
    w = _weather()
    sp = common.site_solar_position(w, None, None)
    kept = common.kept_surface_irradiance(w, 90.0, 200.0, model="perez", solpos=sp)
    fresh = solar.surface_irradiance(w, 90.0, 200.0, model="perez", solpos=sp)
    pd.testing.assert_frame_equal(kept, fresh)
    kept.iloc[:, :] = np.nan                         # the caller's copy only
    again = common.kept_surface_irradiance(w, 90.0, 200.0, model="perez", solpos=sp)
    pd.testing.assert_frame_equal(again, fresh)
    dull = w.copy()
    dull["dni"] = dull["dni"] * 0.5                  # other weather: another entry
    other = common.kept_surface_irradiance(dull, 90.0, 200.0, model="perez", solpos=sp)
    pd.testing.assert_frame_equal(
        other, solar.surface_irradiance(dull, 90.0, 200.0, model="perez", solpos=sp))
    assert not np.allclose(other["total"], fresh["total"])
