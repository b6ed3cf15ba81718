"""``thermonet run`` and ``thermonet check`` (thermonet.cli.run), end to end in tmp folders.

The handlers are called through an argparse parser built here with ``add_batch_commands``,
and once each through the real entry point (``thermonet.cli.main``) and a fresh
``python -m thermonet`` process.
The weather is the INVENTED Fernhollow sample shipped in ``weather_samples/`` (demo data,
used only to exercise the command, never as a reference value) or a slice of it.
"""

from __future__ import annotations

import argparse
import datetime as dt
import hashlib
import json
import math
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet.cli import run as cli_batch
from thermonet.errors import SolverError
from thermonet.io import models as io

SAMPLE = Path(__file__).resolve().parents[1] / "weather_samples" / "fernhollow_sample.csv"
SITE = ["--latitude", "48.3", "--longitude", "11.9", "--tz", "Etc/GMT-1"]
TABLES = ("temperatures", "temperatures_mean", "flows", "sources", "thermostats",
          "balance_monthly", "balance_annual", "comfort", "summary")


def parser():
    p = argparse.ArgumentParser(prog="thermonet")
    sub = p.add_subparsers(dest="command", required=True)
    cli_batch.add_batch_commands(sub)
    return p


def main(argv):
    args = parser().parse_args(argv)
    return args.func(args)


def small_network() -> tn.Network:
    """Invented two-room demo model (air, mass, massless surface, airflow, gains)."""
    net = tn.Network("two rooms")
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("living", kind="air", capacitance=1.5e5, volume=100.0)
    net.add_node("bed", kind="air", capacitance=8.0e4, volume=50.0)
    net.add_node("slab", kind="mass", capacitance=6.0e6)
    net.add_node("surface", kind="surface", capacitance=0.0)
    net.add_link("outdoor", "living", conductance=35.0, path="opaque")
    net.add_link("outdoor", "bed", conductance=20.0, path="opaque")
    net.add_link("outdoor", "living", conductance=15.0, path="glazing")
    net.add_link("living", "bed", conductance=40.0, path="internal")
    net.add_link("living", "surface", conductance=120.0, path="internal")
    net.add_link("surface", "slab", conductance=200.0, path="internal")
    net.add_airflow("outdoor", "living", ach=0.5, path="infiltration")
    net.add_source("living", power=400.0, path="internal")
    net.add_thermostat("living", heating_setpoint=20.0, max_heating_w=4000.0)
    return net


@pytest.fixture(scope="module")
def model(tmp_path_factory):
    return io.save_model(small_network(), tmp_path_factory.mktemp("m") / "model.json")


@pytest.fixture(scope="module")
def short_weather(tmp_path_factory):
    """Six weeks of the sample year as a CSV (the generator's layout) with a site sidecar."""
    d = tmp_path_factory.mktemp("w")
    lines = SAMPLE.read_text(encoding="utf-8").splitlines()
    path = d / "six_weeks.csv"
    path.write_text("\n".join(lines[:2 + 24 * 42]) + "\n", encoding="utf-8")
    (d / "six_weeks.json").write_text(json.dumps(
        {"latitude": 48.3, "longitude": 11.9, "elevation": 480.0, "tz": "Etc/GMT-1",
         "name": "Fernhollow (invented)"}), encoding="utf-8")
    return path


@pytest.fixture(scope="module")
def full_run(model, tmp_path_factory):
    out = tmp_path_factory.mktemp("run") / "results"
    code = main(["run", str(model), "--weather", str(SAMPLE), "--out", str(out), *SITE,
                 "--quiet"])
    return code, out


# ----------------------------------------------------------------------------------- run
def test_run_writes_every_promised_file(full_run):
    code, out = full_run
    assert code == 0
    assert not (out / "balance_rooms.csv").exists()      # a hand-built model has no rooms
    for name in TABLES:
        assert (out / f"{name}.csv").is_file(), name
        assert (out / f"{name}.parquet").is_file(), name  # pyarrow is installed here
    assert (out / "provenance.json").is_file()


