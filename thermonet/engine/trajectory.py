"""The one trajectory type every method returns; :class:`thermonet.Results` reads only this.

Row ``t`` describes the step ``(t − h, t]``. A trajectory gives, for any free nodes asked for,
their temperatures at the end of each step and their means over it [°C], plus the effective
inputs (boundary temperatures [°C], applied source powers and thermostat powers [W]), the
state of each step and each link's conductance in it [W/K]. Means are formed on demand and
only for the nodes asked for, so a balance of a few rooms on a large network does not form
every node's mean.
"""

from __future__ import annotations

import abc

import numpy as np

from thermonet.engine.discretise import phi1, phi2, phi3


class Trajectory(abc.ABC):
    """Base of the trajectory types (see the module docstring).

    Attributes
    ----------
    U : ndarray (n, nu)
        Effective inputs per step: boundary temperatures [°C], source powers as applied
        (switch factors included) and thermostat powers [W], step means.
    U_end : ndarray (n, nu)
        The same at the end of each step (differs from ``U`` for inputs interpolated over
        the step: instantaneous boundary temperatures).
    S : ndarray (n,)
        State id per step.
    X : ndarray (n, nc)
        End-of-step temperatures of the capacitive nodes [°C].
    x_first : ndarray (nc,)
        Capacitive temperatures at the start of the first step [°C].
    info : dict
        Method-specific counters for :meth:`thermonet.Results.diagnostics`.
    """

    nc: int
    nf: int
    U: np.ndarray
    S: np.ndarray
    X: np.ndarray
    x_first: np.ndarray
    info: dict

    @property
    def X_start(self) -> np.ndarray:
        """Start-of-step capacitive temperatures [°C] (n, nc)."""
        if len(self.X) == 0:
            return self.X.copy()
        return np.vstack([self.x_first[None, :], self.X[:-1]])

    def kept(self, idx) -> np.ndarray:
        """Which free nodes ``idx`` have their temperatures kept (all, unless the run was
        asked to keep only some: ``simulate(..., outputs=...)``).

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices.
        """
        return np.ones(len(np.atleast_1d(idx)), dtype=bool)

    def storage_w(self, cap) -> np.ndarray:
        """Temperature change [K] (n, k) of the capacitive nodes ``cap`` over each step (end
        minus start); times C/h it is the power stored [W].

        Parameters
        ----------
        cap : array_like of int (k,)
            Capacitive-node indices.
        """
        end = self.end(cap)
        start = np.vstack([self.x_first[np.asarray(cap, dtype=np.int64)][None, :], end[:-1]])
        return end - start

    def end_points(self) -> np.ndarray | None:
        """End-of-step temperatures [°C] of every free node then every boundary (n, nf + nb)
        as one block, when the trajectory holds them so; None otherwise (the caller then
        assembles them from :meth:`end` and ``U_end``)."""
        return None

    @abc.abstractmethod
    def end(self, idx) -> np.ndarray:
        """End-of-step temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """

    @abc.abstractmethod
    def mean(self, idx) -> np.ndarray:
        """Step-mean temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """

    @abc.abstractmethod
    def conductances(self, cols) -> np.ndarray:
        """Conductances [W/K] (n, k) of links ``cols`` in each step's state.

        Parameters
        ----------
        cols : array_like of int (k,)
            Link indices (compile order).
        """


def step_means(U_end, U_prev, ramp):
    """Step-mean inputs: ``U_end`` with the first-order-hold columns ``ramp`` averaged with
    their previous values ``U_prev``.

    Parameters
    ----------
    U_end : ndarray (n, nu)
        Inputs at the end of each step ([°C] for boundaries, [W] for powers).
    U_prev : ndarray (n, nu) or None
        Inputs at the start of each step (read only for the columns in ``ramp``; None when
        none ramps).
    ramp : ndarray (nu,) of bool
        Inputs that vary linearly over each step (first-order hold).

    Returns
    -------
    ndarray (n, nu)
        Step means (``U_end`` itself when no input ramps).
    """
    if not ramp.any():
        return U_end
    U = U_end.copy()
    U[:, ramp] = 0.5 * (U_end[:, ramp] + U_prev[:, ramp])
    return U


