"""The sequential stepping loop, as plain numpy and as a numba-compiled twin.

Both functions take the same arrays and return the same numbers (tested). One step ``n``:

1. switch positions from the end-of-previous-step temperatures and this step's signals;
2. state ``s`` = scheduled state × switch bits; inputs scaled by switched source factors;
3. free response ``x⁺ = Φ_s x + Γ_s u``;
4. thermostats by superposition: controlled temperatures ``T = T₀ + M P``; ``P`` found by
   projected Gauss–Seidel under the capacity limits (exact in one sweep for one thermostat);
5. ``x ← x⁺ + Γ_s[:, P] P``.
"""

from __future__ import annotations

import numpy as np

try:  # numba is a declared dependency; the numpy path is the reference and the fallback
    import numba

    HAVE_NUMBA = True
except ImportError:  # pragma: no cover
    HAVE_NUMBA = False


def eval_condition(cond, terms, term_clause, clause_cond, temps, sig):
    """True if any clause of condition ``cond`` has all its terms true."""
    n_cl = clause_cond.shape[0]
    for c in range(n_cl):
        if clause_cond[c] != cond:
            continue
        ok = True
        for t in range(terms.shape[0]):
            if term_clause[t] != c:
                continue
            ka = int(terms[t, 0])
            ia = int(terms[t, 1])
            kb = int(terms[t, 2])
            ib = int(terms[t, 3])
            va = temps[ia] if ka == 0 else (sig[ia] if ka == 1 else 0.0)
            vb = temps[ib] if kb == 0 else (sig[ib] if kb == 1 else 0.0)
            d = va - vb
            if terms[t, 4] > 0:
                if not d > terms[t, 5]:
                    ok = False
            else:
                if not d < terms[t, 5]:
                    ok = False
        if ok:
            return True
    return False


def control_powers(T0, M, hsp, csp, qh, qc, P):
    """Projected Gauss–Seidel for thermostat powers ``P`` [W] (in place)."""
    m = T0.shape[0]
    for i in range(m):
        P[i] = 0.0
    for _sweep in range(100):
        change = 0.0
        for i in range(m):
            rest = T0[i]
            for j in range(m):
                if j != i:
                    rest += M[i, j] * P[j]
            new = 0.0
            if not np.isnan(hsp[i]) and rest < hsp[i]:
                new = min((hsp[i] - rest) / M[i, i], qh[i])
            elif not np.isnan(csp[i]) and rest > csp[i]:
                new = -min((rest - csp[i]) / M[i, i], qc[i])
            change = max(change, abs(new - P[i]))
            P[i] = new
        if m == 1 or change <= 1e-9 * (1.0 + np.abs(P).max()):
            break


def step_loop(Phi, Gam, Rx, Ru, M, Yx, Yu, x0, U, sched, hsp, csp, qh, qc,
              SSF, SSF_off, sw_init, has_off, terms, term_clause, clause_cond,
              signals, nb, X, P_out, S_out, U_out):
    """Step all rows of ``U``; fills X (end states), P_out, S_out (state ids), U_out.

    Reference (numpy) implementation. Shapes: Phi (ns, nc, nc), Gam (ns, nc, nu),
    Rx (ns, m, nc), Ru (ns, m, nu), M (ns, m, m), Yx (ns, na, nc), Yu (ns, na, nu).
    """
    n = U.shape[0]
    nc = x0.shape[0]
    m = hsp.shape[1]
    nsw = sw_init.shape[0]
    nsrc = SSF.shape[1]
    na = Yx.shape[1]
    x = x0.copy()
    on = sw_init.copy()
    temps = np.zeros(nc + na)
    temps[:nc] = x
    P = np.zeros(m)
    u_prev = U[0].copy()
    if na:
        temps[nc:] = Yx[0] @ x + Yu[0] @ u_prev
    pcols = nb + nsrc + np.arange(m)
    for k in range(n):
        bits = 0
        for w in range(nsw):
            if on[w]:
                if has_off[w]:
                    on[w] = not eval_condition(2 * w + 1, terms, term_clause, clause_cond, temps,
                                           signals[k])
                else:
                    on[w] = eval_condition(2 * w, terms, term_clause, clause_cond, temps,
                                           signals[k])
            else:
                on[w] = eval_condition(2 * w, terms, term_clause, clause_cond, temps, signals[k])
            if on[w]:
                bits += 1 << w
        s = sched[k] * (1 << nsw) + bits
        u = U[k].copy()
        for w in range(nsw):
            u[nb:nb + nsrc] *= SSF[w] if on[w] else SSF_off[w]
        x1 = Phi[s] @ x + Gam[s] @ u
        if m:
            T0 = Rx[s] @ x1 + Ru[s] @ u
            control_powers(T0, M[s], hsp[k], csp[k], qh, qc, P)
            x1 = x1 + Gam[s][:, pcols] @ P
            u[pcols] = P
            P_out[k] = P
        x = x1
        X[k] = x
        S_out[k] = s
        U_out[k] = u
        if nsw:
            temps[:nc] = x
            if na:
                temps[nc:] = Yx[s] @ x + Yu[s] @ u


