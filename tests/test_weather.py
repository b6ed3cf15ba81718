"""Tests of thermonet.weather and the invented sample weather.

Reference data: NREL TMY3 station 723170, Greensboro Piedmont Triad International, NC, as
shipped with pvlib (pvlib/data/723170TYA.CSV), read in place, never copied. Values quoted
as "read by hand" were read from that file's lines with a text viewer.
Published numbers: docs/references.md §6 (tags [X] computed from the published
equations, [M] from memory).
"""

from __future__ import annotations

import io
import json
import pathlib

import numpy as np
import pandas as pd
import pvlib
import pytest

from thermonet import weather as w
from thermonet.errors import ThermonetWarning, WeatherError
from thermonet.scenarios import sample_weather as sw

TMY3_FILE = pathlib.Path(pvlib.__file__).parent / "data" / "723170TYA.CSV"
TZ_GREENSBORO = "Etc/GMT+5"  # the file header says TZ -5.0 (UTC−5; Etc sign inverted)


@pytest.fixture(scope="module")
def tmy() -> pd.DataFrame:
    return w.read_tmy3(TMY3_FILE)


@pytest.fixture(scope="module")
def sample() -> pd.DataFrame:
    return sw.make_sample_weather()


@pytest.fixture
def june(tmy) -> pd.DataFrame:
    """Three June days of the Greensboro TMY3 (real data, sun high) as a base to corrupt."""
    out = tmy.loc["2025-06-01":"2025-06-03"].copy()
    out.attrs = dict(tmy.attrs)
    return out


# ------------------------------------------------------------------------------------------
# TMY3 reader (NREL TMY3 station 723170, Greensboro NC, shipped with pvlib)
# ------------------------------------------------------------------------------------------
def test_tmy3_index_is_one_regular_hour_ending_year(tmy):
    # TMY3 users manual (Wilcox & Marion 2008, NREL/TP-581-43156): 8760 hourly records,
    # radiation received during the 60 minutes before the stamp, local standard time.
    assert len(tmy) == 8760
    assert str(tmy.index.tz) == TZ_GREENSBORO
    assert w.time_step(tmy) == pd.Timedelta("1h")
    assert tmy.index.is_monotonic_increasing and tmy.index.is_unique
    assert tmy.index[0] == pd.Timestamp("2025-01-01 01:00", tz=TZ_GREENSBORO)
    # the file's last line "12/31/1980,24:00" becomes 00:00 of January 1 of the next year
    assert tmy.index[-1] == pd.Timestamp("2026-01-01 00:00", tz=TZ_GREENSBORO)


def test_tmy3_site_matches_file_header(tmy):
    # header line read by hand: 723170,"GREENSBORO PIEDMONT TRIAD INT",NC,-5.0,36.100,-79.950,273
    site = w.site_of(tmy)
    assert site.latitude == 36.1
    assert site.longitude == -79.95
    assert site.elevation == 273.0
    assert site.tz == TZ_GREENSBORO
    assert site.name == "GREENSBORO PIEDMONT TRIAD INT"
    assert "723170" in tmy.attrs["source"]


def test_tmy3_rows_match_file_lines_read_by_hand(tmy):
    # first data line: 01/01/1988,01:00, ... Dry-bulb 10.0, Dew-point 6.1, RHum 77,
    # Pressure 993 mbar, Wdir 200, Wspd 6.2, TotCld 10
    first = tmy.iloc[0]
    assert (first.temp_air, first.temp_dew, first.relative_humidity) == (10.0, 6.1, 77.0)
    assert first.pressure == 99_300.0  # 993 mbar × 100 Pa/mbar (SI definition of the bar)
    assert (first.wind_direction, first.wind_speed, first.cloud_cover) == (200.0, 6.2, 10.0)
    # last line: 12/31/1980,24:00 ... 2.2, 0.6, 89, 980 mbar, 180, 2.6
    last = tmy.loc[pd.Timestamp("2026-01-01 00:00", tz=TZ_GREENSBORO)]
    assert (last.temp_air, last.temp_dew, last.pressure, last.wind_speed) == (
        2.2, 0.6, 98_000.0, 2.6
    )


def test_tmy3_leap_source_february_keeps_its_24h_row(tmy):
    # line 1418 read by hand: 02/28/1996,24:00 ... Dry-bulb 9.2, Dew-point -2.8, RHum 35,
    # 982 mbar, Wspd 5.7. 1996 is a leap year: this row ends Feb 28, so after re-stamping it
    # must be 2025-03-01 00:00 — not a day later (pvlib's own index moves Feb 29 to Mar 1).
    row = tmy.loc[pd.Timestamp("2025-03-01 00:00", tz=TZ_GREENSBORO)]
    assert (row.temp_air, row.temp_dew, row.relative_humidity, row.wind_speed) == (
        9.2, -2.8, 35.0, 5.7
    )
    assert row.pressure == 98_200.0


