"""Design studies: many variants, sensitivity, calibration to measurements, executors.

A study starts from a *build function* and a table of parameter values. The build function
takes one row's values as keyword arguments and returns a :class:`thermonet.Network`::

    def build(u_wall, ach, aperture, mass):
        net = tn.Network()
        ...
        return net

    params = pd.DataFrame({"u_wall": [0.15, 0.25], "ach": [0.3, 0.6], ...})
    table = run_variants(build, params, weather, comfort_node="room",
                         balance_nodes=["room", "slab"])

Variants whose networks share one structure are stepped together along a variant axis
(:func:`thermonet.engine.batch.run_batch`), so a thousand variants cost little more than a few.
Long studies are split into chunks (bounded memory, a progress bar, results written as each
chunk finishes when ``out=`` is given, and resumed after an interruption).

Functions
---------
:func:`run_variants`
    one row of annual results per variant (heating and cooling energy and peaks,
    overheating hours and degree-hours, the annual balance by path of node sets or of rooms
    named by the builders' records, values of a ``judge`` function on each variant's hourly
    results), as a tidy table; a row may carry its own warming offset of the weather.
:func:`variant_traces`
    hourly :class:`thermonet.Results` of chosen variants (traces are kept only when asked).
:func:`one_at_a_time`, :func:`tornado_plot`
    each parameter moved alone from a base case to its low and high values.
:func:`morris`
    elementary-effects screening (Morris 1991; Campolongo et al. 2007) through SALib.
:func:`sobol`
    first-order and total Sobol' indices (Sobol' 2001; Saltelli et al. 2010) through SALib.
:func:`calibrate`
    fit chosen parameters to measured temperatures and/or heating or cooling power with
    :func:`scipy.optimize.least_squares`; fitted values, standard errors, correlations and
    residuals.
:func:`read_study`
    the finished rows stored in an ``out=`` folder.

Execution
---------
Every study that runs variants takes ``executor=``:

* ``None`` (default): in this process; the compiled stepping loop already uses every core.
* any :class:`concurrent.futures.Executor`: chunks are submitted to it. For a
  :class:`~concurrent.futures.ProcessPoolExecutor` the build function must be importable
  (defined at module level, not in a notebook cell or a lambda), and the pool should use the
  ``"spawn"`` or ``"forkserver"`` start method (``mp_context=multiprocessing.get_context(
  "spawn")``): GNU OpenMP, numba's usual threading layer, terminates a child forked from a
  process that already used it (a forking pool is refused in that case).
* a :class:`dask.distributed.Client`: chunks are submitted to the cluster the client is
  connected to (cloudpickle ships build functions defined in a notebook too). The weather is
  sent to every worker once. thermonet must be installed on the workers. To use a cluster::

      from dask.distributed import Client
      client = Client("tcp://scheduler-host:8786")   # an existing dask scheduler
      table = run_variants(build, params, weather, executor=client)

  and on this machine ``Client(LocalCluster(n_workers=2, threads_per_worker=1))``. Any
  dask deployment (SSH, Kubernetes, a job queue through dask-jobqueue) gives a ``Client`` in
  the same way; the study call does not change.

Failed variants
---------------
A variant whose build or simulation raises is reported in the ``error`` column of its row
(``"build: NetworkError: ..."``), its results are NaN, the other variants finish, and one
:class:`~thermonet.errors.StudyWarning` names the failed rows. ``errors="raise"`` stops at the
first failure with a :class:`~thermonet.errors.StudyError` that names the row.

Interrupted studies
-------------------
With ``out="folder"`` each finished chunk is written at once as a Parquet part file
(``part-*.parquet``, written to a temporary name and renamed, so a part is complete or absent).
Running the same call again with the same ``out`` skips the rows already finished — a row is
identified by its index label and its parameter values — and returns the complete table.
Rows that failed are run again. The folder remembers the weather, the simulation options and
the build function's name, and refuses a different study; after changing the build
function's code, use a new folder.

References
----------
- [1] Morris, M. D., "Factorial sampling plans for preliminary computational experiments",
  Technometrics 33(2), 161–174, 1991. doi:10.1080/00401706.1991.10484804
- [2] Campolongo, F., Cariboni, J., Saltelli, A., "An effective screening design for
  sensitivity analysis of large models", Environmental Modelling & Software 22(10),
  1509–1518, 2007. doi:10.1016/j.envsoft.2006.10.004
- [3] Sobol', I. M., "Global sensitivity indices for nonlinear mathematical models and their
  Monte Carlo estimates", Mathematics and Computers in Simulation 55(1–3), 271–280, 2001.
  doi:10.1016/S0378-4754(00)00270-6
- [4] Saltelli, A., Annoni, P., Azzini, I., Campolongo, F., Ratto, M., Tarantola, S.,
  "Variance based sensitivity analysis of model output. Design and estimator for the total
  sensitivity index", Computer Physics Communications 181(2), 259–270, 2010.
  doi:10.1016/j.cpc.2009.09.018
- [5] Herman, J., Usher, W., "SALib: An open-source Python library for Sensitivity
  Analysis", Journal of Open Source Software 2(9), 97, 2017. doi:10.21105/joss.00097
- [6] Seber, G. A. F., Wild, C. J., Nonlinear Regression, Wiley, 1989, §2.1–2.2
  (asymptotic covariance ``s²(JᵀJ)⁻¹`` of least-squares estimates) — from memory.
"""

from __future__ import annotations

import concurrent.futures as cf
import contextlib
import fnmatch
import gc
import hashlib
import json
import math
import os
import time
import warnings
from collections.abc import Mapping
from dataclasses import dataclass, field
from pathlib import Path

import numpy as np
import pandas as pd

from thermonet.engine.batch import DEFAULT_MAX_BYTES, run_batch
from thermonet.errors import StudyError, StudyWarning
from thermonet.io.files import pid_alive, write_file_atomic
from thermonet.studies.rows import (
    check_warming,
    judge_values,
    judged_batches,
    merge_balance_sets,
    room_balance_sets,
    warmed_weather,
)

__all__ = [
    "run_variants",
    "variant_traces",
    "read_study",
    "one_at_a_time",
    "tornado_plot",
    "morris",
    "sobol",
    "SensitivityResult",
    "calibrate",
    "CalibrationResult",
]

#: Largest number of variants per chunk when ``chunk_size`` is not given.
DEFAULT_CHUNK = 4096

#: Work [variants × steps] beyond which ``progress="auto"`` shows a progress bar (a few
#: seconds: ~2,300 variant-years of hourly steps) and an in-process study is cut into about
#: ten chunks so that the bar moves.
PROGRESS_WORK = 2e7

ERROR = "error"
_KEY = "_row_key"
_STUDY_FILE = "study.json"
_FORMAT = 1


# ================================================================================ checks
def _check_build(build):
    from thermonet.network import Network

    if isinstance(build, Network):
        return
    if not callable(build):
        raise TypeError(f"build must be a function returning a thermonet Network, or a "
                        f"parametric Network, got {type(build).__name__}")


def _check_parametric(build, params: pd.DataFrame, weather) -> None:
    """A parametric network: it has parameters, the table names exactly those, weather."""
    from thermonet.network import Network
    from thermonet.parameters import table_values

    if not isinstance(build, Network):
        return
    if not build.parameters:
        raise StudyError(f"network {build.name!r} has no parameters, so every row would be the "
                         "same; declare parameters (thermonet.parameters.Param) where its "
                         "numbers vary, or pass a build function")
    if weather is None:
        raise StudyError("a parametric network needs weather=")
    table_values(build.parameters, params)


def _build_name(build) -> str:
    """How a study folder names its build function or parametric network."""
    from thermonet.network import Network

    if isinstance(build, Network):
        from thermonet.io.models import dumps

        ps = ", ".join(f"{k} [{p.unit}] = {p!r}" for k, p in build.parameters.items())
        try:      # the network at its defaults, so that a changed model is another study
            digest = hashlib.sha256(dumps(build.with_values()).encode()).hexdigest()[:16]
        except Exception as exc:  # noqa: BLE001 - a network no model file can hold
            digest = f"unhashable ({type(exc).__name__})"
        return f"parametric network {build.name!r} ({ps}; model {digest})"
    return (f"{getattr(build, '__module__', '?')}."
            f"{getattr(build, '__qualname__', type(build).__name__)}")


def _check_params(params) -> pd.DataFrame:
    if not isinstance(params, pd.DataFrame):
        raise TypeError("params must be a pandas DataFrame with one row per variant and one "
                        f"column per build argument, got {type(params).__name__}")
    if not params.index.is_unique:
        dup = params.index[params.index.duplicated()].unique()[:5].tolist()
        raise StudyError(f"params: the index labels rows and must be unique; duplicated: {dup}. "
                         "Use params.reset_index(drop=True) or give each variant its own label")
    for c in params.columns:
        if not isinstance(c, str):
            raise StudyError(f"params: column names are build() keyword arguments and must be "
                             f"strings, got {c!r}")
    if ERROR in params.columns or _KEY in params.columns:
        raise StudyError(f"params: the column names {ERROR!r} and {_KEY!r} are reserved for "
                         "results; rename that column")
    return params


def _check_weather(weather):
    if weather is not None and not isinstance(weather, pd.DataFrame):
        raise TypeError(f"weather must be a pandas DataFrame (or None when build returns "
                        f"results itself), got {type(weather).__name__}")


def _check_errors(errors):
    if errors not in ("collect", "raise"):
        raise ValueError(f"errors must be 'collect' or 'raise', got {errors!r}")


