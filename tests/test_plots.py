"""Tests of thermonet.plots: the charts show the numbers they are given, on the right axes.

Checks against the outside world where a chart encodes one: the EN 16798-1 adaptive limit
lines (θc = 0.33 θrm + 18.8 °C ± category offsets, docs/references.md §5.2, from memory), the
steady-state heat flow of a conductance Q = G·ΔT (Fourier's law) shown in the balance bars, the
first law (gains = losses over a closed control volume), the analytic duration of a sine above
half its amplitude (1/3 of the time), the calendar (1 June 2025 = day of year 152) and the
project's hour-ending convention (thermonet.comfort module notes: the row labelled 00:00 of
2 June is the hour 23:00–24:00 of 1 June).
"""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pandas as pd  # noqa: E402
import pytest  # noqa: E402
from matplotlib.collections import PathCollection, PolyCollection, QuadMesh  # noqa: E402
from matplotlib.container import BarContainer  # noqa: E402
from matplotlib.figure import Figure  # noqa: E402

import thermonet as tn  # noqa: E402
from thermonet import comfort, plots  # noqa: E402
from thermonet.errors import ScheduleError  # noqa: E402

TZ = "Etc/GMT-1"


@pytest.fixture(autouse=True)
def _close_figures():
    yield
    plt.close("all")


def hourly(values, start="2025-06-01 01:00", freq="h", name=None):
    values = np.asarray(values, dtype=float)
    idx = pd.date_range(start, periods=len(values), freq=freq, tz=TZ)
    return pd.Series(values, index=idx, name=name)


def hand_balance():
    """Three months of a closed balance [kWh], built by hand (each row sums to zero)."""
    idx = pd.date_range("2025-01-01", periods=3, freq="MS", tz=TZ)
    df = pd.DataFrame(
        {
            "opaque": [-100.0, -80.0, -50.0],
            "glazing": [-30.0, -20.0, 5.0],
            "solar": [20.0, 40.0, 60.0],
            "internal": [30.0, 30.0, 30.0],
            "heating": [80.0, 30.0, 0.0],
            "cooling": [0.0, 0.0, -45.0],
            "storage": [0.0, 0.0, 0.0],
        },
        index=idx,
    )
    df["residual"] = df.sum(axis=1)
    return df


def two_node_net(temp_air, setpoint=20.0, solar=None):
    """Room air + slab, outdoor through opaque, glazing and infiltration; heated room."""
    net = tn.Network()
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.2e5)
    net.add_node("slab", kind="mass", capacitance=8e6, initial=setpoint)
    net.add_link("room", "slab", conductance=150.0, path="internal")
    net.add_link("outdoor", "room", conductance=40.0, path="opaque")
    net.add_link("outdoor", "room", conductance=15.0, path="glazing")
    # 30 m³/h × 1200 J/(m³K) / 3600 s/h = 10 W/K
    net.add_airflow("outdoor", "room", flow_m3h=30.0, path="infiltration", rho_cp=1200.0)
    if solar is not None:
        net.add_source("room", power=solar, path="solar")
    net.add_thermostat("room", heating_setpoint=setpoint, max_heating_w=1e5)
    weather = pd.DataFrame({"temp_air": temp_air.to_numpy()}, index=temp_air.index)
    return net, weather


# ------------------------------------------------------------------------------ palette
def test_path_colors_fixed_distinct_and_stable():
    known = plots.PATH_COLORS
    assert len(set(known.values())) == len(known)  # one colour per known path
    got = plots.path_colors(["solar", "heating", "cooling", "opaque"])
    assert got == {p: known[p] for p in ["solar", "heating", "cooling", "opaque"]}
    unknown = ["roof", "party_wall", "duct", "door", "chimney"]
    a = plots.path_colors(["solar", *unknown])
    b = plots.path_colors(list(reversed(unknown)) + ["opaque"])
    assert all(a[p] == b[p] for p in unknown)  # independent of order and of known names
    assert len({a[p] for p in unknown}) == len(unknown)  # distinct while colours last
    assert not {a[p] for p in unknown} & set(known.values())
    many = plots.path_colors([f"p{k}" for k in range(12)])
    assert set(many.values()) <= set(plots.FALLBACK_COLORS)
    assert plots.path_colors("solar") == {"solar": known["solar"]}
    with pytest.raises(TypeError):
        plots.path_colors(["solar", 3])