def test_tmy3_annual_ghi_in_plausible_band(tmy):
    # Annual GHI of central North Carolina: about 4.0–5.0 kWh/(m²·day) on NREL's NSRDB
    # solar resource maps (from memory) -> 1460–1830 kWh/(m²·a); band widened to 1400–1850.
    annual_kwh = tmy["ghi"].sum() * 1.0 / 1000.0  # hourly means [W/m²] × 1 h -> kWh/m²
    assert 1400.0 < annual_kwh < 1850.0


def test_tmy3_albedo_only_on_request(tmy):
    assert "albedo" not in tmy.columns
    with pytest.raises(WeatherError, match="no column"):
        w.read_tmy3(TMY3_FILE, columns=("temp_air", "ghi", "dni", "dhi", "snow"))


def test_tmy3_year_none_keeps_mixed_years_and_fails_monotonic():
    # a typical year keeps its months' own years -> not increasing; the error names the fix
    with pytest.raises(WeatherError, match="restamp"):
        w.read_tmy3(TMY3_FILE, year=None)


# ------------------------------------------------------------------------------------------
# PVGIS reader on buffers laid out as pvlib's reader expects (pvlib/iotools/pvgis.py)
# ------------------------------------------------------------------------------------------
_PVGIS_YEARS = {1: 1988, 2: 1996, 3: 1990, 4: 1989, 5: 1986, 6: 2001,
                7: 1994, 8: 2003, 9: 1981, 10: 1980, 11: 1980, 12: 1980}
_PVGIS_KEYS = ("time(UTC)", "T2m", "RH", "G(h)", "Gb(n)", "Gd(h)", "IR(h)", "WS10m", "WD10m", "SP")


def _pvgis_records(tmy: pd.DataFrame) -> list[dict]:
    """The Greensboro year written the PVGIS way: UTC, labels at the START of each hour,
    January 1 00:00 … December 31 23:00 UTC, months stamped with their source years."""
    start = (tmy.index - pd.Timedelta("1h")).tz_convert("UTC").tz_localize(None)
    wrapped = pd.DatetimeIndex(np.where(start.year > 2025, start - pd.DateOffset(years=1), start))
    order = np.argsort(wrapped)
    recs = []
    for t, r in zip(wrapped[order], tmy.iloc[order].itertuples(), strict=True):
        stamp = f"{_PVGIS_YEARS[t.month]}{t:%m%d:%H%M}"
        values = (r.temp_air, r.relative_humidity, r.ghi, r.dni, r.dhi, 300.0,
                  r.wind_speed, r.wind_direction, r.pressure)
        recs.append(dict(zip(_PVGIS_KEYS, (stamp, *values), strict=True)))
    return recs


def _pvgis_json(recs) -> io.StringIO:
    src = {
        "inputs": {"location": {"latitude": 36.1, "longitude": -79.95, "elevation": 273.0},
                   "meteo_data": {}},
        "outputs": {"months_selected": [{"month": m, "year": y} for m, y in _PVGIS_YEARS.items()],
                    "tmy_hourly": recs},
        "meta": {"inputs": {}, "outputs": {}},
    }
    return io.StringIO(json.dumps(src))


def _pvgis_csv(recs) -> io.BytesIO:
    lines = ["Latitude (decimal degrees): 36.100", "Longitude (decimal degrees): -79.950",
             "Elevation (m): 273", "month,year"]
    lines += [f"{m},{y}" for m, y in _PVGIS_YEARS.items()]
    lines.append(",".join(_PVGIS_KEYS))
    lines += [",".join(str(rec[k]) for k in _PVGIS_KEYS) for rec in recs]
    lines += ["T2m: 2-m air temperature (degree Celsius)", "SP: Surface (air) pressure (Pa)"]
    return io.BytesIO(("\r\n".join(lines) + "\r\n").encode())


_COMMON = ["temp_air", "relative_humidity", "ghi", "dni", "dhi", "wind_speed", "pressure"]


@pytest.mark.parametrize("fmt", ["json", "csv"])
def test_pvgis_reader_round_trip_reproduces_tmy3(tmy, fmt):
    # The same hours written in PVGIS's layout (UTC, start labels, months from mixed years)
    # must come back as the very same hour-ending local year: tests the start -> end shift,
    # the UTC -> UTC−5 conversion, the roll of the last December hours into January and the
    # re-stamping in one go (reference data: NREL TMY3 723170).
    recs = _pvgis_records(tmy)
    buf = _pvgis_json(recs) if fmt == "json" else _pvgis_csv(recs)
    got = w.read_pvgis_tmy(buf, pvgis_format=fmt, tz=TZ_GREENSBORO)
    pd.testing.assert_frame_equal(got[_COMMON], tmy[_COMMON], check_freq=False)
    assert w.site_of(got).latitude == 36.1 and w.site_of(got).elevation == 273.0
    assert "ghi_infrared" in got.columns


