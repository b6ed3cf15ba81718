"""Variant-axis stepping with the variants on the SIMD lanes of a compiled loop.

:func:`thermonet.engine.batch.run_batch` steps a group of variants that share one structure. Its
general kernel runs each variant's scalar loop on its own thread (``numba.prange`` over
variants). When the group has a single discrete state (no switches, no scheduled link
conductances) and at most one thermostat, every variant does the same arithmetic on
different numbers, so this module puts the variants on the *innermost* axis instead: blocks
of :data:`LANES` variants, each step a few loops over the lanes that the compiler turns into
vector instructions, the blocks in parallel (``numba.prange``).

Two choices make the loop cheap:

* **Modal coordinates.** With ``C⁻¹K = Q Λ Q⁻¹`` (``Qᵀ C Q = I``, rates λ [1/s]) and
  ``z = Qᵀ C x``, the exact zero-order-hold step of length h [s] is diagonal,
  ``z⁺ = e^{−λh} ⊙ z + hφ₁(λh) ⊙ (W u)`` with φ₁(x) = (1 − e^{−x})/x — the
  discretisation of :func:`thermonet.engine.simulate.discretise_exact` (``Φ = Q e^{−Λh} Qᵀ C``,
  ``Γ = Q hφ₁(Λh) W``) at O(nc·nu) instead of O(nc²) operations per step. Temperatures
  the loop needs (the thermostat's node, the comfort node) are rows ``r·z``; the sums of
  ``x`` for the balance are mapped back with ``Q`` after the loop.
* **Inputs as shared columns.** Inputs that are constant for a variant are folded into one
  vector per variant; a time series that every variant of a block reads for an input (a
  weather column, one gains profile) is read once per step as a scalar and multiplied into
  every lane. Only an input whose series differ between the lanes of a block (e.g. solar
  gains scaled by each variant's aperture) is gathered lane by lane.

One step of one lane is the algorithm of :mod:`thermonet.kernels`:

1. free response ``z⁺`` from the start state and this step's inputs;
2. thermostat by superposition, clamped to its capacity: with ``T₀`` [°C] the free
   end-of-step temperature of the controlled node, ``M`` [K/W] its response to 1 W held over
   the step, setpoints ``T_h``, ``T_c`` [°C] and capacities ``q_h``, ``q_c`` [W], the power
   is ``P = min((T_h − T₀)/M, q_h)`` [W] if ``T₀ < T_h``, ``P = −min((T₀ − T_c)/M, q_c)`` if
   ``T₀ > T_c``, else 0 (exact for one thermostat);
3. ``z ← z⁺ + g_P P``; annual sums over the reported steps (energies, peaks, comfort-node
   hours and degree-hours above thresholds, ``Σ z_start``), as :func:`run_batch` documents.

:func:`step_group` declines (returns False) a group it cannot step this way: a variant whose
modal form fails the isothermal-defect check of :func:`thermonet.engine.simulate.discretise_exact`
(it was discretised by doubling), or input columns that are not finite.

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
.. [2] Golub, G. H., Van Loan, C. F., Matrix Computations, 4th ed., 2013, §8.1 (symmetric
   eigenproblem; the modal form).
"""

from __future__ import annotations

import numpy as np

from thermonet.engine import kernels

#: Variants per block (the length of every innermost loop).
LANES = 32

__all__ = ["LANES", "applicable", "modal_ok", "step_group"]


def applicable(n_states: int, n_switches: int, n_thermostats: int, n_capacitive: int,
               keep_traces: bool) -> bool:
    """True if a group's structure suits :func:`step_group` (see the module docstring)."""
    return (kernels.HAVE_NUMBA and n_states == 1 and n_switches == 0 and n_thermostats <= 1
            and n_capacitive > 0 and not keep_traces)