def test_run_tables_match_a_direct_simulation(full_run, model):
    _, out = full_run
    weather = cli_batch.read_weather_csv(SAMPLE, latitude=48.3, longitude=11.9,
                                         tz="Etc/GMT-1", required=["temp_air"])
    res = tn.simulate(io.load_model(model), weather)
    temps = pd.read_csv(out / "temperatures.csv", index_col=0)
    assert list(temps.columns) == list(res.temperatures.columns)
    assert len(temps) == 8760
    # the command's first run in a fresh process may step with the numpy reference while the
    # compiled kernel builds (same numbers to ~1e-13 K): the library's numbers to 1e-10 K
    np.testing.assert_allclose(temps.to_numpy(), res.temperatures.to_numpy(), rtol=0,
                               atol=1e-10)
    pq = pd.read_parquet(out / "temperatures.parquet")
    assert pq.index.equals(res.temperatures.index)
    # CSV keeps the shortest round-trip repr of every float: the two files are identical
    assert np.array_equal(pq.to_numpy(), temps.to_numpy())


def test_run_balance_closes_and_months_add_up_to_the_year(full_run):
    _, out = full_run
    monthly = pd.read_csv(out / "balance_monthly.csv", index_col=0)
    annual = pd.read_csv(out / "balance_annual.csv", index_col=0)
    assert len(monthly) == 12 and len(annual) == 1
    assert np.allclose(monthly.sum().to_numpy(), annual.iloc[0].to_numpy(), rtol=1e-12,
                       atol=1e-9)
    terms = annual.drop(columns="residual").abs().to_numpy().max()
    # the balance of all free nodes closes to rounding (DESIGN.md: row sum zero to rounding)
    assert abs(annual["residual"].iloc[0]) < 1e-9 * terms
    assert annual["heating"].iloc[0] > 0
    summary = pd.read_csv(out / "summary.csv", index_col=0)
    assert math.isclose(summary.loc["heating_kwh", "value"], annual["heating"].iloc[0],
                        rel_tol=1e-12)


def test_run_comfort_table(full_run):
    _, out = full_run
    comfort = pd.read_csv(out / "comfort.csv", index_col=0)
    assert list(comfort.index) == ["living", "bed"]  # the air nodes, not slab/surface
    tm = pd.read_csv(out / "temperatures_mean.csv", index_col=0)
    for node in comfort.index:
        # hours above a threshold: count of hourly values strictly above it × 1 h
        # (very-low-energy overheating frequency definition, docs/references.md §5.5 [C])
        for th in (25, 26, 28):
            assert comfort.loc[node, f"hours_above_{th}_h"] == (tm[node] > th).sum()
        assert comfort.loc[node, "overheating_frequency_25"] == pytest.approx(
            (tm[node] > 25).sum() / 8760, rel=1e-12)
    # monotone in the threshold
    assert (comfort["hours_above_25_h"] >= comfort["hours_above_26_h"]).all()
    assert (comfort["hours_above_26_h"] >= comfort["hours_above_28_h"]).all()


def test_run_provenance(full_run, model):
    _, out = full_run
    rec = json.loads((out / "provenance.json").read_text(encoding="utf-8"))
    assert rec["versions"]["thermonet"] == tn.__version__
    for pkg in ("python", "numpy", "scipy", "pandas"):
        assert rec["versions"][pkg]
    assert rec["versions"]["numpy"] == np.__version__
    assert rec["model"]["sha256"] == hashlib.sha256(Path(model).read_bytes()).hexdigest()
    assert rec["weather"]["sha256"] == hashlib.sha256(SAMPLE.read_bytes()).hexdigest()
    assert "fernhollow_sample.csv" in rec["weather"]["source"]
    assert rec["weather"]["rows"] == 8760
    assert rec["weather"]["site"]["latitude"] == 48.3
    assert rec["solver"]["method"] == "exact"
    assert rec["solver"]["steps"] == 8760
    assert rec["settings"]["warmup_days"] == 14.0
    created = dt.datetime.fromisoformat(rec["created_utc"])
    assert created.utcoffset() == dt.timedelta(0)
    assert rec["command"][:2] == ["thermonet", "run"]
    written = {Path(o["path"]).name: o["sha256"] for o in rec["outputs"]}
    assert len(written) == 2 * len(TABLES)
    assert written["flows.csv"] == hashlib.sha256((out / "flows.csv").read_bytes()).hexdigest()