def test_pvgis_refuses_other_formats():
    with pytest.raises(WeatherError, match="'json' or 'csv'"):
        w.read_pvgis_tmy(io.StringIO(""), pvgis_format="epw")


def test_pvgis_dst_zone_is_refused(tmy):
    buf = _pvgis_json(_pvgis_records(tmy))
    with pytest.raises(WeatherError, match="fixed-offset"):
        w.read_pvgis_tmy(buf, pvgis_format="json", tz="America/New_York")


# ------------------------------------------------------------------------------------------
# restamp
# ------------------------------------------------------------------------------------------
def _month(year: int, month: int, tz: str = "Etc/GMT-1") -> pd.DataFrame:
    """Hour-ending rows of one calendar month, values = hours since the month start."""
    start = pd.Timestamp(year, month, 1)
    end = start + pd.offsets.MonthBegin(1)
    idx = pd.date_range(start + pd.Timedelta("1h"), end, freq="h", tz=tz)
    return pd.DataFrame({"temp_air": np.arange(len(idx), dtype=float)}, index=idx)


def test_restamp_makes_a_continuous_increasing_year():
    # analytic: months from different years, glued, must become one gap-free 2025 series
    parts = [_month(2010, 1), _month(2013, 2), _month(2007, 3), _month(1999, 12)]
    out = w.restamp(pd.concat(parts[:3] + [_month(2001, m) for m in range(4, 12)] + parts[3:]))
    expected = pd.date_range("2025-01-01 01:00", "2026-01-01 00:00", freq="h", tz="Etc/GMT-1")
    assert out.index.equals(expected)
    assert out["temp_air"].iloc[-1] == 31 * 24 - 1  # last December row ends 2026-01-01 00:00
    assert "re-stamped onto 2025" in out.attrs["source"]


def test_restamp_leap_day_error_by_default():
    feb = _month(2012, 2)  # 29 days
    with pytest.raises(WeatherError, match="February 29"):
        w.restamp(feb, 2025)


def test_restamp_leap_day_drop_on_request():
    feb_mar = pd.concat([_month(2012, 2), _month(2012, 3)])
    out = w.restamp(feb_mar, 2025, leap_day="drop")
    assert len(out) == len(feb_mar) - 24
    expected = pd.date_range("2025-02-01 01:00", "2025-04-01 00:00", freq="h", tz="Etc/GMT-1")
    assert out.index.equals(expected)
    assert "dropped" in out.attrs["source"]


def test_restamp_onto_leap_year_keeps_feb29_and_refuses_a_gap():
    feb = _month(2012, 2)
    out = w.restamp(feb, 2024)
    assert len(out) == 29 * 24 and out.index[-1] == pd.Timestamp("2024-03-01", tz="Etc/GMT-1")
    no_leap = pd.concat([_month(2013, 2), _month(2013, 3)])
    with pytest.raises(WeatherError, match="leap year"):
        w.restamp(no_leap, 2024)


@pytest.mark.parametrize(
    ("frame", "kwargs", "match"),
    [
        (_month(2013, 2, tz="Europe/Berlin"), {}, "fixed-offset"),
        (_month(2013, 2), {"leap_day": "keep"}, "leap_day"),
        (_month(2013, 2).tz_localize(None), {}, "tz_localize"),
        (pd.concat([_month(2013, 2), _month(2014, 2)]), {}, "same time stamp"),
    ],
    ids=["dst-zone", "bad-leap-option", "tz-naive", "two-februaries"],
)
def test_restamp_errors(frame, kwargs, match):
    with pytest.raises(WeatherError, match=match):
        w.restamp(frame, 2025, **kwargs)


# ------------------------------------------------------------------------------------------
# validation: every documented WeatherError (base frame: real TMY3 June days)
# ------------------------------------------------------------------------------------------
def _set(col, pos, value):
    def mutate(df):
        df = df.copy()
        df.iloc[pos, df.columns.get_loc(col)] = value
        return df

    return mutate


def _relabel(fn):
    def mutate(df):
        out = df.set_axis(fn(df.index))
        out.attrs = dict(df.attrs)
        return out

    return mutate


def _shift_one(idx):
    new = idx.to_series()
    new.iloc[10] = new.iloc[10] + pd.Timedelta("30min")
    return pd.DatetimeIndex(new)


