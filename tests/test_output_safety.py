"""Nothing lost: result folders as one unit, typed errors for every bad input on the way.

Each data-loss scenario of ``thermonet run`` is one test (a user's own file overwritten; an
overwrite killed mid-write; two runs into one folder; an old table format left beside a
new one), then the user-input failures that used to end in a raw traceback: an unknown
zone, naive stamps in a daylight-saving zone, a pvlib reader given the wrong file, damaged
study folders, a full disk, Ctrl-C.

The weather is a few days of the INVENTED Fernhollow sample (demo data, used only to
exercise the commands, never as a reference value).
"""

from __future__ import annotations

import argparse
import errno
import json
import os
import stat
import warnings
from pathlib import Path

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet.cli import run as cli_run
from thermonet.errors import (
    ModelFileError,
    OutputFolderError,
    StudyError,
    TimeZoneError,
    WeatherError,
)
from thermonet.io import files
from thermonet.io import models as io
from thermonet.io.provenance import file_sha256, write_provenance
from thermonet.studies import read_study, run_variants

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "weather_samples" / "fernhollow_sample.csv"
SIDE = {"latitude": 48.3, "longitude": 11.9, "elevation": 480.0, "tz": "Etc/GMT-1"}


def parser():
    p = argparse.ArgumentParser(prog="thermonet")
    sub = p.add_subparsers(dest="command", required=True)
    cli_run.add_batch_commands(sub)
    return p


def run(argv):
    args = parser().parse_args(argv)
    return args.func(args)


def room(g: float = 35.0) -> tn.Network:
    """Invented one-room model; ``g`` [W/K] tells two models apart."""
    net = tn.Network(f"room g={g}")
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1.5e5, volume=100.0)
    net.add_node("slab", kind="mass", capacitance=6.0e6)
    net.add_link("outdoor", "room", conductance=g, path="opaque")
    net.add_link("room", "slab", conductance=150.0, path="internal")
    net.add_source("room", power=300.0, path="internal")
    net.add_thermostat("room", heating_setpoint=20.0)
    return net


@pytest.fixture(scope="module")
def models(tmp_path_factory):
    d = tmp_path_factory.mktemp("models")
    return io.save_model(room(35.0), d / "a.json"), io.save_model(room(60.0), d / "b.json")


@pytest.fixture(scope="module")
def weather_csv(tmp_path_factory):
    """Four days of the invented sample with its site sidecar."""
    d = tmp_path_factory.mktemp("w")
    lines = SAMPLE.read_text(encoding="utf-8").splitlines()
    path = d / "four_days.csv"
    path.write_text("\n".join(lines[:2 + 24 * 4]) + "\n", encoding="utf-8")
    (d / "four_days.json").write_text(json.dumps(SIDE), encoding="utf-8")
    return path


def argv(model, weather, out, *more):
    return ["run", str(model), "--weather", str(weather), "--out", str(out), "--quiet",
            "--warmup-days", "1", *more]


def snapshot(folder: Path) -> dict:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def consistent(folder: Path) -> dict:
    """The provenance record of a folder, after checking it names exactly its files."""
    rec = json.loads((folder / "provenance.json").read_text(encoding="utf-8"))
    named = {Path(o["path"]).name: o["sha256"] for o in rec["outputs"]}
    present = {p.name for p in folder.iterdir()} - {"provenance.json"}
    assert present == set(named)
    for name, sha in named.items():
        assert file_sha256(folder / name) == sha, name
    return rec


def leftovers(parent: Path) -> list[str]:
    return sorted(p.name for p in parent.iterdir() if p.name.startswith("."))


# ------------------------------------------------------------------ data-loss scenarios
def test_scenario1_folder_with_a_users_own_file_is_refused(models, weather_csv, tmp_path,
                                                            capsys):
    out = tmp_path / "mine"
    out.mkdir()
    (out / "summary.csv").write_text("my own numbers\n", encoding="utf-8")
    code = run(argv(models[0], weather_csv, out))
    assert code == 2
    err = capsys.readouterr().err
    assert "files thermonet did not write (summary.csv)" in err and "--overwrite" in err
    assert (out / "summary.csv").read_text(encoding="utf-8") == "my own numbers\n"
    assert snapshot(out) == {"summary.csv": b"my own numbers\n"}
    # asked for explicitly, the folder is replaced as a whole
    assert run(argv(models[0], weather_csv, out, "--overwrite")) == 0
    assert "my own numbers" not in (out / "summary.csv").read_text(encoding="utf-8")
    consistent(out)


