"""The demo study (``thermonet demo``) end to end: every promised file, tables, HTML, physics.

The scenario, its weather and its building are INVENTED (thermonet.scenarios); nothing here
uses their numbers as check values. The checks are: the files and columns the report
promises, the cautions it must carry, the closure of every balance (a property of the
method, DESIGN.md "Results and the energy balance"), and directions of change that follow
from the physics of each option whatever the inputs (less transmitted solar behind blinds,
lower g or a smaller window; heat leaving by night ventilation; a smaller daily swing with
more thermal mass).
"""

import argparse
import re
import subprocess
import sys

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet import cli
from thermonet.constants import CAUTION
from thermonet.errors import NetworkError, WeatherError
from thermonet.scenarios import report
from thermonet.scenarios import sunny_room as sr

OPTION_KEYS = ["baseline", "external_blinds", "night_ventilation", "added_mass",
               "lower_g_glazing", "smaller_window"]
SUMMARY_COLUMNS = [
    "label", "hours_above_25_h", "hours_above_26_h", "hours_above_28_h", "max_operative_c",
    "overheating_freq_25_pct", "overheating_freq_ok", "adaptive_ii_hours_above_h",
    "tm52_c1_exceedance_pct", "tm52_c2_worst_we_kelvin_hours", "tm52_c3_max_dt_k", "tm52_ok",
    "tm59_ok",
    "heating_kwh", "heating_kwh_m2", "peak_heating_w", "peak_heating_w_m2",
    "solar_windows_summer_kwh", "solar_windows_annual_kwh", "daily_swing_summer_k",
    "cost_rank",
]


def _read(folder, name):
    return pd.read_csv(folder / name, index_col=0)


def _check_closes(table):
    """Row sums of a balance table close: |residual| ≤ 1e-10 × the largest term.

    Measured ≤ 3.5e-13 at 480 h and 1.0e-11 over the full year (annual sums of 8,760 steps
    whose residuals are ~1e-9 W against terms of ~1e3 W); 1e-10 leaves a margin of ~10.
    """
    terms = table.drop(columns="residual").abs().to_numpy().max(axis=1)
    assert (table["residual"].abs().to_numpy() <= 1e-10 * np.maximum(terms, 1.0)).all()
    recomputed = table.drop(columns="residual").sum(axis=1)
    # the CSV keeps 6 significant digits: the written terms add up to rounding of that size
    assert (recomputed.abs() <= 1e-5 * np.maximum(terms, 1.0) * table.shape[1]).all()


def _check_report_folder(folder, *, n_options=6):
    for name in report.REPORT_FILES:
        path = folder / name
        assert path.is_file(), f"missing {name}"
        assert path.stat().st_size > 0, f"empty {name}"
    for name in report.FIGURES:
        assert (folder / name).read_bytes()[:8] == b"\x89PNG\r\n\x1a\n"
    summary = _read(folder, "summary.csv")
    assert list(summary.index) == OPTION_KEYS[:n_options]
    assert set(SUMMARY_COLUMNS) <= set(summary.columns)
    for name in ("balance_annual.csv", "balance_summer.csv"):
        tab = _read(folder, name)
        assert list(tab.index) == OPTION_KEYS[:n_options]
        assert {"solar", "internal", "opaque", "glazing", "buffer", "adjacent", "infiltration",
                "ventilation", "heating", "storage", "residual"} <= set(tab.columns)
        _check_closes(tab)
    monthly = _read(folder, "balance_monthly_baseline.csv")
    _check_closes(monthly)
    verdicts = pd.read_csv(folder / "verdicts.csv")
    assert {"option", "criterion_set", "criterion", "value", "limit", "unit", "passed",
            "source"} <= set(
        verdicts.columns)
    assert set(verdicts["option"]) == set(OPTION_KEYS[:n_options])
    changes = pd.read_csv(folder / "path_changes.csv")
    assert {"option", "period", "path", "baseline_kwh", "option_kwh", "change_kwh"} <= set(
        changes.columns)
    scale = np.maximum(changes["option_kwh"].abs(), changes["baseline_kwh"].abs())
    gap = (changes["change_kwh"] - (changes["option_kwh"] - changes["baseline_kwh"])).abs()
    assert (gap <= 1e-5 * scale + 1e-9).all()  # 6 significant digits in the CSV
    hourly = _read(folder, "hourly_operative.csv")
    assert list(hourly.columns) == ["outdoor_air", *OPTION_KEYS[:n_options]]
    options = _read(folder, "options.csv")
    assert {"description", "design_change", "cost_rank_invented", "cost_note_invented"} <= set(
        options.columns)

    html = (folder / "index.html").read_text(encoding="utf-8")
    flat = re.sub(r"\s+", " ", html)
    assert CAUTION in flat
    assert "not a substitute for code-compliance calculations" in flat
    assert "INVENTED" in flat
    assert "licensed professionals" in flat
    # self-contained: every figure embedded, nothing fetched from elsewhere
    assert flat.count("src='data:image/png;base64,") == len(report.FIGURES)
    assert not re.search(r"""(src|href)=["'](?!data:)""", flat)
    for o in sr.OPTIONS.values():
        assert o.label in flat
    assert "Which heat path moved" in flat
    return summary