def _swap(idx):
    pos = np.arange(len(idx))
    pos[[10, 11]] = pos[[11, 10]]
    return idx[pos]


def _scale(col, factor, offset=0.0):
    def mutate(df):
        df = df.copy()
        df[col] = df[col] * factor + offset
        return df

    return mutate


def _no_site(df):
    df = df.copy()
    df.attrs = {}
    return df


def _as_text(df):
    df = df.copy()
    df["temp_air"] = df["temp_air"].astype(str)
    return df


def _dew_above_air(df):
    df = df.copy()
    df.iloc[5, df.columns.get_loc("temp_dew")] = df["temp_air"].iloc[5] + 2.0
    return df


def _dni_on_horizontal(df):
    # beam given on the horizontal instead of normal: closure breaks at moderate sun
    df = df.copy()
    sp = w.solar_position(df)
    df["dni"] = df["dni"] * np.cos(np.radians(sp["zenith"].clip(upper=89.0)))
    return df


ERROR_CASES = [
    ("missing-column", lambda df: df.drop(columns="dni"), "missing required column"),
    ("nan", _set("ghi", 12, np.nan), "'ghi' has 1 NaN"),
    ("inf", _set("temp_air", 12, np.inf), "non-finite"),
    ("gap", lambda df: df.drop(df.index[5:8]), "missing time stamps"),
    ("duplicate", lambda df: pd.concat([df, df.iloc[[3]]]).sort_index(), "duplicate"),
    ("non-monotonic", _relabel(_swap), "not increasing"),
    ("irregular", _relabel(_shift_one), "irregular step"),
    ("tz-naive", _relabel(lambda i: i.tz_localize(None)), r"(?i)localize with df\.tz_localize"),
    ("negative-irradiance", _set("dhi", 14, -5.0), "'dhi'.*outside the plausible range"),
    ("hot", _set("temp_air", 14, 75.0), r"'temp_air'.*-90 … 60 °C"),
    ("kelvin", _scale("temp_air", 1.0, 273.15), "kelvin"),
    ("rh", _set("relative_humidity", 14, 104.0), "'relative_humidity'.*0 … 100 %"),
    ("wind", _set("wind_speed", 14, -0.5), "'wind_speed'"),
    ("mbar", _scale("pressure", 0.01), "mbar"),
    ("dew-above-air", _dew_above_air, "'temp_dew' exceeds 'temp_air'"),
    ("closure", _dni_on_horizontal, "inconsistent"),
    ("non-numeric", _as_text, "must be numeric"),
    ("no-site", _no_site, "site metadata"),
    ("one-row", lambda df: df.iloc[:1], "at least 2 rows"),
]


@pytest.mark.parametrize(("mutate", "match"), [c[1:] for c in ERROR_CASES],
                         ids=[c[0] for c in ERROR_CASES])
def test_validate_raises_named_errors(june, mutate, match):
    w.validate(june)  # the untouched real data pass
    with pytest.raises(WeatherError, match=match):
        w.validate(mutate(june))


def test_validate_rejects_non_dataframe_and_bad_fill(june):
    with pytest.raises(WeatherError, match="DataFrame"):
        w.validate(june["ghi"])
    with pytest.raises(WeatherError, match="fill must be"):
        w.validate(june, fill="zero")


def test_start_labelled_data_read_as_hour_ending_fail_closure(june):
    # the same real hours labelled one hour early (start labels taken as ends): the sun
    # moves by about 15°, and the BSRN-style closure test catches it
    early = june.set_axis(june.index - pd.Timedelta("1h"))
    early.attrs = dict(june.attrs)
    with pytest.raises(WeatherError, match="interval ENDS"):
        w.validate(early)


def test_fill_interpolate_fills_short_gaps_and_warns(june):
    broken = june.copy()
    a, b = june["temp_air"].iloc[9], june["temp_air"].iloc[12]
    broken.iloc[10:12, broken.columns.get_loc("temp_air")] = np.nan
    with pytest.warns(ThermonetWarning, match="'temp_air'"):
        fixed = w.validate(broken, fill="interpolate")
    # linear in time over equal 1-h steps: a + (b − a)/3, a + 2(b − a)/3 (definition)
    expected = [a + (b - a) / 3, a + 2 * (b - a) / 3]
    np.testing.assert_allclose(fixed["temp_air"].iloc[10:12], expected)
    assert broken["temp_air"].isna().sum() == 2  # input untouched
    assert "interpolated" in fixed.attrs["source"]