# ================================================================================ worker
def _row_error(stage: str, exc: BaseException) -> str:
    msg = str(exc).strip() or repr(exc)
    return f"{stage}: {type(exc).__name__}: {msg}"


@contextlib.contextmanager
def _gc_paused():
    """Pause the cyclic garbage collector while a chunk creates many small objects.

    Building thousands of networks triggers repeated collections that traverse every
    network already built (about a third of the build time); cycles are collected when
    the chunk is done.
    """
    was = gc.isenabled()
    gc.disable()
    try:
        yield
    finally:
        if was:
            gc.enable()


def _row_weathers(params: pd.DataFrame, weather, sim: dict) -> list:
    """Per row of a chunk: ``(key, weather)``, the key grouping rows that share a weather."""
    col = sim.get("warming")
    if col is None or weather is None:
        return [(None, weather)] * len(params)
    cache: dict = {}
    out = []
    for off in params[col].to_numpy(dtype=float):
        if off not in cache:
            cache[off] = warmed_weather(weather, off, sim["warming_columns"])
        out.append((off, cache[off]))
    return out


def _build_chunk(build, params: pd.DataFrame, weather=None, sim: dict | None = None) -> dict:
    """Call ``build`` for every row of a chunk; networks, direct results and build errors."""
    from thermonet.network import Network

    sim = sim or {}
    n = len(params)
    errs: list = [None] * n
    direct: dict[int, dict] = {}
    nets: list = []
    net_pos: list[int] = []
    handles: dict[int, object] = {}
    rows = params.to_dict("records")
    weathers = _row_weathers(params, weather, sim)
    skip = sim.get("warming")
    with _gc_paused():
        objs = []
        for i, kw in enumerate(rows):
            if skip is not None:
                kw = {k: v for k, v in kw.items() if k != skip}
            if sim.get("pass_weather"):
                kw["weather"] = weathers[i][1]
            try:
                objs.append(build(**kw))
            except Exception as exc:  # noqa: BLE001 - reported per row
                errs[i] = _row_error("build", exc)
                objs.append(None)
    for i, obj in enumerate(objs):
        if errs[i] is not None:
            continue
        if isinstance(obj, tuple) and len(obj) == 2 and isinstance(obj[0], Network):
            obj, handles[i] = obj
        if isinstance(obj, Network):
            nets.append(obj)
            net_pos.append(i)
        elif isinstance(obj, Mapping):
            try:
                direct[i] = {str(k): float(v) for k, v in obj.items()}
            except (TypeError, ValueError) as exc:
                errs[i] = _row_error("build", TypeError(
                    f"build returned a dict whose values must be numbers ({exc})"))
        else:
            errs[i] = _row_error("build", TypeError(
                f"build returned {type(obj).__name__}; return a thermonet Network, a tuple "
                "(Network, handles) or a dict of named numbers for a model computed outside "
                "thermonet"))
    return dict(index=params.index, errs=errs, direct=direct, nets=nets, net_pos=net_pos,
                handles=handles, rows=rows, weathers=weathers)


#: Keys of a study's simulation options that are not arguments of ``run_batch``.
_STUDY_KEYS = ("judge", "warming", "warming_columns", "pass_weather", "balance_rooms")


def _batch_groups(built: dict, sim: dict) -> dict:
    """Networks of a chunk grouped by (weather key, room balance sets), or an error per row."""
    groups: dict = {}
    for j, i in enumerate(built["net_pos"]):
        sets: dict = {}
        if sim.get("balance_rooms") is not None:
            try:
                sets = room_balance_sets(built["nets"][j], sim["balance_rooms"])
            except Exception as exc:  # noqa: BLE001 - reported per row
                built["errs"][i] = _row_error("outputs", exc)
                continue
        key = (built["weathers"][i][0], tuple((k, tuple(v)) for k, v in sets.items()))
        groups.setdefault(key, (sets, []))[1].append(j)
    return groups


def _steps(weather: pd.DataFrame, kw: dict) -> int:
    """Steps of a run on ``weather`` with its warm-up (for memory estimates only)."""
    idx = weather.index
    span = (idx[1] - idx[0]) * len(idx) if len(idx) > 1 else pd.Timedelta(hours=len(idx))
    step = pd.Timedelta(kw["step"]) if kw.get("step") is not None else (
        idx[1] - idx[0] if len(idx) > 1 else pd.Timedelta(hours=1))
    warm = pd.Timedelta(days=float(kw.get("warmup_days") or 0.0))
    return int(np.ceil((span + warm) / step))


def _simulate_chunk(built: dict, weather, sim: dict) -> pd.DataFrame:
    """Simulate the networks of a built chunk; a table indexed like the chunk's rows."""
    index, errs, nets, net_pos = built["index"], built["errs"], built["nets"], built["net_pos"]
    n = len(index)
    cols: dict[str, np.ndarray] = {}
    judge = sim.get("judge")
    kw = {k: v for k, v in sim.items() if k not in _STUDY_KEYS}
    if nets and weather is None:
        for i in net_pos:
            errs[i] = _row_error("simulate", StudyError(
                "build returned a Network but weather is None; pass weather="))
    elif nets:
        batches = []
        for sets, js in _batch_groups(built, sim).values():
            w = built["weathers"][net_pos[js[0]]][1]
            cuts = ([js] if judge is None else
                    judged_batches(js, nets[js[0]], _steps(w, kw), kw["max_bytes"]))
            batches += [(sets, part, w) for part in cuts]
        for sets, js, w in batches:
            pos = [net_pos[j] for j in js]
            with _gc_paused():
                out = run_batch([nets[j] for j in js], w, keep_traces=judge is not None,
                                **{**kw, "balance_nodes": merge_balance_sets(
                                    kw.get("balance_nodes"), sets)})
            for k in out.table.columns:
                cols.setdefault(k, np.full(n, np.nan))[pos] = out.table[k].to_numpy()
            for i, e, res in zip(pos, out.errors, out.traces, strict=True):
                if e is not None:
                    errs[i] = _row_error("simulate", e)
                elif judge is not None:
                    try:
                        vals = judge_values(judge, res, built["handles"].get(i),
                                            built["rows"][i], w)
                    except Exception as exc:  # noqa: BLE001 - reported per row
                        errs[i] = _row_error("judge", exc)
                        continue
                    for k, v in vals.items():
                        cols.setdefault(k, np.full(n, np.nan))[i] = v
            del out
    for i, row in built["direct"].items():
        for k, v in row.items():
            cols.setdefault(k, np.full(n, np.nan))[i] = v
    for i, e in enumerate(errs):     # a row that failed late (judge, outputs) keeps no values
        if e is not None:
            for a in cols.values():
                a[i] = np.nan
    table = pd.DataFrame(cols, index=index)
    table[ERROR] = pd.Series(errs, index=index, dtype=object)
    return table


def _run_chunk(build, params: pd.DataFrame, weather, sim: dict) -> pd.DataFrame:
    """Build and simulate the variants of one chunk (runs in a worker process or thread).

    Returns a table indexed like ``params``: result columns and an ``error`` column
    (None where the variant finished). A parametric network in place of ``build`` runs
    the rows without building a network per row (:func:`run_parametric_chunk`).
    """
    from thermonet.network import Network

    if isinstance(build, Network):
        extra = [k for k in _STUDY_KEYS if sim.get(k) not in (None, False, ())]
        if extra and extra != ["warming_columns"]:
            raise StudyError(f"{', '.join(extra)} work with the build(**row) form of "
                             "run_variants, not with a parametric network; pass a function "
                             "that returns net.with_values(**row)")
        return run_parametric_chunk(build, params, weather, sim)
    return _simulate_chunk(_build_chunk(build, params, weather, sim), weather, sim)


def run_parametric_chunk(net, params: pd.DataFrame, weather, sim: dict) -> pd.DataFrame:
    """Run the rows of ``params`` on the parametric network ``net`` (one compile at the
    defaults, the rows' numbers patched into copies of its arrays, one batch).

    Parameters
    ----------
    net : Network
        A network with parameters (:mod:`thermonet.parameters`).
    params : pandas.DataFrame
        One row per variant, one column per parameter [the parameter's unit].
    weather : pandas.DataFrame
        As for :func:`thermonet.simulate`.
    sim : dict
        Simulation options of :func:`run_variants` (``comfort_node``, ``hours_above``,
        ``degree_hours_above``, ``balance_nodes``, ``link_energy``, ``warmup_days``,
        ``step``, ``max_bytes``, ``interpolate``).

    Returns
    -------
    pandas.DataFrame
        Indexed like ``params``: the result columns of :func:`run_variants` and ``error``.
    """
    from thermonet.checks import check_weather_frame
    from thermonet.engine.batch import run_values
    from thermonet.engine.compile import ColumnStore, compile_parametric, parametric_values
    from thermonet.parameters import table_values

    n = len(params)
    errs: list = [None] * n
    cols: dict[str, np.ndarray] = {}
    if weather is None:
        errs = [_row_error("simulate", StudyError("a parametric network needs weather="))] * n
    else:
        values = table_values(net.parameters, params)
        store = ColumnStore.for_weather(weather, sim.get("step"), sim.get("interpolate"))
        check_weather_frame(weather, stacklevel=4)
        pc = compile_parametric(net, store)
        vals, verrs = parametric_values(pc, values, list(params.index))
        vals = [v if e is None else e for v, e in zip(vals, verrs, strict=True)]
        opts = {k: sim[k] for k in ("warmup_days", "comfort_node", "hours_above",
                                     "degree_hours_above", "balance_nodes", "link_energy",
                                     "max_bytes")}
        with _gc_paused():
            out = run_values(pc.st, vals, store, **opts)
        cols = {k: out.table[k].to_numpy() for k in out.table.columns}
        errs = [None if e is None else _row_error("simulate", e) for e in out.errors]
    table = pd.DataFrame(cols, index=params.index)
    table[ERROR] = pd.Series(errs, index=params.index, dtype=object)
    return table