def modal_ok(lam, Q, W, C, h: float, nb: int) -> np.ndarray:
    """Per variant: True if its modal form passes the isothermal-defect check.

    The same test as :func:`thermonet.engine.simulate.discretise_exact` (rows of ``[Φ, Γ_b]`` sum to
    1 within :data:`thermonet.engine.simulate.MODAL_DEFECT_LIMIT`); a variant that fails it was
    discretised by doubling instead and cannot be stepped in modal coordinates.

    Parameters
    ----------
    lam, Q, W : ndarray (V, nc), (V, nc, nc), (V, nc, nu)
        Rates [1/s], modal matrix and ``W = Qᵀ E`` of each variant's one state.
    C : ndarray (V, nc)
        Capacitances [J/K].
    h : float
        Step [s].
    nb : int
        Number of boundaries (the first ``nb`` columns of ``W``).
    """
    from thermonet.engine.simulate import MODAL_DEFECT_LIMIT, phi1

    a = np.einsum("vji,vj->vi", Q, C)                       # Qᵀ C 1
    g = W[..., :nb].sum(axis=-1)                            # W_b 1
    rows = np.einsum("vij,vj->vi", Q, np.exp(-lam * h) * a + h * phi1(lam * h) * g)
    return np.abs(rows - 1.0).max(axis=-1, initial=0.0) <= MODAL_DEFECT_LIMIT


def _blocks(a: np.ndarray, nblk: int, fill=0.0) -> np.ndarray:
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


def _per_column(coef: np.ndarray, ucol: np.ndarray, cols: np.ndarray, nblk: int) -> np.ndarray:
    """Sum the input coefficients of each lane by the bank column it reads.

    ``coef`` (V, ..., nin) holds one coefficient per input; ``cols`` (nblk, ncol) the bank
    columns each block reads. Returns (nblk, ncol, ..., LANES).
    """
    V = coef.shape[0]
    ncol = cols.shape[1]
    lane_block = np.arange(V) // LANES
    out = np.zeros((V, ncol) + coef.shape[1:-1])
    for c in range(ncol):
        col_of_lane = cols[lane_block, c]                              # (V,)
        hit = (ucol == col_of_lane[:, None]) & (ucol >= 0)             # (V, nin)
        out[:, c] = (coef * hit.reshape((V,) + (1,) * (coef.ndim - 2) + (-1,))).sum(axis=-1)
    return _blocks(out, nblk)