@pytest.mark.parametrize(
    ("positions", "match"),
    [(slice(10, 14), "cannot be interpolated"), (slice(0, 1), "cannot be interpolated")],
    ids=["too-long", "at-the-edge"],
)
def test_fill_interpolate_refuses_long_or_edge_gaps(june, positions, match):
    broken = june.copy()
    broken.iloc[positions, broken.columns.get_loc("temp_air")] = np.nan
    with pytest.raises(WeatherError, match=match):
        w.validate(broken, fill="interpolate")


# ------------------------------------------------------------------------------------------
# from_dataframe, time helpers
# ------------------------------------------------------------------------------------------
def test_from_dataframe_localizes_and_shifts_start_labels(june):
    naive_start = june.set_axis((june.index - pd.Timedelta("1h")).tz_localize(None))
    got = w.from_dataframe(naive_start, latitude=36.1, longitude=-79.95, elevation=273.0,
                           tz=TZ_GREENSBORO, label="start")
    assert got.index.equals(june.index)
    assert got.attrs["site"] == {"latitude": 36.1, "longitude": -79.95, "elevation": 273.0,
                                 "tz": TZ_GREENSBORO, "name": ""}


def test_from_dataframe_naive_without_tz_names_the_fix(june):
    with pytest.raises(WeatherError, match="tz_localize"):
        w.from_dataframe(june.tz_localize(None), latitude=36.1, longitude=-79.95)


@pytest.mark.parametrize(("kw", "match"), [({"latitude": 95.0}, "latitude"),
                                           ({"longitude": float("nan")}, "longitude"),
                                           ({"label": "middle"}, "label")])
def test_from_dataframe_bad_arguments(june, kw, match):
    args = {"latitude": 36.1, "longitude": -79.95, **kw}
    with pytest.raises(WeatherError, match=match):
        w.from_dataframe(june, **args)


def test_solar_times_are_interval_midpoints(june):
    # hour-ending convention: the row labelled t describes (t − 1 h, t], sun at t − 30 min
    mid = w.solar_times(june)
    assert (june.index - mid == pd.Timedelta("30min")).all()


# ------------------------------------------------------------------------------------------
# sky temperature
# ------------------------------------------------------------------------------------------
@pytest.mark.parametrize("kind", ["scalar", "array", "series"])
def test_swinbank_published_values(kind):
    # docs/references.md §6 [X]: Swinbank (1963) T_sky = 0.0552 T_a^1.5,
    # T_a = 273.15 / 283.15 / 293.15 K -> 249.20 / 263.00 / 277.06 K
    t_air = [0.0, 10.0, 20.0]
    expected = np.array([249.20, 263.00, 277.06]) - 273.15
    if kind == "scalar":
        got = np.array([w.sky_temperature_swinbank(t) for t in t_air])
    elif kind == "array":
        got = w.sky_temperature_swinbank(np.array(t_air))
    else:
        s = pd.Series(t_air, index=list("abc"))
        got = w.sky_temperature_swinbank(s)
        assert list(got.index) == list("abc")
    np.testing.assert_allclose(np.asarray(got, dtype=float), expected, atol=0.006)


def test_berdahl_martin_published_values():
    # docs/references.md §6 [X]: Berdahl & Martin (1984) clear sky, T_a = 20 °C,
    # T_dp = 0 / 10 / 20 °C -> ε = 0.7110 / 0.7743 / 0.8522, T_sky = 269.19 / 274.99 / 281.66 K
    eps = w.sky_emissivity_berdahl_martin(np.array([0.0, 10.0, 20.0]))
    np.testing.assert_allclose(eps, [0.7110, 0.7743, 0.8522], atol=6e-5)
    t_sky = w.sky_temperature_berdahl_martin(20.0, np.array([0.0, 10.0, 20.0])) + 273.15
    np.testing.assert_allclose(t_sky, [269.19, 274.99, 281.66], atol=0.006)


def test_berdahl_martin_diurnal_pressure_and_cloud_terms():
    # Terms of the published equation (docs/references.md §6, [M] from memory), values worked by
    # hand for T_a = 20 °C, T_dp = 10 °C (clear ε = 0.7743):
    #   diurnal +0.013 cos(2π t/24): t = 0 h -> ε = 0.7873, T_sky = 276.137 K; t = 6 h -> 0
    #   pressure +0.00012 (P − 1000 mbar): 900 mbar -> ε = 0.7623, T_sky = 273.919 K
    #   cloud factor 1 + 0.0224N − 0.0035N² + 0.00028N³: N = 10 -> 1.154, T_sky = 285.016 K
    bm = w.sky_temperature_berdahl_martin
    assert bm(20.0, 10.0, hour=0.0) + 273.15 == pytest.approx(276.137, abs=2e-3)
    assert bm(20.0, 10.0, hour=6.0) == pytest.approx(bm(20.0, 10.0), abs=1e-9)
    assert bm(20.0, 10.0, pressure=90_000.0) + 273.15 == pytest.approx(273.919, abs=2e-3)
    assert bm(20.0, 10.0, pressure=100_000.0) == pytest.approx(bm(20.0, 10.0), abs=1e-9)
    assert bm(20.0, 10.0, cloud_cover=10.0) + 273.15 == pytest.approx(285.016, abs=2e-3)
    assert bm(20.0, 10.0, cloud_cover=0.0) == pytest.approx(bm(20.0, 10.0), abs=1e-9)
    # a sky cannot be warmer than a black body at air temperature (ε limited to 1)
    assert bm(20.0, 30.0, cloud_cover=10.0) == pytest.approx(20.0, abs=1e-9)


