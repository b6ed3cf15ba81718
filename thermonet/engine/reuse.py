"""Reuse of a small run's discretisation when the same numbers come again.

A notebook re-runs a cell, a study sweeps the weather or the gains of one building: the
network's capacitances, conductances and step are then the same as in the previous run, and
so is its exact discretisation (:func:`thermonet.engine.discretise.discretise`, a pure
function of the structure, ``C``, ``G`` and ``h``). :func:`discretise_reused` keeps the last
few discretisations of single small runs, keyed by the *content* of every input (not by
object identity), and hands the same read-only result back; any change of a number, a node
or a link gives another key and a fresh discretisation. The dense step matrices of a kept
discretisation are formed once (:class:`ReusedDiscretised`).

Only runs of one variant with at most :data:`REUSE_MAX_NODES` capacitive nodes and
:data:`REUSE_MAX_STATES` states are kept (at most a few MB each), at most
:data:`REUSE_ENTRIES` of them; a discretisation that carries an error (a singular network)
is never kept. The numbers are those of a fresh discretisation, bit for bit
(``tests/test_fast_paths.py`` compares them).
"""

from __future__ import annotations

import dataclasses
import threading
from collections import OrderedDict

import numpy as np

from thermonet.engine import discretise as discretise_module
from thermonet.engine.discretise import Discretised, discretise

#: Largest number of capacitive nodes of a run whose discretisation is kept.
REUSE_MAX_NODES = 64

#: Largest number of states (scheduled × switched) of a run whose discretisation is kept.
REUSE_MAX_STATES = 16

#: Discretisations kept (least recently used dropped first); 0 turns reuse off.
REUSE_ENTRIES = 8

#: Names of the discretiser's numeric settings (e.g. MODAL_DEFECT_LIMIT): their values are
#: part of the key, so a changed setting is never served an earlier result.
KNOBS = tuple(k for k, v in sorted(vars(discretise_module).items())
              if k.isupper() and isinstance(v, (int, float)))

_KEPT: OrderedDict = OrderedDict()
_LOCK = threading.Lock()             # runs of a study may come from several threads


@dataclasses.dataclass
class ReusedDiscretised(Discretised):
    """A :class:`~thermonet.engine.discretise.Discretised` whose arrays are read-only and
    whose dense step matrices (:meth:`matrices`) are formed once per variant and state.

    Attributes
    ----------
    formed : dict
        ``(v, s) → (Φ, Γ, Φ̄, Γ̄, Γ₃)`` formed so far (read-only arrays; [-] for Φ and Φ̄,
        [K/K] or [K/W] per unit input for the Γ's).
    """

    # not an __init__ field: a copy made by dataclasses.replace (e.g. one variant sliced out)
    # starts with an empty one, as its (v, s) indices may differ
    formed: dict = dataclasses.field(default_factory=dict, init=False, repr=False,
                                     compare=False)

    def matrices(self, v: int, s: int):
        """Dense (Φ, Γ, Φ̄, Γ̄, Γ₃) of variant v, state s, formed once (read-only).

        Parameters
        ----------
        v : int
            Variant index (axis 0).
        s : int
            State id (axis 1).

        Returns
        -------
        tuple of ndarray
            See :meth:`thermonet.engine.discretise.Discretised.matrices`.
        """
        key = (int(v), int(s))
        if key not in self.formed:
            mats = super().matrices(v, s)
            for a in mats:
                a.flags.writeable = False
            self.formed[key] = mats
        return self.formed[key]


def content_key(value):
    """A hashable key equal for equal contents: arrays by dtype, shape and bytes; lists and
    tuples element by element; Python numbers, strings, bools and None as they are. None when
    some part cannot be compared by content (then nothing is reused).

    Parameters
    ----------
    value : object
        What to key (any of the types above, nested).
    """
    if type(value) is np.ndarray:                  # the common cases first, by exact type
        return ("ndarray", value.dtype.str, value.shape, value.tobytes())   # C order bytes
    if value is None or isinstance(value, (bool, int, float, str)):
        return (type(value).__name__, value)
    if isinstance(value, np.ndarray):
        return ("ndarray", value.dtype.str, value.shape, value.tobytes())
    if isinstance(value, (list, tuple)):
        if set(map(type, value)) <= {str}:             # names: the common case, quickly
            return (type(value).__name__, "str", tuple(value))
        parts = [content_key(v) for v in value]
        return None if any(p is None for p in parts) else (type(value).__name__, tuple(parts))
    return None


def structure_key(st):
    """Content key of every field of a compiled structure except its time index.

    Parameters
    ----------
    st : Structure
        From :func:`thermonet.engine.compile.compile_structure`.
    """
    names = _KEY_FIELDS.get(type(st))
    if names is None:
        names = tuple(f.name for f in dataclasses.fields(st) if f.name != "index")
        _KEY_FIELDS[type(st)] = names
    parts = []
    for name in names:
        k = content_key(getattr(st, name))
        if k is None:
            return None
        parts.append((name, k))
    return tuple(parts)


_KEY_FIELDS: dict = {}      # structure class → names of the fields in its key


def _freeze(disc: Discretised) -> ReusedDiscretised:
    out = ReusedDiscretised(**{f.name: getattr(disc, f.name)
                               for f in dataclasses.fields(Discretised)})
    for f in dataclasses.fields(Discretised):
        a = getattr(out, f.name)
        if isinstance(a, np.ndarray):
            a.flags.writeable = False
    for mats in out.dense_mats.values():
        for a in mats:
            a.flags.writeable = False
    return out


def discretise_reused(st, C: np.ndarray, G: np.ndarray, h: float) -> Discretised:
    """:func:`~thermonet.engine.discretise.discretise`, reusing an earlier equal result.

    Parameters
    ----------
    st : Structure
        The group's structure.
    C : ndarray (V, nc)
        Capacitances [J/K].
    G : ndarray (V, ns, nl)
        Link conductances per state [W/K].
    h : float
        Step [s].

    Returns
    -------
    Discretised
        A fresh one for runs outside the limits (see the module docstring); otherwise a
        read-only :class:`ReusedDiscretised`, shared with earlier runs of the same numbers.
    """
    V, ns = G.shape[:2]
    if not (REUSE_ENTRIES and V == 1 and st.nc <= REUSE_MAX_NODES and ns <= REUSE_MAX_STATES):
        return discretise(st, C, G, h)
    skey = structure_key(st)
    if skey is None:
        return discretise(st, C, G, h)
    knobs = tuple(getattr(discretise_module, k) for k in KNOBS)
    key = (skey, content_key(np.asarray(C, dtype=float)), content_key(np.asarray(G, dtype=float)),
           float(h), knobs)
    with _LOCK:
        hit = _KEPT.get(key)
        if hit is not None:
            _KEPT.move_to_end(key)
            return hit
    disc = discretise(st, C, G, h)
    if any(e is not None for e in disc.errors):
        return disc                  # raised by the caller: a fresh error object each time
    disc = _freeze(disc)
    with _LOCK:
        _KEPT[key] = disc
        while len(_KEPT) > REUSE_ENTRIES:
            _KEPT.popitem(last=False)
    return disc