def _modal_recursion_py(a, B, z0):
    """``Z[k] = a ⊙ Z[k−1] + B[k]`` with ``Z[−1] = z0`` (reference implementation)."""
    Z = np.empty_like(B)
    z = z0.copy()
    for k in range(B.shape[0]):
        z = a * z + B[k]
        Z[k] = z
    return Z


if HAVE_NUMBA:
    modal_recursion = numba.njit(cache=True)(_modal_recursion_py)
else:  # pragma: no cover
    modal_recursion = _modal_recursion_py


if HAVE_NUMBA:
    _eval_cond_nb = numba.njit(cache=True)(eval_condition)
    _control_nb = numba.njit(cache=True)(control_powers)

    @numba.njit(cache=True)
    def _mv(A, x):
        out = np.zeros(A.shape[0])
        for i in range(A.shape[0]):
            acc = 0.0
            for j in range(A.shape[1]):
                acc += A[i, j] * x[j]
            out[i] = acc
        return out

    @numba.njit(cache=True)
    def step_loop_numba(Phi, Gam, Rx, Ru, M, Yx, Yu, x0, U, sched, hsp, csp, qh, qc,
                        SSF, SSF_off, sw_init, has_off, terms, term_clause, clause_cond,
                        signals, nb, X, P_out, S_out, U_out):  # pragma: no cover - compiled
        n = U.shape[0]
        nc = x0.shape[0]
        m = hsp.shape[1]
        nsw = sw_init.shape[0]
        nsrc = SSF.shape[1]
        na = Yx.shape[1]
        nu = U.shape[1]
        x = x0.copy()
        on = sw_init.copy()
        temps = np.zeros(nc + na)
        temps[:nc] = x
        P = np.zeros(m)
        if na:
            y = _mv(Yx[0], x) + _mv(Yu[0], U[0])
            temps[nc:] = y
        x1 = np.zeros(nc)
        u = np.zeros(nu)
        T0 = np.zeros(m)
        for k in range(n):
            bits = 0
            for w in range(nsw):
                if on[w]:
                    if has_off[w]:
                        on[w] = not _eval_cond_nb(2 * w + 1, terms, term_clause, clause_cond,
                                                  temps, signals[k])
                    else:
                        on[w] = _eval_cond_nb(2 * w, terms, term_clause, clause_cond, temps,
                                              signals[k])
                else:
                    on[w] = _eval_cond_nb(2 * w, terms, term_clause, clause_cond, temps,
                                          signals[k])
                if on[w]:
                    bits += 1 << w
            s = sched[k] * (1 << nsw) + bits
            for j in range(nu):
                u[j] = U[k, j]
            for w in range(nsw):
                for j in range(nsrc):
                    u[nb + j] *= SSF[w, j] if on[w] else SSF_off[w, j]
            Ph = Phi[s]
            Ga = Gam[s]
            for i in range(nc):
                acc = 0.0
                for j in range(nc):
                    acc += Ph[i, j] * x[j]
                for j in range(nu):
                    acc += Ga[i, j] * u[j]
                x1[i] = acc
            if m:
                for i in range(m):
                    acc = 0.0
                    for j in range(nc):
                        acc += Rx[s, i, j] * x1[j]
                    for j in range(nu):
                        acc += Ru[s, i, j] * u[j]
                    T0[i] = acc
                _control_nb(T0, M[s], hsp[k], csp[k], qh, qc, P)
                for j in range(m):
                    c = nb + nsrc + j
                    for i in range(nc):
                        x1[i] += Ga[i, c] * P[j]
                    u[c] = P[j]
                    P_out[k, j] = P[j]
            for i in range(nc):
                x[i] = x1[i]
                X[k, i] = x1[i]
            S_out[k] = s
            for j in range(nu):
                U_out[k, j] = u[j]
            if nsw:
                for i in range(nc):
                    temps[i] = x[i]
                if na:
                    y = _mv(Yx[s], x) + _mv(Yu[s], u)
                    for i in range(na):
                        temps[nc + i] = y[i]
else:  # pragma: no cover
    step_loop_numba = None