def test_berdahl_martin_rejects_cloud_fraction_out_of_range():
    with pytest.raises(WeatherError, match="tenths"):
        w.sky_emissivity_berdahl_martin(10.0, cloud_cover=np.array([5.0, 11.0]))


def test_add_sky_temperature_columns(tmy):
    swin = w.add_sky_temperature(tmy, method="swinbank")
    np.testing.assert_allclose(swin["temp_sky"], w.sky_temperature_swinbank(tmy["temp_air"]))
    bm = w.add_sky_temperature(tmy)  # with the TMY3 cloud cover
    assert (bm["temp_sky"] <= bm["temp_air"] + 1e-9).all()  # ε ≤ 1
    assert "temp_sky" not in tmy.columns
    with pytest.raises(WeatherError, match="valid"):
        w.add_sky_temperature(tmy, method="whillier")
    with pytest.raises(WeatherError, match="temp_dew"):
        w.add_sky_temperature(tmy.drop(columns=["temp_dew", "relative_humidity"]))


# ------------------------------------------------------------------------------------------
# ground temperature (Kusuda & Achenbach 1965)
# ------------------------------------------------------------------------------------------
ALPHA_005 = 0.05 / 86_400.0  # 0.05 m²/day in m²/s


def test_kusuda_amplitude_ratio_and_lag_at_2m():
    # docs/references.md §6 [X]: α = 0.05 m²/day, z = 2 m -> amplitude ratio 0.43614, lag 48.20 d
    t = np.arange(0.0, 365.0, 0.01)
    temp = w.ground_temperature_kusuda(t, 2.0, 10.0, 8.0, 30.0, ALPHA_005)
    assert (temp.max() - temp.min()) / 2.0 / 8.0 == pytest.approx(0.43614, abs=2e-5)
    assert t[np.argmin(temp)] - 30.0 == pytest.approx(48.20, abs=0.02)


def test_kusuda_surface_and_deep_limits():
    # z = 0: the surface wave itself, T_m − A at t0, T_m + A half a year later, T_m between;
    # z → ∞: the annual mean (semi-infinite solid, Carslaw & Jaeger; docs/references.md §2.2)
    k = w.ground_temperature_kusuda
    assert k(30.0, 0.0, 10.0, 8.0, 30.0, ALPHA_005) == pytest.approx(2.0, abs=1e-12)
    assert k(30.0 + 182.5, 0.0, 10.0, 8.0, 30.0, ALPHA_005) == pytest.approx(18.0, abs=1e-12)
    assert k(30.0 + 91.25, 0.0, 10.0, 8.0, 30.0, ALPHA_005) == pytest.approx(10.0, abs=1e-9)
    deep = k(np.arange(365.0), 30.0, 10.0, 8.0, 30.0, ALPHA_005)
    np.testing.assert_allclose(deep, 10.0, atol=1e-4)


def test_kusuda_index_input_and_errors():
    idx = pd.date_range("2025-01-31", periods=3, freq="D", tz="Etc/GMT-1")
    got = w.ground_temperature_kusuda(idx, 0.0, 10.0, 8.0, 30.0, ALPHA_005)
    assert isinstance(got, pd.Series) and got.index.equals(idx)
    assert got.iloc[0] == pytest.approx(2.0, abs=1e-12)  # Jan 31 00:00 = day 30.0
    for args, match in [((-1.0, 10.0, 8.0, 30.0, ALPHA_005), "depth"),
                        ((1.0, 10.0, -8.0, 30.0, ALPHA_005), "amplitude"),
                        ((1.0, 10.0, 8.0, 30.0, 0.0), "diffusivity")]:
        with pytest.raises(WeatherError, match=match):
            w.ground_temperature_kusuda(10.0, *args)