# ------------------------------------------------------------------------- balance bars
def test_balance_bars_gains_up_losses_down_heights_match_input():
    df = hand_balance()
    fig, ax = plots.balance_bars(df, title="hand")
    assert isinstance(fig, Figure)
    bars = [c for c in ax.containers if isinstance(c, BarContainer)]
    # storage is zero in every period: left out (drop_zero); residual is never drawn
    assert [c.get_label() for c in bars] == [
        "opaque", "glazing", "solar", "internal", "heating", "cooling"]
    for c in bars:
        heights = [p.get_height() for p in c.patches]
        np.testing.assert_allclose(heights, df[c.get_label()].to_numpy(), rtol=0, atol=1e-12)
    by = {c.get_label(): c.patches for c in bars}
    # month 1: losses stack down from 0 (opaque 0 → −100, glazing −100 → −130), gains up
    assert by["opaque"][0].get_y() == 0.0
    assert by["glazing"][0].get_y() == -100.0
    assert by["solar"][0].get_y() == 0.0 and by["internal"][0].get_y() == 20.0
    assert by["heating"][0].get_y() == 50.0
    # month 3: glazing is a gain (+5) and sits on the gain side, solar on top of it
    assert by["glazing"][2].get_y() == 0.0 and by["solar"][2].get_y() == 5.0
    assert by["cooling"][2].get_y() == -50.0 and by["cooling"][2].get_height() == -45.0
    # first law: the gain stack and the loss stack have the same height each month
    for k in range(3):
        tops = [p.get_y() + p.get_height() for c in bars for p in [c.patches[k]]]
        assert max(tops) == pytest.approx(-min(tops), abs=1e-12)
    assert [t.get_text() for t in ax.get_xticklabels()] == ["Jan", "Feb", "Mar"]
    assert "[kWh]" in ax.get_ylabel()
    assert ax.get_title() == "hand"
    assert not [t for t in ax.texts if "residual" in t.get_text()]


def test_balance_bars_units_area_and_residual_note():
    df = hand_balance()
    _, ax = plots.balance_bars(df, unit="MWh")
    solar = next(c for c in ax.containers if c.get_label() == "solar")
    np.testing.assert_allclose([p.get_height() for p in solar.patches], [0.02, 0.04, 0.06])
    assert "[MWh]" in ax.get_ylabel()
    _, ax = plots.balance_bars(df, floor_area=100.0)
    heat = next(c for c in ax.containers if c.get_label() == "heating")
    np.testing.assert_allclose([p.get_height() for p in heat.patches], [0.8, 0.3, 0.0])
    assert "[kWh/m²]" in ax.get_ylabel()
    # keep a zero column when asked
    _, ax = plots.balance_bars(df, drop_zero=False)
    assert "storage" in [c.get_label() for c in ax.containers]
    # a balance that does not close: annotated, not drawn
    bad = df.copy()
    bad.loc[bad.index[1], "solar"] += 7.0
    bad["residual"] = bad.drop(columns="residual").sum(axis=1)
    _, ax = plots.balance_bars(bad)
    notes = [t.get_text() for t in ax.texts if "residual" in t.get_text()]
    assert len(notes) == 1 and "7" in notes[0]
    assert "residual" not in [c.get_label() for c in ax.containers]