# ------------------------------------------------------------------------- quick runs
def test_demo_short_run_writes_every_file(tmp_path, capsys):
    out = tmp_path / "report"
    assert cli.main(["demo", "--out", str(out), "--hours", "72"]) == 0
    err = capsys.readouterr().err
    assert "thermonet demo:" in err and "[6/6]" in err and "index.html" in err
    summary = _check_report_folder(out)
    hourly = _read(out, "hourly_operative.csv")
    assert len(hourly) == 72
    # a January run has no May–September hour: TM52/TM59 are "not assessed", not invented
    assert summary["tm52_ok"].isna().all() and summary["tm59_ok"].isna().all()
    assert summary["overheating_freq_ok"].isna().all()  # the 10 % limit is annual
    assert "not assessed" in (out / "index.html").read_text(encoding="utf-8")


def test_demo_quiet_into_an_existing_folder(tmp_path, capsys):
    out = tmp_path / "r"
    out.mkdir()
    (out / "mine.txt").write_text("keep me")
    (out / "hourly_operative.csv").write_text("stale")
    assert cli.main(["demo", "--out", str(out), "--hours", "50", "--quiet"]) == 0
    captured = capsys.readouterr()
    assert captured.err == "" and captured.out == ""
    assert (out / "mine.txt").read_text() == "keep me"          # other files left alone
    assert len(_read(out, "hourly_operative.csv")) == 72  # overwritten; whole days (50 → 72)


def test_demo_usage_errors(tmp_path, capsys):
    with pytest.raises(SystemExit) as exc:
        cli.main(["demo", "--hours", "10"])
    assert exc.value.code == 2
    assert "--hours" in capsys.readouterr().err
    afile = tmp_path / "afile"
    afile.write_text("x")
    assert cli.main(["demo", "--out", str(afile), "--hours", "48", "--quiet"]) == 2
    assert "afile" in capsys.readouterr().err


def test_help_of_every_command():
    top = subprocess.run([sys.executable, "-m", "thermonet", "--help"], capture_output=True,
                         text=True, check=True)
    assert "demo" in top.stdout and "licensed professionals" in re.sub(r"\s+", " ", top.stdout)
    demo = subprocess.run([sys.executable, "-m", "thermonet", "demo", "--help"],
                          capture_output=True, text=True, check=True)
    for flag in ("--out", "--hours", "--quiet"):
        assert flag in demo.stdout
    # every command has a one-line help in `thermonet --help` and its own --help
    (sub,) = [a for a in cli.build_parser()._actions
              if isinstance(a, argparse._SubParsersAction)]
    helped = {a.dest: a.help for a in sub._choices_actions}
    for name, parser in sub.choices.items():
        assert helped.get(name), name
        assert name in top.stdout
        assert parser.description or parser.format_help(), name


# ------------------------------------------------------------------------ the scenario API
def test_design_and_option_errors_name_the_field():
    with pytest.raises(NetworkError, match="g_value"):
        sr.Design(g_value=1.5)
    with pytest.raises(NetworkError, match="west_glazing_area"):
        sr.Design(west_glazing_area=0.0)
    with pytest.raises(TypeError, match="night_ventilation"):
        sr.Design(night_ventilation="yes")
    with pytest.raises(KeyError, match="external_blinds"):
        sr.run_study(options=["no_such_option"], hours=48)
    w = sr.prepare_weather(hours=48)
    with pytest.raises(TypeError, match="g_valu"):
        sr.build_sunny_room(w, g_valu=0.3)
    with pytest.raises(WeatherError, match="temp_sky"):
        sr.build_sunny_room(w.drop(columns="temp_sky"))
    with pytest.raises(ValueError, match="hours"):
        sr.prepare_weather(hours=10)


