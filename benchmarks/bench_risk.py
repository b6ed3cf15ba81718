"""Speed of an overheating-risk study of the demo room: batch path against one by one.

The study: the INVENTED demo room (:func:`thermonet.scenarios.sunny_room.build_sunny_room`,
the living room, its stair and neighbours), two design options (clear glass g = 0.6 and
solar glass g = 0.35) and uncertain internal gains scale and infiltration n50, one year
(8,760 h after a 14-day warm-up) per run, judged on the room's operative temperature by
four criteria (26 °C for 3 % of occupied hours, EN 16798-1 category II, CIBSE TM52, CIBSE
TM59 living room).

Printed, per run (one option × one sample):

* ``batch``: :func:`thermonet.studies.overheating_risk` as it runs now — the networks of a
  chunk stepped together by :func:`thermonet.engine.batch.run_batch` with traces kept, the
  criteria judged on them with merged ``comfort_outputs`` calls;
* ``one by one``: what the study did before — per run ``build``, :func:`thermonet.simulate`
  and each criterion on its own (the loop is written out here);
* the same with a sampled warming offset (runs with the same offset share a batch, so a
  batch holds the two options of one sample);
* the ratio, the time spent building the networks alone (the same in both paths), and the
  largest difference between the two tables (must be rounding).

Times are the best of ``--repeat`` runs (the machine may be shared; on a loaded machine
``OPENBLAS_NUM_THREADS=1`` gives steadier numbers for both paths).

Run: ``python benchmarks/bench_risk.py [--samples N] [--repeat R]`` (default 8 samples, i.e.
16 runs per case, 2 repeats).
"""

from __future__ import annotations

import argparse
import time

import numpy as np
import pandas as pd

import thermonet as tn
from thermonet import studies
from thermonet.scenarios import sunny_room as sr
from thermonet.studies.risk import WARMING, RiskRun

OCCUPIED = ("09:00", "22:00")
CRITERIA = [
    studies.hours_above_criterion(26.0, max_pct=3.0, occupied=OCCUPIED),
    studies.adaptive_criterion("II", max_hours=0.05 * 13 * 365, occupied=OCCUPIED,
                               init="periodic"),
    studies.tm52_criterion(occupied=OCCUPIED, init="periodic"),
    studies.tm59_criterion("living", init="periodic"),
]
OPTIONS = {"clear glass": {"g_value": 0.6}, "solar glass": {"g_value": 0.35}}
UNCERTAIN = {"west_glazing_area": (4.0, 7.0)}


def build(g_value=0.6, west_glazing_area=6.0, weather=None):
    """The demo room with its g-value and west glazing area [m²] set (weather as given)."""
    return sr.build_sunny_room(weather, g_value=g_value, west_glazing_area=west_glazing_area)


def one_by_one(runs: pd.DataFrame, weather: pd.DataFrame) -> pd.DataFrame:
    """Each run built, simulated and judged alone (the study's former path)."""
    rows = {}
    for label, row in runs.iterrows():
        w = weather
        if WARMING in row.index:
            w = weather.copy()
            w["temp_air"] = w["temp_air"] + row[WARMING]
        net, handles = build(row["g_value"], row["west_glazing_area"], weather=w)
        res = tn.simulate(net, w, warmup_days=14.0)
        run = RiskRun(res, handles, w, {}, sr.room_operative_temperature)
        rows[label] = {c.key: c.evaluate(run) for c in CRITERIA}
    return pd.DataFrame.from_dict(rows, orient="index")


def case(weather, n, warming):
    kw = dict(temperature=sr.room_operative_temperature, criteria=CRITERIA, n_samples=n,
              seed=7, pass_weather=True, progress=False, warming=warming)
    t0 = time.perf_counter()
    risk = studies.overheating_risk(build, OPTIONS, UNCERTAIN, weather, **kw)
    t_batch = time.perf_counter() - t0
    t0 = time.perf_counter()
    ref = one_by_one(risk.runs, weather)
    t_one = time.perf_counter() - t0
    t0 = time.perf_counter()
    for _, row in risk.runs.iterrows():
        build(row["g_value"], row["west_glazing_area"], weather=weather)
    t_build = time.perf_counter() - t0
    keys = [c.key for c in CRITERIA]
    got = risk.runs[keys].to_numpy(dtype=float)
    want = ref.loc[risk.runs.index, keys].to_numpy(dtype=float)
    diff = float(np.max(np.abs(got - want) / np.maximum(1.0, np.abs(want))))
    return len(risk.runs), t_batch, t_one, diff, t_build


def main():
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--samples", type=int, default=8)
    ap.add_argument("--repeat", type=int, default=2, help="repeats; the best time is shown")
    args = ap.parse_args()
    weather = sr.prepare_weather()
    # warm-up: compile the kernels once (not timed)
    studies.overheating_risk(build, {"a": {"g_value": 0.6}}, UNCERTAIN,
                             sr.prepare_weather(hours=24 * 20), criteria=CRITERIA[:1],
                             temperature=sr.room_operative_temperature, n_samples=2, seed=1,
                             pass_weather=True, progress=False, warmup_days=1.0)
    tn.simulate(*build(weather=weather)[:1], weather)
    print(f"demo room, one year per run, {len(CRITERIA)} criteria")
    for label, warming in (("no warming", None), ("warming 0-2 K", (0.0, 2.0))):
        best = [case(weather, args.samples, warming) for _ in range(args.repeat)]
        n, diff = best[0][0], max(b[3] for b in best)
        tb, to = min(b[1] for b in best), min(b[2] for b in best)
        tbuild = min(b[4] for b in best)
        print(f"{label:>14}: {n} runs; batch {1e3 * tb / n:5.0f} ms/run, one by one "
              f"{1e3 * to / n:5.0f} ms/run, speed-up {to / tb:4.2f}x (of each, building "
              f"the network {1e3 * tbuild / n:4.0f} ms/run); largest relative difference "
              f"{diff:.1e}")


if __name__ == "__main__":
    main()