def test_overwrite_never_takes_a_users_other_files_with_it(models, weather_csv, tmp_path,
                                                           capsys):
    out = tmp_path / "shared"
    assert run(argv(models[0], weather_csv, out, "--format", "csv")) == 0
    (out / "notes.txt").write_text("keep me", encoding="utf-8")
    (out / "drafts").mkdir()
    code = run(argv(models[1], weather_csv, out, "--overwrite"))
    err = capsys.readouterr().err
    assert code == 2 and "2 entries thermonet never writes there (drafts, notes.txt)" in err
    assert (out / "notes.txt").read_text(encoding="utf-8") == "keep me"
    assert (out / "drafts").is_dir() and "a.json" in json.loads(
        (out / "provenance.json").read_text(encoding="utf-8"))["model"]["path"]


def test_scenario2_overwrite_failing_mid_write_keeps_the_old_complete_set(
        models, weather_csv, tmp_path, monkeypatch, capsys):
    out = tmp_path / "res"
    assert run(argv(models[0], weather_csv, out, "--format", "csv")) == 0
    before = snapshot(out)
    calls = {"n": 0}
    real = pd.DataFrame.to_csv

    def dies_on_the_fourth_table(self, path, *a, **k):
        calls["n"] += 1
        if calls["n"] == 4:
            raise KeyboardInterrupt  # Ctrl-C (or a kill) between two tables
        return real(self, path, *a, **k)

    monkeypatch.setattr(pd.DataFrame, "to_csv", dies_on_the_fourth_table)
    code = run(argv(models[1], weather_csv, out, "--format", "csv", "--overwrite"))
    assert code == 130
    assert "interrupted" in capsys.readouterr().err
    assert snapshot(out) == before            # the old set, whole, with its own provenance
    assert "a.json" in consistent(out)["model"]["path"]
    assert leftovers(tmp_path) == []          # no staging folder, no lock left


def test_scenario3_second_run_into_a_folder_being_written_is_refused(
        models, weather_csv, tmp_path, capsys):
    out = tmp_path / "busy"
    other = files.OutputFolder(out)
    other.acquire()  # another run (this process stands in for it) holds the folder
    try:
        code = run(argv(models[1], weather_csv, out))
        err = capsys.readouterr().err
    finally:
        other.release()
    assert code == 2
    assert f"pid {os.getpid()}" in err and "another thermonet process" in err
    assert not out.exists()
    assert run(argv(models[1], weather_csv, out)) == 0  # free again
    assert "b.json" in consistent(out)["model"]["path"]


def test_stale_lock_of_a_killed_run_is_taken_over_and_its_staging_removed(
        models, weather_csv, tmp_path):
    out = tmp_path / "stale"
    lock = files.lock_path(out)
    lock.write_text(json.dumps({"pid": 2**22 + 12345, "host": __import__("socket")
                                .gethostname(), "started_utc": "2026-01-01T00:00:00+00:00"}))
    (tmp_path / ".stale.staging-dead").mkdir()
    (tmp_path / ".stale.staging-dead" / "flows.csv").write_text("half")
    assert run(argv(models[0], weather_csv, out)) == 0
    assert leftovers(tmp_path) == []
    consistent(out)


def test_scenario4_overwrite_in_one_format_removes_the_other_formats_tables(
        models, weather_csv, tmp_path):
    out = tmp_path / "fmt"
    assert run(argv(models[0], weather_csv, out, "--format", "both")) == 0
    assert (out / "flows.parquet").is_file()
    assert run(argv(models[1], weather_csv, out, "--format", "csv", "--overwrite")) == 0
    assert not list(out.glob("*.parquet"))
    rec = consistent(out)
    assert "b.json" in rec["model"]["path"]
    assert all(Path(o["path"]).parent == out for o in rec["outputs"])


def test_unique_temporary_names_fsync_before_rename_and_umask_permissions(tmp_path,
                                                                          monkeypatch):
    events = []
    real_fsync, real_replace = os.fsync, os.replace
    monkeypatch.setattr(os, "fsync", lambda fd: (events.append("fsync"), real_fsync(fd))[1])
    monkeypatch.setattr(os, "replace",
                        lambda a, b: (events.append(("replace", Path(a).name)),
                                      real_replace(a, b))[1])
    old = os.umask(0o027)
    try:
        target = tmp_path / "model.json"
        target.write_text("{}")
        os.chmod(target, 0o600)
        io.save_model(room(), target)
        io.save_model(room(), target)
        mode_model = stat.S_IMODE(target.stat().st_mode)
        prov = write_provenance(tmp_path, {"record": "thermonet-provenance"})
        mode_prov = stat.S_IMODE(prov.stat().st_mode)
    finally:
        os.umask(old)
    assert mode_model == 0o640 and mode_prov == 0o640  # 0o666 less the umask 0o027
    replaced = [e for e in events if isinstance(e, tuple)]
    tmp_names = [name for _, name in replaced]
    assert len(set(tmp_names)) == len(tmp_names)  # every temporary name is new
    first = events.index(replaced[0])
    assert "fsync" in events[:first]  # data reach the disk before the rename