def test_run_refuses_to_overwrite_earlier_results(full_run, model, capsys):
    _, out = full_run
    code = main(["run", str(model), "--weather", str(SAMPLE), "--out", str(out), *SITE, "-q"])
    assert code == cli_batch.EXIT_USAGE
    assert "--overwrite" in capsys.readouterr().err


def test_run_csv_only_with_sidecar_and_sub_hourly_step(model, short_weather, tmp_path, capsys):
    out = tmp_path / "r"
    code = main(["run", str(model), "--weather", str(short_weather), "--out", str(out),
                 "--format", "csv", "--step", "30min", "--warmup-days", "3"])
    assert code == 0
    err = capsys.readouterr().err
    assert "thermonet run: simulating" in err and "done" in err  # progress on stderr
    assert not list(out.glob("*.parquet"))
    temps = pd.read_csv(out / "temperatures.csv", index_col=0)
    assert len(temps) == 2 * 24 * 42
    rec = json.loads((out / "provenance.json").read_text(encoding="utf-8"))
    assert rec["weather"]["site"]["elevation"] == 480.0  # from the sidecar
    assert rec["solver"]["step_s"] == 1800.0
    assert rec["settings"]["step"] == pd.Timedelta("30min").isoformat()


# ------------------------------------------------------------------------- exit codes
def _code(argv, capsys):
    code = main(argv)
    return code, capsys.readouterr().err


def test_exit_code_invalid_model_file(tmp_path, short_weather, capsys):
    data = io.to_dict(small_network())
    data["network"]["nodes"][0]["colour"] = "red"
    bad = tmp_path / "bad.json"
    bad.write_text(json.dumps(data), encoding="utf-8")
    code, err = _code(["run", str(bad), "--weather", str(short_weather), "--out",
                       str(tmp_path / "o"), "-q"], capsys)
    assert code == 3 and "unknown key 'colour'" in err
    assert not (tmp_path / "o").exists()  # nothing written on failure
    code, err = _code(["check", str(bad)], capsys)
    assert code == 3


def test_exit_code_disconnected_network_is_invalid_model(tmp_path, short_weather, capsys):
    net = small_network()
    net.add_node("attic", kind="air", capacitance=1e4)
    path = io.save_model(net, tmp_path / "m.json")
    code, err = _code(["run", str(path), "--weather", str(short_weather), "--out",
                       str(tmp_path / "o"), "-q"], capsys)
    assert code == 3 and "'attic'" in err and "no path to any boundary" in err
    code, err = _code(["check", str(path)], capsys)
    assert code == 3 and "'attic'" in err


def test_exit_code_missing_files_are_usage_errors(model, tmp_path, capsys):
    code, err = _code(["run", str(tmp_path / "none.json"), "--weather", str(SAMPLE), "--out",
                       str(tmp_path / "o"), *SITE, "-q"], capsys)
    assert code == 2 and "cannot read model file" in err
    code, err = _code(["run", str(model), "--weather", str(tmp_path / "none.csv"), "--out",
                       str(tmp_path / "o"), *SITE, "-q"], capsys)
    assert code == 2 and "cannot read weather file" in err


@pytest.mark.parametrize("step", ["7min", "2h", "abc", "-15min"])
def test_exit_code_bad_step(model, short_weather, tmp_path, capsys, step):
    code, err = _code(["run", str(model), "--weather", str(short_weather), "--out",
                       str(tmp_path / "o"), f"--step={step}", "-q"], capsys)
    assert code == 2 and "--step" in err


def test_exit_code_bad_warmup(model, short_weather, tmp_path, capsys):
    code, _ = _code(["run", str(model), "--weather", str(short_weather), "--out",
                     str(tmp_path / "o"), "--warmup-days", "-1", "-q"], capsys)
    assert code == 2


def test_argparse_errors_exit_2(model):
    with pytest.raises(SystemExit) as exc:
        main(["run", str(model)])  # --weather and --out missing
    assert exc.value.code == 2


def _corrupt_weather(short_weather, tmp_path, edit):
    lines = short_weather.read_text(encoding="utf-8").splitlines()
    lines = edit(lines)
    p = tmp_path / "w.csv"
    p.write_text("\n".join(lines) + "\n", encoding="utf-8")
    (tmp_path / "w.json").write_text(short_weather.with_suffix(".json").read_text())
    return p