def test_fit_annual_cycle_recovers_a_sinusoid():
    # analytic input: T = 9 − 11 cos(2π (t − 20)/365) sampled hourly (hour-ending labels);
    # daily means damp the amplitude by sin(π/365)/(π/365) = 0.999988 only
    idx = pd.date_range("2025-01-01 01:00", periods=8760, freq="h", tz="Etc/GMT-1")
    t = np.asarray((idx - pd.Timedelta("30min")).tz_localize(None)
                   - pd.Timestamp(2025, 1, 1)) / np.timedelta64(1, "D")
    fit = w.fit_annual_cycle(pd.Series(9.0 - 11.0 * np.cos(2 * np.pi * (t - 20.0) / 365.0),
                                       index=idx))
    assert fit.t_mean == pytest.approx(9.0, abs=1e-6)
    assert fit.amplitude == pytest.approx(11.0, rel=1e-4)
    assert fit.day_min == pytest.approx(20.0, abs=0.01)
    with pytest.raises(WeatherError, match="360 days"):
        w.fit_annual_cycle(pd.Series(1.0, index=idx[:240]))


def test_add_ground_temperature(tmy):
    out = w.add_ground_temperature(tmy, depth=2.0, t_mean=15.0, amplitude=10.0, day_min=20.0,
                                   diffusivity=ALPHA_005)
    col = out["temp_ground_2m"]
    # damped wave: swing 10 K × 0.43614 around 15 °C (docs/references.md §6 [X]); hourly samples
    assert (col.max() - col.min()) / 2.0 == pytest.approx(4.3614, abs=1e-3)
    deep = w.add_ground_temperature(tmy, depth=20.0)  # cycle fitted to the TMY3 temp_air
    assert deep["temp_ground_20m"].std() < 0.1
    assert deep["temp_ground_20m"].mean() == pytest.approx(tmy["temp_air"].mean(), abs=0.1)


# ------------------------------------------------------------------------------------------
# invented sample weather (demo data: plausibility and reproducibility only)
# ------------------------------------------------------------------------------------------
def test_sample_is_reproducible(sample):
    again = sw.make_sample_weather()
    pd.testing.assert_frame_equal(sample, again, check_exact=True)
    other = sw.make_sample_weather(seed=7)
    assert not np.array_equal(other["temp_air"].to_numpy(), sample["temp_air"].to_numpy())


def test_sample_shape_site_and_validity(sample):
    assert len(sample) == 8760
    assert sample.index[0] == pd.Timestamp("2025-01-01 01:00", tz="Etc/GMT-1")
    assert sample.index[-1] == pd.Timestamp("2026-01-01 00:00", tz="Etc/GMT-1")
    assert w.site_of(sample) == sw.FERNHOLLOW
    assert "INVENTED" in sample.attrs["source"]
    w.validate(sample)  # passes every check, closure included


def test_sample_is_plausible_for_a_temperate_site(sample):
    # plausibility bands, common practice, no source: a temperate central-European-like
    # climate with some hot spells and some frost; annual GHI 1000–1300 kWh/m² (from memory)
    daily = sample["temp_air"].resample("D").agg(["min", "max"])
    assert 30.0 <= daily["max"].max() <= 35.0
    assert 3 <= int((daily["max"] >= 30.0).sum()) <= 25
    assert -14.0 <= daily["min"].min() <= -8.0
    assert 1000.0 < sample["ghi"].sum() / 1000.0 < 1300.0
    assert 7.0 < sample["temp_air"].mean() < 11.0
    assert (sample["temp_dew"] < sample["temp_air"]).all()
    assert sample["relative_humidity"].between(0.0, 100.0).all()


def test_shipped_csv_matches_generator(sample):
    assert sw.SAMPLE_CSV.is_file()
    assert sw.SAMPLE_CSV.stat().st_size < 1.5e6
    assert "INVENTED" in sw.SAMPLE_CSV.read_text(encoding="utf-8").splitlines()[0]
    loaded = sw.load_sample_weather()
    pd.testing.assert_frame_equal(loaded[sample.columns], sample, check_exact=True,
                                  check_freq=False)


def test_load_sample_regenerates_without_csv(sample, tmp_path):
    got = sw.load_sample_weather(tmp_path / "absent.csv")
    pd.testing.assert_frame_equal(got, sample, check_exact=True)


def test_write_sample_csv_round_trip(tmp_path, sample):
    path = sw.write_sample_csv(tmp_path / "s.csv")
    pd.testing.assert_frame_equal(sw.load_sample_weather(path), sample, check_exact=True,
                                  check_freq=False)
    assert path.read_bytes() == sw.SAMPLE_CSV.read_bytes()