def test_run_outputs_follow_the_umask(models, weather_csv, tmp_path):
    out = tmp_path / "perm"
    old = os.umask(0o022)
    try:
        assert run(argv(models[0], weather_csv, out, "--format", "csv")) == 0
    finally:
        os.umask(old)
    assert stat.S_IMODE(out.stat().st_mode) == 0o755
    for p in out.iterdir():
        assert stat.S_IMODE(p.stat().st_mode) == 0o644, p.name


def test_output_folder_that_is_a_file_is_refused(tmp_path):
    f = tmp_path / "file"
    f.write_text("x")
    with pytest.raises(OutputFolderError, match="exists and is not a folder"):
        files.OutputFolder(f).check()


# ------------------------------------------------------------------ typed user-input errors
def test_unknown_time_zone_is_a_usage_error(models, weather_csv, tmp_path, capsys):
    code = run(argv(models[0], weather_csv, tmp_path / "o", "--tz", "Mars/Base"))
    err = capsys.readouterr().err.strip()
    assert code == 2
    assert "--tz 'Mars/Base' is not a known time zone" in err
    assert len(err.splitlines()) == 1 and "Traceback" not in err
    with pytest.raises(TimeZoneError, match="'Mars/Base'"):
        tn.weather.from_dataframe(pd.DataFrame({"temp_air": [1.0]}, index=pd.DatetimeIndex(
            ["2025-01-01 01:00"])), latitude=48.0, longitude=11.0, tz="Mars/Base")


def test_naive_stamps_in_a_daylight_saving_zone_name_the_stamps(models, tmp_path, capsys):
    idx = pd.date_range("2025-03-29 00:00", periods=72, freq="h")  # spans 30 March 02:00
    df = pd.DataFrame({"temp_air": 5.0, "ghi": 0.0, "dni": 0.0, "dhi": 0.0}, index=idx)
    path = tmp_path / "naive.csv"
    df.to_csv(path, index_label="time")
    code = run(argv(models[0], path, tmp_path / "o", "--latitude", "52.5", "--longitude",
                    "13.4", "--tz", "Europe/Berlin"))
    err = capsys.readouterr().err.strip()
    assert code == 4
    assert "2025-03-30 02:00:00" in err and "do not exist" in err and "Etc/GMT-1" in err
    assert len(err.splitlines()) == 1
    back = pd.date_range("2025-10-25 12:00", periods=36, freq="h")  # 26 October 02:00 twice
    with pytest.raises(WeatherError, match="occur twice.*2025-10-26 02:00:00"):
        tn.weather.localize_index(back, "Europe/Berlin")


def test_pvlib_readers_given_the_wrong_file_name_it(tmp_path):
    bad = tmp_path / "not_tmy3.csv"
    bad.write_text("time,temp_air\n2025-01-01T01:00,1.0\n", encoding="utf-8")
    with pytest.raises(WeatherError, match="not_tmy3.csv is not an NREL TMY3 CSV.*"
                                           "station header"):
        tn.weather.read_tmy3(bad)
    junk = tmp_path / "not_pvgis.json"
    junk.write_text('{"hello": 1}', encoding="utf-8")
    with pytest.raises(WeatherError, match="not_pvgis.json is not a PVGIS typical-year"):
        tn.weather.read_pvgis_tmy(junk)


# ------------------------------------------------------------------ study folders
def study_build(g):
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=2e5)
    net.add_link("out", "room", conductance=float(g), path="opaque")
    net.add_source("room", power=500.0, path="internal")
    return net


@pytest.fixture(scope="module")
def study_weather():
    idx = pd.date_range("2025-01-01 01:00", periods=48, freq="h", tz="Etc/GMT-1")
    return pd.DataFrame({"temp_air": 5.0 + 3.0 * np.sin(np.arange(48) / 4.0)}, index=idx)


PARAMS = pd.DataFrame({"g": [20.0, 30.0, 40.0, 50.0]}, index=list("abcd"))


def study(out, weather, **kw):
    return run_variants(study_build, PARAMS, weather, out=out, chunk_size=1, progress=False,
                        warmup_days=0.5, **kw)