def test_balance_bars_refuses_bad_input():
    df = hand_balance()
    with pytest.raises(ValueError, match="NaN"):
        plots.balance_bars(df.assign(solar=[1.0, np.nan, 2.0]))
    with pytest.raises(TypeError):
        plots.balance_bars(df["solar"])
    with pytest.raises(ValueError, match="unit"):
        plots.balance_bars(df, unit="GJ")
    long = pd.DataFrame({"opaque": np.zeros(500)},
                        index=pd.date_range("2025-01-01 01:00", periods=500, freq="h", tz=TZ))
    with pytest.raises(ValueError, match="freq"):
        plots.balance_bars(long)
    with pytest.raises(TypeError):
        plots.balance_bars(df, ax="not an axes")


def test_balance_from_simulation_steady_state_matches_g_delta_t():
    # Outdoor held at 0 °C, room held at 20 °C from a slab already at 20 °C: every path is
    # steady, Q = G·ΔT (Fourier). Jan 1 01:00 … Mar 1 00:00: 744 h in January, 672 h in
    # February (the row labelled Mar 1 00:00 is the last hour of February).
    t_out = hourly(np.zeros(24 * 59), start="2025-01-01 01:00")
    net, weather = two_node_net(t_out)
    res = tn.simulate(net, weather, warmup_days=14)
    b = res.balance(["room", "slab"], freq="MS")
    _, ax = plots.balance_bars(b)
    bars = {c.get_label(): [p.get_height() for p in c.patches] for c in ax.containers}
    hours = np.array([744.0, 672.0])
    np.testing.assert_allclose(bars["opaque"], -40.0 * 20.0 * hours / 1000, rtol=1e-6)
    np.testing.assert_allclose(bars["glazing"], -15.0 * 20.0 * hours / 1000, rtol=1e-6)
    np.testing.assert_allclose(bars["infiltration"], -10.0 * 20.0 * hours / 1000, rtol=1e-6)
    np.testing.assert_allclose(bars["heating"], 65.0 * 20.0 * hours / 1000, rtol=1e-6)
    # the annual chart: sorted by magnitude, heating on top, opaque next
    _, ax = plots.balance_annual(b)
    labels = [t.get_text() for t in ax.get_yticklabels()]
    widths = [p.get_width() for p in ax.patches]
    ys = [p.get_y() for p in ax.patches]
    assert labels[-1] == "heating"  # yticks bottom → top; the largest bar is at the top
    assert ys == sorted(ys, reverse=True)
    assert widths[0] == pytest.approx(65.0 * 20.0 * 1416 / 1000, rel=1e-6)
    assert widths[1] == pytest.approx(-40.0 * 20.0 * 1416 / 1000, rel=1e-6)
    assert any("1,841" in t.get_text() for t in ax.texts)  # 1840.8 kWh, value label


def test_balance_from_simulation_varying_closes_in_every_bar():
    n = 24 * 59
    h = np.arange(n)
    t_out = hourly(4 + 7 * np.sin(2 * np.pi * (h - 9) / 24), start="2025-01-01 01:00")
    solar = pd.Series(np.clip(900 * np.sin(2 * np.pi * (h - 7) / 24), 0, None), t_out.index)
    net, weather = two_node_net(t_out, solar=solar)
    res = tn.simulate(net, weather, warmup_days=2)
    for nodes in (["room", "slab"], "room"):
        b = res.balance(nodes, freq="MS")
        fig, ax = plots.balance_bars(b)
        assert isinstance(fig, Figure)
        heights = np.array([[p.get_height() for p in c.patches] for c in ax.containers])
        # first law: per month, drawn gains equal drawn losses (residual is rounding noise)
        gains = np.clip(heights, 0, None).sum(axis=0)
        losses = np.clip(heights, None, 0).sum(axis=0)
        np.testing.assert_allclose(gains, -losses, rtol=1e-9)
        assert not [t for t in ax.texts if "residual" in t.get_text()]
    _, ax = plots.balance_annual(res.balance(["room", "slab"]))  # per-step table: summed
    widths = np.array([p.get_width() for p in ax.patches])
    assert widths.sum() == pytest.approx(0.0, abs=1e-9 * np.abs(widths).max())
    assert np.all(np.diff(np.abs(widths)) <= 0)  # sorted by magnitude
    heat = [p.get_width() for p, t in zip(ax.patches, ax.get_yticklabels()[::-1], strict=True)
            if t.get_text() == "heating"]
    assert heat[0] == pytest.approx(res.summary()["heating_kwh"], rel=1e-9)


