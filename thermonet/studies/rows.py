"""What a study row adds to the batch path: its own weather, its rooms' balances, its judge.

:func:`thermonet.studies.run_variants` builds one network per row and steps the networks of
a chunk together (:func:`thermonet.engine.batch.run_batch`). Three per-row needs are
resolved here, before the rows go to the engine, so that the engine stays one:

* **a warmed weather** (:func:`warmed_weather`): a row may carry a warming offset [K] that is
  added to chosen weather columns for that row only; rows of a chunk are then grouped by
  their offset and each group is one :func:`~thermonet.engine.batch.run_batch` call;
* **the balance of named rooms** (:func:`room_balance_sets`): a room built by
  :func:`thermonet.builders.add_room` or ``add_buffer`` is recorded with its control volume
  (:func:`thermonet.builders.rooms`), so a study asks for "the annual balance by path of each
  room" by room name, and gets columns ``balance[<room>]:<path>`` [kWh];
* **a judge** (:func:`judge_values`): a function of one variant's hourly results that
  returns named numbers (e.g. comfort criteria on the room's operative temperature), run on
  the traces the batch kept for the chunk and dropped after.
"""

from __future__ import annotations

import math
from collections.abc import Mapping

import numpy as np
import pandas as pd

from thermonet.errors import StudyError

__all__ = [
    "check_warming",
    "judged_batches",
    "judge_values",
    "merge_balance_sets",
    "room_balance_sets",
    "warmed_weather",
]


def check_warming(params: pd.DataFrame, weather, warming, columns) -> tuple:
    """Check a study's warming column and the weather columns it shifts.

    Parameters
    ----------
    params : pandas.DataFrame
        The study's parameter table.
    weather : pandas.DataFrame or None
        The study's weather.
    warming : str or None
        Name of the ``params`` column holding each row's offset [K].
    columns : sequence of str
        Weather columns the offset is added to.

    Returns
    -------
    tuple of str
        ``columns`` as a tuple (empty when ``warming`` is None).

    Raises
    ------
    StudyError
        The column is missing or holds non-finite values, the weather lacks a column, or
        there is no weather.
    """
    if warming is None:
        return ()
    if not isinstance(warming, str) or warming not in params.columns:
        raise StudyError(f"warming={warming!r} must name a column of params holding each "
                         f"row's offset [K]; params has {list(params.columns)}")
    if weather is None:
        raise StudyError("warming= shifts the weather of each row; pass weather=")
    if isinstance(columns, str):
        columns = (columns,)
    columns = tuple(columns)
    missing = [c for c in columns if c not in weather.columns]
    if missing or not columns:
        raise StudyError(f"warming_columns {list(columns)} must be columns of the weather (it "
                         f"has {', '.join(map(str, weather.columns))}); the warming offset is "
                         "added to these")
    x = pd.to_numeric(params[warming], errors="coerce").to_numpy(dtype=float)
    if not np.isfinite(x).all():
        bad = params.index[~np.isfinite(x)][:3].tolist()
        raise StudyError(f"params[{warming!r}]: the warming offset [K] must be a finite "
                         f"number in every row; rows {bad} are not")
    return columns


def warmed_weather(weather: pd.DataFrame, offset: float, columns) -> pd.DataFrame:
    """The weather with ``offset`` [K] added to ``columns`` (a copy; the input is unchanged).

    Parameters
    ----------
    weather : pandas.DataFrame
        The study's weather.
    offset : float
        Warming offset [K].
    columns : sequence of str
        Columns shifted (temperatures [°C]).

    Returns
    -------
    pandas.DataFrame
    """
    out = weather.copy()
    for c in columns:
        out[c] = out[c] + float(offset)
    return out


def room_balance_sets(net, rooms) -> dict:
    """Control volumes of named rooms, from the builders' records of ``net``.

    Parameters
    ----------
    net : thermonet.Network
        A network whose rooms were built by :func:`thermonet.builders.add_room` or
        ``add_buffer`` (records in ``net.meta``, :func:`thermonet.builders.rooms`).
    rooms : "all", str or sequence of str
        ``"all"``: every recorded room; otherwise the room name(s).

    Returns
    -------
    dict
        ``{room name: [its nodes]}`` (``Room.nodes``: air, radiant star and the nodes of
        the room's own elements), in the order asked (``"all"``: the order built).

    Raises
    ------
    StudyError
        No room recorded, or a name that is not a recorded room (the known ones are named).
    """
    from thermonet.builders.records import rooms as recorded

    known = recorded(net)
    if isinstance(rooms, str) and rooms == "all":
        if not known:
            raise StudyError("balance_rooms='all': the network has no room records; build "
                             "rooms with thermonet.builders.add_room/add_buffer, or give "
                             "node sets with balance_nodes=")
        names = list(known)
    else:
        names = [rooms] if isinstance(rooms, str) else list(rooms)
        if not names or not all(isinstance(n, str) and n for n in names):
            raise StudyError(f"balance_rooms must be 'all' or room name(s), got {rooms!r}")
        missing = [n for n in names if n not in known]
        if missing:
            raise StudyError(f"balance_rooms: {missing} are not rooms of the network (rooms "
                             f"recorded by the builders: {list(known) or 'none'}); give their "
                             "names as passed to add_room/add_buffer")
    return {n: list(known[n].nodes) for n in names}


