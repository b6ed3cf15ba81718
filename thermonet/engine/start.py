"""The start state: steady state of the first step's inputs, with the thermostats acting.

One function for every method and for a batch of variants: a heated building starts at its
setpoint rather than at its free-running temperature, so the warm-up need not heat up its
fabric. Node ``initial=`` temperatures given by the user then replace the steady values.
"""

from __future__ import annotations

import numpy as np

from thermonet.engine.kernels import clamped_power, control_powers


def thermostat_rows(st, Yx: np.ndarray, Yu: np.ndarray):
    """Rows ``Rx`` (..., m, nc), ``Ru`` (..., m, nu) giving each controlled node's temperature.

    Parameters
    ----------
    st : Structure
    Yx, Yu : ndarray (..., na, nc), (..., na, nu)
        Massless-node maps ``y = Yx x + Yu u``.
    """
    lead = Yx.shape[:-2]
    nc, m = st.nc, st.m
    Rx = np.zeros(lead + (m, nc))
    Ru = np.zeros(lead + (m, st.nu))
    for i, node in enumerate(st.thermostat_node):
        if node < nc:
            Rx[..., i, node] = 1.0
        else:
            Rx[..., i, :] = Yx[..., node - nc, :]
            Ru[..., i, :] = Yu[..., node - nc, :]
    return Rx, Ru


def steady_start(st, solve, E: np.ndarray, Rx: np.ndarray, Ru: np.ndarray, u0: np.ndarray,
                 hsp0: np.ndarray, csp0: np.ndarray, qh: np.ndarray, qc: np.ndarray
                 ) -> np.ndarray:
    """Steady state [°C] of constant inputs ``u0``, with the thermostats acting.

    Solves ``K x = E u`` where the thermostat powers ``P`` in ``u`` hold each controlled node
    at its first heating/cooling setpoint when the free steady state lies outside them, within
    the capacity limits (the projected Gauss–Seidel of each step, on the steady-state response
    ``Rx K⁻¹ E_P + Ru_P``).

    Parameters
    ----------
    st : Structure
    solve : callable
        ``solve(rhs)`` returns ``K⁻¹ rhs`` for a vector or a matrix of columns.
    E : ndarray or sparse matrix (n, nu)
        Input matrix.
    Rx, Ru : ndarray (m, n), (m, nu)
        Thermostat rows (see :func:`thermostat_rows`).
    u0 : ndarray (nu,)
        First step's raw inputs (thermostat columns ignored).
    hsp0, csp0 : ndarray (m,)
        First setpoints [°C] (NaN = none).
    qh, qc : ndarray (m,)
        Capacities [W].
    """
    m = st.m
    pcols = st.nb + st.nsrc + np.arange(m)
    u = np.array(u0, dtype=float)
    u[pcols] = 0.0
    x = solve(E @ u)
    if m and not (np.isnan(hsp0).all() and np.isnan(csp0).all()):
        Ep = E[:, pcols]
        Ep = Ep.toarray() if hasattr(Ep, "toarray") else Ep
        Xp = solve(Ep)                                   # steady response to 1 W at each node
        T0 = Rx @ x + Ru @ u
        Mss = Rx @ Xp + Ru[:, pcols]
        P = np.zeros(m)
        if m == 1:         # control_powers' single sweep for one thermostat, without a loop
            P[0] = clamped_power(T0[0], hsp0[0], csp0[0], Mss[0, 0], qh[0], qc[0])
        else:
            control_powers(T0, Mss, hsp0, csp0, qh, qc, P)
        x = x + Xp @ P
    return x


def apply_initial(x0: np.ndarray, initial) -> np.ndarray:
    """Replace start temperatures by the user's ``initial`` values [(index, °C)] (in place).

    Parameters
    ----------
    x0 : ndarray (nc,)
        Start temperatures of the capacitive nodes [°C]; changed in place.
    initial : iterable of (int, float)
        Capacitive node index and its initial temperature [°C].

    Returns
    -------
    ndarray (nc,)
        ``x0``.
    """
    for i, val in initial:
        x0[i] = val
    return x0
