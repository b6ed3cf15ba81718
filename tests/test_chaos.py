"""Chaos: ``thermonet run`` and a design study killed (SIGKILL, by PID) at random moments.

After every kill the result folder holds either the complete old set of tables or the
complete new one (each file's SHA-256 as its provenance.json records it, nothing else in
the folder), a study folder stays readable, and a study resumed after the kills equals one
that ran without interruption. Ctrl-C (SIGINT) ends a run with exit code 130, no traceback
and no temporary files.

The moments are drawn with a fixed seed, after the process reports that it is writing
(``run``) or has started (study), so the kills land in the writing phase. The model and
weather are INVENTED (Fernhollow sample, demo data), used only to exercise the commands.
"""

from __future__ import annotations

import json
import os
import random
import signal
import subprocess
import sys
import textwrap
import time
from pathlib import Path

import pandas as pd
import pytest

from thermonet.io import models as io
from thermonet.io.provenance import file_sha256

ROOT = Path(__file__).resolve().parents[1]
SAMPLE = ROOT / "weather_samples" / "fernhollow_sample.csv"
SITE = ["--latitude", "48.3", "--longitude", "11.9", "--tz", "Etc/GMT-1"]

pytestmark = pytest.mark.skipif(not hasattr(signal, "SIGKILL"), reason="needs POSIX signals")


def env():
    e = dict(os.environ)
    e["PYTHONPATH"] = str(ROOT) + os.pathsep + e.get("PYTHONPATH", "")
    e["PYTHONWARNINGS"] = "ignore"
    return e


@pytest.fixture(scope="module")
def inputs(tmp_path_factory):
    from test_output_safety import room

    d = tmp_path_factory.mktemp("chaos")
    lines = SAMPLE.read_text(encoding="utf-8").splitlines()
    weather = d / "ten_days.csv"
    weather.write_text("\n".join(lines[:2 + 24 * 10]) + "\n", encoding="utf-8")
    return (io.save_model(room(35.0), d / "a.json"), io.save_model(room(60.0), d / "b.json"),
            weather)


def run_cmd(model, weather, out, *more):
    return [sys.executable, "-m", "thermonet", "run", str(model), "--weather", str(weather),
            "--out", str(out), *SITE, "--warmup-days", "1", "--format", "both",
            "--progress-every", "0", *more]


def complete_set(out: Path) -> str:
    """The model file named by a folder's provenance, after checking the set is whole."""
    rec = json.loads((out / "provenance.json").read_text(encoding="utf-8"))
    named = {Path(o["path"]).name: o["sha256"] for o in rec["outputs"]}
    assert {p.name for p in out.iterdir()} == set(named) | {"provenance.json"}
    for name, sha in named.items():
        assert file_sha256(out / name) == sha, name
    assert len(named) == 18  # 9 tables × 2 formats
    return Path(rec["model"]["path"]).name


def wait_for(p, marker: str) -> None:
    """Read the process's stderr until a line shows ``marker`` (or the process ends)."""
    for line in p.stderr:
        if marker in line:
            return


def in_process(cmd) -> int:
    """Run a ``thermonet`` command line in this process (saves an interpreter start)."""
    from thermonet.cli.main import main

    return main(cmd[cmd.index("run"):])


def test_killed_runs_leave_the_old_or_the_new_complete_set(inputs, tmp_path):
    model_a, model_b, weather = inputs
    out = tmp_path / "results"
    assert in_process(run_cmd(model_a, weather, out, "--quiet")) == 0
    assert complete_set(out) == "a.json"
    rng = random.Random(20261203)
    seen = set()
    for _ in range(3):
        with subprocess.Popen(run_cmd(model_b, weather, out, "--overwrite"), env=env(),
                              stderr=subprocess.PIPE, stdout=subprocess.DEVNULL,
                              text=True) as p:
            wait_for(p, "writing")
            time.sleep(rng.uniform(0.0, 0.1))
            if p.poll() is None:
                os.kill(p.pid, signal.SIGKILL)
            p.wait(timeout=60)
        seen.add(complete_set(out))  # whole, whichever it is
    assert seen <= {"a.json", "b.json"}
    # the next run takes over the dead run's lock and removes its staging folder
    assert in_process(run_cmd(model_b, weather, out, "--overwrite", "--quiet")) == 0
    assert complete_set(out) == "b.json"
    assert [p.name for p in tmp_path.iterdir() if p.name.startswith(".")] == []