def merge_balance_sets(balance_nodes, room_sets: dict):
    """``balance_nodes`` of :func:`~thermonet.engine.batch.run_batch` with rooms added.

    Parameters
    ----------
    balance_nodes : None, str, list of str or dict
        The study's own control volumes (one unlabelled set, or ``{label: nodes}``).
    room_sets : dict
        ``{room: nodes}`` from :func:`room_balance_sets` (may be empty).

    Returns
    -------
    None, str, list or dict
        ``balance_nodes`` unchanged when there are no rooms, else a dict with the
        unlabelled set under ``""`` (columns ``balance:<path>``) and each room under its
        name (columns ``balance[<room>]:<path>``).

    Raises
    ------
    StudyError
        A label of ``balance_nodes`` that is also a room name.
    """
    if not room_sets:
        return balance_nodes
    if balance_nodes is None:
        base = {}
    elif isinstance(balance_nodes, Mapping):
        base = {str(k): v for k, v in balance_nodes.items()}
    else:
        base = {"": balance_nodes}
    clash = sorted(set(base) & set(room_sets))
    if clash:
        raise StudyError(f"balance_nodes labels {clash} are also room names of "
                         "balance_rooms; rename those labels (both would write "
                         "balance[<label>]:<path>)")
    base.update(room_sets)
    return base


def judged_batches(positions: list, net, n_steps: int, max_bytes: float) -> list:
    """Split a group of variants whose traces a judge reads into batches within a budget.

    The traces of a batch are all held until they are judged, so a batch holds at most
    ``max_bytes`` of them (at least one variant).

    Parameters
    ----------
    positions : list
        The variants of the group (any items; they are sliced in order).
    net : thermonet.Network
        One network of the group (all have the same size).
    n_steps : int
        Steps of the simulation, warm-up included.
    max_bytes : float
        Memory budget [bytes].

    Returns
    -------
    list of list
        ``positions`` cut into consecutive batches.

    Notes
    -----
    A variant's traces take about 8 bytes × steps × (3 per node + 2 per boundary or source
    + 1 per link): end and step-mean temperatures and the tables ``Results`` forms, the
    inputs at both ends of each step, and a flow per link when asked (an estimate, not a
    bound).
    """
    width = (3 * len(net.nodes) + 2 * (len(net.boundaries) + len(net.sources))
             + len(net.links) + 1)
    size = max(1, int(float(max_bytes) // (8.0 * max(1, n_steps) * width)))
    return [positions[a:a + size] for a in range(0, len(positions), size)]


def judge_values(judge, results, handles, row: dict, weather) -> dict:
    """Named numbers of one variant from ``judge(results, handles, row, weather)``.

    Parameters
    ----------
    judge : callable
        ``judge(results, handles, row, weather) -> {name: number}``.
    results : thermonet.Results
        The variant's hourly results (from the batch, traces kept).
    handles : object
        What ``build`` returned beside the network (None when it returned a network only).
    row : dict
        The variant's parameters (all columns of its row).
    weather : pandas.DataFrame
        The weather the variant was simulated with (warmed, if the study warms).

    Returns
    -------
    dict of str to float
        NaN is allowed (a value that is not defined for the period), inf is not.

    Raises
    ------
    StudyError
        The judge returned something other than a dict of numbers.
    """
    out = judge(results, handles, row, weather)
    if not isinstance(out, Mapping):
        raise StudyError(f"judge {getattr(judge, '__qualname__', judge)!r} returned "
                         f"{type(out).__name__}; it must return a dict {{name: number}}")
    vals = {}
    for k, v in out.items():
        try:
            x = float(v)
        except (TypeError, ValueError):
            raise StudyError(f"judge value {k!r} is {v!r}; give a number (NaN where it is "
                             "not defined)") from None
        if math.isinf(x):
            raise StudyError(f"judge value {k!r} is {x}; give a finite number or NaN")
        vals[str(k)] = x
    return vals