@pytest.mark.parametrize("what,edit,match", [
    ("NaN in temp_air", lambda ls: ls[:10] + [ls[10].replace(ls[10].split(",")[1], "", 1)]
     + ls[11:], "NaN"),
    ("duplicate stamp", lambda ls: ls[:10] + [ls[10]] + ls[10:], "duplicate"),
    ("missing hour", lambda ls: ls[:10] + ls[11:], "missing|irregular|gap|step"),
    ("garbage stamp", lambda ls: ls[:10] + ["yesterday" + ls[10][ls[10].index(","):]]
     + ls[11:], "ISO 8601"),
    ("no temp_air", lambda ls: [ls[0], ls[1].replace("temp_air", "t_air")] + ls[2:],
     "temp_air"),
])
def test_exit_code_invalid_weather(model, short_weather, tmp_path, capsys, what, edit, match):
    p = _corrupt_weather(short_weather, tmp_path, edit)
    code, err = _code(["run", str(model), "--weather", str(p), "--out", str(tmp_path / "o"),
                       "-q"], capsys)
    assert code == 4, (what, err)
    assert "invalid weather" in err
    import re

    assert re.search(match, err), (what, err)


def test_exit_code_simulation_failure(model, short_weather, tmp_path, capsys, monkeypatch):
    import thermonet.engine.simulate

    def broken(*args, **kwargs):
        raise SolverError("accuracy target not met (simulated failure)")

    monkeypatch.setattr(thermonet.engine.simulate, "simulate", broken)
    code, err = _code(["run", str(model), "--weather", str(short_weather), "--out",
                       str(tmp_path / "o"), "-q"], capsys)
    assert code == 5 and "SolverError" in err and "simulated failure" in err
    assert not (tmp_path / "o" / "provenance.json").exists()


def test_help_documents_exit_codes(capsys):
    with pytest.raises(SystemExit):
        parser().parse_args(["run", "--help"])
    out = capsys.readouterr().out
    for line in ("0  success", "2  bad usage", "3  invalid model file", "4  invalid weather",
                 "5  simulation failed"):
        assert line in out


# --------------------------------------------------------------------------------- check
def test_check_prints_the_summary(model, capsys):
    assert main(["check", str(model)]) == 0
    out = capsys.readouterr().out
    assert "OK" in out
    assert "air             2" in out
    assert "mass            1" in out
    assert "U·A by path [W/K]" in out
    assert "eigen time constants [h] (3 modes)" in out  # massless surface eliminated
    # ach 0.5 of 100 m³ = 50 m³/h; ρc = 1200 J/(m³K) (ISO 13789:2017 §8.3, from memory)
    # gives 50 · 1200 / 3600 = 16.67 W/K under "infiltration"
    assert "infiltration" in out and "16.67" in out


def test_check_json_and_with_weather(model, short_weather, capsys):
    assert main(["check", str(model), "--json", "--weather", str(short_weather)]) == 0
    s = json.loads(capsys.readouterr().out)
    assert s["ua_by_path_w_per_k"]["opaque"] == pytest.approx(55.0, rel=1e-15)
    assert s["ua_by_path_w_per_k"]["glazing"] == pytest.approx(15.0, rel=1e-15)
    assert s["nodes_by_kind"]["air"] == {"count": 2, "capacitance_j_per_k": 2.3e5}
    assert s["node_time_constants_h"]["surface"] == 0.0
    assert s["model"]["schema_version"] == 1


def test_check_invalid_weather_exit_4(model, short_weather, tmp_path, capsys):
    p = _corrupt_weather(short_weather, tmp_path, lambda ls: ls[:10] + ls[11:])
    code, _ = _code(["check", str(model), "--weather", str(p)], capsys)
    assert code == 4


def test_time_constant_of_a_single_rc_node():
    # One node of capacitance C joined to a boundary by G: lumped-capacitance time constant
    # τ = C/G (Incropera et al., Fundamentals of Heat and Mass Transfer, 6th ed., 2007, §5.2).
    net = tn.Network()
    net.add_boundary("out", temperature=0.0)
    net.add_node("n", capacitance=3.6e6)
    net.add_link("out", "n", conductance=100.0, path="opaque")
    s = cli_batch.model_summary(net)
    assert s["node_time_constants_h"]["n"] == pytest.approx(10.0, rel=1e-14)
    assert s["eigen_time_constants_h"]["slowest"] == pytest.approx(10.0, rel=1e-12)
    assert s["eigen_time_constants_h"]["fastest"] == pytest.approx(10.0, rel=1e-12)