def test_empty_part_is_named_with_the_fix_and_rerunning_it_restores_the_study(
        tmp_path, study_weather):
    full = study(tmp_path / "ok", study_weather)
    out = tmp_path / "s"
    study(out, study_weather)
    parts = sorted(out.glob("part-*.parquet"))
    parts[1].write_bytes(b"")  # a 0-byte part (killed writer without atomic rename)
    for call in (lambda: study(out, study_weather), lambda: read_study(out)):
        with pytest.raises(StudyError, match=f"study part {parts[1].name} .* unreadable.*"
                                             "delete that file"):
            call()
    parts[1].unlink()
    again = study(out, study_weather)
    pd.testing.assert_frame_equal(again, full)


def test_truncated_study_file_is_named(tmp_path, study_weather):
    out = tmp_path / "s"
    study(out, study_weather)
    meta = out / "study.json"
    meta.write_text(meta.read_text()[:20])
    for call in (lambda: study(out, study_weather), lambda: read_study(out)):
        with pytest.raises(StudyError, match="study.json cannot be read.*damaged"):
            call()


def test_full_disk_during_a_study_keeps_finished_parts_and_rows(tmp_path, study_weather,
                                                                monkeypatch):
    out = tmp_path / "s"
    real = pd.DataFrame.to_parquet
    calls = {"n": 0}

    def full_after_two(self, path, *a, **k):
        calls["n"] += 1
        if calls["n"] == 3:
            Path(path).write_bytes(b"PAR1 partial")  # the writer got part-way
            raise OSError(errno.ENOSPC, "No space left on device")
        return real(self, path, *a, **k)

    monkeypatch.setattr(pd.DataFrame, "to_parquet", full_after_two)
    with pytest.raises(StudyError, match="could not be written.*No space left.*same out=") \
            as info:
        study(out, study_weather)
    monkeypatch.setattr(pd.DataFrame, "to_parquet", real)
    assert len(list(out.glob("part-*.parquet"))) == 2
    assert not [p for p in out.iterdir() if p.name.endswith(".tmp")]
    assert list(info.value.finished.index) == ["a", "b", "c"]  # in memory, not lost
    pd.testing.assert_frame_equal(study(out, study_weather),
                                  study(tmp_path / "fresh", study_weather))


def test_disk_full_while_writing_a_run_keeps_the_old_results(models, weather_csv, tmp_path,
                                                             monkeypatch, capsys):
    out = tmp_path / "res"
    assert run(argv(models[0], weather_csv, out, "--format", "csv")) == 0
    before = snapshot(out)
    real = pd.DataFrame.to_csv

    def full(self, path, *a, **k):
        if str(path).endswith("flows.csv"):
            raise OSError(errno.ENOSPC, "No space left on device")
        return real(self, path, *a, **k)

    monkeypatch.setattr(pd.DataFrame, "to_csv", full)
    code = run(argv(models[1], weather_csv, out, "--format", "csv", "--overwrite"))
    err = capsys.readouterr().err
    assert code == 1
    assert "No space left on device" in err and "left as it was" in err
    assert snapshot(out) == before and leftovers(tmp_path) == []


def test_ctrl_c_during_the_simulation_exits_130_without_traceback(
        models, weather_csv, tmp_path, monkeypatch, capsys):
    import thermonet.engine.simulate as sim

    def interrupted(*a, **k):
        raise KeyboardInterrupt

    monkeypatch.setattr(sim, "simulate", interrupted)
    code = run(argv(models[0], weather_csv, tmp_path / "o"))
    err = capsys.readouterr().err
    assert code == 130 and "Traceback" not in err and "interrupted" in err
    assert leftovers(tmp_path) == [] and not (tmp_path / "o").exists()


# ------------------------------------------------------------------ model files
@pytest.mark.parametrize("text, kind", [("1e-400", "too small"), ("1e-310", "denormal")])
def test_underflowing_numbers_in_model_files_name_the_key(text, kind):
    good = io.dumps(room())
    bad = good.replace('"conductance": 35.0', f'"conductance": {text}', 1)
    assert bad != good
    where = r"network\.links\[0\] \(link 'outdoor-room:opaque'\)\.conductance: "
    with pytest.raises(ModelFileError, match=where + f".*{kind}"):
        io.loads(bad)


def test_model_file_size_limit(tmp_path):
    path = io.save_model(room(), tmp_path / "m.json")
    size = path.stat().st_size
    with pytest.raises(ModelFileError, match="above the model-file limit.*max_bytes="):
        io.read_model(path, max_bytes=size - 1)
    assert io.read_model(path, max_bytes=size).network.links.keys() == room().links.keys()
    assert io.MAX_MODEL_BYTES == 64 * 2**20
    with warnings.catch_warnings():
        warnings.simplefilter("error")
        io.loads(path.read_text(), max_bytes=size)