def test_balance_annual_from_series_and_residual_note():
    s = hand_balance().sum()
    fig, ax = plots.balance_annual(s, unit="kWh")
    assert isinstance(fig, Figure)
    # solar 120, opaque −230, heating 110, internal 90, glazing −45, cooling −45; storage 0
    assert len(ax.patches) == 6
    np.testing.assert_allclose([p.get_width() for p in ax.patches],
                               [-230.0, 120.0, 110.0, 90.0, -45.0, -45.0])
    assert "gains 320 kWh" in ax.get_title()
    assert "\u2212320 kWh" in ax.get_title()
    assert "[kWh]" in ax.get_xlabel()
    s2 = s.copy()
    s2["solar"] += 50.0
    s2["residual"] = 50.0
    _, ax = plots.balance_annual(s2)
    assert [t for t in ax.texts if "residual" in t.get_text()]


# -------------------------------------------------------------------- temperature bands
def test_temperature_bands_fixed_thresholds():
    t = hourly(24 + 3 * np.sin(np.arange(72) / 24 * 2 * np.pi), name="bedroom")
    fig, ax = plots.temperature_bands(t, bands=[25, 26, 28])
    assert isinstance(fig, Figure)
    lines = ax.get_lines()
    assert len(lines) == 4
    np.testing.assert_allclose(lines[0].get_ydata(), t.to_numpy())
    for line, v in zip(lines[1:], [25.0, 26.0, 28.0], strict=True):
        assert list(line.get_ydata()) == [v, v]
        assert line.get_label() == f"{v:g} °C"
    assert ax.get_ylabel() == "Temperature [°C]"
    assert TZ in ax.get_xlabel()
    _, ax = plots.temperature_bands(t, bands={"TM59 bedroom": 26})
    assert ax.get_lines()[1].get_label() == "TM59 bedroom"


def test_temperature_bands_adaptive_band_with_applicability():
    # outdoor warms from 4 °C to 24 °C over 30 days: θrm crosses 10 °C and 15 °C
    n = 24 * 30
    h = np.arange(n)
    t_out = hourly(4 + 20 * h / n + 4 * np.sin(2 * np.pi * h / 24), name="temp_air")
    temps = pd.DataFrame({"room": 22 + 0.2 * t_out.to_numpy(), "bedroom": 21.0},
                         index=t_out.index)
    trm = comfort.running_mean_outdoor(t_out)
    lim = comfort.adaptive_limits(comfort.daily_to_index(trm, t_out.index), "II")
    fig, ax = plots.temperature_bands(temps, outdoor=t_out, bands=lim)
    lines = ax.get_lines()
    assert [ln.get_label() for ln in lines] == [
        "room", "bedroom", "outdoor air", "upper limit", "lower limit", "comfort temperature"]
    trm_h = comfort.daily_to_index(trm, t_out.index).to_numpy()
    upper = np.asarray(lines[3].get_ydata(), dtype=float)
    lower = np.asarray(lines[4].get_ydata(), dtype=float)
    # EN 16798-1 cat. II (from memory, docs/references.md §5.2): θc + 3 K where 10 < θrm < 30 °C,
    # θc − 4 K where 15 < θrm < 30 °C; not drawn outside
    ok_up = (trm_h > 10) & (trm_h < 30)
    ok_low = (trm_h > 15) & (trm_h < 30)
    assert ok_up.any() and (~ok_up).any() and ok_low.any() and (~ok_low).any()
    np.testing.assert_allclose(upper[ok_up], 0.33 * trm_h[ok_up] + 18.8 + 3.0, atol=1e-9)
    np.testing.assert_allclose(lower[ok_low], 0.33 * trm_h[ok_low] + 18.8 - 4.0, atol=1e-9)
    assert np.isnan(upper[~ok_up]).all() and np.isnan(lower[~ok_low]).all()
    bands = [c for c in ax.collections if isinstance(c, PolyCollection)]
    assert len(bands) == 1 and bands[0].get_label() == "comfort band"
    # the shaded band lies between the limits where both apply
    ys = np.concatenate([p.vertices[:, 1] for p in bands[0].get_paths()])
    assert ys.min() >= lower[ok_low].min() - 1e-9 and ys.max() <= upper[ok_low].max() + 1e-9
    # the same band given daily (one row per local midnight) draws the same lines
    _, ax2 = plots.temperature_bands(temps, bands=comfort.adaptive_limits(trm, "II"))
    np.testing.assert_allclose(np.asarray(ax2.get_lines()[2].get_ydata(), dtype=float), upper)