def test_eigen_time_constants_of_a_two_node_chain():
    # boundary –G– C –G– C (end node insulated): C dT/dt = −G [[2, −1], [−1, 1]] T, whose
    # eigenvalues are (3 ∓ √5)/2 · G/C (characteristic polynomial λ² − 3λ + 1 = 0 in units
    # of G/C), so τ = 2C / ((3 ∓ √5) G).
    c, g = 1.8e6, 50.0
    net = tn.Network()
    net.add_boundary("out", temperature=0.0)
    net.add_node("a", capacitance=c)
    net.add_node("b", capacitance=c)
    net.add_link("out", "a", conductance=g, path="p")
    net.add_link("a", "b", conductance=g, path="p")
    e = cli_batch.model_summary(net)["eigen_time_constants_h"]
    assert e["slowest"] == pytest.approx(2 * c / ((3 - 5**0.5) * g) / 3600, rel=1e-12)
    assert e["fastest"] == pytest.approx(2 * c / ((3 + 5**0.5) * g) / 3600, rel=1e-12)


# ------------------------------------------------------- a builder-made model, real entry point
def builder_model(weather) -> tn.Network:
    """An invented room made by the builders on the sample weather's index: a south window,
    external walls and roof to outdoor air and sky, a slab on the ground (demo data)."""
    from thermonet.builders import Element, Window, add_infiltration, add_room
    from thermonet.constructions import Construction

    wall = Construction("wall", [("gypsum_plaster_1300", 0.015), ("concrete_2000", 0.2),
                                 ("mineral_wool", 0.16)])
    slab = Construction("slab", [("concrete_2200", 0.15), ("eps", 0.12)])
    net = tn.Network("built room")
    room = add_room(net, "room", floor_area=25.0, height=2.6, weather=weather,
                    ground_temperature="temp_ground_2m", elements=[
                        Element("south", wall, 14.0, 90, 180,
                                windows=[Window("win", 4.0, 0.8, 0.5)]),
                        Element("north", wall, 14.0, 90, 0),
                        Element("roof", Construction("roof", [("concrete_2200", 0.2),
                                                              ("mineral_wool", 0.3)]),
                                25.0, 0, 180),
                        Element("slab", slab, 25.0, 180, 0, boundary="ground",
                                perimeter=20.0)])
    add_infiltration(net, room, ach=0.4)
    net.add_thermostat("room", heating_setpoint=20.0)
    return net


@pytest.fixture(scope="module")
def sample_weather():
    """The sample CSV as the library reads it, with the sky temperature add_room checks for."""
    from thermonet.weather import add_sky_temperature

    return add_sky_temperature(cli_batch.read_weather_csv(
        SAMPLE, latitude=48.3, longitude=11.9, elevation=480.0, tz="Etc/GMT-1"))


def test_entry_point_runs_a_builder_model_end_to_end(sample_weather, tmp_path, capsys):
    # The real command line (thermonet.cli.main, what the `thermonet` script calls) on a
    # model made by add_room: the model reads temp_sky and temp_ground_2m, which the CSV
    # lacks, so the command derives them (Berdahl–Martin, Kusuda–Achenbach) and says so.
    from thermonet import cli
    from thermonet.weather import add_ground_temperature

    model = io.save_model(builder_model(sample_weather), tmp_path / "built.json")
    out = tmp_path / "results"
    code = cli.main(["run", str(model), "--weather", str(SAMPLE), "--out", str(out),
                     "--latitude", "48.3", "--longitude", "11.9", "--elevation", "480",
                     "--tz", "Etc/GMT-1", "--format", "parquet"])
    assert code == 0
    err = capsys.readouterr().err
    assert "derived weather column(s) temp_sky, temp_ground_2m" in err
    for name in TABLES:
        assert (out / f"{name}.parquet").is_file()
    rec = json.loads((out / "provenance.json").read_text(encoding="utf-8"))
    assert "derived by thermonet: temp_sky, temp_ground_2m" in rec["weather"]["source"]
    # the command's numbers are the library's numbers for the same derived weather
    w = add_ground_temperature(sample_weather, depth=2.0)
    res = tn.simulate(io.load_model(model), w)
    temps = pd.read_parquet(out / "temperatures.parquet")
    assert temps.index.equals(res.temperatures.index)
    # (the command may step with the numpy reference while the kernel builds: ~1e-13 K)
    np.testing.assert_allclose(temps.to_numpy(), res.temperatures.to_numpy(), rtol=0,
                               atol=1e-10)
    annual = pd.read_parquet(out / "balance_annual.parquet")
    assert annual["solar"].iloc[0] > 0 and annual["ground"].iloc[0] < 0
    assert annual["heating"].iloc[0] == pytest.approx(res.heating.sum() / 1000.0, rel=1e-9)
    # the rooms of the builders' records, by name, as in a study's balance[<room>]:<path>
    rooms = pd.read_parquet(out / "balance_rooms.parquet")
    from thermonet.builders import rooms as recorded
    for name, room in recorded(io.load_model(model)).items():
        expect = res.balance(room.nodes).sum()
        for path, value in expect.items():
            assert rooms.loc[name, path] == pytest.approx(value, rel=1e-9, abs=1e-9), path
        assert abs(rooms.loc[name, "residual"]) <= 1e-9 * expect.drop("residual").abs().max()