class ExactTrajectory(Trajectory):
    """Trajectory of the exact method for one variant.

    Parameters
    ----------
    X, x_first, S
        See :class:`Trajectory`.
    inputs : tuple or callable
        ``(U_end, U_prev)``, or a callable without arguments returning them, called when
        they are first needed (a table of temperatures alone does not need them).
        ``U_end`` (n, nu): inputs at the end of each step (sources and thermostats: their
        step means); ``U_prev`` (n, nu) or None: inputs at the start of each step (read for
        the columns in ``ramp``; None when no input ramps).
    ramp : ndarray (nu,) of bool
        Inputs that vary linearly over each step (first-order hold).
    G : ndarray (ns, nl)
        Conductances of every state [W/K].
    Yx, Yu, lam, Q, W : ndarray (ns, ...)
        Massless-node maps and modal form of every state, rates ``lam`` [1/s]
        (:mod:`thermonet.engine.discretise`).
    C : ndarray (nc,)
        Capacitances [J/K].
    h : float
        Step [s].
    dense : dict
        State id → (Φ, Γ, Φ̄, Γ̄, Γ₃) for states stepped densely.
    info : dict
    wide : ndarray (n, nc + nb), optional
        For a network whose free nodes are all capacitive: the block whose first nc
        columns are ``X`` (a view of them) and whose last nb columns are free for the
        boundary temperatures; :meth:`end_points` fills them and hands the block out as
        the end-of-step table.
    boundaries : list of (float or ndarray (n,)), optional
        Each boundary's temperature [°C] at the end of each step (a constant or a series),
        the values ``U_end`` holds in its first nb columns; :meth:`end_points` reads them
        from here so that it need not form ``U_end``.
    """

    def __init__(self, X, x_first, S, inputs, ramp, G, Yx, Yu, lam, Q, W, C, h, dense,
                 info, wide=None, boundaries=None):
        self.X, self.x_first, self.S, self.G = X, x_first, S, G
        self._inputs = inputs
        self.ramp = np.asarray(ramp, bool)
        self.Yx, self.Yu, self.lam, self.Q, self.W, self.C, self.h = Yx, Yu, lam, Q, W, C, h
        self.dense = dense
        self.info = info
        self.keep_mask = None          # free nodes the tables show (outputs=); None: all
        self.nc = X.shape[1]
        self.nf = self.nc + Yx.shape[1]
        self._xbar = None
        self._U = None
        self._wide = wide
        self._boundaries = boundaries
        self._wide_filled = False

    def _formed_inputs(self) -> tuple:
        if callable(self._inputs):
            self._inputs = self._inputs()
        return self._inputs

    @property
    def U_end(self) -> np.ndarray:
        """Inputs at the end of each step (n, nu) ([°C], [W]), formed on first use."""
        return self._formed_inputs()[0]

    @property
    def U_prev(self) -> np.ndarray | None:
        """Raw inputs at the start of each step (n, nu), or None when no input ramps."""
        return self._formed_inputs()[1]

    @property
    def U(self) -> np.ndarray:
        """Step-mean inputs (n, nu) ([°C], [W]), see :func:`step_means`."""
        if self._U is None:
            self._U = step_means(self.U_end, self.U_prev, self.ramp)
        return self._U

    def end_points(self):
        """End-of-step temperatures [°C] of every free node then every boundary (n, nf + nb)
        as one block (see :meth:`Trajectory.end_points`): the kernel's rows, their boundary
        columns filled once; None when the run kept no such block."""
        w = self._wide
        if w is None or self.keep_mask is not None:
            return None
        if not self._wide_filled:
            nb = w.shape[1] - self.nc
            values = (self._boundaries if self._boundaries is not None
                      else [self.U_end[:, j] for j in range(nb)])
            for j, value in enumerate(values):        # column by column: strided copies
                w[:, self.nc + j] = value
        self._wide_filled = True
        return w

    def kept(self, idx):
        """Which free nodes ``idx`` the tables show (see :meth:`Trajectory.kept`).

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices.
        """
        idx = np.atleast_1d(np.asarray(idx, dtype=np.int64))
        return np.ones(len(idx), bool) if self.keep_mask is None else self.keep_mask[idx]

    def _groups(self):
        for s in np.unique(self.S):
            yield int(s), self.S == s

    def _massless(self, Xc, U, rows_state, idx):
        out = np.empty((len(self.S), len(idx)))
        r = np.asarray(idx) - self.nc
        for s, rows in rows_state:
            out[rows] = Xc[rows] @ self.Yx[s][r].T + U[rows] @ self.Yu[s][r].T
        return out

    def _split(self, idx):
        idx = np.asarray(idx, dtype=np.int64)
        return idx, idx < self.nc

    def end(self, idx):
        """End-of-step temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """
        idx, cap = self._split(idx)
        if cap.all() and len(idx) == self.nc and (idx == np.arange(self.nc)).all():
            return self.X
        out = np.empty((len(self.S), len(idx)))
        out[:, cap] = self.X[:, idx[cap]]
        if (~cap).any():
            out[:, ~cap] = self._massless(self.X, self.U_end, list(self._groups()), idx[~cap])
        return out

    @property
    def x_mean(self) -> np.ndarray:
        """Step-mean capacitive temperatures [°C] (n, nc), formed once."""
        if self._xbar is None:
            Xs = self.X_start
            out = np.empty_like(self.X)
            r = self.ramp
            hold = np.where(r[None, :], 0.0, self.U_end)
            if r.any():
                rend = np.where(r[None, :], self.U_end, 0.0)
                rprev = np.where(r[None, :], self.U_prev, 0.0)
            for s, rows in self._groups():
                if s in self.dense:
                    _, _, Phibar, Gambar, Gam3 = self.dense[s]
                    out[rows] = Xs[rows] @ Phibar.T + hold[rows] @ Gambar.T
                    if r.any():
                        out[rows] += rend[rows] @ Gam3.T + rprev[rows] @ (Gambar - Gam3).T
                    continue
                x = self.lam[s] * self.h
                Q, W = self.Q[s], self.W[s]
                z = (Xs[rows] * self.C[None, :]) @ Q
                zbar = z * phi1(x) + (hold[rows] @ W.T) * (self.h * phi2(x))
                if r.any():
                    e2, e3 = self.h * phi2(x), self.h * phi3(x)
                    zbar += (rend[rows] @ W.T) * e3 + (rprev[rows] @ W.T) * (e2 - e3)
                out[rows] = zbar @ Q.T
            self._xbar = out
        return self._xbar

    def mean(self, idx):
        """Step-mean temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """
        idx, cap = self._split(idx)
        out = np.empty((len(self.S), len(idx)))
        xbar = self.x_mean
        out[:, cap] = xbar[:, idx[cap]]
        if (~cap).any():
            out[:, ~cap] = self._massless(xbar, self.U, list(self._groups()), idx[~cap])
        return out

    def conductances(self, cols):
        """Conductances [W/K] (n, k) of links ``cols`` in each step's state.

        Parameters
        ----------
        cols : array_like of int (k,)
            Link indices (compile order).
        """
        return self.G[:, cols][self.S]