# ============================================================================= executors
def _is_dask_client(obj) -> bool:
    """A dask.distributed Client, recognised without importing dask."""
    mod = type(obj).__module__ or ""
    return (mod.split(".")[0] == "distributed" and hasattr(obj, "submit")
            and hasattr(obj, "gather") and hasattr(obj, "scatter"))


def _n_workers(executor) -> int:
    if executor is None:
        return 1
    if _is_dask_client(executor):
        return max(1, sum(executor.nthreads().values()))
    return max(1, int(getattr(executor, "_max_workers", None) or os.cpu_count() or 1))


def _check_fork_safety(executor):
    """Refuse a forking process pool once this process has started numba's OpenMP threads.

    GNU OpenMP terminates a child forked from a process that used it, so every chunk would
    fail with ``BrokenProcessPool``; say so before submitting anything.
    """
    if not isinstance(executor, cf.ProcessPoolExecutor):
        return
    ctx = getattr(executor, "_mp_context", None)
    method = ctx.get_start_method() if ctx is not None else None
    started = len(getattr(executor, "_processes", None) or {})
    if method != "fork" or started >= getattr(executor, "_max_workers", 1):
        return
    try:
        import numba

        layer = numba.threading_layer()
    except (ImportError, ValueError):   # no parallel loop has run in this process yet
        return
    if layer == "omp":
        raise StudyError(
            "executor: this ProcessPoolExecutor starts its workers by fork, and this process "
            "already runs numba's OpenMP threads, which a forked child cannot use (it would be "
            "terminated). Create the pool with mp_context=multiprocessing.get_context('spawn') "
            "(or 'forkserver')")


class _ChunkFailed:
    """A chunk whose task raised (e.g. a worker died): every row gets the message."""

    def __init__(self, exc: BaseException):
        self.exc = exc


def _execute(executor, build, params: pd.DataFrame, chunks: list, weather, sim: dict):
    """Yield ``(positions, table or _ChunkFailed)`` as chunks finish (any order)."""
    if executor is None:
        for pos in chunks:
            yield pos, _run_chunk(build, params.iloc[pos], weather, sim)
        return
    window = 2 * _n_workers(executor)
    todo = iter(chunks)
    if _is_dask_client(executor):
        from distributed import as_completed  # a Client exists, so dask is installed

        w = executor.scatter(weather, broadcast=True) if weather is not None else None
        pending: dict = {}

        def submit_dask():
            pos = next(todo, None)
            if pos is None:
                return None
            fut = executor.submit(_run_chunk, build, params.iloc[pos], w, sim, pure=False)
            pending[fut] = pos
            return fut

        ac = as_completed([f for f in (submit_dask() for _ in range(window)) if f is not None])
        try:
            for fut in ac:
                pos = pending.pop(fut)
                try:
                    res = fut.result()
                except Exception as exc:  # noqa: BLE001 - the chunk's rows report it
                    res = _ChunkFailed(exc)
                nxt = submit_dask()
                if nxt is not None:
                    ac.add(nxt)
                yield pos, res
        finally:
            if pending:
                executor.cancel(list(pending))
        return
    if not isinstance(executor, cf.Executor):
        raise TypeError("executor must be None, a concurrent.futures.Executor or a "
                        f"dask.distributed.Client, got {type(executor).__name__}")
    _check_fork_safety(executor)
    pending = {}

    def submit_cf():
        pos = next(todo, None)
        if pos is not None:
            pending[executor.submit(_run_chunk, build, params.iloc[pos], weather, sim)] = pos

    for _ in range(window):
        submit_cf()
    try:
        while pending:
            done, _ = cf.wait(list(pending), return_when=cf.FIRST_COMPLETED)
            for fut in done:
                pos = pending.pop(fut)
                try:
                    res = fut.result()
                except Exception as exc:  # noqa: BLE001 - the chunk's rows report it
                    res = _ChunkFailed(exc)
                submit_cf()
                yield pos, res
    finally:
        for fut in pending:
            fut.cancel()


# ========================================================================= part storage
def _digest_frame(df: pd.DataFrame | None) -> str:
    if df is None:
        return "none"
    h = hashlib.blake2b(digest_size=16)
    h.update(json.dumps([str(c) for c in df.columns]).encode())
    h.update(pd.util.hash_pandas_object(df, index=True).to_numpy().tobytes())
    return h.hexdigest()


def _row_keys(params: pd.DataFrame) -> np.ndarray:
    """One key per row from its index label and parameter values (hex strings)."""
    if len(params.columns) == 0:
        vals = pd.util.hash_pandas_object(params.index.to_series(), index=False)
    else:
        vals = pd.util.hash_pandas_object(params, index=True)
    return np.array([f"{int(v):016x}" for v in vals.to_numpy()], dtype=object)


def _json_safe(value):
    if isinstance(value, dict):
        return {str(k): _json_safe(v) for k, v in value.items()}
    if isinstance(value, (list, tuple)):
        return [_json_safe(v) for v in value]
    if value is None or isinstance(value, (bool, int, float, str)):
        return value
    return str(value)


class _PartStore:
    """Parquet part files of finished chunks in one folder, and the study they belong to."""

    def __init__(self, folder, fingerprint: dict):
        self.dir = Path(folder)
        if self.dir.exists() and not self.dir.is_dir():
            raise StudyError(f"out={str(folder)!r} is a file; give a folder for the study's "
                             "part files")
        self.dir.mkdir(parents=True, exist_ok=True)
        meta = self.dir / _STUDY_FILE
        if meta.exists():
            old = read_study_file(meta)
            if old.get("format") != _FORMAT:
                raise StudyError(f"out={str(folder)!r} was written by another format "
                                 f"({old.get('format')!r}); use a new folder")
            diff = [k for k in fingerprint if old.get("study", {}).get(k) != fingerprint[k]]
            if diff:
                raise StudyError(
                    f"out={str(folder)!r} holds results of a different study (it differs in: "
                    f"{', '.join(diff)}); pass a new out= folder or delete this one")
        else:
            try:
                write_file_atomic(meta, json.dumps({"format": _FORMAT, "study": fingerprint},
                                                   indent=1))
            except OSError as exc:
                raise StudyError(f"out={str(folder)!r}: cannot write {_STUDY_FILE} "
                                 f"({exc}); give a writable folder with free space") from exc
        self.seq = 0
        self.remove_dead_temporaries()

    def remove_dead_temporaries(self) -> None:
        """Delete temporary part files left by writers that were killed (their pid is gone).

        A temporary is named ``.part-<ns>-<pid>-<seq>.parquet.<random>.tmp``; a live
        process's temporaries (another study writing here) are left alone.
        """
        for p in self.dir.glob(".part-*.tmp"):
            fields = p.name.split("-")
            try:
                pid = int(fields[2])
            except (IndexError, ValueError):
                continue
            if not pid_alive(pid):
                p.unlink(missing_ok=True)

    def parts(self) -> list[Path]:
        return sorted(self.dir.glob("part-*.parquet"))

    def load(self) -> pd.DataFrame | None:
        """Every stored row, the last record of each key winning."""
        frames = [read_part(p) for p in self.parts()]
        if not frames:
            return None
        df = pd.concat(frames, axis=0, sort=False)
        return df.drop_duplicates(subset=_KEY, keep="last")

    def write(self, table: pd.DataFrame):
        """Store one finished chunk as a part file (atomic: unique temporary, fsync, rename).

        Raises
        ------
        StudyError
            The table cannot be stored as Parquet (mixed column types), or the disk is
            full / the folder not writable (OSError): the temporary file is removed and the
            parts written before stay.
        """
        self.seq += 1
        name = f"part-{time.time_ns():020d}-{os.getpid()}-{self.seq:05d}.parquet"
        try:
            write_file_atomic(self.dir / name, lambda tmp: table.to_parquet(tmp, index=True))
        except OSError as exc:
            raise StudyError(
                f"out={str(self.dir)!r}: part {name} could not be written ({exc}); the parts "
                "written before are kept: free space (or fix the folder) and call the study "
                "again with the same out= to run only the missing variants") from exc
        except (TypeError, ValueError, ImportError) as exc:   # pyarrow's errors derive from them
            raise StudyError(
                f"out={str(self.dir)!r}: the results could not be written as Parquet ({exc}); "
                "give each parameter column one type (all numbers, or all strings) and "
                "string or integer row labels") from exc


def read_study_file(path) -> dict:
    """The ``study.json`` of a study folder, or a :class:`StudyError` naming what is wrong."""
    path = Path(path)
    try:
        data = json.loads(path.read_text(encoding="utf-8"))
    except (OSError, UnicodeDecodeError, ValueError) as exc:
        raise StudyError(
            f"{path} cannot be read ({type(exc).__name__}: {exc}); the study folder "
            f"{str(path.parent)!r} is damaged (e.g. a run killed while creating it): move it "
            "away or delete it and run the study again with out= pointing to a new "
            "folder") from exc
    if not isinstance(data, dict):
        raise StudyError(f"{path} is not a study file (a JSON object with 'format' and "
                         "'study'); move the folder away and run the study again")
    return data


