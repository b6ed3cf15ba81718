"""Variant-axis stepping with the variants on the SIMD lanes of a compiled loop.

:func:`thermonet.batch.run_batch` steps a group of variants that share one structure. Its
general kernel runs each variant's scalar loop on its own thread (``numba.prange`` over
variants). When the group has a single discrete state (no switches, no scheduled link
conductances) and at most one thermostat, every variant does exactly the same arithmetic on
different numbers, so this module puts the variants on the *innermost* axis instead: blocks
of :data:`LANES` variants, each step a handful of loops of fixed length ``LANES`` that the
compiler turns into vector instructions, and the blocks run in parallel (``numba.prange``).

One step of one lane is the algorithm of :mod:`thermonet.kernels` (same operation order):

1. inputs ``u`` (boundary temperatures [°C], source powers [W]) from the column bank;
2. free response ``x⁺ = Φ x + Γ u`` (exact zero-order hold);
3. thermostat power by superposition, clamped to its capacity: with ``T₀`` the free
   end-of-step temperature of the controlled node and ``M`` its response to 1 W,
   ``P = min((T_h − T₀)/M, q_h)`` if ``T₀ < T_h``, ``P = −min((T₀ − T_c)/M, q_c)`` if
   ``T₀ > T_c``, else 0 (exact for one thermostat);
4. ``x ← x⁺ + Γ_P P``; annual sums over the reported steps.

The sums are the ones :func:`thermonet.batch.run_batch` documents (energies per thermostat,
peaks, comfort-node hours and degree-hours above thresholds, ``Σ x_start`` and ``Σ u`` for
the exact annual balance by path).

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
"""

from __future__ import annotations

import numpy as np

from . import kernels

#: Variants per block (the length of every innermost loop; a compile-time constant).
LANES = 32

__all__ = ["LANES", "applicable", "modal_ok", "step_group"]


def applicable(n_states: int, n_switches: int, n_thermostats: int, n_capacitive: int,
               keep_traces: bool) -> bool:
    """True if a group can be stepped by :func:`step_group` (see the module docstring)."""
    return (kernels.HAVE_NUMBA and n_states == 1 and n_switches == 0 and n_thermostats <= 1
            and n_capacitive > 0 and not keep_traces)


def modal_ok(lam, Q, W, C, h: float, nb: int) -> np.ndarray:
    """Per variant: True if its modal form passes the isothermal-defect check.

    The same test as :func:`thermonet.solvers.discretise_exact` (rows of ``[Φ, Γ_b]`` sum to
    1 within :data:`thermonet.solvers.MODAL_DEFECT_LIMIT`); a variant that fails it was
    discretised by doubling instead and cannot be stepped in modal coordinates.

    Parameters
    ----------
    lam, Q, W : ndarray (V, 1, nc), (V, 1, nc, nc), (V, 1, nc, nu)
    C : ndarray (V, nc)
        Capacitances [J/K].
    h : float
        Step [s].
    nb : int
        Number of boundaries (the first ``nb`` columns of ``W``).
    """
    from .solvers import MODAL_DEFECT_LIMIT, phi1

    lam, Q, W = lam[:, 0], Q[:, 0], W[:, 0]
    a = np.einsum("vji,vj->vi", Q, C)                       # Qᵀ C 1
    g = W[..., :nb].sum(axis=-1)                            # W_b 1
    rows = np.einsum("vij,vj->vi", Q, np.exp(-lam * h) * a + h * phi1(lam * h) * g)
    return np.abs(rows - 1.0).max(axis=-1, initial=0.0) <= MODAL_DEFECT_LIMIT


def _blocks(a: np.ndarray, nblk: int, fill: float = 0.0) -> np.ndarray:
    """(V, ...) → (nblk, ..., LANES), padded with ``fill``; C-contiguous."""
    V = a.shape[0]
    out = np.full((nblk * LANES,) + a.shape[1:], fill, dtype=a.dtype)
    out[:V] = a
    out = out.reshape((nblk, LANES) + a.shape[1:])
    return np.ascontiguousarray(np.moveaxis(out, 1, -1))


def _unblock(a: np.ndarray, V: int) -> np.ndarray:
    """(nblk, ..., LANES) → (V, ...)."""
    b = np.moveaxis(a, -1, 1)
    return b.reshape((b.shape[0] * b.shape[1],) + b.shape[2:])[:V]