class NodeTrajectory(Trajectory):
    """Trajectory that stores free nodes' end and mean temperatures (sparse method).

    Parameters
    ----------
    T_end : ndarray (n, k)
        End-of-step temperatures of the kept free nodes [°C].
    T_mean : ndarray (n, k)
        Step-mean temperatures of the kept free nodes [°C].
    x_first : ndarray (nc,)
        Capacitive temperatures at the start of the first step [°C] (NaN where not kept).
    S : ndarray (n,) of int
        State id per step.
    U, U_end : ndarray (n, nu)
        Effective inputs, step means and end of step ([°C], [W]).
    G : ndarray (ns, nl)
        Conductances of every state [W/K].
    nc : int
        Number of capacitive nodes.
    info : dict
        Method-specific counters.
    columns : ndarray (nf,) of int, optional
        Column of each free node in ``T_end``/``T_mean``, −1 if not kept; None: all, in
        node order.
    names : list of str, optional
        Free-node names (for messages).
    """

    def __init__(self, T_end, T_mean, x_first, S, U, U_end, G, nc, info, columns=None,
                 names=None):
        self.T_end, self.T_mean = T_end, T_mean
        self.x_first, self.S, self.U, self.U_end, self.G = x_first, S, U, U_end, G
        self.nc = nc
        self.columns = columns
        self.names = names
        self.nf = T_end.shape[1] if columns is None else len(columns)
        self.info = info

    @property
    def X(self):
        return self.end(np.arange(self.nc))

    def kept(self, idx):
        """Which free nodes ``idx`` were kept (see :meth:`Trajectory.kept`).

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices.
        """
        idx = np.atleast_1d(np.asarray(idx, dtype=np.int64))
        return np.ones(len(idx), bool) if self.columns is None else self.columns[idx] >= 0

    def _cols(self, idx):
        idx = np.asarray(idx, dtype=np.int64)
        if self.columns is None:
            return idx
        cols = self.columns[idx]
        if (cols < 0).any():
            lost = [self.names[i] if self.names else int(i) for i in idx[cols < 0]][:5]
            from thermonet.errors import NetworkError

            raise NetworkError(f"node(s) {lost} were not kept by this run; add them to "
                               "simulate(..., outputs=...) (nodes=[...] or balances=[...])")
        return cols

    def end(self, idx):
        """End-of-step temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """
        return self.T_end[:, self._cols(idx)]

    def mean(self, idx):
        """Step-mean temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """
        return self.T_mean[:, self._cols(idx)]

    def conductances(self, cols):
        """Conductances [W/K] (n, k) of links ``cols`` in each step's state.

        Parameters
        ----------
        cols : array_like of int (k,)
            Link indices (compile order).
        """
        return self.G[:, cols][self.S]


