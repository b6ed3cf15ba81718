"""Results of a simulation: temperatures, flows, powers and the energy balance by path.

Conventions
-----------
* Row ``t`` describes the step ``(t − h, t]`` (interval ending), on the weather's tz-aware
  index (or the sub-step index when ``step`` was shorter).
* :attr:`Results.temperatures` are node temperatures [°C] at the *end* of each step (when a
  thermostat meets its setpoint); :attr:`Results.mean_temperatures` are step means [°C].
* :attr:`Results.flows` are link flows [W], means over the step, positive from the link's
  first node ``a`` to its second node ``b``.
* :meth:`Results.balance` is in kWh, positive *into* the chosen set of nodes.
"""

from __future__ import annotations

from functools import cached_property, lru_cache

import numpy as np
import pandas as pd

from thermonet.constants import J_PER_KWH
from thermonet.errors import NetworkError


@lru_cache(maxsize=256)
def _column_index(names: tuple) -> pd.Index:
    """The column index of a table with these names, built once (pandas infers the string
    dtype of a list of names in ~20 µs; a year's table is built in ~10 µs)."""
    return pd.Index(list(names))


class Results:
    """What :func:`thermonet.simulate` computed. Tables are built on first access.

    Made by :func:`thermonet.simulate`; not meant to be constructed by hand.

    Parameters
    ----------
    net : Network
        The network simulated (node, boundary and link names; the node order of tables).
    comp : Compiled
        ``net`` compiled on the simulation index (:mod:`thermonet.engine.compile`).
    traj : Trajectory
        What the method computed (:class:`thermonet.engine.trajectory.Trajectory`).
    info : dict
        Method, steps, warm-up steps, step [s], states, kernel and the method's counters;
        shown by :meth:`diagnostics`.

    Attributes
    ----------
    info : dict
        As given.
    index : pandas.DatetimeIndex
        The simulation index; row ``t`` describes the step ``(t − h, t]``.
    """

    def __init__(self, net, comp, traj, info):
        self._net = net
        self._c = comp
        self._t = traj
        self.info = info
        self.index = comp.index
        self._order = list(net.nodes) + list(net.boundaries)

    # ------------------------------------------------------------ raw arrays
    def _points(self, free: np.ndarray, at_end: bool = False) -> np.ndarray:
        """Free-node temperatures then the boundaries' (n × (nf + nb)) [°C], step means or
        (``at_end``) at the end of each step."""
        nf = free.shape[1]
        out = np.empty((free.shape[0], nf + self._c.nb))
        out[:, :nf] = free
        out[:, nf:] = (self._t.U_end if at_end else self._t.U)[:, :self._c.nb]
        return out

    @cached_property
    def _free_kept(self) -> np.ndarray:
        """Free nodes whose temperatures the run kept (all unless ``outputs=`` chose)."""
        idx = np.arange(self._c.nf)
        kept = self._t.kept(idx)
        return idx if kept.all() else idx[kept]

    @cached_property
    def _tmean(self):
        return self._points(self._t.mean(self._free_kept))

    @cached_property
    def _links_kept(self) -> np.ndarray:
        c = self._c
        ok = np.ones(c.nf + c.nb, dtype=bool)
        ok[:c.nf] = False
        ok[self._free_kept] = True
        return np.flatnonzero(ok[c.link_a] & ok[c.link_b])

    @cached_property
    def _flows(self):
        return self._link_flows(self._links_kept)

    def _point_means(self, pts: np.ndarray) -> np.ndarray:
        """Step means [°C] of points (free nodes then boundaries) ``pts``, only those."""
        c = self._c
        if "_tmean" in self.__dict__ and len(self._free_kept) == c.nf:
            return self.__dict__["_tmean"][:, pts]
        uniq, inv = np.unique(pts, return_inverse=True)
        free = uniq < c.nf
        vals = np.empty((len(self._t.S), len(uniq)))
        if free.any():
            vals[:, free] = self._t.mean(uniq[free])
        vals[:, ~free] = self._t.U[:, uniq[~free] - c.nf]
        return vals[:, inv.ravel()]

    def _link_flows(self, cols):
        """Flows [W] of the links ``cols`` (step means), without forming all the others."""
        if "_flows" in self.__dict__ and len(self._links_kept) == len(self._c.link_names):
            return self.__dict__["_flows"][:, cols]
        c = self._c
        a, b = c.link_a[cols], c.link_b[cols]
        tm = self._point_means(np.concatenate([a, b]))
        k = len(cols)
        return self._t.conductances(cols) * (tm[:, :k] - tm[:, k:])

    def _frame(self, arr, columns, order=None):
        if order is not None and list(columns) != order:
            pos = {c: i for i, c in enumerate(columns)}
            arr = arr[:, [pos[c] for c in order]]
            columns = order
        # a view of the cached index: renaming one table's columns leaves the others alone
        return pd.DataFrame(arr, index=self.index, columns=_column_index(tuple(columns)).view(),
                            copy=False)

    # ---------------------------------------------------------------- tables
    @cached_property
    def temperatures(self) -> pd.DataFrame:
        """Node and boundary temperatures [°C] at the end of each step (the kept nodes)."""
        block = self._t.end_points() if len(self._free_kept) == self._c.nf else None
        if block is None:
            block = self._points(self._t.end(self._free_kept), at_end=True)
        return self._frame(block, *self._columns())

    @cached_property
    def mean_temperatures(self) -> pd.DataFrame:
        """Node and boundary temperatures [°C], means over each step (used by the balance)."""
        return self._frame(self._tmean, *self._columns())

    def _columns(self):
        c = self._c
        if len(self._free_kept) == c.nf:
            names = list(c.free) + list(c.boundaries)
            if names == self._order:           # compile order is the network's: no reorder
                return names, names
        else:
            names = [c.free[i] for i in self._free_kept] + list(c.boundaries)
        keep = set(names)
        return names, [n for n in self._order if n in keep]

    @cached_property
    def flows(self) -> pd.DataFrame:
        """Link flows [W], step means, positive from the link's node ``a`` to node ``b``
        (the links whose two ends were kept)."""
        return self._frame(self._flows, [self._c.link_names[j] for j in self._links_kept])

    @cached_property
    def sources(self) -> pd.DataFrame:
        """Source powers [W] as applied (after switched factors), step means."""
        c = self._c
        return self._frame(self._t.U[:, c.nb:c.nb + c.nsrc], c.source_names)

    @cached_property
    def _power(self):
        c = self._c
        return self._t.U[:, c.nb + c.nsrc:]

    @cached_property
    def heating_by_thermostat(self) -> pd.DataFrame:
        """Heating power [W] (≥ 0) per thermostat, step means."""
        return self._frame(np.clip(self._power, 0, None), self._c.thermostat_names)

    @cached_property
    def cooling_by_thermostat(self) -> pd.DataFrame:
        """Cooling power [W] (≥ 0, heat removed) per thermostat, step means."""
        return self._frame(np.clip(-self._power, 0, None), self._c.thermostat_names)

    @property
    def heating(self) -> pd.Series:
        """Total heating power [W] (≥ 0), step means."""
        return self.heating_by_thermostat.sum(axis=1).rename("heating")

    @property
    def cooling(self) -> pd.Series:
        """Total cooling power [W] (≥ 0, heat removed), step means."""
        return self.cooling_by_thermostat.sum(axis=1).rename("cooling")

    # --------------------------------------------------------------- balance
    def _node_set(self, nodes):
        if isinstance(nodes, str):
            nodes = [nodes]
        nodes = list(nodes)
        if not nodes:
            raise NetworkError("balance(): give at least one node")
        for n in nodes:
            if n in self._net.boundaries:
                raise NetworkError(f"balance(): {n!r} is a boundary; a control volume is made "
                                   "of free nodes only")
            if n not in self._net.nodes:
                raise NetworkError(f"balance(): unknown node {n!r}; known: "
                                   f"{', '.join(self._net.nodes)}")
        return set(nodes)

    def balance_w(self, nodes) -> pd.DataFrame:
        """Mean power [W] per step by path into the node set (see :meth:`balance`).

        Parameters
        ----------
        nodes : str or list of str
            The control volume (free nodes).

        Returns
        -------
        pandas.DataFrame
            The columns of :meth:`balance`, as step-mean powers [W] (positive = heat into
            the set).

        Raises
        ------
        NetworkError
            No node, a boundary, or an unknown node name.
        """
        c, t = self._c, self._t
        inside = np.zeros(c.nf + c.nb, dtype=bool)
        inside[[c.free.index(n) for n in self._node_set(nodes)]] = True
        cols: dict[str, np.ndarray] = {}
        n = len(t.S)

        def add(key, values):
            cols[key] = cols.get(key, np.zeros(n)) + values

        sign = inside[c.link_b].astype(float) - inside[c.link_a].astype(float)
        cross = np.flatnonzero(sign)
        if len(cross):
            paths = [c.link_paths[j] for j in cross]
            names = list(dict.fromkeys(paths))           # first-seen order
            onehot = np.zeros((len(cross), len(names)))
            onehot[np.arange(len(cross)), [names.index(p) for p in paths]] = sign[cross]
            by_path = self._link_flows(cross) @ onehot    # (n, paths) [W] into the set
            for k, path in enumerate(names):
                add(path, by_path[:, k])
        for j, node in enumerate(c.source_node):
            if inside[node]:
                add(c.source_paths[j], t.U[:, c.nb + j])
        heat = np.zeros(n)
        cool = np.zeros(n)
        for j, node in enumerate(c.thermostat_node):
            if inside[node]:
                p = self._power[:, j]
                heat += np.clip(p, 0, None)
                cool += np.clip(p, None, 0)
        cols["heating"] = heat
        cols["cooling"] = cool
        cap = np.flatnonzero(inside[:c.nc])
        cols["storage"] = -(t.storage_w(cap) @ c.C[cap]) / c.step_s
        df = pd.DataFrame(cols, index=self.index)
        df["residual"] = df.sum(axis=1)
        return df

    def balance(self, nodes, freq: str | None = None) -> pd.DataFrame:
        """Energy balance [kWh] by heat path of any set of free nodes.

        Parameters
        ----------
        nodes : str or list of str
            The control volume (free nodes).
        freq : str, optional
            None: one row per step. A pandas offset alias (``"D"``, ``"MS"``, ``"YS"``): sums
            per period; a step belongs to the period of its interval mid-point, and each row is
            labelled by the period's start.

        Returns
        -------
        pandas.DataFrame
            One column per path of the links crossing the boundary of the set and of the
            sources inside it (positive = heat into the set), then ``heating`` (≥ 0),
            ``cooling`` (≤ 0, heat removed), ``storage`` (heat released by the set's fabric,
            i.e. minus the increase of stored energy) and ``residual`` (row sum of all the
            others, rounding noise).
        """
        df = self.balance_w(nodes) * (self._c.step_s / J_PER_KWH)
        if freq is None:
            return df
        mid = df.index - pd.Timedelta(seconds=self._c.step_s / 2)
        out = df.set_axis(mid).resample(freq).sum()
        out["residual"] = out.drop(columns="residual").sum(axis=1)
        return out

    # --------------------------------------------------------------- summary
    def summary(self) -> pd.Series:
        """Heating and cooling energy [kWh] and peaks [W] over the reported period."""
        h = self._c.step_s / J_PER_KWH
        return pd.Series({
            "heating_kwh": float(self.heating.sum() * h),
            "cooling_kwh": float(self.cooling.sum() * h),
            "peak_heating_w": float(self.heating.max()) if self._c.m else 0.0,
            "peak_cooling_w": float(self.cooling.max()) if self._c.m else 0.0,
        })

    def worst_residual(self) -> float:
        """Largest |residual| of the whole network's balance, relative to its largest term.

        Over all steps: ``max|residual| / max(max|term|, 1 W)``. The 1 W floor keeps a
        network in which nothing really flows (all terms at rounding level) from reporting
        rounding noise as a 100 % error.
        """
        b = self.balance_w(list(self._net.nodes))
        terms = b.drop(columns="residual").abs().to_numpy()
        scale = max(float(terms.max()) if terms.size else 0.0, 1.0)
        return float(np.abs(b["residual"].to_numpy()).max() / scale)

    def diagnostics(self) -> pd.Series:
        """How the run went: method, steps, step [s], cached states, time [s], and the worst
        relative balance residual of the whole network (:meth:`worst_residual`)."""
        i = self.info
        out = {k: i.get(k) for k in ("method", "steps", "warmup_steps", "step_s", "states",
                                     "kernel", "seconds")}
        out.update({k: v for k, v in i.items() if k not in out})
        out["worst_residual"] = self.worst_residual()
        return pd.Series(out, dtype=object)

    def _repr_html_(self):
        """How the run went and its heating/cooling summary (a notebook's view)."""
        from thermonet.display import results_html  # display reads attributes only

        return results_html(self)

    def __repr__(self):
        i = self.info
        return (f"Results({i['method']}, {i['steps']} steps of {i['step_s']:.0f} s, "
                f"{i['states']} state(s), {i.get('seconds', float('nan')):.3f} s)")