def step_group(lam, Q, W, C, h, Rx, Ru, M, Yx, Yu, x0, bank, ucol, uconst, hcol, hconst,
               ccol, cconst, qh, qc, nb, warm, cidx, tnode, thr_h, thr_d,
               heat, cool, peak_h, peak_c, hrs, dgh, tstat, xs_sum, u_sum, cnt, x_first,
               x_last) -> bool:
    """Step a single-state group; fill the output arrays of :func:`run_batch`'s kernel.

    Parameters
    ----------
    lam, Q, W : ndarray (V, 1, nc), (V, 1, nc, nc), (V, 1, nc, nu)
        Modal data of each variant's one state (λ [1/s], ``Qᵀ C Q = I``, ``W = Qᵀ E``).
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
        Outputs, shaped as in :func:`thermonet.engine.batch._run_group`; overwritten.

    Returns
    -------
    bool
        False if the group was declined (outputs untouched); see the module docstring.
    """
    from thermonet.engine.simulate import phi1

    lam, Q, W = lam[:, 0], Q[:, 0], W[:, 0]
    V, nc, nu = W.shape
    m = M.shape[-1]
    nin = ucol.shape[1]
    nblk = -(-V // LANES)
    n = bank.shape[0]
    nrep = max(n - warm, 0)
    if not modal_ok(lam, Q, W, C, h, nb).all():
        return False
    # ---- which bank columns each block reads: per input, one column shared by the block's
    # lanes (read once per step), or several (gathered lane by lane); constants folded below
    lane_block = np.arange(V) // LANES
    used = np.unique(ucol[ucol >= 0])
    if used.size and not np.isfinite(bank[:, used]).all():
        return False
    shared_in = np.zeros((V, nin), dtype=bool)        # lane v reads input j from a shared col
    shared_cols, lane_ins = [], []
    for b in range(nblk):
        ub = ucol[lane_block == b]
        sh, li = set(), []
        for j in range(nin):
            cj = np.unique(ub[:, j][ub[:, j] >= 0])
            if len(cj) == 1:
                sh.add(int(cj[0]))
                shared_in[lane_block == b, j] = True
            elif len(cj) > 1:
                li.append(j)
        shared_cols.append(sorted(sh))
        lane_ins.append(li)
    ncol = max(1, max(len(c) for c in shared_cols))
    cols = np.zeros((nblk, ncol), dtype=np.int64)
    cols_v = np.full((nblk, ncol), -2, dtype=np.int64)   # padding matches no lane
    for b, c in enumerate(shared_cols):
        cols[b, :len(c)] = c
        cols_v[b, :len(c)] = c
    ucol_sh = np.where(shared_in, ucol, -3)
    nl = max(1, max(len(li) for li in lane_ins))
    zero = bank.shape[1]                                 # index of an all-zero column
    lane_j = np.full((V, nl), -1, dtype=np.int64)        # input gathered in lane slot l
    for b, li in enumerate(lane_ins):
        lane_j[lane_block == b, :len(li)] = li
    has = lane_j >= 0
    lj = np.maximum(lane_j, 0)
    lcol_raw = np.take_along_axis(ucol, lj, axis=1)
    lane_on = has & (lcol_raw >= 0)
    lcols = np.where(lane_on, lcol_raw, zero).astype(np.int64)   # (V, nl)
    const = np.where(ucol >= 0, 0.0, uconst)  # (V, nin): constants, 0 where a column is read
    # ---- modal coefficients
    a = np.exp(-lam * h)                                  # (V, nc)
    Gz = (h * phi1(lam * h))[..., None] * W               # (V, nc, nu)
    bz = np.einsum("vij,vj->vi", Gz[:, :, :nin], const)
    if 0 <= cidx < nc:
        yc, yu = Q[:, cidx, :], np.zeros((V, nu))
    elif cidx >= nc:
        yc, yu = np.einsum("vj,vjk->vk", Yx[:, 0, cidx - nc], Q), Yu[:, 0, cidx - nc]
    else:
        yc, yu = np.zeros((V, nc)), np.zeros((V, nu))
    if m:
        r = np.einsum("vj,vjk->vk", Rx[:, 0, 0], Q)       # controlled node = r·z + ru·u
        ru = Ru[:, 0, 0]
        gP = Gz[:, :, nin]
        yuP = yu[:, nin]
        Md, qhv, qcv = M[:, 0, 0, 0], qh[:, 0], qc[:, 0]
        hcv, hkv, ccv, ckv = hcol[:, 0], hconst[:, 0], ccol[:, 0], cconst[:, 0]
    else:
        r, ru, gP = np.zeros((V, nc)), np.zeros((V, nu)), np.zeros((V, nc))
        yuP = np.zeros(V)
        Md, qhv, qcv = np.ones(V), np.zeros(V), np.zeros(V)
        hcv = ccv = np.full(V, -1, dtype=np.int64)
        hkv = ckv = np.full(V, np.nan)
    sp_dyn = int((hcv >= 0).any() or (ccv >= 0).any())
    bT = np.einsum("vj,vj->v", ru[:, :nin], const)
    bC = np.einsum("vj,vj->v", yu[:, :nin], const)
    z0 = np.einsum("vji,vj->vi", Q, x0 * C)
    B = lambda arr, fill=0.0: _blocks(arr, nblk, fill)  # noqa: E731
    comfort = 0 if cidx < 0 else (2 if (m and cidx == tnode) else 1)
    def lane_coef(coef):   # (V, ..., nin) → (nblk, nl, ..., LANES), zero where unused
        pick = np.take_along_axis(coef, lj.reshape((V,) + (1,) * (coef.ndim - 2) + (nl,)),
                                  axis=-1)
        pick = pick * lane_on.reshape((V,) + (1,) * (coef.ndim - 2) + (nl,))
        return B(np.moveaxis(pick, -1, 1))

    bankz = np.zeros((n, zero + 1))
    bankz[:, :zero] = bank
    outs = _step_blocks_nb(
        B(a), _per_column(Gz[:, :, :nin], ucol_sh, cols_v, nblk), B(bz),
        B(r), _per_column(ru[:, :nin], ucol_sh, cols_v, nblk), B(bT), B(gP), B(yc),
        _per_column(yu[:, :nin], ucol_sh, cols_v, nblk), B(yuP), B(bC), B(z0),
        bankz, cols, B(lcols, zero), lane_coef(Gz[:, :, :nin]), lane_coef(ru[:, :nin]),
        lane_coef(yu[:, :nin]), sp_dyn,
        B(hcv.astype(np.int64), -1), B(hkv, np.nan), B(ccv.astype(np.int64), -1),
        B(ckv, np.nan), B(Md, 1.0), B(qhv), B(qcv), int(m), int(warm), comfort,
        np.asarray(thr_h, dtype=float), np.asarray(thr_d, dtype=float))
    (o_heat, o_cool, o_ph, o_pc, o_hrs, o_dgh, o_tst, o_zs, o_zf, o_zl) = outs
    if m:
        heat[:, 0] = _unblock(o_heat, V)
        cool[:, 0] = _unblock(o_cool, V)
    peak_h[:] = _unblock(o_ph, V)
    peak_c[:] = _unblock(o_pc, V)
    hrs[:] = _unblock(o_hrs, V)
    dgh[:] = _unblock(o_dgh, V)
    tstat[:] = _unblock(o_tst, V)
    xs_sum[:, 0] = np.einsum("vij,vj->vi", Q, _unblock(o_zs, V))
    # Σu over the reported steps: constants × steps, column sums, thermostat power
    colsum = bank[warm:].sum(axis=0)
    us = np.zeros((V, nu))
    us[:, :nin] = np.where(ucol >= 0, colsum[np.maximum(ucol, 0)], uconst * nrep)
    if m:
        us[:, nin] = heat[:, 0] - cool[:, 0]
    u_sum[:, 0] = us
    cnt[:, 0] = nrep
    x_first[:] = np.einsum("vij,vj->vi", Q, _unblock(o_zf, V))
    x_last[:] = np.einsum("vij,vj->vi", Q, _unblock(o_zl, V))
    return True


def _step_blocks(a, G, bz, r, RU, bT, gP, yc, YU, yuP, bC, z0, bank, cols, lcols, Gl, RUl,
                 YUl, sp_dyn, hc, hk, cc, ck, M, qh, qc, m, warm, comfort,
                 thr_h, thr_d):  # pragma: no cover - compiled
    """Blocks of lanes; every innermost loop runs over the lanes of one block.

    Shapes (b = block, L = lanes, k = shared columns per block, l = gathered inputs):
    a, bz, r, gP, yc, z0 (b, nc, L); G (b, k, nc, L); RU, YU (b, k, L); cols (b, k);
    lcols, RUl, YUl (b, l, L); Gl (b, l, nc, L); the rest (b, L).
    ``comfort``: 0 none, 1 the node ``yc·z + yu·u``, 2 the thermostat's node.
    """
    nblk = a.shape[0]
    nc = a.shape[1]
    L = a.shape[2]  # a run-time trip count lets LLVM vectorise (with alias checks)
    ncol = cols.shape[1]
    nl = lcols.shape[1]
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
    z_first = np.zeros((nblk, nc, L))
    z_last = np.zeros((nblk, nc, L))
    for b in numba_prange(nblk):
        z = z0[b].copy()
        z1 = np.empty((nc, L))
        T0 = np.empty(L)
        T = np.empty(L)
        P = np.zeros(L)
        s = np.empty(ncol)
        ul = np.empty((nl, L))
        Hs = hk[b].copy()
        Cs = ck[b].copy()
        tmax = np.full(L, -np.inf)
        tmin = np.full(L, np.inf)
        tsum = np.zeros(L)
        for k in range(n):
            rep = k >= warm
            for c in range(ncol):
                s[c] = bank[k, cols[b, c]]
            for j in range(nl):
                for v in range(L):
                    ul[j, v] = bank[k, lcols[b, j, v]]
            if rep and k == warm:
                for i in range(nc):
                    for v in range(L):
                        z_first[b, i, v] = z[i, v]
            # 1. free response; the controlled node's free end temperature T0
            if m > 0:
                for v in range(L):
                    T0[v] = bT[b, v]
                for c in range(ncol):
                    sc = s[c]
                    for v in range(L):
                        T0[v] += RU[b, c, v] * sc
                for j in range(nl):
                    for v in range(L):
                        T0[v] += RUl[b, j, v] * ul[j, v]
            for i in range(nc):
                for v in range(L):
                    z1[i, v] = a[b, i, v] * z[i, v] + bz[b, i, v]
                for c in range(ncol):
                    sc = s[c]
                    for v in range(L):
                        z1[i, v] += G[b, c, i, v] * sc
                for j in range(nl):
                    for v in range(L):
                        z1[i, v] += Gl[b, j, i, v] * ul[j, v]
                if rep:
                    for v in range(L):
                        zs_sum[b, i, v] += z[i, v]
                if m > 0:
                    for v in range(L):
                        T0[v] += r[b, i, v] * z1[i, v]
            # 2. thermostat power
            if m > 0:
                if sp_dyn:  # setpoint schedules: read per lane
                    for v in range(L):
                        Hs[v] = bank[k, hc[b, v]] if hc[b, v] >= 0 else hk[b, v]
                        Cs[v] = bank[k, cc[b, v]] if cc[b, v] >= 0 else ck[b, v]
                for v in range(L):
                    t0 = T0[v]
                    hs = Hs[v]
                    cs = Cs[v]
                    ph = min((hs - t0) / M[b, v], qh[b, v])
                    pc = -min((t0 - cs) / M[b, v], qc[b, v])
                    # NaN setpoints (none) compare false, as in kernels.control_powers
                    P[v] = ph if t0 < hs else (pc if t0 > cs else 0.0)
            # 3. end state; the comfort node's end temperature T
            if comfort == 1:
                for v in range(L):
                    T[v] = bC[b, v] + yuP[b, v] * P[v]
                for c in range(ncol):
                    sc = s[c]
                    for v in range(L):
                        T[v] += YU[b, c, v] * sc
                for j in range(nl):
                    for v in range(L):
                        T[v] += YUl[b, j, v] * ul[j, v]
            for i in range(nc):
                for v in range(L):
                    z[i, v] = z1[i, v] + gP[b, i, v] * P[v]
                if comfort == 1:
                    for v in range(L):
                        T[v] += yc[b, i, v] * z[i, v]
            if comfort == 2:
                for v in range(L):
                    T[v] = T0[v] + M[b, v] * P[v]
            # annual sums over the reported steps
            if rep:
                if m > 0:
                    for v in range(L):
                        p = P[v]
                        heat[b, v] += max(p, 0.0)
                        cool[b, v] += max(-p, 0.0)
                        peak_h[b, v] = max(peak_h[b, v], p)
                        peak_c[b, v] = max(peak_c[b, v], -p)
                if comfort > 0:
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
                z_last[b, i, v] = z[i, v]
        for v in range(L):
            tstat[b, 0, v] = tmax[v]
            tstat[b, 1, v] = tmin[v]
            tstat[b, 2, v] = tsum[v]
    return heat, cool, peak_h, peak_c, hrs, dgh, tstat, zs_sum, z_first, z_last


if kernels.HAVE_NUMBA:
    import numba

    numba_prange = numba.prange
    _step_blocks_nb = numba.njit(parallel=True, cache=True, nogil=True)(_step_blocks)
else:  # pragma: no cover - applicable() is False without numba
    numba_prange = range
    _step_blocks_nb = _step_blocks