class JoinedTrajectory(Trajectory):
    """Consecutive trajectories of one network (e.g. periods of re-linearised radiation).

    Parameters
    ----------
    parts : list of Trajectory
        Trajectories of consecutive periods, in time order, of the same network.
    info : dict
        Method-specific counters.
    """

    def __init__(self, parts, info):
        self.parts = parts
        self.nc, self.nf = parts[0].nc, parts[0].nf
        self.x_first = parts[0].x_first
        self.X = np.vstack([p.X for p in parts])
        self.U = np.vstack([p.U for p in parts])
        self.U_end = np.vstack([p.U_end for p in parts])
        self.S = np.concatenate([p.S for p in parts])
        self.info = info

    def end(self, idx):
        """End-of-step temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """
        return np.vstack([p.end(idx) for p in self.parts])

    def mean(self, idx):
        """Step-mean temperatures [°C] (n, k) of free nodes ``idx``.

        Parameters
        ----------
        idx : array_like of int (k,)
            Free-node indices (capacitive nodes first, then massless).
        """
        return np.vstack([p.mean(idx) for p in self.parts])

    def conductances(self, cols):
        """Conductances [W/K] (n, k) of links ``cols`` in each step's state.

        Parameters
        ----------
        cols : array_like of int (k,)
            Link indices (compile order).
        """
        return np.vstack([p.conductances(cols) for p in self.parts])