def test_ctrl_c_exits_130_without_traceback_or_temporary_files(inputs, tmp_path):
    model_a, _, weather = inputs
    out = tmp_path / "results"
    with subprocess.Popen(run_cmd(model_a, weather, out), env=env(), stderr=subprocess.PIPE,
                          stdout=subprocess.DEVNULL, text=True) as p:
        wait_for(p, "simulating")
        p.send_signal(signal.SIGINT)
        err = p.stderr.read()
        assert p.wait(timeout=60) == 130, err
    assert "Traceback" not in err and "interrupted" in err
    assert list(tmp_path.iterdir()) == []  # no result folder, staging folder or lock file


BUILD = textwrap.dedent("""
    import numpy as np, pandas as pd
    import thermonet as tn

    def build(g, c):
        net = tn.Network()
        net.add_boundary("out", temperature="temp_air")
        net.add_node("room", kind="air", capacitance=c)
        net.add_link("out", "room", conductance=g, path="opaque")
        net.add_source("room", power=400.0, path="internal")
        net.add_thermostat("room", heating_setpoint=20.0)
        return net

    idx = pd.date_range("2025-01-01 01:00", periods=24 * 20, freq="h", tz="Etc/GMT-1")
    WEATHER = pd.DataFrame({"temp_air": 5 + 5 * np.sin(np.arange(len(idx)) / 9.0)}, index=idx)
    PARAMS = pd.DataFrame({"g": np.linspace(10, 90, 120), "c": np.geomspace(1e5, 1e7, 120)},
                          index=[f"v{i:03d}" for i in range(120)])

    def study(out):
        from thermonet.studies import run_variants

        return run_variants(build, PARAMS, WEATHER, out=out, chunk_size=4, progress=False,
                            warmup_days=2)
""")

RUNNER = textwrap.dedent("""
    import sys, time
    sys.path.insert(0, sys.argv[2])
    import chaos_build
    print("start", flush=True)
    chaos_build.study(sys.argv[1])
""")


def test_killed_study_resumes_to_the_uninterrupted_result(tmp_path, monkeypatch):
    from thermonet.studies import read_study

    (tmp_path / "chaos_build.py").write_text(BUILD, encoding="utf-8")
    (tmp_path / "runner.py").write_text(RUNNER, encoding="utf-8")
    monkeypatch.syspath_prepend(str(tmp_path))
    import chaos_build  # the same module name here and in the killed processes

    t0 = time.perf_counter()
    ref = chaos_build.study(tmp_path / "ref")
    seconds = time.perf_counter() - t0
    rng = random.Random(7)
    out = tmp_path / "s"
    for _ in range(2):
        with subprocess.Popen([sys.executable, str(tmp_path / "runner.py"), str(out),
                               str(tmp_path)], stdout=subprocess.PIPE,
                              stderr=subprocess.DEVNULL, env=env(), text=True) as p:
            assert p.stdout.readline().startswith("start")
            time.sleep(rng.uniform(0.2, 0.8) * seconds)
            if p.poll() is None:
                os.kill(p.pid, signal.SIGKILL)
            p.wait(timeout=60)
        if (out / "study.json").exists():
            read_study(out)  # every part written so far is whole
    resumed = chaos_build.study(out)
    pd.testing.assert_frame_equal(resumed, ref)
    # temporaries of the killed writers are removed when the folder is opened again
    assert not [p for p in out.iterdir() if p.name.endswith(".tmp")]