def step_group(lam, Q, W, C, h, Rx, Ru, M, Yx, Yu, x0, bank, ucol, uconst, hcol, hconst,
               ccol, cconst, qh, qc, nb, warm, cidx, tnode, thr_h, thr_d,
               heat, cool, peak_h, peak_c, hrs, dgh, tstat, xs_sum, u_sum, cnt, x_first,
               x_last):
    """Step a single-state group; fills the output arrays of :func:`run_batch`'s kernel.

    Parameters
    ----------
    lam, Q, W : ndarray (V, 1, nc), (V, 1, nc, nc), (V, 1, nc, nu)
        Modal data of each variant's one state: ``C⁻¹K = Q Λ Q⁻¹`` with ``Qᵀ C Q = I``
        (λ [1/s]) and ``W = Qᵀ E``.
    C : ndarray (V, nc)
        Capacitances [J/K].
    h : float
        Step [s].
    Rx, Ru, M : ndarray (V, 1, m, nc), (V, 1, m, nu), (V, 1, m, m)
        Controlled-node rows and unit-power responses [K/W]; ``m ≤ 1``.
    Yx, Yu : ndarray (V, 1, na, nc), (V, 1, na, nu)
        Massless-node maps (only the comfort node's row is used).
    x0 : ndarray (V, nc)
        Start state [°C].
    bank : ndarray (n, ncol)
        Input columns [SI] per step (warm-up rows first).
    ucol, uconst, hcol, hconst, ccol, cconst : ndarray (V, k)
        Column of ``bank`` per input (−1: the constant is used) and the constants.
    qh, qc : ndarray (V, m)
        Heating and cooling capacities [W].
    nb, warm, cidx, tnode : int
        Number of boundaries, warm-up steps, comfort node and thermostat node (indices
        among the free nodes, −1: none).
    thr_h, thr_d : ndarray
        Thresholds [°C] for hours and degree-hours above.
    heat, ... x_last : ndarray
        Outputs, shaped as in :func:`thermonet.batch._run_group`; overwritten.

    Notes
    -----
    The loop runs in modal coordinates ``z = Qᵀ C x`` (``x = Q z``), where the exact step is
    diagonal: ``z⁺ = e^{−λh} ⊙ z + h φ₁(λh) ⊙ (W u)`` with φ₁(x) = (1 − e^{−x})/x — the same
    discretisation as :func:`thermonet.solvers.discretise_exact` (``Φ = Q e^{−Λh} Qᵀ C``,
    ``Γ = Q hφ₁(Λh) W``), at O(nc·nu) instead of O(nc²) operations per step. Inputs that are
    constant for every variant of the group are folded into one vector per variant. The
    sums of ``x`` are mapped back with ``Q`` after the loop (they are linear in ``z``).
    """
    from .solvers import phi1

    V, _, nc, nu = W.shape
    m = M.shape[-1]
    nin = ucol.shape[1]
    nblk = -(-V // LANES)
    n = bank.shape[0]
    lam, Q, W = lam[:, 0], Q[:, 0], W[:, 0]
    a = np.exp(-lam * h)                                  # (V, nc)
    Gz = (h * phi1(lam * h))[..., None] * W               # (V, nc, nu)
    dyn = np.flatnonzero((ucol >= 0).any(axis=0))         # inputs read from the bank
    const = np.flatnonzero(~(ucol >= 0).any(axis=0))      # constant for every variant
    uc = np.where(ucol[:, dyn] >= 0, ucol[:, dyn], bank.shape[1]).astype(np.int64)
    uk = np.where(ucol[:, dyn] >= 0, 0.0, uconst[:, dyn])
    bz = np.einsum("vij,vj->vi", Gz[:, :, const], uconst[:, const])
    # end-of-step temperature of the comfort node: yc·z + yu·u
    if 0 <= cidx < nc:
        yc = Q[:, cidx, :]
        yu = np.zeros((V, nu))
    elif cidx >= nc:
        yc = np.einsum("vj,vjk->vk", Yx[:, 0, cidx - nc], Q)
        yu = Yu[:, 0, cidx - nc]
    else:
        yc, yu = np.zeros((V, nc)), np.zeros((V, nu))
    if m:
        r = np.einsum("vj,vjk->vk", Rx[:, 0, 0], Q)       # controlled node = r·z
        ru = Ru[:, 0, 0]
        gP = Gz[:, :, nin]
        Md, qhv, qcv = M[:, 0, 0, 0], qh[:, 0], qc[:, 0]
        hs = np.where(hcol[:, 0] >= 0, hcol[:, 0], bank.shape[1]).astype(np.int64)
        hk = np.where(hcol[:, 0] >= 0, 0.0, hconst[:, 0])
        cs = np.where(ccol[:, 0] >= 0, ccol[:, 0], bank.shape[1]).astype(np.int64)
        ck = np.where(ccol[:, 0] >= 0, 0.0, cconst[:, 0])
        yuP = yu[:, nin]
    else:
        r, ru, gP = np.zeros((V, nc)), np.zeros((V, nu)), np.zeros((V, nc))
        Md, qhv, qcv = np.ones(V), np.zeros(V), np.zeros(V)
        hs = cs = np.full(V, bank.shape[1], dtype=np.int64)
        hk = ck = np.full(V, np.nan)
        yuP = np.zeros(V)
    bT = np.einsum("vj,vj->v", ru[:, const], uconst[:, const])
    bC = np.einsum("vj,vj->v", yu[:, const], uconst[:, const])
    z0 = np.einsum("vji,vj->vi", Q, x0 * C)
    # bank with a trailing zero column (lanes that use a constant read 0 there and add it)
    bzr = np.zeros((n, bank.shape[1] + 1))
    bzr[:, :-1] = bank
    B = lambda arr, fill=0.0: _blocks(arr, nblk, fill)  # noqa: E731
    outs = _step_blocks_nb(
        B(a), B(Gz[:, :, dyn]), B(bz), B(r), B(ru[:, dyn]), B(bT), B(gP), B(yc),
        B(yu[:, dyn]), B(yuP), B(bC), B(z0), bzr, B(uc, bank.shape[1]), B(uk),
        B(hs, bank.shape[1]), B(hk, np.nan), B(cs, bank.shape[1]), B(ck, np.nan),
        B(Md, 1.0), B(qhv), B(qcv), int(m), int(warm),
        int(cidx >= 0) + int(cidx >= 0 and m > 0 and cidx == tnode),
        np.asarray(thr_h, dtype=float), np.asarray(thr_d, dtype=float))
    (o_heat, o_cool, o_ph, o_pc, o_hrs, o_dgh, o_tst, o_zs, o_us, o_zf, o_zl) = outs
    nrep = max(n - warm, 0)
    if m:
        heat[:, 0] = _unblock(o_heat, V)
        cool[:, 0] = _unblock(o_cool, V)
    peak_h[:] = _unblock(o_ph, V)
    peak_c[:] = _unblock(o_pc, V)
    hrs[:] = _unblock(o_hrs, V)
    dgh[:] = _unblock(o_dgh, V)
    tstat[:] = _unblock(o_tst, V)
    xs_sum[:, 0] = np.einsum("vij,vj->vi", Q, _unblock(o_zs, V))
    us = np.zeros((V, nu))
    us[:, const] = uconst[:, const] * nrep
    us[:, dyn] = _unblock(o_us, V)
    if m:
        us[:, nin] = heat[:, 0] - cool[:, 0]
    u_sum[:, 0] = us
    cnt[:, 0] = nrep
    x_first[:] = np.einsum("vij,vj->vi", Q, _unblock(o_zf, V))
    x_last[:] = np.einsum("vij,vj->vi", Q, _unblock(o_zl, V))


def _step_blocks(a, Gd, bz, r, rud, bT, gP, yc, yud, yuP, bC, z0, bank, uc, uk,
                 hs_c, hs_k, cs_c, cs_k, M, qh, qc, m, warm, comfort,
                 thr_h, thr_d):  # pragma: no cover - compiled
    """Blocks of lanes; every innermost loop runs over the lanes.

    Shapes (b = block, L = lanes, nd = inputs read from the bank): a, bz, r, gP, yc, z0
    (b, nc, L); Gd (b, nc, nd, L); rud, yud, uc, uk (b, nd, L); the rest (b, L).
    """
    nblk = a.shape[0]
    nc = a.shape[1]
    nd = Gd.shape[2]
    L = a.shape[2]  # a run-time trip count lets LLVM vectorise (with alias checks)
    n = bank.shape[0]
    nth = thr_h.shape[0]
    ndh = thr_d.shape[0]
    heat = np.zeros((nblk, L))
    cool = np.zeros((nblk, L))
    peak_h = np.zeros((nblk, L))
    peak_c = np.zeros((nblk, L))
    hrs = np.zeros((nblk, nth, L))
    dgh = np.zeros((nblk, ndh, L))
    tstat = np.zeros((nblk, 3, L))
    zs_sum = np.zeros((nblk, nc, L))
    u_sum = np.zeros((nblk, nd, L))
    z_first = np.zeros((nblk, nc, L))
    z_last = np.zeros((nblk, nc, L))
    for b in numba_prange(nblk):
        z = z0[b].copy()
        z1 = np.empty((nc, L))
        u = np.empty((nd, L))
        T = np.empty(L)
        T0 = np.empty(L)
        P = np.zeros(L)
        tmax = np.full(L, -np.inf)
        tmin = np.full(L, np.inf)
        tsum = np.zeros(L)
        for k in range(n):
            # 1. inputs read from the bank
            for j in range(nd):
                for v in range(L):
                    u[j, v] = bank[k, uc[b, j, v]] + uk[b, j, v]
            # 2. free response, diagonal in modal coordinates
            for i in range(nc):
                for v in range(L):
                    z1[i, v] = a[b, i, v] * z[i, v] + bz[b, i, v]
                for j in range(nd):
                    for v in range(L):
                        z1[i, v] += Gd[b, i, j, v] * u[j, v]
            # 3.-4. thermostat: free end temperature T, clamped superposition power P
            if m > 0:
                for v in range(L):
                    T[v] = bT[b, v]
                for j in range(nd):
                    for v in range(L):
                        T[v] += rud[b, j, v] * u[j, v]
                for i in range(nc):
                    for v in range(L):
                        T[v] += r[b, i, v] * z1[i, v]
                for v in range(L):
                    hs = bank[k, hs_c[b, v]] + hs_k[b, v]
                    cs = bank[k, cs_c[b, v]] + cs_k[b, v]
                    t0 = T[v]
                    T0[v] = t0
                    p = 0.0
                    if t0 < hs:
                        p = min((hs - t0) / M[b, v], qh[b, v])
                    elif t0 > cs:
                        p = -min((t0 - cs) / M[b, v], qc[b, v])
                    P[v] = p
                for i in range(nc):
                    for v in range(L):
                        z1[i, v] += gP[b, i, v] * P[v]
            # annual sums over the reported steps
            if k >= warm:
                if k == warm:
                    for i in range(nc):
                        for v in range(L):
                            z_first[b, i, v] = z[i, v]
                for i in range(nc):
                    for v in range(L):
                        zs_sum[b, i, v] += z[i, v]
                for j in range(nd):
                    for v in range(L):
                        u_sum[b, j, v] += u[j, v]
                if m > 0:
                    for v in range(L):
                        p = P[v]
                        heat[b, v] += max(p, 0.0)
                        cool[b, v] += max(-p, 0.0)
                        peak_h[b, v] = max(peak_h[b, v], p)
                        peak_c[b, v] = max(peak_c[b, v], -p)
                if comfort == 2:  # the thermostat's node: free response + response to P
                    for v in range(L):
                        T[v] = T0[v] + M[b, v] * P[v]
                elif comfort == 1:
                    for v in range(L):
                        T[v] = bC[b, v] + yuP[b, v] * P[v]
                    for j in range(nd):
                        for v in range(L):
                            T[v] += yud[b, j, v] * u[j, v]
                    for i in range(nc):
                        for v in range(L):
                            T[v] += yc[b, i, v] * z1[i, v]
                if comfort:
                    for t in range(nth):
                        th = thr_h[t]
                        for v in range(L):
                            hrs[b, t, v] += 1.0 if T[v] > th else 0.0
                    for t in range(ndh):
                        th = thr_d[t]
                        for v in range(L):
                            dgh[b, t, v] += max(T[v] - th, 0.0)
                    for v in range(L):
                        tmax[v] = max(tmax[v], T[v])
                        tmin[v] = min(tmin[v], T[v])
                        tsum[v] += T[v]
            for i in range(nc):
                for v in range(L):
                    z[i, v] = z1[i, v]
        for i in range(nc):
            for v in range(L):
                z_last[b, i, v] = z[i, v]
        for v in range(L):
            tstat[b, 0, v] = tmax[v]
            tstat[b, 1, v] = tmin[v]
            tstat[b, 2, v] = tsum[v]
    return heat, cool, peak_h, peak_c, hrs, dgh, tstat, zs_sum, u_sum, z_first, z_last


if kernels.HAVE_NUMBA:
    import numba

    numba_prange = numba.prange
    _step_blocks_nb = numba.njit(parallel=True, cache=True, nogil=True)(_step_blocks)
else:  # pragma: no cover - applicable() is False without numba
    numba_prange = range
    _step_blocks_nb = _step_blocks