# ------------------------------------------------------------------------------------------
# the library's one solar-position path, and a second real typical year
# ------------------------------------------------------------------------------------------
def test_weather_solar_position_reproduces_the_spa_worked_example():
    # Reda & Andreas (2004), NREL/TP-560-34302, worked example (docs/references.md §3 [C]):
    # 2003-10-17 12:30:30 local standard time, UTC−7; 39.742476 N, −105.1786 E, 1830.14 m;
    # 820 mbar, 11 °C, ΔT = 67 s -> topocentric (refracted) zenith 50.111622°, azimuth
    # 194.340241°. As a weather frame: the hour ENDING 13:00:30 has its sun at 12:30:30,
    # and pressure [Pa] and temperature come from the frame's own columns.
    idx = pd.DatetimeIndex(["2003-10-17 12:00:30", "2003-10-17 13:00:30"], tz="Etc/GMT+7")
    frame = pd.DataFrame({"temp_air": 11.0, "pressure": 82_000.0}, index=idx)
    site = w.Site(latitude=39.742476, longitude=-105.1786, elevation=1830.14)
    sp = w.solar_position(frame, site)
    assert sp.index.equals(idx)
    assert sp["apparent_zenith"].iloc[1] == pytest.approx(50.111622, abs=1e-4)
    assert sp["azimuth"].iloc[1] == pytest.approx(194.340241, abs=1e-4)


SAND_POINT = pathlib.Path(pvlib.__file__).parent / "data" / "703165TY.csv"


def test_second_shipped_tmy3_file_reads_and_passes_every_check():
    # NREL TMY3 station 703165, Sand Point AK, shipped with pvlib (read in place). Header
    # line read by hand: 703165,"SAND POINT",AK,-9.0,55.317,-160.517,7. The file passes
    # every validation check, the BSRN-style closure test included (real data, 55° N).
    df = w.read_tmy3(SAND_POINT)
    assert len(df) == 8760 and str(df.index.tz) == "Etc/GMT+9"
    site = w.site_of(df)
    assert (site.latitude, site.longitude, site.elevation) == (55.317, -160.517, 7.0)
    assert site.name == "SAND POINT"
    assert df.index[0] == pd.Timestamp("2025-01-01 01:00", tz="Etc/GMT+9")


# ------------------------------------------------------------------------------------------
# remaining documented errors of the readers and derived boundaries
# ------------------------------------------------------------------------------------------
def test_pvgis_file_without_location_and_bad_label(tmy):
    recs = _pvgis_records(tmy)
    buf = _pvgis_json(recs)
    data = json.loads(buf.getvalue())
    data["inputs"] = {"meteo_data": {}}
    with pytest.raises(WeatherError, match="no readable location"):
        w.read_pvgis_tmy(io.StringIO(json.dumps(data)), pvgis_format="json")
    with pytest.raises(WeatherError, match="label must be"):
        w.read_pvgis_tmy(_pvgis_json(recs), pvgis_format="json", label="middle")


def test_restamp_needs_two_rows():
    with pytest.raises(WeatherError, match="at least 2 rows"):
        w.restamp(_month(2013, 2).iloc[:1])


def test_fit_annual_cycle_refuses_nan():
    idx = pd.date_range("2025-01-01 01:00", periods=8760, freq="h", tz="Etc/GMT-1")
    temp = pd.Series(10.0, index=idx)
    temp.iloc[100] = np.nan
    with pytest.raises(WeatherError, match="temp_air has NaN"):
        w.fit_annual_cycle(temp)


def test_add_ground_temperature_without_air_temperature_names_the_fix(tmy):
    no_air = tmy.drop(columns="temp_air")
    with pytest.raises(WeatherError, match="t_mean, amplitude and day_min"):
        w.add_ground_temperature(no_air)
    # with the cycle given explicitly, temp_air is not needed
    out = w.add_ground_temperature(no_air, depth=1.0, t_mean=12.0, amplitude=9.0,
                                   day_min=25.0)
    assert "temp_ground_1m" in out.columns
    with pytest.raises(WeatherError, match="temp_air"):
        w.add_sky_temperature(no_air, method="swinbank")


@pytest.mark.parametrize(("col", "value", "match"), [
    ("albedo", 1.2, r"'albedo'.*0 … 1"),
    ("cloud_cover", 11.0, r"'cloud_cover'.*0 … 10 tenths"),
    ("wind_direction", 400.0, r"'wind_direction'"),
    ("temp_dew", -95.0, r"'temp_dew'.*-90 … 60"),
])
def test_range_of_the_optional_columns(june, col, value, match):
    # the plausible ranges of COLUMN_SPECS (common practice, no source), one per column
    df = june.copy() if col in june.columns else june.assign(**{col: 0.3})
    w.validate(df)
    df.iloc[7, df.columns.get_loc(col)] = value
    with pytest.raises(WeatherError, match=match):
        w.validate(df)