def test_temperature_bands_keeps_the_band_colour_off_the_lines():
    # with a band drawn, no temperature line may share its colour (it would read as a limit)
    n = 24 * 3
    t_out = hourly(18 + 4 * np.sin(2 * np.pi * np.arange(n) / 24), name="temp_air")
    temps = pd.DataFrame({f"option {k}": 22.0 + k for k in range(6)}, index=t_out.index)
    lim = comfort.adaptive_limits(comfort.running_mean_outdoor(t_out), "II")
    _, ax = plots.temperature_bands(temps, bands=lim)
    band = matplotlib.colors.to_hex(ax.get_lines()[-1].get_color())
    colours = [matplotlib.colors.to_hex(ln.get_color()) for ln in ax.get_lines()[:6]]
    assert band not in colours and len(set(colours)) == 6


def test_temperature_bands_refuses_misaligned_input():
    t = hourly(np.full(48, 22.0))
    with pytest.raises(ScheduleError):
        plots.temperature_bands(t, outdoor=hourly(np.zeros(24)))
    with pytest.raises(ScheduleError):
        plots.temperature_bands(t.tz_localize(None))
    other = pd.DataFrame({"lower": 20.0, "upper": 26.0},
                         index=pd.date_range("2025-06-01 01:30", periods=48, freq="h", tz=TZ))
    with pytest.raises(ScheduleError):
        plots.temperature_bands(t, bands=other)
    with pytest.raises(ValueError, match="lower"):
        plots.temperature_bands(t, bands=pd.DataFrame({"x": 1.0}, index=t.index))
    with pytest.raises(TypeError):
        plots.temperature_bands(t, bands="25")
    with pytest.raises(ValueError):
        plots.temperature_bands(t, bands=[25, float("nan")])


# --------------------------------------------------------------------------------- heatmap
def test_heatmap_places_rows_by_interval_midpoint():
    s = hourly(np.arange(72.0), start="2025-06-01 01:00", name="room")
    fig, ax = plots.heatmap(s)
    assert isinstance(fig, Figure)
    mesh = [c for c in ax.collections if isinstance(c, QuadMesh)][0]
    grid = np.ma.getdata(mesh.get_array()).reshape(24, 3)
    # row labelled 2025-06-01 01:00 (00:00–01:00) → 1 June, hour 0;
    # row labelled 2025-06-02 00:00 (23:00–24:00 of 1 June) → 1 June, hour 23 (comfort notes)
    assert grid[0, 0] == 0.0
    assert grid[23, 0] == 23.0
    assert grid[0, 1] == 24.0
    # 1 June 2025 is day of year 152 (31+28+31+30+31 = 151 days before it); cells centred
    assert ax.get_xlim() == (151.5, 154.5)
    assert ax.get_ylim() == (0.0, 24.0)
    assert "[h]" in ax.get_ylabel() and "[d]" in ax.get_xlabel()
    assert mesh.colorbar.ax.get_ylabel() == "room [°C]"
    assert mesh.get_cmap().name == "viridis"