def read_part(path) -> pd.DataFrame:
    """One part file of a study folder, or a :class:`StudyError` naming the part.

    A part that cannot be read (empty, truncated, not Parquet) is named with the fix:
    delete it and run the study again with the same ``out=``, which reruns only the
    variants of that part.
    """
    path = Path(path)
    try:
        return pd.read_parquet(path)
    except (OSError, ValueError, TypeError, ImportError) as exc:  # pyarrow errors derive
        raise StudyError(
            f"study part {path.name} in {str(path.parent)!r} is unreadable "
            f"({type(exc).__name__}: {exc}); delete that file and call the study again "
            "with the same out= to rerun its variants (the other parts are kept)") from exc


def read_study(out) -> pd.DataFrame:
    """The rows stored in a study's ``out=`` folder (finished and failed), in stored order.

    Parameters
    ----------
    out : str or path
        The folder given as ``out=`` to :func:`run_variants` (or a study built on it).

    Returns
    -------
    pandas.DataFrame
        Parameter columns, result columns and ``error``, one row per stored variant (the
        latest record of each).
    """
    folder = Path(out)
    if not (folder / _STUDY_FILE).exists():
        raise StudyError(f"{str(out)!r} is not a study folder (no {_STUDY_FILE}); give the "
                         "folder passed as out=")
    read_study_file(folder / _STUDY_FILE)
    frames = [read_part(p) for p in sorted(folder.glob("part-*.parquet"))]
    if not frames:
        return pd.DataFrame(columns=[ERROR])
    df = pd.concat(frames, axis=0, sort=False).drop_duplicates(subset=_KEY, keep="last")
    return df.drop(columns=_KEY)


# ================================================================================ variants
def _select_outputs(columns: list, outputs) -> list:
    if outputs is None:
        return list(columns)
    if isinstance(outputs, str):
        outputs = [outputs]
    keep: list = []
    for pat in outputs:
        literal = "".join({"[": "[[]", "]": "[]]"}.get(ch, ch) for ch in pat)
        hits = [pat] if pat in columns else [
            c for c in columns if fnmatch.fnmatchcase(c, pat) or fnmatch.fnmatchcase(c, literal)]
        if not hits:
            raise StudyError(f"outputs: {pat!r} names no result column; available: "
                             f"{', '.join(columns)} (glob patterns such as 'balance:*' or "
                             "'balance[<room>]:*' work)")
        keep += [c for c in hits if c not in keep]
    return keep


def _chunks(positions: list[int], size: int) -> list[list[int]]:
    return [positions[a:a + size] for a in range(0, len(positions), size)]


def _sim_options(comfort_node, hours_above, degree_hours_above, balance_nodes, link_energy,
                 warmup_days, step, max_bytes, interpolate=None, **study) -> dict:
    out = dict(comfort_node=comfort_node, hours_above=tuple(hours_above),
               degree_hours_above=tuple(degree_hours_above), balance_nodes=balance_nodes,
               link_energy=bool(link_energy), warmup_days=warmup_days, step=step,
               max_bytes=max_bytes)
    if interpolate is not None:     # (absent by default: study folders keep their fingerprint)
        out["interpolate"] = tuple(interpolate)
    for k, v in study.items():      # (likewise: only the options a study uses)
        if v is not None and v is not False:
            out[k] = v
    return out


def _callable_name(obj) -> str:
    return (f"{getattr(obj, '__module__', '?')}."
            f"{getattr(obj, '__qualname__', type(obj).__name__)}")


def _warn_failed(table: pd.DataFrame, stacklevel: int):
    bad = table[ERROR].notna()
    if not bad.any():
        return
    rows = table.index[bad]
    shown = "; ".join(f"row {r!r}: {table.at[r, ERROR]}" for r in rows[:3])
    more = f"; and {len(rows) - 3} more" if len(rows) > 3 else ""
    warnings.warn(StudyWarning(
        f"{len(rows)} of {len(table)} variants failed ({shown}{more}); their results are NaN "
        f"and the others finished. See the {ERROR!r} column"), stacklevel=stacklevel)