def test_derived_ground_column_needs_a_whole_year(sample_weather, short_weather, tmp_path,
                                                  capsys):
    model = io.save_model(builder_model(sample_weather), tmp_path / "built.json")
    code, err = _code(["run", str(model), "--weather", str(short_weather), "--out",
                       str(tmp_path / "o"), "-q"], capsys)
    assert code == cli_batch.EXIT_WEATHER and "360 days" in err


def test_python_m_thermonet_exit_codes(model, tmp_path):
    # `python -m thermonet` in a fresh process: exit status and streams as a shell sees them
    import subprocess
    import sys

    ok = subprocess.run([sys.executable, "-m", "thermonet", "check", str(model)],
                        capture_output=True, text=True, check=False)
    assert ok.returncode == 0, ok.stderr
    assert "OK" in ok.stdout and "U·A by path [W/K]" in ok.stdout
    bad = tmp_path / "bad.json"
    bad.write_text('{"format": "thermonet-model", "schema_version": 99, "network": {}}',
                   encoding="utf-8")
    fail = subprocess.run([sys.executable, "-m", "thermonet", "check", str(bad)],
                          capture_output=True, text=True, check=False)
    assert fail.returncode == cli_batch.EXIT_MODEL
    assert "schema_version 99" in fail.stderr


def test_progress_lines_while_the_solver_runs(model, short_weather, tmp_path, capsys,
                                              monkeypatch):
    # The solver reports nothing until it returns; `run` prints "still simulating …" every
    # --progress-every seconds meanwhile. The stand-in solver below waits until such a line
    # has been printed (no timing is asserted), then solves for real.
    import threading

    import thermonet.engine.simulate

    seen = threading.Event()
    original = cli_batch._Progress.__call__

    def spy(self, msg):
        original(self, msg)
        if msg.startswith("still simulating"):
            seen.set()

    real = thermonet.engine.simulate.simulate

    def waits_for_progress(*args, **kwargs):
        assert seen.wait(60), "no progress line while simulating"
        return real(*args, **kwargs)

    monkeypatch.setattr(cli_batch._Progress, "__call__", spy)
    monkeypatch.setattr(thermonet.engine.simulate, "simulate", waits_for_progress)
    code = main(["run", str(model), "--weather", str(short_weather), "--out",
                 str(tmp_path / "o"), "--progress-every", "0.01", "--format", "csv"])
    assert code == 0
    err = capsys.readouterr().err
    assert "thermonet run: still simulating …" in err
    assert err.rstrip().splitlines()[-1].startswith("thermonet run: done")  # beats stopped


def test_quiet_and_bad_progress_interval(model, short_weather, tmp_path, capsys):
    code, err = _code(["run", str(model), "--weather", str(short_weather), "--out",
                       str(tmp_path / "o"), "--progress-every", "-1"], capsys)
    assert code == cli_batch.EXIT_USAGE and "--progress-every" in err
    code, err = _code(["run", str(model), "--weather", str(short_weather), "--out",
                       str(tmp_path / "q"), "-q", "--format", "csv"], capsys)
    assert code == 0 and err == ""