def test_heatmap_sub_hourly_signed_flow_and_errors():
    v = np.sin(np.arange(96) / 48 * 2 * np.pi) * 300.0
    s = hourly(v, start="2025-03-10 00:30", freq="30min", name="window")
    _, ax = plots.heatmap(s, unit="W")
    mesh = ax.collections[0]
    grid = np.ma.getdata(mesh.get_array()).reshape(48, 2)
    # label 00:30 (00:00–00:30) → slot 0 of 10 March; label 11 March 00:00 → slot 47 of 10 March
    assert grid[0, 0] == v[0] and grid[47, 0] == v[47] and grid[0, 1] == v[48]
    assert mesh.get_cmap().name == "PuOr_r"
    lo, hi = mesh.get_clim()
    assert lo == -hi == pytest.approx(-np.abs(v).max())
    assert mesh.colorbar.ax.get_ylabel() == "window [W]"
    with pytest.raises(ScheduleError, match="divide"):
        plots.heatmap(hourly(np.zeros(20), freq="7h"))
    # the local clock repeats 02:00–03:00 on 26 Oct 2025 in Central Europe (DST ends)
    dst = pd.Series(np.zeros(72), pd.date_range("2025-10-25 01:00", periods=72, freq="h",
                                                 tz="Europe/Berlin"))
    with pytest.raises(ScheduleError, match="fixed-offset"):
        plots.heatmap(dst)
    # spring change (30 Mar 2025, 02:00 → 03:00): one empty cell, days still by local date;
    # 29 Mar 2025 is day of year 88 (31 + 28 + 29)
    spring = pd.Series(np.arange(71.0), pd.date_range("2025-03-29 01:00", periods=71,
                                                     freq="h", tz="Europe/Berlin"))
    _, ax = plots.heatmap(spring)
    grid = np.ma.getdata(ax.collections[0].get_array()).reshape(24, 3)
    assert ax.get_xlim() == (87.5, 90.5)
    assert np.isnan(grid[2, 1]) and np.isfinite(np.delete(grid[:, 1], 2)).all()
    with pytest.raises(TypeError):
        plots.heatmap(s.to_frame())


# -------------------------------------------------------------------------- duration curve
def test_duration_curve_sine_above_half_amplitude_one_third_of_time():
    # sin θ > 1/2 for θ in (π/6, 5π/6): 1/3 of every period (analytic)
    n = 480  # 30-min steps, 240 h, 10 periods of 24 h
    v = np.sin(2 * np.pi * (np.arange(n) + 0.5) / 48)
    s = hourly(v, freq="30min", name="heating")
    fig, ax = plots.duration_curve(s)
    assert isinstance(fig, Figure)
    (line,) = ax.get_lines()
    x = np.asarray(line.get_xdata(), dtype=float)
    y = np.asarray(line.get_ydata(), dtype=float)
    assert x[0] == 0.0 and x[-1] == 240.0 and np.all(np.diff(x) == 0.5)
    assert np.all(np.diff(y) <= 0)
    hours_above = x[np.argmax(y <= 0.5)]  # first step at or below 1/2
    assert hours_above == pytest.approx(240.0 / 3, abs=0.5)
    assert line.get_color() == plots.PATH_COLORS["heating"]
    assert ax.get_ylabel() == "heating [W]" and "[h]" in ax.get_xlabel()