def run_variants(build, params: pd.DataFrame, weather: pd.DataFrame | None = None, *,
                 outputs=None, comfort_node: str | None = None, hours_above=(25.0, 26.0),
                 degree_hours_above=(), balance_nodes=None, link_energy: bool = False,
                 warmup_days: float = 14.0, step=None, executor=None,
                 chunk_size: int | None = None, max_bytes: float = DEFAULT_MAX_BYTES,
                 progress="auto", out=None, errors: str = "collect",
                 interpolate=None, balance_rooms=None, judge=None, warming: str | None = None,
                 warming_columns=("temp_air",), pass_weather: bool = False) -> pd.DataFrame:
    """Simulate one network per row of a parameter table; one row of annual results each.

    Parameters
    ----------
    build : callable or Network
        ``build(**row)`` → :class:`thermonet.Network`, called with one row's values as
        keyword arguments (column name → value), or ``(Network, handles)`` where
        ``handles`` (e.g. a builder's room record) is passed to ``judge``. It may instead
        return a dict of named numbers: the row is then not simulated and those are its
        results (a model computed outside thermonet, or an analytic function that checks a
        study's wiring). Or a *parametric* network (:mod:`thermonet.parameters`): then no
        network is built per row — it is compiled once at its defaults and each row's
        numbers are patched into copies of its arrays (same columns as the ``build`` form; a
        row whose values fail a check, e.g. a negative conductance, is reported in ``error``
        naming the link).
    params : pandas.DataFrame
        One row per variant, one column per argument of ``build`` (for a parametric network:
        exactly one column per parameter, in its unit); the index labels the variants
        (unique).
    weather : pandas.DataFrame, optional
        As for :func:`thermonet.simulate` (required when ``build`` returns networks).
    outputs : str or list of str, optional
        Result columns to keep (names or glob patterns, e.g. ``["heating_kwh",
        "balance:*", "balance[living]:*"]``; brackets also match literally); default all.
    comfort_node : str, optional
        Node whose end-of-step temperature [°C] gives ``hours_above_<T>`` [h],
        ``degree_hours_above_<T>`` [K·h] and ``max/min/mean_temperature_c`` [°C].
    hours_above, degree_hours_above : sequence of float
        Thresholds [°C] (default 25 and 26 for hours, none for degree-hours).
    balance_nodes : str, list or dict, optional
        Control volume(s) whose annual balance by path [kWh] is reported
        (``balance:<path>``, ``balance:heating``, ``balance:storage``, ... — the column sums
        of ``Results.balance(nodes)``; see :func:`thermonet.engine.batch.run_batch`).
    link_energy : bool, default False
        Also report ``link:<name>`` annual link energies [kWh].
    warmup_days : float, default 14
        Lead-in [days] before the reported period.
    step : str or Timedelta, optional
        Time step (default: the weather's).
    interpolate : collection of str, optional
        Instantaneous weather columns, as for :func:`thermonet.simulate` (``()`` holds every
        input over its step).
    balance_rooms : "all", str or list of str, optional
        Rooms whose annual balance by path [kWh] is reported, by the names given to
        :func:`thermonet.builders.add_room` / ``add_buffer`` (``"all"``: every room the
        builders recorded in the variant's network). Each room's control volume is its
        recorded ``Room.nodes``; columns ``balance[<room>]:<path>``,
        ``balance[<room>]:heating``, ``…:cooling``, ``…:storage``, ``…:residual`` — the
        column sums of ``Results.balance(room.nodes)``. A room missing from a variant fails
        that variant (``error`` names the rooms it has).
    judge : callable, optional
        ``judge(results, handles, row, weather) -> {name: number}``, called on each
        variant's hourly :class:`thermonet.Results` (the batch keeps the traces of a chunk
        for it, then drops them); its values become result columns. ``handles`` is the
        second item when ``build`` returns ``(Network, handles)`` (else None), ``row`` the
        variant's parameters, ``weather`` the weather it ran with. For ``out=`` folders its
        ``__module__`` and ``__qualname__`` identify the study; for a process pool it must
        be picklable.
    warming : str, optional
        Name of a ``params`` column holding a warming offset [K] per variant, added to the
        weather's ``warming_columns`` for that variant (not passed to ``build``). Variants
        of a chunk with the same offset are stepped together.
    warming_columns : tuple of str, default ("temp_air",)
        Weather columns the offset is added to.
    pass_weather : bool, default False
        Also call ``build`` with ``weather=`` the variant's (warmed) weather.
    executor : None, concurrent.futures.Executor or dask.distributed.Client
        Where chunks run (see the module docstring).
    chunk_size : int, optional
        Variants per chunk (one task of the executor, one part file). Default: up to
        4096, and at least four chunks per worker of an executor.
    max_bytes : float, default 200e6
        Memory budget [bytes] of one kernel call inside a chunk.
    progress : bool or "auto"
        A tqdm progress bar over variants; "auto" shows it when there is more than one chunk
        or more than a few seconds of work (:data:`PROGRESS_WORK` variant-steps).
    out : str or path, optional
        Folder for Parquet part files written as chunks finish; a rerun with the same
        folder skips finished rows (see the module docstring).
    errors : {"collect", "raise"}
        "collect": failed variants are reported in the ``error`` column and a
        :class:`~thermonet.errors.StudyWarning`; "raise": stop at the first failure.

    Returns
    -------
    pandas.DataFrame
        Indexed like ``params``: the parameter columns, the result columns
        (``heating_kwh``, ``cooling_kwh`` [kWh], ``peak_heating_w``, ``peak_cooling_w`` [W],
        ``reported_hours`` [h], comfort and balance columns as asked) and ``error`` (None, or
        ``"<stage>: <exception type>: <message>"`` for a failed variant).

    Raises
    ------
    ParameterError
        A parametric network's table has a column that is no parameter, lacks a parameter,
        or holds a non-finite or out-of-bounds value (named with its row).
    StudyError
        Bad parameter table, unknown output names, a different study in ``out``, an
        unreadable part or ``study.json`` in ``out`` (named, with the fix), or (with
        ``errors="raise"``) the first failed variant. When a part cannot be written (disk
        full), the parts written before stay in ``out`` and the rows finished in this call
        are attached to the error as ``exc.finished`` (a DataFrame).
    """
    _check_build(build)
    params = _check_params(params)
    _check_weather(weather)
    _check_errors(errors)
    _check_parametric(build, params, weather)
    if chunk_size is not None and (not isinstance(chunk_size, (int, np.integer))
                                   or chunk_size < 1):
        raise ValueError(f"chunk_size must be a positive integer [variants], got {chunk_size!r}")
    wcols = check_warming(params, weather, warming, warming_columns)
    if pass_weather and "weather" in params.columns:
        raise StudyError("pass_weather=True passes 'weather' to build, which is also a column "
                         "of params; rename that column")
    if judge is not None and not callable(judge):
        raise TypeError(f"judge must be a function (results, handles, row, weather) -> dict, "
                        f"got {type(judge).__name__}")
    sim = _sim_options(comfort_node, hours_above, degree_hours_above, balance_nodes,
                       link_energy, warmup_days, step, max_bytes, interpolate,
                       balance_rooms=balance_rooms, judge=judge, warming=warming,
                       warming_columns=wcols or None, pass_weather=bool(pass_weather))
    N = len(params)
    done: dict[int, pd.DataFrame] = {}
    store = None
    keys = None
    if out is not None:
        fp = {"build": _build_name(build),
              "weather": _digest_frame(weather),
              "simulation": _json_safe({k: _callable_name(v) if k == "judge" else v
                                        for k, v in sim.items()})}
        fp["simulation"].pop("max_bytes")
        store = _PartStore(out, fp)
        keys = _row_keys(params)
        old = store.load()
        if old is not None:
            old = old[old[ERROR].isna()].set_index(_KEY)
            hit = pd.Index(keys).get_indexer(old.index)
            ok = hit >= 0
            if ok.any():
                prev = old.loc[ok].drop(columns=[c for c in params.columns if c in old.columns])
                prev.index = params.index[hit[ok]]
                done[-1] = prev
    finished = set() if not done else set(params.index.get_indexer(done[-1].index))
    todo = [p for p in range(N) if p not in finished]
    workers = _n_workers(executor)
    steps = len(weather.index) if weather is not None else 1   # (a build that simulates itself)
    big = len(todo) * steps >= PROGRESS_WORK
    size = chunk_size or max(1, min(DEFAULT_CHUNK, -(-len(todo) // (4 * workers))
                                    if executor is not None else DEFAULT_CHUNK))
    if chunk_size is None and executor is None and big and progress is not False:
        size = min(DEFAULT_CHUNK, max(64, -(-len(todo) // 10)))   # ~10 updates of the bar
    chunks = _chunks(todo, int(size))
    show = (len(chunks) > 1 or big) if progress == "auto" else bool(progress)
    from tqdm import tqdm

    bar = tqdm(total=N, initial=N - len(todo), unit="variant", disable=not show,
               desc="variants")
    results: list[pd.DataFrame] = list(done.values())
    try:
        for pos, res in _execute(executor, build, params, chunks, weather, sim):
            persist = True
            if isinstance(res, _ChunkFailed):
                persist = False
                res = pd.DataFrame({ERROR: _row_error("chunk", res.exc)},
                                   index=params.index[pos], dtype=object)
            bad = res[ERROR].notna()
            if errors == "raise" and bad.any():
                r = res.index[bad][0]
                raise StudyError(f"variant row {r!r} failed: {res.at[r, ERROR]}")
            if store is not None and persist:
                part = params.iloc[pos].join(res)
                part[_KEY] = keys[pos]
                try:
                    store.write(part)
                except StudyError as exc:  # disk full: keep what finished in memory too
                    got = pd.concat([*results, res], axis=0, sort=False)
                    exc.finished = params.loc[got.index].join(got)
                    raise
            results.append(res)
            bar.update(len(pos))
    finally:
        bar.close()
    table = _assemble(params, results)
    keep = _select_outputs([c for c in table.columns if c not in params.columns
                            and c != ERROR], outputs) if table[ERROR].isna().any() else []
    table = table[list(params.columns) + keep + [ERROR]]
    _warn_failed(table, stacklevel=3)
    return table


def _assemble(params: pd.DataFrame, results: list[pd.DataFrame]) -> pd.DataFrame:
    """Parameter columns, then result columns, then ``error``, in the order of ``params``."""
    if results:
        pos = [int(params.index.get_indexer(r.index[:1])[0]) if len(r) else 0 for r in results]
        ordered = [r for _, r in sorted(zip(pos, results, strict=True), key=lambda t: t[0])]
        res = pd.concat(ordered, axis=0, sort=False)
    else:
        res = pd.DataFrame({ERROR: pd.Series(dtype=object)})
    res = res.reindex(params.index)
    ok = res[ERROR].isna().to_numpy()
    for c in res.columns:
        if c.startswith("balance") or c.startswith("link:"):
            # no link of that path crosses this variant's control volume (as run_batch)
            res.loc[ok & res[c].isna().to_numpy(), c] = 0.0
    cols = [c for c in res.columns if c != ERROR]
    clash = [c for c in cols if c in params.columns]
    if clash:
        raise StudyError(f"params: column(s) {clash} have the names of results; rename them")
    err = res[ERROR].astype(object).where(res[ERROR].notna(), None)
    return pd.concat([params, res[cols].astype(float), err.rename(ERROR)], axis=1)


def variant_traces(build, params: pd.DataFrame, weather: pd.DataFrame, *, step=None,
                   warmup_days: float = 14.0) -> dict:
    """Hourly results of chosen variants (stepped together, as :func:`run_variants`).

    Parameters
    ----------
    build, params, weather, step, warmup_days
        As for :func:`run_variants` (a parametric network gives each row's plain network,
        ``net.with_values(row)``); keep ``params`` to the few variants whose traces you
        want (a year of a 10-node room with its flows is a few MB).

    Returns
    -------
    dict
        ``{row label: thermonet.Results}``; a variant that fails raises
        :class:`~thermonet.errors.StudyError` naming its row.
    """
    from thermonet.network import Network

    _check_build(build)
    params = _check_params(params)
    _check_parametric(build, params, weather)
    nets = []
    for label, kw in zip(params.index, params.to_dict("records"), strict=True):
        try:
            nets.append(build.with_values(kw) if isinstance(build, Network) else build(**kw))
        except Exception as exc:
            raise StudyError(f"variant row {label!r} failed: {_row_error('build', exc)}") \
                from exc
    out = run_batch(nets, weather, step=step, warmup_days=warmup_days, keep_traces=True)
    for label, e in zip(params.index, out.errors, strict=True):
        if e is not None:
            raise StudyError(f"variant row {label!r} failed: {_row_error('simulate', e)}") \
                from e
    return dict(zip(params.index, out.traces, strict=True))


# ============================================================================ sensitivity
def _check_bounds(bounds) -> dict:
    if not isinstance(bounds, Mapping) or not bounds:
        raise TypeError("bounds must be a dict {parameter: (low, high)} with at least one "
                        "entry")
    out = {}
    for name, b in bounds.items():
        try:
            lo, hi = (float(v) for v in b)
        except (TypeError, ValueError):
            raise StudyError(f"bounds[{name!r}] must be a pair (low, high) of numbers, got "
                             f"{b!r}") from None
        if not (math.isfinite(lo) and math.isfinite(hi) and lo < hi):
            raise StudyError(f"bounds[{name!r}]: need finite low < high, got ({lo}, {hi})")
        out[str(name)] = (lo, hi)
    return out


def one_at_a_time(build, base: Mapping, ranges: Mapping, weather: pd.DataFrame | None = None,
                  *, outputs="heating_kwh", **run_kwargs) -> pd.DataFrame:
    """Move each parameter alone from the base case to its low and its high value.

    Parameters
    ----------
    build : callable
        As for :func:`run_variants`.
    base : dict
        Every argument of ``build`` at its base-case value.
    ranges : dict
        ``{parameter: (low, high)}`` for the parameters to move (a subset of ``base``).
    weather : pandas.DataFrame, optional
        As for :func:`run_variants`.
    outputs : str or list of str, default "heating_kwh"
        Result columns (names or glob patterns, e.g. ``["heating_kwh", "balance:*"]`` for the
        effect on every balance path).
    **run_kwargs
        Passed to :func:`run_variants` (``comfort_node=``, ``balance_nodes=``,
        ``executor=``, ...).

    Returns
    -------
    pandas.DataFrame
        Tidy: one row per (output, parameter) with ``base``, ``low``, ``high`` (parameter
        values), ``result_base``, ``result_low``, ``result_high`` (the output in its unit),
        ``delta_low``, ``delta_high`` (change from the base case) and ``swing``
        (``|result_high − result_low|``); sorted by output, then by swing, largest first —
        the order of a tornado chart (:func:`tornado_plot`).
    """
    if not isinstance(base, Mapping):
        raise TypeError(f"base must be a dict of build arguments, got {type(base).__name__}")
    if not isinstance(ranges, Mapping) or not ranges:
        raise TypeError("ranges must be a dict {parameter: (low, high)} with at least one entry")
    unknown = [k for k in ranges if k not in base]
    if unknown:
        raise StudyError(f"ranges: {unknown} are not in base; base has {list(base)}")
    rng = {}
    for k, v in ranges.items():
        try:
            lo, hi = v
        except (TypeError, ValueError):
            raise StudyError(f"ranges[{k!r}] must be a pair (low, high), got {v!r}") from None
        rng[k] = (lo, hi)
    rows = [dict(base)]
    labels = ["base"]
    for k, (lo, hi) in rng.items():
        for tag, val in (("low", lo), ("high", hi)):
            r = dict(base)
            r[k] = val
            rows.append(r)
            labels.append(f"{k}:{tag}")
    params = pd.DataFrame(rows, index=pd.Index(labels, name="variant"))
    table = run_variants(build, params, weather, outputs=outputs, **run_kwargs)
    res_cols = [c for c in table.columns if c not in params.columns and c != ERROR]
    recs = []
    for out in res_cols:
        y0 = table.at["base", out]
        for k, (lo, hi) in rng.items():
            ylo, yhi = table.at[f"{k}:low", out], table.at[f"{k}:high", out]
            recs.append(dict(output=out, parameter=k, base=base[k], low=lo, high=hi,
                             result_base=y0, result_low=ylo, result_high=yhi,
                             delta_low=ylo - y0, delta_high=yhi - y0, swing=abs(yhi - ylo)))
    tidy = pd.DataFrame(recs)
    if len(tidy):
        order = {o: i for i, o in enumerate(res_cols)}
        tidy = (tidy.assign(_o=tidy["output"].map(order))
                .sort_values(["_o", "swing"], ascending=[True, False], kind="stable")
                .drop(columns="_o").reset_index(drop=True))
    return tidy


def tornado_plot(table: pd.DataFrame, output: str | None = None, *, ax=None, unit: str = "",
                 top: int | None = None):
    """Tornado chart of a :func:`one_at_a_time` table for one output.

    Parameters
    ----------
    table : pandas.DataFrame
        The result of :func:`one_at_a_time`.
    output : str, optional
        Which output (default: the first in the table).
    ax : matplotlib Axes, optional
    unit : str, optional
        Unit of the output for the axis label (e.g. ``"kWh"``).
    top : int, optional
        Show only the parameters with the largest swings.

    Returns
    -------
    (Figure, Axes)
        Bars from the base-case result to the result at each parameter's low (hatched) and
        high (solid) value, largest swing on top.
    """
    import matplotlib.pyplot as plt

    need = {"output", "parameter", "delta_low", "delta_high", "swing", "result_base"}
    if not isinstance(table, pd.DataFrame) or not need <= set(table.columns):
        raise StudyError("tornado_plot: give the table returned by one_at_a_time (columns "
                         f"{sorted(need)})")
    outputs = list(dict.fromkeys(table["output"]))
    if not outputs:
        raise StudyError("tornado_plot: the table is empty")
    output = outputs[0] if output is None else output
    if output not in outputs:
        raise StudyError(f"tornado_plot: output {output!r} not in the table; it has {outputs}")
    d = table[table["output"] == output].sort_values("swing", ascending=False, kind="stable")
    if top is not None:
        d = d.head(int(top))
    d = d.iloc[::-1]
    if ax is None:
        fig, ax = plt.subplots(figsize=(7, 0.45 * len(d) + 1.5), layout="constrained")
    else:
        fig = ax.figure
    y = np.arange(len(d))
    ax.barh(y, d["delta_low"], color="#0072B2", hatch="//", edgecolor="white", label="low value")
    ax.barh(y, d["delta_high"], color="#D55E00", label="high value")
    ax.axvline(0.0, color="black", lw=0.8)
    def fmt(v):
        return f"{v:g}" if isinstance(v, (int, float, np.integer, np.floating)) else str(v)

    ax.set_yticks(y, [f"{p} ({fmt(lo)} – {fmt(hi)})" for p, lo, hi in
                      zip(d["parameter"], d["low"], d["high"], strict=True)])
    base = float(d["result_base"].iloc[0]) if len(d) else float("nan")
    ax.set_xlabel(f"change of {output}{f' [{unit}]' if unit else ''} from the base case "
                  f"({base:.4g}{f' {unit}' if unit else ''})")
    ax.legend(loc="lower right", frameon=False)
    return fig, ax


@dataclass
class SensitivityResult:
    """Indices of a global sensitivity study and the variants it ran.

    Attributes
    ----------
    indices : pandas.DataFrame
        Tidy: one row per (output, parameter) with the method's indices and confidence
        half-widths (see :func:`morris`, :func:`sobol`).
    variants : pandas.DataFrame
        The sampled parameter values and results, as from :func:`run_variants`.
    second_order : pandas.DataFrame or None
        Sobol' second-order indices ``S2`` and ``S2_conf`` per (output, parameter pair).
    method : str
    """

    indices: pd.DataFrame
    variants: pd.DataFrame
    second_order: pd.DataFrame | None = None
    method: str = ""


def _sensitivity_outputs(table, names, method):
    cols = [c for c in table.columns if c not in names and c != ERROR]
    bad = table[ERROR].notna()
    if bad.any():
        rows = table.index[bad]
        raise StudyError(
            f"{method}: {len(rows)} sampled variant(s) failed (first: row {rows[0]!r}: "
            f"{table.at[rows[0], ERROR]}); the estimators need every sample. Narrow the "
            "bounds or fix the build function")
    return cols


def morris(build, bounds: Mapping, weather: pd.DataFrame | None = None, *,
           outputs="heating_kwh", trajectories: int = 20, levels: int = 4,
           optimal_trajectories: int | None = None, seed: int | None = None,
           num_resamples: int = 100, conf_level: float = 0.95,
           **run_kwargs) -> SensitivityResult:
    """Morris elementary-effects screening [1]_ with Campolongo's μ* [2]_, through SALib [5]_.

    Parameters
    ----------
    build : callable
        As for :func:`run_variants`; the parameters not in ``bounds`` take ``build``'s
        defaults (use :func:`functools.partial` to fix others).
    bounds : dict
        ``{parameter: (low, high)}``, sampled uniformly on a ``levels``-level grid.
    weather : pandas.DataFrame, optional
    outputs : str or list of str, default "heating_kwh"
        Result columns (names or glob patterns) to analyse.
    trajectories : int, default 20
        Number of trajectories r; the study runs r·(k + 1) variants for k parameters.
    levels : int, default 4
        Grid levels p.
    optimal_trajectories : int, optional
        Choose this many trajectories of the ``trajectories`` drawn that are most spread out
        (Campolongo et al. 2007).
    seed : int, optional
        Seed of the sampler and of the bootstrap of the confidence intervals.
    num_resamples, conf_level
        Bootstrap of the confidence half-width of μ*.
    **run_kwargs
        Passed to :func:`run_variants` (``executor=``, ``comfort_node=``, ...).

    Returns
    -------
    SensitivityResult
        ``indices`` columns: output, parameter, ``mu``, ``mu_star``, ``sigma`` (in the
        output's unit), ``mu_star_conf``; sorted by output, then μ* largest first.

    Notes
    -----
    The elementary effect of parameter i on trajectory j is
    ``EE = [y(x + Δ e_i) − y(x)] / Δ`` with Δ = p / (2(p − 1)) of the *normalised* range;
    μ* = mean abs(EE) ranks importance, σ = std(EE) flags interaction or non-linearity.

    References
    ----------
    .. [1] Morris, M. D., Technometrics 33(2), 161–174, 1991.
       doi:10.1080/00401706.1991.10484804
    .. [2] Campolongo, F., Cariboni, J., Saltelli, A., Environmental Modelling & Software
       22(10), 1509–1518, 2007. doi:10.1016/j.envsoft.2006.10.004
    .. [5] Herman, J., Usher, W., JOSS 2(9), 97, 2017. doi:10.21105/joss.00097
    """
    from SALib.analyze import morris as morris_analyze
    from SALib.sample import morris as morris_sample

    b = _check_bounds(bounds)
    names = list(b)
    problem = {"num_vars": len(names), "names": names, "bounds": [list(b[n]) for n in names]}
    X = morris_sample.sample(problem, int(trajectories), num_levels=int(levels),
                             optimal_trajectories=optimal_trajectories, seed=seed)
    params = pd.DataFrame(X, columns=names)
    table = run_variants(build, params, weather, outputs=outputs, **run_kwargs)
    recs = []
    for out in _sensitivity_outputs(table, names, "morris"):
        Y = table[out].to_numpy(dtype=float)
        r = morris_analyze.analyze(problem, X, Y, num_resamples=int(num_resamples),
                                   conf_level=conf_level, num_levels=int(levels), seed=seed)
        for i, n in enumerate(names):
            recs.append(dict(output=out, parameter=n, mu=float(r["mu"][i]),
                             mu_star=float(r["mu_star"][i]), sigma=float(r["sigma"][i]),
                             mu_star_conf=float(r["mu_star_conf"][i])))
    ind = _sorted(pd.DataFrame(recs), "mu_star")
    return SensitivityResult(indices=ind, variants=table, method="morris")


def _sorted(df: pd.DataFrame, by: str) -> pd.DataFrame:
    if not len(df):
        return df
    order = {o: i for i, o in enumerate(dict.fromkeys(df["output"]))}
    return (df.assign(_o=df["output"].map(order))
            .sort_values(["_o", by], ascending=[True, False], kind="stable")
            .drop(columns="_o").reset_index(drop=True))


def sobol(build, bounds: Mapping, weather: pd.DataFrame | None = None, *,
          outputs="heating_kwh", n: int = 1024, second_order: bool = False,
          seed: int | None = None, num_resamples: int = 100, conf_level: float = 0.95,
          **run_kwargs) -> SensitivityResult:
    """First-order and total Sobol' indices [3]_ with Saltelli's design [4]_, through SALib.

    Parameters
    ----------
    build : callable
        As for :func:`run_variants`; parameters not in ``bounds`` take ``build``'s defaults.
    bounds : dict
        ``{parameter: (low, high)}``, each uniformly distributed and independent.
    weather : pandas.DataFrame, optional
    outputs : str or list of str, default "heating_kwh"
        Result columns (names or glob patterns) to analyse.
    n : int, default 1024
        Base sample size N, a power of 2 (scrambled Sobol' sequence); the study runs
        N·(k + 2) variants for k parameters, N·(2k + 2) with ``second_order``.
    second_order : bool, default False
        Also estimate the second-order indices S_ij.
    seed : int, optional
        Seed of the scrambling and of the bootstrap.
    num_resamples, conf_level
        Bootstrap of the confidence half-widths.
    **run_kwargs
        Passed to :func:`run_variants` (``executor=``, ``comfort_node=``, ...).

    Returns
    -------
    SensitivityResult
        ``indices`` columns: output, parameter, ``S1``, ``S1_conf``, ``ST``, ``ST_conf``
        (fractions of the output's variance); sorted by output, then ST largest first.

    Notes
    -----
    With f₀ the mean and V the variance of the output Y, ``S_i = V[E(Y|X_i)]/V`` is the
    share of V due to X_i alone and ``S_Ti = E[V(Y|X_~i)]/V`` the share of X_i with all its
    interactions; Σ S_i ≤ 1, S_Ti ≥ S_i. SALib estimates them from the radial design of
    matrices A, B and A_B^(i) with the estimators of Saltelli et al. (2010), Table 2 (S_i,
    their (b)) and Jansen's estimator for S_Ti (their (f)).

    References
    ----------
    .. [3] Sobol', I. M., Mathematics and Computers in Simulation 55(1–3), 271–280, 2001.
       doi:10.1016/S0378-4754(00)00270-6
    .. [4] Saltelli, A., Annoni, P., Azzini, I., Campolongo, F., Ratto, M., Tarantola, S.,
       Computer Physics Communications 181(2), 259–270, 2010. doi:10.1016/j.cpc.2009.09.018
    """
    from SALib.analyze import sobol as sobol_analyze
    from SALib.sample import sobol as sobol_sample

    b = _check_bounds(bounds)
    if not (isinstance(n, (int, np.integer)) and n >= 2 and (n & (n - 1)) == 0):
        lower = 2 ** int(math.log2(max(int(n), 2))) if isinstance(n, (int, np.integer)) else 2
        raise StudyError(f"sobol: n must be a power of 2 (the Sobol' sequence's balance "
                         f"needs it), got {n!r}; e.g. {lower} or {2 * lower}")
    names = list(b)
    problem = {"num_vars": len(names), "names": names, "bounds": [list(b[k]) for k in names]}
    X = sobol_sample.sample(problem, int(n), calc_second_order=bool(second_order),
                            scramble=True, seed=seed)
    params = pd.DataFrame(X, columns=names)
    table = run_variants(build, params, weather, outputs=outputs, **run_kwargs)
    recs, recs2 = [], []
    for out in _sensitivity_outputs(table, names, "sobol"):
        Y = table[out].to_numpy(dtype=float)
        if np.ptp(Y) == 0.0:
            raise StudyError(f"sobol: output {out!r} does not vary over the sample (always "
                             f"{Y[0]:g}); its indices are undefined. Drop it from outputs=")
        r = sobol_analyze.analyze(problem, Y, calc_second_order=bool(second_order),
                                  num_resamples=int(num_resamples), conf_level=conf_level,
                                  seed=seed)
        for i, k in enumerate(names):
            recs.append(dict(output=out, parameter=k, S1=float(r["S1"][i]),
                             S1_conf=float(r["S1_conf"][i]), ST=float(r["ST"][i]),
                             ST_conf=float(r["ST_conf"][i])))
        if second_order:
            for i in range(len(names)):
                for j in range(i + 1, len(names)):
                    recs2.append(dict(output=out, parameter_1=names[i], parameter_2=names[j],
                                      S2=float(r["S2"][i, j]),
                                      S2_conf=float(r["S2_conf"][i, j])))
    return SensitivityResult(indices=_sorted(pd.DataFrame(recs), "ST"), variants=table,
                             second_order=pd.DataFrame(recs2) if second_order else None,
                             method="sobol")


# ============================================================================ calibration
@dataclass
class CalibrationResult:
    """Fitted parameters, their uncertainty and the fit residuals (see :func:`calibrate`).

    Attributes
    ----------
    parameters : pandas.DataFrame
        Index: parameter. Columns ``value`` (fitted), ``std_error`` (one standard error, in
        the parameter's unit), ``rel_std_error`` [-], ``initial``, ``low``, ``high``,
        ``at_bound`` (True if the fit stopped on a bound: its standard error is not
        meaningful).
    correlation : pandas.DataFrame
        Correlation matrix of the estimates [-]; abs(r) near 1 means the data cannot tell the
        two parameters apart.
    covariance : pandas.DataFrame
        Covariance of the estimates [unit_i · unit_j].
    residuals : pandas.DataFrame
        Measured − simulated per measured column [°C or W], NaN where the measurement was
        missing.
    simulated : pandas.DataFrame
        The fitted model's values on the measured index.
    rmse : pandas.Series
        Root-mean-square residual per column [°C or W].
    sigma : pandas.Series
        The scale each column's residuals were divided by [°C or W].
    residual_std : float
        Standard deviation of the scaled residuals, ``sqrt(Σr²/(n − p))`` [-].
    n_obs, dof : int
        Measurements used, and n_obs − number of parameters.
    success : bool
    message : str
    nfev : int
        Model evaluations (each Jacobian's variants counted as one batch).
    results : thermonet.Results
        Hourly results of the fitted model.
    optimize_result : scipy.optimize.OptimizeResult
    """

    parameters: pd.DataFrame
    correlation: pd.DataFrame
    covariance: pd.DataFrame
    residuals: pd.DataFrame
    simulated: pd.DataFrame
    rmse: pd.Series
    sigma: pd.Series
    residual_std: float
    n_obs: int
    dof: int
    success: bool
    message: str
    nfev: int
    results: object = field(repr=False, default=None)
    optimize_result: object = field(repr=False, default=None)


def _parse_spec(parameters) -> pd.DataFrame:
    if not isinstance(parameters, Mapping) or not parameters:
        raise TypeError("parameters must be a dict {name: initial} or {name: (initial, low, "
                        "high)} with at least one entry")
    rows = {}
    for name, v in parameters.items():
        if isinstance(v, (tuple, list)):
            if len(v) != 3:
                raise StudyError(f"parameters[{name!r}]: give initial or (initial, low, high), "
                                 f"got {v!r}")
            x0, lo, hi = (float(t) for t in v)
        else:
            x0, lo, hi = float(v), -math.inf, math.inf
        if not math.isfinite(x0):
            raise StudyError(f"parameters[{name!r}]: initial value must be finite, got {x0}")
        if not lo < hi or not lo <= x0 <= hi:
            raise StudyError(f"parameters[{name!r}]: need low < high and low ≤ initial ≤ high, "
                             f"got initial {x0}, bounds ({lo}, {hi})")
        rows[str(name)] = (x0, lo, hi)
    return pd.DataFrame.from_dict(rows, orient="index", columns=["initial", "low", "high"])


def _observables(res, columns) -> dict:
    out = {}
    temps = None
    for c in columns:
        if c == "heating":
            out[c] = res.heating.to_numpy()
        elif c == "cooling":
            out[c] = res.cooling.to_numpy()
        else:
            temps = res.temperatures if temps is None else temps
            out[c] = temps[c].to_numpy()
    return out


def calibrate(build, parameters: Mapping, weather: pd.DataFrame, measured: pd.DataFrame, *,
              sigma: Mapping | None = None, step=None, warmup_days: float = 14.0,
              diff_step: float = 1e-6, max_nfev: int | None = None, loss: str = "linear",
              **least_squares_kwargs) -> CalibrationResult:
    """Fit parameters of a network to measured temperatures and/or heating or cooling power.

    Parameters
    ----------
    build : callable or Network
        ``build(**values)`` → :class:`thermonet.Network`, called with the parameters being
        fitted as keyword arguments (fix the others with defaults or
        :func:`functools.partial`). Any number can be a parameter: conductances [W/K],
        capacitances [J/K], a solar aperture [m²] scaling an irradiance source, an
        infiltration rate [1/h] ... Or a parametric network (:mod:`thermonet.parameters`):
        each trial is ``net.with_values(values)`` (parameters not fitted keep their
        defaults).
    parameters : dict
        ``{name: initial}`` or ``{name: (initial, low, high)}`` in the parameter's unit;
        bounds default to (−inf, inf).
    weather : pandas.DataFrame
        As for :func:`thermonet.simulate`.
    measured : pandas.DataFrame
        Indexed by time stamps of the simulation index (a subset is fine). Columns: a free
        node's name (its end-of-step temperature [°C], as ``Results.temperatures``),
        ``"heating"`` or ``"cooling"`` (total thermostat power, step mean [W], ≥ 0). NaN
        marks a missing measurement: it is left out of the fit (nothing is filled).
    sigma : dict, optional
        ``{column: uncertainty}`` [°C or W] dividing each column's residuals. Default: each
        column's standard deviation over the measurements, so that columns in different units
        weigh alike; give your instruments' uncertainties to weigh them properly.
    step, warmup_days
        As for :func:`thermonet.simulate`.
    diff_step : float, default 1e-6
        Relative step of the forward-difference Jacobian; the variants of one Jacobian are
        simulated together (:func:`thermonet.engine.batch.run_batch`).
    max_nfev, loss, **least_squares_kwargs
        Passed to :func:`scipy.optimize.least_squares` (method "trf", bounds respected).

    Returns
    -------
    CalibrationResult

    Notes
    -----
    The parameters are fitted in units of their initial values (``z = p / |p₀|``), which
    keeps conductances [W/K] and capacitances [J/K] comparable for the trust-region solver.
    With r the scaled residuals (``(simulated − measured)/σ``) at the solution, J their
    Jacobian, n the number of measurements and p of parameters, the covariance of the
    estimates is ``s² (JᵀJ)⁻¹`` with ``s² = Σr²/(n − p)`` [6]_ — the usual linearised
    estimate, valid when the residuals are independent and the model is nearly linear over
    the uncertainty. Hourly residuals are usually correlated in time, which makes these
    standard errors optimistic; read them as a lower bound.

    References
    ----------
    .. [6] Seber, G. A. F., Wild, C. J., Nonlinear Regression, Wiley, 1989, §2.1–2.2 (from
       memory).
    .. [7] Branch, M. A., Coleman, T. F., Li, Y., "A subspace, interior, and conjugate
       gradient method for large-scale bound-constrained minimization problems", SIAM J.
       Sci. Comput. 21(1), 1–23, 1999 (the "trf" method of scipy).
    """
    from scipy.optimize import least_squares

    from thermonet.engine.compile import sim_index
    from thermonet.network import Network

    _check_build(build)
    if not isinstance(weather, pd.DataFrame):
        raise TypeError(f"weather must be a pandas DataFrame, got {type(weather).__name__}")
    if not isinstance(measured, pd.DataFrame) or measured.shape[1] == 0:
        raise TypeError("measured must be a DataFrame with one column per measured quantity "
                        "(a node name [°C], 'heating' or 'cooling' [W])")
    spec = _parse_spec(parameters)
    names = list(spec.index)
    index, _, _ = sim_index(weather.index, step)
    if not isinstance(measured.index, pd.DatetimeIndex) or measured.index.tz is None:
        raise StudyError("measured: the index must be tz-aware time stamps on the simulation "
                         "index (each row the interval ending at its label)")
    pos = index.get_indexer(measured.index)
    if (pos < 0).any():
        miss = measured.index[pos < 0][:3].tolist()
        raise StudyError(f"measured: {int((pos < 0).sum())} time stamp(s) are not on the "
                         f"simulation index (first: {miss}); resample the measurements to "
                         "the weather's step and period")
    meas = measured.apply(pd.to_numeric, errors="raise").astype(float)
    mask = meas.notna().to_numpy()
    for j, c in enumerate(meas.columns):
        if not mask[:, j].any():
            raise StudyError(f"measured: column {c!r} has no values; drop it")
    sig = {}
    for c in meas.columns:
        if sigma is not None and c in sigma:
            s = float(sigma[c])
        elif sigma is not None:
            raise StudyError(f"sigma: no entry for measured column {c!r}; give one per column")
        else:
            s = float(np.nanstd(meas[c].to_numpy()))
        if not (math.isfinite(s) and s > 0):
            raise StudyError(f"sigma for column {c!r} must be > 0, got {s}; pass sigma={{"
                             f"{c!r}: uncertainty}}")
        sig[c] = s
    cols = list(meas.columns)
    y = meas.to_numpy()
    scale = np.where(spec["initial"].to_numpy() != 0, np.abs(spec["initial"].to_numpy()), 1.0)
    lo = spec["low"].to_numpy() / scale
    hi = spec["high"].to_numpy() / scale

    def build_net(p):
        kw = dict(zip(names, (float(v) for v in p), strict=True))
        try:
            return build.with_values(kw) if isinstance(build, Network) else build(**kw)
        except Exception as exc:
            raise StudyError(f"calibrate: build failed at {kw}: {_row_error('build', exc)}") \
                from exc

    def simulate_many(P):
        nets = [build_net(p) for p in P]
        out = run_batch(nets, weather, step=step, warmup_days=warmup_days, keep_traces=True)
        for p, e in zip(P, out.errors, strict=True):
            if e is not None:
                kw = dict(zip(names, (float(v) for v in p), strict=True))
                raise StudyError(f"calibrate: simulation failed at {kw}: "
                                 f"{_row_error('simulate', e)}") from e
        return out.traces

    def check_columns(res):
        net = res._net
        allowed = list(net.nodes) + ["heating", "cooling"]
        bad = [c for c in cols if c not in allowed]
        if bad:
            raise StudyError(f"measured: column(s) {bad} are neither free nodes of the network "
                             f"nor 'heating'/'cooling'; allowed: {', '.join(allowed)}")
        if not net.thermostats and ({"heating", "cooling"} & set(cols)):
            raise StudyError("measured: 'heating'/'cooling' power needs a thermostat in the "
                             "network (add_thermostat); or model the measured power as a "
                             "source and fit temperatures")

    def residual_of(res):
        obs = _observables(res, cols)
        r = np.column_stack([(obs[c][pos] - y[:, j]) / sig[c] for j, c in enumerate(cols)])
        return r[mask]

    cache: dict = {}
    counter = {"n": 0}

    def fun(z):
        key = z.tobytes()
        if key not in cache:
            res = simulate_many([z * scale])[0]
            if not cache:
                check_columns(res)
            counter["n"] += 1
            cache.clear()
            cache[key] = residual_of(res)
        return cache[key]

    def jac(z):
        f0 = fun(z)
        P = []
        hs = np.empty(len(z))
        for i in range(len(z)):
            h = diff_step * max(abs(z[i]), 1.0)
            if z[i] + h > hi[i]:
                h = -h
            zi = z.copy()
            zi[i] += h
            hs[i] = zi[i] - z[i]
            P.append(zi * scale)
        traces = simulate_many(P)
        counter["n"] += 1
        J = np.empty((f0.size, len(z)))
        for i, res in enumerate(traces):
            J[:, i] = (residual_of(res) - f0) / hs[i]
        return J

    z0 = spec["initial"].to_numpy() / scale
    opt = least_squares(fun, z0, jac=jac, bounds=(lo, hi), method="trf", x_scale=1.0,
                        loss=loss, max_nfev=max_nfev, **least_squares_kwargs)
    z = opt.x
    r = fun(z)
    J = jac(z)
    n_obs, p = r.size, len(z)
    dof = n_obs - p
    s2 = float(r @ r) / dof if dof > 0 else float("nan")
    U, sv, Vt = np.linalg.svd(J, full_matrices=False)
    tol = sv.max() * max(J.shape) * np.finfo(float).eps if sv.size else 0.0
    if sv.size and sv.min() <= tol * 1e4:
        weak = [names[i] for i in np.argsort(-np.abs(Vt[-1]))[:2]]
        warnings.warn(StudyWarning(
            f"calibrate: the measurements hardly constrain a combination of {weak} (the "
            "Jacobian is nearly rank-deficient); their standard errors are unreliable. Fix "
            "one of them or measure something that separates them"), stacklevel=2)
    inv = (Vt.T / np.where(sv > tol, sv**2, np.inf)) @ Vt
    cov = s2 * inv * np.outer(scale, scale)
    se = np.sqrt(np.clip(np.diag(cov), 0, None))
    with np.errstate(invalid="ignore", divide="ignore"):
        corr = cov / np.outer(se, se)
    value = z * scale
    at_bound = (opt.active_mask != 0) if hasattr(opt, "active_mask") else np.zeros(p, bool)
    table = pd.DataFrame({"value": value, "std_error": se,
                          "rel_std_error": se / np.abs(np.where(value != 0, value, np.nan)),
                          "initial": spec["initial"], "low": spec["low"],
                          "high": spec["high"], "at_bound": at_bound}, index=names)
    table.index.name = "parameter"
    best = simulate_many([value])[0]
    obs = _observables(best, cols)
    simulated = pd.DataFrame({c: obs[c][pos] for c in cols}, index=measured.index)
    resid = (meas - simulated).where(meas.notna())
    rmse = np.sqrt((resid**2).mean())
    return CalibrationResult(
        parameters=table,
        correlation=pd.DataFrame(corr, index=names, columns=names),
        covariance=pd.DataFrame(cov, index=names, columns=names),
        residuals=resid, simulated=simulated, rmse=rmse, sigma=pd.Series(sig),
        residual_std=math.sqrt(s2) if s2 == s2 else float("nan"), n_obs=int(n_obs),
        dof=int(dof), success=bool(opt.success), message=str(opt.message),
        nfev=int(counter["n"]), results=best, optimize_result=opt)