def test_room_balance_is_the_library_balance_with_absorbed_sun_under_opaque():
    w = sr.prepare_weather(hours=96)
    net, h = sr.build_sunny_room(w)
    res = tn.simulate(net, w)
    lib = res.balance(h.room.nodes)
    ours = sr.room_balance(res, h)
    assert h.opaque_solar_sources and h.window_solar_sources
    # the builders book the sun on outer faces under the element's path, so a user's own
    # balance and the report's are the same table
    assert {net.sources[s].path for s in h.opaque_solar_sources} == {"opaque"}
    pd.testing.assert_frame_equal(ours, lib[ours.columns])
    window = res.sources[h.window_solar_sources].sum(axis=1) / 1000.0  # W over 1 h → kWh
    np.testing.assert_allclose(ours["solar"], window, atol=1e-9)
    monthly = sr.room_balance(res, h, freq="MS")
    np.testing.assert_allclose(monthly.drop(columns="residual").sum().to_numpy(),
                               ours.drop(columns="residual").sum().to_numpy(), rtol=1e-12,
                               atol=1e-9)


def test_own_option_objects_can_be_studied():
    combo = sr.Option("mass_and_night", "Mass + night ventilation", "both",
                      {"added_mass": True, "night_ventilation": True}, 4, "invented")
    study = sr.run_study(options=["external_blinds", combo], hours=48)
    assert list(study.summary.index) == ["baseline", "external_blinds", "mass_and_night"]
    assert study.options["mass_and_night"].design.added_mass
    with pytest.raises(TypeError, match="Option"):
        sr.run_study(options=[3], hours=48)


# ------------------------------------------------------------------------ the full year
@pytest.fixture(scope="module")
def full_report(tmp_path_factory):
    out = tmp_path_factory.mktemp("full") / "thermonet-report"
    assert cli.main(["demo", "--out", str(out), "--quiet"]) == 0
    return out


def test_full_year_report_is_complete(full_report):
    summary = _check_report_folder(full_report)
    # a whole year: every annual verdict is judged
    assert summary["tm52_ok"].notna().all() and summary["overheating_freq_ok"].notna().all()
    hourly = _read(full_report, "hourly_operative.csv")
    assert len(hourly) == 8760 and np.isfinite(hourly.to_numpy()).all()
    verdicts = pd.read_csv(full_report / "verdicts.csv")
    for name in ("TM52 criterion 1", "TM52 criterion 2", "TM52 criterion 3",
                 "TM59 criterion (a)", "overheating frequency", "heating demand"):
        assert verdicts["criterion"].str.startswith(name).sum() == 6, name
    # every criterion is judged over a year, EN 16798-1 too (with its indicative 5 % mark)
    assert verdicts["passed"].notna().all()
    assert set(verdicts["criterion_set"]) == {"en16798", "tm52", "tm59", "very_low_energy"}


def test_full_year_options_move_the_expected_paths(full_report):
    s = _read(full_report, "summary.csv")
    summer = _read(full_report, "balance_summer.csv")
    annual = _read(full_report, "balance_annual.csv")
    base = "baseline"
    # heating is off from May to September: nothing is heated in June–August
    assert (summer["heating"].abs() < 1e-9).all()
    assert (annual["heating"] > 0).all()
    # the same occupants and appliances in every option
    np.testing.assert_allclose(annual["internal"], annual.loc[base, "internal"], rtol=1e-9)
    # options that cut the transmitted sun: less solar in summer and over the year, and
    # fewer hours above 26 °C than the baseline
    for key in ("external_blinds", "lower_g_glazing", "smaller_window"):
        assert summer.loc[key, "solar"] < summer.loc[base, "solar"], key
        assert annual.loc[key, "solar"] < annual.loc[base, "solar"], key
        assert s.loc[key, "hours_above_26_h"] < s.loc[base, "hours_above_26_h"], key
    # options that leave the windows alone admit the same sun
    for key in ("night_ventilation", "added_mass"):
        assert summer.loc[key, "solar"] == pytest.approx(summer.loc[base, "solar"], rel=1e-9)
    # a lower g lets in less winter sun too, so it needs more heating
    assert s.loc["lower_g_glazing", "heating_kwh"] > s.loc[base, "heating_kwh"]
    # night ventilation carries heat out (only it has that path) and cuts hours above 26 °C
    assert summer.loc["night_ventilation", "night_ventilation"] < 0
    assert (summer.drop(index="night_ventilation")["night_ventilation"] == 0).all()
    assert s.loc["night_ventilation", "hours_above_26_h"] < s.loc[base, "hours_above_26_h"]
    # added mass damps the daily swing and the peak of the operative temperature
    assert s.loc["added_mass", "daily_swing_summer_k"] < s.loc[base, "daily_swing_summer_k"]
    assert s.loc["added_mass", "max_operative_c"] < s.loc[base, "max_operative_c"]
    # the "which path moved" table names solar for the blinds
    changes = pd.read_csv(full_report / "path_changes.csv")
    blinds = changes[(changes["option"] == "external_blinds") & (changes["period"] == "summer")
                     & ~changes["path"].isin(["storage", "residual"])]
    assert blinds.loc[blinds["change_kwh"].abs().idxmax(), "path"] == "solar"