def test_duration_curve_dataframe_and_errors():
    df = pd.DataFrame({"room": [20.0, 25.0, 22.0, 30.0], "bedroom": [19.0, 19.5, 26.0, 21.0]},
                      index=pd.date_range("2025-07-01 01:00", periods=4, freq="h", tz=TZ))
    _, ax = plots.duration_curve(df, unit="°C")
    lines = ax.get_lines()
    assert [ln.get_label() for ln in lines] == ["room", "bedroom"]
    assert list(lines[0].get_ydata()) == [30.0, 25.0, 22.0, 20.0, 20.0]
    assert lines[0].get_color() != lines[1].get_color()
    assert ax.get_ylabel() == "Value [°C]"
    # read from the curve: 2 h at or above 25 °C, as comfort.hours_above (> 24.9 °C) counts
    x = np.asarray(lines[0].get_xdata(), dtype=float)
    assert x[np.argmax(np.asarray(lines[0].get_ydata()) < 25.0)] == comfort.hours_above(
        df["room"], 24.9)
    with pytest.raises(ValueError, match="NaN"):
        plots.duration_curve(df.assign(room=[1.0, np.nan, 2.0, 3.0]))
    with pytest.raises(TypeError):
        plots.duration_curve(df.to_numpy())


# ------------------------------------------------------------------------ adaptive scatter
def adaptive_case():
    n = 24 * 40
    h = np.arange(n)
    t_out = hourly(6 + 18 * h / n + 4 * np.sin(2 * np.pi * (h - 9) / 24), name="temp_air")
    t_op = hourly(24 + 0.3 * (t_out.to_numpy() - 12) + 3.0 * np.sin(2 * np.pi * h / 24),
                  name="t_op")
    return t_op, t_out


def test_adaptive_scatter_lines_follow_en16798():
    t_op, t_out = adaptive_case()
    fig, ax = plots.adaptive_scatter(t_op, t_out, category="II")
    assert isinstance(fig, Figure)
    lines = {ln.get_gid(): ln for ln in ax.get_lines()}
    # EN 16798-1:2019 (from memory, docs/references.md §5.2): θc = 0.33 θrm + 18.8; upper θc +
    # 2/3/4 K
    # for 10 < θrm < 30 °C, lower θc − 3/4/5 K for 15 < θrm < 30 °C (cat. I/II/III)
    expect = {
        "II-upper": ([10, 30], [25.1, 31.7]),
        "II-lower": ([15, 30], [19.75, 24.7]),
        "I-upper": ([10, 30], [24.1, 30.7]),
        "I-lower": ([15, 30], [20.75, 25.7]),
        "III-upper": ([10, 30], [26.1, 32.7]),
        "III-lower": ([15, 30], [18.75, 23.7]),
        "comfort": ([10, 30], [22.1, 28.7]),
    }
    for gid, (xs, ys) in expect.items():
        np.testing.assert_allclose(lines[gid].get_xdata(), xs)
        np.testing.assert_allclose(lines[gid].get_ydata(), ys, atol=1e-9)
    assert lines["II-upper"].get_linewidth() > lines["I-upper"].get_linewidth()
    assert "θrm [°C]" in ax.get_xlabel() and "θop [°C]" in ax.get_ylabel()
    # every occupied hour is one point; the legend hours agree with comfort.adaptive_assessment
    groups = [c for c in ax.collections if isinstance(c, PathCollection)]
    assert sum(len(c.get_offsets()) for c in groups) == len(t_op)
    table = comfort.adaptive_assessment(t_op, t_out, "II").table.loc["II"]
    labels = {c.get_label().split(":")[0]: c for c in groups}
    above = labels["above category II upper limit"]
    below = labels["below category II lower limit"]
    assert len(above.get_offsets()) == table["hours_above_upper"] > 0
    assert len(below.get_offsets()) == table["hours_below_lower"]
    assert len(labels["no limit applicable"].get_offsets()) == table[
        "hours_no_limit_applicable"] > 0
    # points sit at (θrm, θop): above-limit points exceed θc + 3 K
    xy = np.asarray(above.get_offsets())
    assert np.all(xy[:, 1] > 0.33 * xy[:, 0] + 18.8 + 3.0)


def test_adaptive_scatter_occupied_and_errors():
    t_op, t_out = adaptive_case()
    occ = pd.Series(comfort.in_time_window(t_op.index, "09:00", "22:00").to_numpy(),
                    index=t_op.index)
    _, ax = plots.adaptive_scatter(t_op, t_out, category="I", occupied=occ,
                                   other_categories=False)
    groups = [c for c in ax.collections if isinstance(c, PathCollection)]
    assert sum(len(c.get_offsets()) for c in groups) == int(occ.sum()) == 13 * 40
    assert {ln.get_gid() for ln in ax.get_lines()} == {"I-upper", "I-lower", "comfort"}
    with pytest.raises(ValueError, match="category"):
        plots.adaptive_scatter(t_op, t_out, category="IV")
    with pytest.raises(ScheduleError):
        plots.adaptive_scatter(t_op, t_out.iloc[:-24])


# ------------------------------------------------------------------------- compare options
def test_compare_options_bars_sorted_labelled_highlighted():
    table = pd.DataFrame(
        {"heating_kwh_m2": [42.1, 30.5, 18.2, 25.0], "share": [0.1, 0.2, 0.3, 0.4]},
        index=["base", "more glass", "insulated", "shaded"],
    )
    fig, ax = plots.compare_options(table, "heating_kwh_m2", highlight="base")
    assert isinstance(fig, Figure)
    widths = [p.get_width() for p in ax.patches]
    assert widths == [42.1, 30.5, 25.0, 18.2]
    assert [t.get_text() for t in ax.get_yticklabels()][::-1] == [
        "base", "more glass", "shaded", "insulated"]
    # words and unit from the one label table (thermonet.labels)
    assert ax.get_xlabel() == "Heating demand per floor area [kWh/m²]"
    assert ax.patches[0].get_facecolor() != ax.patches[1].get_facecolor()
    assert any(t.get_text() == "18.2 kWh/m²" for t in ax.texts)
    _, ax = plots.compare_options(table, "share", unit="–", sort=False)
    assert [p.get_width() for p in ax.patches] == [0.1, 0.2, 0.3, 0.4]
    with pytest.raises(ValueError, match="unit"):
        plots.compare_options(table, "share")
    with pytest.raises(ValueError, match="not a column"):
        plots.compare_options(table, "cooling_kwh")
    with pytest.raises(ValueError, match="highlight"):
        plots.compare_options(table, "share", unit="–", highlight="nope")


# ---------------------------------------------------------- every chart: ax=, PNG, Figure
def _all_charts(ax=None):
    t_op, t_out = adaptive_case()
    table = pd.DataFrame({"cooling_kwh": [3.0, 1.0]}, index=["a", "b"])
    return [
        lambda: plots.balance_bars(hand_balance(), ax=ax),
        lambda: plots.balance_annual(hand_balance(), ax=ax),
        lambda: plots.temperature_bands(t_op, outdoor=t_out, bands=[25, 26, 28], ax=ax),
        lambda: plots.heatmap(t_op, ax=ax),
        lambda: plots.duration_curve(t_op, unit="°C", ax=ax),
        lambda: plots.adaptive_scatter(t_op, t_out, ax=ax),
        lambda: plots.compare_options(table, "cooling_kwh", ax=ax),
    ]


@pytest.mark.parametrize("k", range(7))
def test_every_chart_draws_into_given_axes_and_saves_png(k, tmp_path):
    fig0, axes = plt.subplots(1, 2)
    fig, ax = _all_charts(ax=axes[1])[k]()
    assert fig is fig0 and ax is axes[1]
    assert ax.get_xlabel() and ax.get_ylabel()
    fig, ax = _all_charts()[k]()
    assert isinstance(fig, Figure) and fig is not fig0
    path = tmp_path / f"chart{k}.png"
    fig.savefig(path, dpi=60)
    assert path.read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    plt.close(fig)
    plt.close(fig0)
