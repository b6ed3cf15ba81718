"""The stepping loop: one compiled kernel on a variant axis, and its plain-numpy reference.

Both step every variant (axis 0) of a group through every row of the inputs and follow the
same algorithm; they differ in coordinates and in how the arithmetic is organised, so the
tests compare them on the same networks. One step ``k`` of one variant:

1. switch positions from the previous step's end temperatures and this step's signals
   (each switch turns on when its ``on`` condition holds; with an ``off`` condition it stays
   on until that holds — hysteresis);
2. state ``s`` = scheduled state × switch bits; sources are scaled by the state's factors;
3. free response over the step with the state's exact zero-order-hold step;
4. thermostats by superposition: the controlled nodes' free end temperatures ``T₀`` and
   their response ``M`` [K/W] to 1 W held over the step give the powers ``P`` [W] that meet
   the setpoints at the end of the step, clamped to the capacities (projected Gauss–Seidel,
   exact in one sweep for one thermostat);
5. the end state is the free response plus the powers' response.

:func:`step_modal` (numba) works in each state's modal coordinates ``z = Qᵀ C x``, where
the step is diagonal: ``z⁺ = e^{−λh} ⊙ z + B u`` with ``B = hφ₁(λh) W`` — O(nc·k) per step
for k varying inputs instead of O(nc²). Inputs that are constant for a variant are folded
into one vector per state; the temperatures the loop must see (thermostat, condition and
comfort nodes) are rows ``O_x z + O_u u``; on a change of state the coordinates are mapped
``z' = Q_{s'}ᵀ C Q_s z``. States whose modal form failed its check (very stiff networks,
:mod:`thermonet.engine.discretise`) are stepped densely in node coordinates.
:func:`step_reference` is the plain-numpy reference: node coordinates, the dense matrices
``x⁺ = Φx + Γu``, one variant and one step at a time.

References
----------
.. [1] Franklin, G. F., Powell, J. D., Workman, M. L., Digital Control of Dynamic Systems,
   3rd ed., Addison-Wesley, 1998, §4.3 (zero-order-hold equivalent of a continuous system).
.. [2] Cottle, R. W., Pang, J.-S., Stone, R. E., The Linear Complementarity Problem,
   Academic Press, 1992, §5.2 (projected Gauss–Seidel) — from memory.
"""

from __future__ import annotations

import numpy as np

from thermonet.airflow import law_flow

try:  # numba is a declared dependency; the numpy path is the reference and the fallback
    import numba
    from numba.extending import register_jitable

    HAVE_NUMBA = True
except ImportError:  # pragma: no cover
    HAVE_NUMBA = False

    def register_jitable(fn):
        return fn

# plain functions the compiled loops call as they are (the numpy reference calls them too)
register_jitable(law_flow)


@register_jitable
def eval_condition(cond, terms, term_clause, clause_cond, temps, sig):
    """True if any clause of condition ``cond`` has all its terms true.

    Parameters
    ----------
    cond : int
        Condition id (2·switch + 0 for ``on``, 1 for ``off``).
    terms : ndarray (n_terms, 6)
        ``kind_a, idx_a, kind_b, idx_b, op, threshold``; kind 0 reads ``temps``, 1 ``sig``,
        2 is zero.
    term_clause, clause_cond : ndarray of int
        Clause of each term, condition of each clause.
    temps : ndarray
        Temperatures [°C] the terms of kind 0 index.
    sig : ndarray
        This step's signal values.
    """
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


@register_jitable
def clamped_power(rest, hsp, csp, mii, qh, qc):
    """One thermostat's power [W] that brings its node from ``rest`` to the setpoint.

    Parameters
    ----------
    rest : float
        The node's end temperature without this thermostat's power [°C].
    hsp, csp : float
        Heating and cooling setpoints [°C] (NaN = none).
    mii : float
        The node's end-temperature response to 1 W of its own thermostat [K/W].
    qh, qc : float
        Heating and cooling capacities [W].

    Returns
    -------
    float
        Heating (> 0) or cooling (< 0) power, clamped to the capacity; 0 between the
        setpoints.
    """
    if not np.isnan(hsp) and rest < hsp:
        return min((hsp - rest) / mii, qh)
    if not np.isnan(csp) and rest > csp:
        return -min((rest - csp) / mii, qc)
    return 0.0


@register_jitable
def direct_node(ox, ou, oc):
    """The coordinate an observed row reads alone, or −1.

    A row ``T = oc + ox · z + ou · u`` that is exactly the unit vector ``e_i`` with
    ``ou = 0`` and ``oc = 0`` (a capacitive node stepped in node coordinates) is ``z_i``
    itself: the loop then reads ``z_i`` instead of summing the row (the same value, as the
    terms it skips are exact zeros for finite ``z`` and ``u``).

    Parameters
    ----------
    ox : ndarray (nc,)
        Row on the coordinates [-].
    ou : ndarray (nu,)
        Row on the inputs ([K/K] or [K/W]).
    oc : float
        Constant part [°C].

    Returns
    -------
    int
        ``i``, or −1 when the row is anything else.
    """
    if oc != 0.0:
        return -1
    for j in range(ou.shape[0]):
        if ou[j] != 0.0:
            return -1
    idx = -1
    for i in range(ox.shape[0]):
        if ox[i] == 1.0 and idx < 0:
            idx = i
        elif ox[i] != 0.0:
            return -1
    return idx


def control_powers(T0, M, hsp, csp, qh, qc, P):
    """Thermostat powers ``P`` [W] (in place) by projected Gauss–Seidel.

    Parameters
    ----------
    T0 : ndarray (m,)
        Controlled nodes' end temperatures without thermostat power [°C].
    M : ndarray (m, m)
        End-temperature response to 1 W held over the step [K/W].
    hsp, csp : ndarray (m,)
        Heating and cooling setpoints [°C] (NaN = none).
    qh, qc : ndarray (m,)
        Heating and cooling capacities [W].
    P : ndarray (m,)
        Output: heating (> 0) or cooling (< 0) power [W].
    """
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
            new = clamped_power(rest, hsp[i], csp[i], M[i, i], qh[i], qc[i])
            change = max(change, abs(new - P[i]))
            P[i] = new
        if m == 1 or change <= 1e-9 * (1.0 + np.abs(P).max()):
            break


def switch_bits(on, has_off, terms, term_clause, clause_cond, temps, sig):
    """Update switch positions ``on`` (in place) and return their bit pattern.

    A switch that is on and has an ``off`` condition stays on until that condition holds
    (hysteresis); otherwise it is on exactly while its ``on`` condition holds.

    Parameters
    ----------
    on : ndarray (nsw,) of bool
        Switch positions after the previous step; updated in place.
    has_off : ndarray (nsw,) of bool
        Whether each switch has an ``off`` condition.
    terms : ndarray (n_terms, 6)
        ``kind_a, idx_a, kind_b, idx_b, op, threshold`` of every condition term (see
        :func:`eval_condition`).
    term_clause : ndarray (n_terms,) of int
        Clause of each term.
    clause_cond : ndarray (n_clauses,) of int
        Condition of each clause (2·switch + 0 for ``on``, 1 for ``off``).
    temps : ndarray
        Temperatures [°C] the terms of kind 0 index (end of the previous step).
    sig : ndarray (nsig,)
        This step's signal values (in each signal's unit).

    Returns
    -------
    int
        Bit w set when switch w is on.
    """
    bits = 0
    for w in range(on.shape[0]):
        if on[w] and has_off[w]:
            on[w] = not eval_condition(2 * w + 1, terms, term_clause, clause_cond, temps, sig)
        else:
            on[w] = eval_condition(2 * w, terms, term_clause, clause_cond, temps, sig)
        if on[w]:
            bits += 1 << w
    return bits


def coupled_powers(T0, M, hsp, csp, qh, qc, dG, ta0, tb0, bk, m, PQ, Tend):
    """Thermostat powers and window-law heat flows of one step (in place), solved together.

    Unknowns ``PQ = [P (m), q (nfl)]`` [W]. The thermostats meet their setpoints at the end
    of the step within their capacities (as :func:`control_powers`); each window link's
    departure from its reference conductance ``ΔG`` [W/K] carries ``q = ΔG (T̂_b − T̂_a)``
    into the room with ``T̂ = ½(T_start + T_end)`` (a far boundary: its step mean). End
    temperatures are linear in the unknowns, ``T_end = T0 + M PQ``; projected Gauss–Seidel
    sweeps solve the set.

    Parameters
    ----------
    T0 : ndarray (m + 2 nfl,)
        End temperatures without the unknowns [°C]: thermostat nodes, room nodes, far nodes
        (unused for a far boundary).
    M : ndarray (m + 2 nfl, m + nfl)
        Their response to 1 W of each unknown held over the step [K/W].
    hsp, csp : ndarray (m,)
        Heating and cooling setpoints [°C] (NaN = none).
    qh, qc : ndarray (m,)
        Heating and cooling capacities [W].
    dG : ndarray (nfl,)
        Departure of each window link's conductance from its reference [W/K].
    ta0, tb0 : ndarray (nfl,)
        Room-node start temperature; far node's start temperature or far boundary's step
        mean [°C].
    bk : ndarray (nfl,) of int
        Kind of the far side (0 node, 1 boundary).
    m : int
        Number of thermostats.
    PQ : ndarray (m + nfl,)
        Output [W].
    Tend : ndarray (m + 2 nfl,)
        Output: end temperatures with the unknowns [°C].

    References
    ----------
    .. [1] Cottle, R. W., Pang, J.-S., Stone, R. E., The Linear Complementarity Problem,
       Academic Press, 1992, §5.2 (projected Gauss–Seidel) — from memory.
    """
    nfl = dG.shape[0]
    nu = m + nfl
    for i in range(nu):
        PQ[i] = 0.0
    for _sweep in range(200):
        change = 0.0
        for r in range(m):
            rest = T0[r]
            for j in range(nu):
                if j != r:
                    rest += M[r, j] * PQ[j]
            new = clamped_power(rest, hsp[r], csp[r], M[r, r], qh[r], qc[r])
            change = max(change, abs(new - PQ[r]))
            PQ[r] = new
        for f in range(nfl):
            c = m + f
            ra = m + f
            rb = m + nfl + f
            ta = T0[ra]
            for j in range(nu):
                if j != c:
                    ta += M[ra, j] * PQ[j]
            if bk[f] == 0:
                tb = T0[rb]
                for j in range(nu):
                    if j != c:
                        tb += M[rb, j] * PQ[j]
                num = 0.5 * (tb0[f] + tb) - 0.5 * (ta0[f] + ta)
                den = 1.0 + 0.5 * dG[f] * (M[ra, c] - M[rb, c])
            else:
                num = tb0[f] - 0.5 * (ta0[f] + ta)
                den = 1.0 + 0.5 * dG[f] * M[ra, c]
            new = dG[f] * num / den
            change = max(change, abs(new - PQ[c]))
            PQ[c] = new
        if change <= 1e-10 * (1.0 + np.abs(PQ).max()):
            break
    for r in range(m + 2 * nfl):
        acc = T0[r]
        for j in range(nu):
            acc += M[r, j] * PQ[j]
        Tend[r] = acc


def law_departure(coef, fac, ta, tb, wnd, dG):
    """Each window link's conductance from its law minus its reference, ``ΔG`` [W/K] (in place).

    Parameters
    ----------
    coef : ndarray (nfl, 9)
        Flow-law coefficients, ρc_p [J/(m³K)] and reference conductance G_ref [W/K].
    fac : ndarray (nfl,)
        Switch factor on each link this step [-] (0 shut).
    ta, tb : ndarray (nfl,)
        Room-side and far-side temperatures the law is evaluated at [°C].
    wnd : ndarray (nfl,)
        Wind speed [m/s].
    dG : ndarray (nfl,)
        Output ``fac · (ρc_p V̇_law − G_ref)`` [W/K].
    """
    for f in range(dG.shape[0]):
        if fac[f] == 0.0:
            dG[f] = 0.0
        else:
            dG[f] = fac[f] * (coef[f, 7] * law_flow(coef[f, :7], ta[f], tb[f], wnd[f])
                              - coef[f, 8])


def flow_drivers(v, k, bank, obs, up, bk, fa, fb, bj, bcol, bconst, bramp, wcol, wconst, wramp,
                 ta, tb, wnd):
    """The window links' drivers at the start of step ``k`` (in place).

    The room side ``ta`` is the observed end of the previous step; the far side ``tb`` is an
    observed node the same way, or a boundary's mean over the step (the mean of its previous
    and current values when it follows a straight line, first-order hold); the wind ``wnd``
    is its mean over the step likewise.

    Parameters
    ----------
    v, k : int
        Variant and row.
    bank : ndarray (n, ncols)
        The group's time series.
    obs : ndarray (nobs,)
        Observed temperatures at the end of the previous step [°C].
    up : ndarray (nu,)
        The previous step's inputs.
    bk : ndarray (nfl,) of int
        Kind of the far side: 0 an observed node, 1 a boundary.
    fa, fb : ndarray (nfl,) of int
        Observed point of the room node and of a far node.
    bj : ndarray (nfl,) of int
        Input index of a far boundary.
    bcol, bconst : ndarray (V, nfl)
        The far boundary's column in ``bank`` (−1: the constant) and constant [°C].
    bramp : ndarray (V, nfl) of bool
        Far boundary temperature interpolated linearly over the step.
    wcol, wconst, wramp : ndarray (V, nfl)
        Same for the wind speed [m/s].
    ta, tb, wnd : ndarray (nfl,)
        Output [°C, °C, m/s].
    """
    for f in range(ta.shape[0]):
        ta[f] = obs[fa[f]]
        if bk[f] == 0:
            tb[f] = obs[fb[f]]
        else:
            t = bank[k, bcol[v, f]] if bcol[v, f] >= 0 else bconst[v, f]
            if bramp[v, f] and bcol[v, f] >= 0:
                t = 0.5 * (t + up[bj[f]])
            tb[f] = t
        w = bank[k, wcol[v, f]] if wcol[v, f] >= 0 else wconst[v, f]
        if wramp[v, f] and wcol[v, f] >= 0 and k > 0:
            w = 0.5 * (w + bank[k - 1, wcol[v, f]])
        wnd[f] = w


def _column(bank, k, col, const):
    return bank[k, col] if col >= 0 else const


def step_modal(a, Ad, dense, BT, BTp, Qx, Pz, Ox, Ou, M, bconst, oconst, nvar, vj, vcol,
               rampv, uprev0, bank, z0, x0, s0, obs0, schcol, schconst, hcol, hconst, ccol,
               cconst, scol, sconst,
               qh, qc, sw_init, has_off, terms, term_clause, clause_cond, nin, nsw, warm,
               th_obs, c_obs, thr_h, thr_d, Mc, fl_rows, fl_coef, fl_fac, fl_bk, fl_a, fl_b,
               fl_bj, fl_ja, fl_jb, fl_bcol, fl_bconst, fl_bramp, fl_wcol, fl_wconst, fl_wramp,
               keep, Ztr, Str, Ptr, Qtr,
               heat, cool, peak_h, peak_c, hrs, dgh, tstat, zs_sum, us_sum, up_sum, cnt,
               x_first, x_last):  # pragma: no cover - compiled
    """Step every variant over every row of ``bank`` in modal coordinates (see module doc).

    Shapes: V variants, ns states, nc capacitive nodes, nu inputs (nin = nb + nsrc
    boundaries and sources, then m thermostats), nobs observed points, n rows (``warm``
    warm-up rows, then the reported ones), k the most varying inputs of a variant, nsig
    signals. A state is stepped in modal coordinates ``z = Qᵀ C x``, or, where ``dense``,
    in node coordinates ``z = x`` [°C]. ``keep``: write the traces ``Ztr``, ``Str``,
    ``Ptr``; else only the sums over the reported steps ``k ≥ warm``. Outputs are written
    in place.

    Parameters
    ----------
    a : ndarray (V, ns, nc)
        Modal decay over a step ``e^{−λh}`` [-].
    Ad : ndarray (V, ns, nc, nc)
        Φ of the dense states [-] (may be (V, ns, 0, 0) when none is dense).
    dense : ndarray (V, ns) of bool
        States stepped densely in node coordinates.
    BT, BTp : ndarray (V, ns, nu, nc)
        Input operator rows (source factors folded in) on this step's input and on the
        previous step's (first-order hold inputs only).
    Qx, Pz : ndarray (V, ns, nc, nc)
        ``x = Qx z``, ``z = Pz x``.
    Ox, Ou : ndarray (V, ns, nobs, nc), ndarray (V, ns, nobs, nu)
        Observed temperatures [°C] as ``Ox z + Ou u``.
    M : ndarray (V, ns, m, m)
        Thermostat nodes' end-of-step response to 1 W held over the step [K/W].
    bconst : ndarray (V, ns, nc)
        Constant inputs' contribution to the end-of-step coordinates.
    oconst : ndarray (V, ns, nobs)
        Constant inputs' part of the observed temperatures [°C].
    nvar : ndarray (V,) of int
        Number of varying inputs per variant.
    vj, vcol : ndarray (V, k) of int
        Input index of each varying input and its column in ``bank``.
    rampv : ndarray (V, k) of bool
        Varying inputs interpolated linearly over the step (first-order hold).
    uprev0 : ndarray (V, nu)
        Inputs before the first row (boundary temperatures [°C], powers [W]).
    bank : ndarray (n, ncols)
        Time series of the group (:attr:`thermonet.engine.run.Bank.data`) [SI].
    z0 : ndarray (V, nc)
        Start coordinates (``Pz[s0] x0``).
    x0 : ndarray (V, nc)
        Start temperatures of the capacitive nodes [°C].
    s0 : ndarray (V,) of int
        Start state id.
    obs0 : ndarray (V, nobs)
        Observed temperatures before the first step [°C].
    schcol, schconst : ndarray (V,) of int, ndarray (V,)
        Scheduled-state id: ``bank`` column (−1: the constant).
    hcol, hconst : ndarray (V, m) of int, ndarray (V, m)
        Heating setpoints [°C] (NaN = none): column or constant.
    ccol, cconst : ndarray (V, m) of int, ndarray (V, m)
        Cooling setpoints [°C] (NaN = none): column or constant.
    scol, sconst : ndarray (V, nsig) of int, ndarray (V, nsig)
        Condition signals: column or constant.
    qh, qc : ndarray (V, m)
        Heating and cooling capacities [W].
    sw_init : ndarray (V, nsw) of bool
        Initial switch positions.
    has_off : ndarray (nsw,) of bool
        Whether each switch has an ``off`` condition.
    terms : ndarray (V, n_terms, 6)
        Condition terms per variant (kind 0 indexes observed points), thresholds [°C or the
        signal's unit] in column 5 (see :func:`eval_condition`).
    term_clause : ndarray (n_terms,) of int
        Clause of each term.
    clause_cond : ndarray (n_clauses,) of int
        Condition of each clause.
    nin : int
        Number of boundary and source inputs (thermostat powers follow them).
    nsw : int
        Number of switches.
    warm : int
        Warm-up rows before the reported ones.
    th_obs : ndarray (m,) of int
        Observed point of each thermostat node.
    c_obs : int
        Observed point of the comfort node (−1: none).
    thr_h : ndarray (nth,)
        Thresholds [°C] for counting steps with the comfort node above.
    thr_d : ndarray (ndh,)
        Thresholds [°C] for the comfort node's degree-steps above.
    Mc : ndarray (V, ns, m + 2 nfl, m + nfl)
        With window links: end-temperature response of the thermostat, room and far nodes
        to 1 W of each thermostat and of each link's law source held over the step [K/W]
        (see :func:`coupled_powers`).
    fl_rows : ndarray (m + 2 nfl,) of int
        Observed point of each row of ``Mc`` (−1: a far boundary).
    fl_coef : ndarray (V, nfl, 9)
        Window links' flow-law coefficients, ρc_p [J/(m³K)] and G_ref [W/K].
    fl_fac : ndarray (V, ns, nfl)
        Switch factor on each window link in each state [-].
    fl_bk, fl_a, fl_b, fl_bj : ndarray (nfl,) of int
        Far side's kind (0 node, 1 boundary), observed points of the room and far nodes,
        input index of a far boundary (see :func:`flow_drivers`).
    fl_ja, fl_jb : ndarray (nfl,) of int
        Input index of each link's law source into the room and out of the far node (−1).
    fl_bcol, fl_bconst, fl_bramp, fl_wcol, fl_wconst, fl_wramp : ndarray (V, nfl)
        Far boundary temperature [°C] and wind speed [m/s]: column, constant, ramp flag.
    keep : bool
        Write traces (else sums).
    Ztr : ndarray (V, n − warm, ≥ nc)
        Output: end-of-step coordinates (node temperatures [°C] for states stepped in node
        coordinates), with ``keep``, in the first nc columns (any further columns are left
        as they are: a caller may fill them).
    Str : ndarray (V, n − warm) of int
        Output: state id of each reported step, with ``keep``.
    Ptr : ndarray (V, n − warm, m)
        Output: thermostat powers [W], heating > 0, cooling < 0, with ``keep``.
    Qtr : ndarray (V, n − warm, nfl)
        Output: window links' law heat flows into the room [W], with ``keep``.
    heat, cool : ndarray (V, m)
        Output: sums of each thermostat's heating and cooling power [W·steps].
    peak_h, peak_c : ndarray (V,)
        Output: peaks of the total heating and cooling power [W].
    hrs : ndarray (V, nth)
        Output: reported steps with the comfort node above each ``thr_h``.
    dgh : ndarray (V, ndh)
        Output: sum of the comfort node's excess over each ``thr_d`` [K·steps].
    tstat : ndarray (V, 3)
        Output: maximum, minimum and sum of the comfort node's temperature [°C].
    zs_sum : ndarray (V, ns, nc)
        Output: sum of the start-of-step coordinates per state.
    us_sum : ndarray (V, ns, nu)
        Output: sum of each step's varying inputs and thermostat powers per state.
    up_sum : ndarray (V, ns, nu)
        Output: sum of the previous step's varying inputs per state.
    cnt : ndarray (V, ns)
        Output: number of reported steps in each state.
    x_first : ndarray (V, nc)
        Output: temperatures at the start of the first reported step [°C].
    x_last : ndarray (V, nc)
        Output: temperatures at the end of the last step [°C].
    """
    V = z0.shape[0]
    n = bank.shape[0]
    nc = z0.shape[1]
    nu = BT.shape[2]
    m = M.shape[2]
    nobs = Ox.shape[2]
    nsig = scol.shape[1]
    nth = thr_h.shape[0]
    ndh = thr_d.shape[0]
    nfl = fl_bk.shape[0]
    nr = m + 2 * nfl
    for v in numba.prange(V):
        z = z0[v].copy()
        z1 = np.zeros(nc)
        xt = np.zeros(nc)
        u = np.zeros(nu)
        up = uprev0[v].copy()
        on = sw_init[v].copy()
        obs = obs0[v].copy()
        sig = np.zeros(nsig)
        hs = np.zeros(m)
        cs = np.zeros(m)
        T0 = np.zeros(m)
        P = np.zeros(m)
        sp = s0[v]
        ta0 = np.zeros(nfl)
        tb0 = np.zeros(nfl)
        ta1 = np.zeros(nfl)
        tb1 = np.zeros(nfl)
        wnd = np.zeros(nfl)
        dG = np.zeros(nfl)
        T0c = np.zeros(nr)
        Tend = np.zeros(nr)
        PQ = np.zeros(m + nfl)
        sv = -1              # state whose views below are current
        odir = np.full(nobs, -1, dtype=np.int64)   # observed points read directly
        BTs = BT[v, 0]
        Oxs = Ox[v, 0]
        Ous = Ou[v, 0]
        ocs = oconst[v, 0]
        Ads = Ad[v, 0]
        BTps = BTp[v, 0]
        a_s = a[v, 0]
        bc = bconst[v, 0]
        Ms = M[v, 0]
        zsv = zs_sum[v, 0]
        usv = us_sum[v, 0]
        upv = up_sum[v, 0]
        dn = False
        tmax = -np.inf
        tmin = np.inf
        tsum = 0.0
        for k in range(n):
            bits = 0
            if nsw > 0:
                for j in range(nsig):
                    sig[j] = _column_nb(bank, k, scol[v, j], sconst[v, j])
                bits = switch_bits_nb(on, has_off, terms[v], term_clause, clause_cond, obs, sig)
            s = int(_column_nb(bank, k, schcol[v], schconst[v])) * (1 << nsw) + bits
            if k == warm:
                if k == 0:
                    for i in range(nc):
                        x_first[v, i] = x0[v, i]
                else:
                    for i in range(nc):
                        acc = 0.0
                        for j in range(nc):
                            acc += Qx[v, sp, i, j] * z[j]
                        x_first[v, i] = acc
            if s != sp:   # new coordinates: z' = Pz[s] Qx[sp] z
                for i in range(nc):
                    acc = 0.0
                    for j in range(nc):
                        acc += Qx[v, sp, i, j] * z[j]
                    xt[i] = acc
                for i in range(nc):
                    acc = 0.0
                    for j in range(nc):
                        acc += Pz[v, s, i, j] * xt[j]
                    z[i] = acc
            # free response
            if s != sv:
                BTs = BT[v, s]
                BTps = BTp[v, s]
                Oxs = Ox[v, s]
                Ous = Ou[v, s]
                ocs = oconst[v, s]
                Ads = Ad[v, s]
                a_s = a[v, s]
                bc = bconst[v, s]
                Ms = M[v, s]
                dn = dense[v, s]
                for o in range(nobs):
                    odir[o] = direct_node(Oxs[o], Ous[o], ocs[o])
                if not keep:
                    zsv = zs_sum[v, s]
                    usv = us_sum[v, s]
                    upv = up_sum[v, s]
                sv = s
            for j in range(nvar[v]):
                u[vj[v, j]] = bank[k, vcol[v, j]]
            nq0 = 0          # varying inputs already added in the pass below
            if dn and nvar[v] == 1 and not rampv[v, 0]:
                # one varying input held over the step (the outdoor air, say): added in the
                # same pass, the same terms in the same order, the sum kept in a register
                nq0 = 1
                r0, u0j = BTs[vj[v, 0]], u[vj[v, 0]]
                for i in range(nc):
                    acc = bc[i]
                    for j in range(nc):
                        acc += Ads[i, j] * z[j]
                    z1[i] = acc + r0[i] * u0j
            elif dn:
                for i in range(nc):
                    acc = bc[i]
                    for j in range(nc):
                        acc += Ads[i, j] * z[j]
                    z1[i] = acc
            else:
                for i in range(nc):
                    z1[i] = a_s[i] * z[i] + bc[i]
            for q in range(nq0, nvar[v]):
                j = vj[v, q]
                uj = u[j]
                row = BTs[j]
                for i in range(nc):
                    z1[i] += row[i] * uj
                if rampv[v, q]:
                    uj = up[j]
                    row = BTps[j]
                    for i in range(nc):
                        z1[i] += row[i] * uj
            if nfl > 0:   # window links with thermostats: predictor–corrector on the law
                flow_drivers_nb(v, k, bank, obs, up, fl_bk, fl_a, fl_b, fl_bj, fl_bcol,
                                fl_bconst, fl_bramp, fl_wcol, fl_wconst, fl_wramp, ta0, tb0, wnd)
                for r in range(nr):
                    o = fl_rows[r]
                    acc = 0.0
                    if o >= 0:
                        acc = ocs[o]
                        ro = Oxs[o]
                        for i in range(nc):
                            acc += ro[i] * z1[i]
                        for q in range(nvar[v]):
                            acc += Ous[o, vj[v, q]] * u[vj[v, q]]
                    T0c[r] = acc
                for r in range(m):
                    hs[r] = _column_nb(bank, k, hcol[v, r], hconst[v, r])
                    cs[r] = _column_nb(bank, k, ccol[v, r], cconst[v, r])
                law_departure_nb(fl_coef[v], fl_fac[v, s], ta0, tb0, wnd, dG)
                coupled_powers_nb(T0c, Mc[v, s], hs, cs, qh[v], qc[v], dG, ta0, tb0, fl_bk, m,
                                  PQ, Tend)
                for f in range(nfl):     # corrector: the law at the step's mean temperatures
                    ta1[f] = 0.5 * (ta0[f] + Tend[m + f])
                    tb1[f] = 0.5 * (tb0[f] + Tend[m + nfl + f]) if fl_bk[f] == 0 else tb0[f]
                law_departure_nb(fl_coef[v], fl_fac[v, s], ta1, tb1, wnd, dG)
                coupled_powers_nb(T0c, Mc[v, s], hs, cs, qh[v], qc[v], dG, ta0, tb0, fl_bk, m,
                                  PQ, Tend)
                for r in range(m):
                    P[r] = PQ[r]
                    u[nin + r] = PQ[r]
                    row = BTs[nin + r]
                    for i in range(nc):
                        z1[i] += row[i] * PQ[r]
                for f in range(nfl):
                    qf = PQ[m + f]
                    u[fl_ja[f]] = qf
                    row = BTs[fl_ja[f]]
                    for i in range(nc):
                        z1[i] += row[i] * qf
                    if fl_jb[f] >= 0:
                        u[fl_jb[f]] = -qf
                        row = BTs[fl_jb[f]]
                        for i in range(nc):
                            z1[i] -= row[i] * qf
            # thermostats
            elif m == 1 and odir[th_obs[0]] >= 0:
                # one thermostat whose node is a coordinate: the same power, kept in registers
                pr = clamped_power(z1[odir[th_obs[0]]],
                                   _column_nb(bank, k, hcol[v, 0], hconst[v, 0]),
                                   _column_nb(bank, k, ccol[v, 0], cconst[v, 0]), Ms[0, 0],
                                   qh[v, 0], qc[v, 0])
                P[0] = pr
                u[nin] = pr
                row = BTs[nin]
                for i in range(nc):
                    z1[i] += row[i] * pr
            elif m > 0:
                for r in range(m):
                    o = th_obs[r]
                    if odir[o] >= 0:
                        T0[r] = z1[odir[o]]
                    else:
                        acc = ocs[o]
                        ro = Oxs[o]
                        for i in range(nc):
                            acc += ro[i] * z1[i]
                        for q in range(nvar[v]):
                            acc += Ous[o, vj[v, q]] * u[vj[v, q]]
                        T0[r] = acc
                    hs[r] = _column_nb(bank, k, hcol[v, r], hconst[v, r])
                    cs[r] = _column_nb(bank, k, ccol[v, r], cconst[v, r])
                if m == 1:   # one thermostat: exact in one step, no iteration
                    P[0] = clamped_power(T0[0], hs[0], cs[0], Ms[0, 0], qh[v, 0], qc[v, 0])
                else:
                    control_powers_nb(T0, Ms, hs, cs, qh[v], qc[v], P)
                for r in range(m):
                    pr = P[r]
                    u[nin + r] = pr
                    row = BTs[nin + r]
                    for i in range(nc):
                        z1[i] += row[i] * pr
            # observed temperatures at the end of the step (for conditions and comfort)
            for o in range(nobs if (nsw > 0 or c_obs >= 0 or nfl > 0) else 0):
                if odir[o] >= 0:
                    obs[o] = z1[odir[o]]
                    continue
                acc = ocs[o]
                ro = Oxs[o]
                for i in range(nc):
                    acc += ro[i] * z1[i]
                for q in range(nvar[v]):
                    acc += Ous[o, vj[v, q]] * u[vj[v, q]]
                for r in range(m):
                    acc += Ous[o, nin + r] * u[nin + r]
                for f in range(nfl):
                    acc += Ous[o, fl_ja[f]] * u[fl_ja[f]]
                    if fl_jb[f] >= 0:
                        acc += Ous[o, fl_jb[f]] * u[fl_jb[f]]
                obs[o] = acc
            if k >= warm:
                kk = k - warm
                if keep:
                    for i in range(nc):
                        Ztr[v, kk, i] = z1[i]
                    Str[v, kk] = s
                    for r in range(m):
                        Ptr[v, kk, r] = P[r]
                    for f in range(nfl):
                        Qtr[v, kk, f] = u[fl_ja[f]]
                else:
                    for i in range(nc):
                        zsv[i] += z[i]
                    for q in range(nvar[v]):
                        j = vj[v, q]
                        usv[j] += u[j]
                        upv[j] += up[j]
                    for r in range(m):
                        usv[nin + r] += u[nin + r]
                    for f in range(nfl):
                        usv[fl_ja[f]] += u[fl_ja[f]]
                        if fl_jb[f] >= 0:
                            usv[fl_jb[f]] += u[fl_jb[f]]
                    cnt[v, s] += 1.0
                    th_ = 0.0
                    tc_ = 0.0
                    for r in range(m):
                        if P[r] > 0.0:
                            heat[v, r] += P[r]
                            th_ += P[r]
                        elif P[r] < 0.0:
                            cool[v, r] -= P[r]
                            tc_ -= P[r]
                    if th_ > peak_h[v]:
                        peak_h[v] = th_
                    if tc_ > peak_c[v]:
                        peak_c[v] = tc_
                    if c_obs >= 0:
                        t = obs[c_obs]
                        for q in range(nth):
                            if t > thr_h[q]:
                                hrs[v, q] += 1.0
                        for q in range(ndh):
                            if t > thr_d[q]:
                                dgh[v, q] += t - thr_d[q]
                        tmax = max(tmax, t)
                        tmin = min(tmin, t)
                        tsum += t
            z, z1 = z1, z        # the end of this step starts the next (no copy)
            for q in range(nvar[v]):
                up[vj[v, q]] = u[vj[v, q]]
            sp = s
        for i in range(nc):
            acc = 0.0
            for j in range(nc):
                acc += Qx[v, sp, i, j] * z[j]
            x_last[v, i] = acc
        tstat[v, 0] = tmax
        tstat[v, 1] = tmin
        tstat[v, 2] = tsum


def step_lanes(LW, aL, bcL, BTL, BTpL, rampq, PL, OxT, OuT, ocT, M00, OxC, OuC, OuCP, ocC,
               vcolL, upL, z0L, x0L, QxL, bank, hcolL, hconstL, ccolL, cconstL, qhL, qcL,
               warm, has_th, c_on, thr_h, thr_d,
               heat, cool, peak_h, peak_c, hrs, dgh, tstat, zs_sum, us_sum, up_sum, cnt,
               x_first, x_last, lane_v, js, nin):  # pragma: no cover - compiled
    """The stepping loop of :func:`step_modal` on SIMD lanes: blocks of ``LW`` variants.

    For groups in one state with at most one thermostat (no switches, no scheduled
    conductances, no window links, modal coordinates) and only sums kept: the same operations
    in the same order as :func:`step_modal`, with the variant innermost so the compiler
    vectorises across variants; the results are bit-identical (tested). Arrays of a block are
    lane-last: ``aL`` (nblocks, nc, LW), ``BTL`` (nblocks, k, nc, LW), ... (each the state-0
    slice of the :class:`thermonet.engine.run.Operators` array named alike, for the varying
    inputs ``js``); pad lanes repeat a variant and are not written (``lane_v`` −1).

    Parameters
    ----------
    LW : int
        Lanes per block.
    aL, bcL : ndarray (nb, nc, LW)
        Modal decay [-] and constant inputs' end coordinates.
    BTL, BTpL : ndarray (nb, k, nc, LW)
        Rows of the varying inputs on this step's and the previous step's value.
    rampq : ndarray (k,) of bool
        Varying inputs that follow a straight line over the step.
    PL : ndarray (nb, nc, LW)
        Row of the thermostat's power [per W].
    OxT, OuT, ocT, M00 : ndarray
        The thermostat node's observed row (nb, nc, LW), (nb, k, LW), constant part (nb, LW)
        [°C] and its end response to 1 W (nb, LW) [K/W].
    OxC, OuC, OuCP, ocC : ndarray
        The comfort node's observed row, its part from the thermostat's power, constant part.
    vcolL : ndarray (nb, k, LW) of int
        Column of each varying input in ``bank``.
    upL : ndarray (nb, k, LW)
        Varying inputs before the first row.
    z0L, x0L : ndarray (nb, nc, LW)
        Start coordinates and start temperatures [°C].
    QxL : ndarray (nb, nc, nc, LW)
        ``x = Qx z``.
    bank : ndarray (n, ncols)
        The group's time series [SI].
    hcolL, hconstL, ccolL, cconstL : ndarray (nb, LW)
        Heating and cooling setpoints [°C]: column or constant.
    qhL, qcL : ndarray (nb, LW)
        Capacities [W].
    warm : int
        Warm-up rows.
    has_th, c_on : bool
        A thermostat; a comfort node.
    thr_h, thr_d : ndarray
        Thresholds [°C] of the comfort node's hours and degree-hours.
    heat, cool, peak_h, peak_c, hrs, dgh, tstat, zs_sum, us_sum, up_sum, cnt, x_first, x_last
        Outputs as in :func:`step_modal` (variant-first).
    lane_v : ndarray (nb, LW) of int
        Variant of each lane (−1: a pad lane).
    js : ndarray (k,) of int
        Input index of each varying input.
    nin : int
        Number of boundary and source inputs (the thermostat's power follows them).
    """
    nb_ = aL.shape[0]
    nc = aL.shape[1]
    nq = BTL.shape[1]
    n = bank.shape[0]
    nth = thr_h.shape[0]
    ndh = thr_d.shape[0]
    for b in numba.prange(nb_):
        z = z0L[b].copy()                 # (nc, LW)
        z1 = np.zeros((nc, LW))
        up = upL[b].copy()                # (nq, LW)
        u = np.zeros((nq, LW))
        P = np.zeros(LW)
        T0 = np.zeros(LW)
        hs = np.zeros(LW)
        cs = np.zeros(LW)
        tmax = np.full(LW, -np.inf)
        tmin = np.full(LW, np.inf)
        tsum = np.zeros(LW)
        zs = np.zeros((nc, LW))
        us = np.zeros((nq, LW))
        ups = np.zeros((nq, LW))
        ps = np.zeros(LW)
        hsum = np.zeros(LW)
        csum = np.zeros(LW)
        pkh = np.zeros(LW)
        pkc = np.zeros(LW)
        hr = np.zeros((nth, LW))
        dg = np.zeros((ndh, LW))
        for k in range(n):
            if k == warm and k > 0:
                for l in range(LW):
                    v = lane_v[b, l]
                    if v < 0:
                        continue
                    for i in range(nc):
                        acc = 0.0
                        for j in range(nc):
                            acc += QxL[b, i, j, l] * z[j, l]
                        x_first[v, i] = acc
            for i in range(nc):
                for l in range(LW):
                    z1[i, l] = aL[b, i, l] * z[i, l] + bcL[b, i, l]
            for q in range(nq):
                for l in range(LW):
                    u[q, l] = bank[k, vcolL[b, q, l]]
                for i in range(nc):
                    for l in range(LW):
                        z1[i, l] += BTL[b, q, i, l] * u[q, l]
                if rampq[q]:
                    for i in range(nc):
                        for l in range(LW):
                            z1[i, l] += BTpL[b, q, i, l] * up[q, l]
            if has_th:
                for l in range(LW):
                    T0[l] = ocT[b, l]
                for i in range(nc):
                    for l in range(LW):
                        T0[l] += OxT[b, i, l] * z1[i, l]
                for q in range(nq):
                    for l in range(LW):
                        T0[l] += OuT[b, q, l] * u[q, l]
                for l in range(LW):
                    hc = hcolL[b, l]
                    cc = ccolL[b, l]
                    hs[l] = bank[k, hc] if hc >= 0 else hconstL[b, l]
                    cs[l] = bank[k, cc] if cc >= 0 else cconstL[b, l]
                    P[l] = clamped_power(T0[l], hs[l], cs[l], M00[b, l], qhL[b, l], qcL[b, l])
                for i in range(nc):
                    for l in range(LW):
                        z1[i, l] += PL[b, i, l] * P[l]
            if k >= warm:
                for i in range(nc):
                    for l in range(LW):
                        zs[i, l] += z[i, l]
                for q in range(nq):
                    for l in range(LW):
                        us[q, l] += u[q, l]
                        ups[q, l] += up[q, l]
                for l in range(LW):
                    ps[l] += P[l]
                    if P[l] > 0.0:
                        hsum[l] += P[l]
                    elif P[l] < 0.0:
                        csum[l] -= P[l]
                    th_ = P[l] if P[l] > 0.0 else 0.0
                    tc_ = -P[l] if P[l] < 0.0 else 0.0
                    if th_ > pkh[l]:
                        pkh[l] = th_
                    if tc_ > pkc[l]:
                        pkc[l] = tc_
                if c_on:
                    for l in range(LW):
                        T0[l] = ocC[b, l]
                    for i in range(nc):
                        for l in range(LW):
                            T0[l] += OxC[b, i, l] * z1[i, l]
                    for q in range(nq):
                        for l in range(LW):
                            T0[l] += OuC[b, q, l] * u[q, l]
                    for l in range(LW):
                        t = T0[l] + OuCP[b, l] * P[l]
                        for q in range(nth):
                            if t > thr_h[q]:
                                hr[q, l] += 1.0
                        for q in range(ndh):
                            if t > thr_d[q]:
                                dg[q, l] += t - thr_d[q]
                        tmax[l] = max(tmax[l], t)
                        tmin[l] = min(tmin[l], t)
                        tsum[l] += t
            for i in range(nc):
                for l in range(LW):
                    z[i, l] = z1[i, l]
            for q in range(nq):
                for l in range(LW):
                    up[q, l] = u[q, l]
        for l in range(LW):
            v = lane_v[b, l]
            if v < 0:
                continue
            for i in range(nc):
                zs_sum[v, 0, i] = zs[i, l]
                acc = 0.0
                for j in range(nc):
                    acc += QxL[b, i, j, l] * z[j, l]
                x_last[v, i] = acc
                if warm == 0:
                    x_first[v, i] = x0L[b, i, l]
            for q in range(nq):
                us_sum[v, 0, js[q]] = us[q, l]
                up_sum[v, 0, js[q]] = ups[q, l]
            if has_th:
                us_sum[v, 0, nin] = ps[l]
                heat[v, 0] = hsum[l]
                cool[v, 0] = csum[l]
            peak_h[v] = pkh[l]
            peak_c[v] = pkc[l]
            cnt[v, 0] = float(n - warm)
            for q in range(nth):
                hrs[v, q] = hr[q, l]
            for q in range(ndh):
                dgh[v, q] = dg[q, l]
            tstat[v, 0] = tmax[l]
            tstat[v, 1] = tmin[l]
            tstat[v, 2] = tsum[l]


def _node_row(i, nc, nu, Yx, Yu):
    """A free node's temperature as ``rx @ x + ru @ u`` (capacitive or massless)."""
    if i < nc:
        rx = np.zeros(nc)
        rx[i] = 1.0
        return rx, np.zeros(nu)
    return Yx[i - nc], Yu[i - nc]


def _reference_window(k, flow, s, x1, u, temps, Ux, uprev, Gam, Yx, Yu, hsp, csp, qh, qc, P):
    """Thermostat powers and window-law flows of one step for :func:`step_reference`."""
    nc, nu = x1.shape[0], u.shape[0]
    m, nfl = len(P), len(flow["a"])
    cols = list(flow["pcols"]) + [None] * nfl
    rows = list(flow["th"]) + list(flow["a"]) + [b if bk == 0 else -1
                                                  for b, bk in zip(flow["b"], flow["bk"],
                                                                   strict=True)]
    T0 = np.zeros(m + 2 * nfl)
    Mc = np.zeros((m + 2 * nfl, m + nfl))
    for r, i in enumerate(rows):
        if i < 0:
            continue
        rx, ru = _node_row(i, nc, nu, Yx[s], Yu[s])
        T0[r] = rx @ x1 + ru @ u
        for c in range(m + nfl):
            if c < m:
                g = Gam[:, cols[c]]
                Mc[r, c] = rx @ g + ru[cols[c]]
            else:
                f = c - m
                ja, jb = flow["ja"][f], flow["jb"][f]
                Mc[r, c] = rx @ Gam[:, ja] + ru[ja]
                if jb >= 0:
                    Mc[r, c] -= rx @ Gam[:, jb] + ru[jb]
    ta0 = temps[flow["a"]]
    tb0 = np.array([temps[b] if bk == 0 else (0.5 * (Ux[k, j] + uprev[j]) if flow["bramp"][f]
                                               else Ux[k, j])
                    for f, (b, bk, j) in enumerate(zip(flow["b"], flow["bk"], flow["bj"],
                                                       strict=True))])
    w = flow["wind"][k].copy()
    if k > 0:
        w = np.where(flow["wramp"], 0.5 * (w + flow["wind"][k - 1]), w)
    fac = flow["fac"][s]
    dG = np.zeros(nfl)
    PQ = np.zeros(m + nfl)
    Tend = np.zeros(m + 2 * nfl)
    law_departure(flow["coef"], fac, ta0, tb0, w, dG)
    coupled_powers(T0, Mc, hsp, csp, qh, qc, dG, ta0, tb0, flow["bk"], m, PQ, Tend)
    ta1 = 0.5 * (ta0 + Tend[m:m + nfl])
    tb1 = np.where(flow["bk"] == 0, 0.5 * (tb0 + Tend[m + nfl:]), tb0)
    law_departure(flow["coef"], fac, ta1, tb1, w, dG)
    coupled_powers(T0, Mc, hsp, csp, qh, qc, dG, ta0, tb0, flow["bk"], m, PQ, Tend)
    return PQ[:m], PQ[m:]


def step_reference(mats, Rx, Ru, Yx, Yu, factor, x0, s0, U, sched, hsp, csp, signals, qh, qc,
                   sw_init, has_off, terms, term_clause, clause_cond, nb, nsrc, warm, ramp,
                   u_before, flow=None):
    """Plain-numpy reference of the stepping loop, in node coordinates, one variant.

    Parameters
    ----------
    mats : dict
        State id → (Φ, Γ, Γ̄) dense step matrices; an input marked in ``ramp`` varies
        linearly from its previous value (``u_before`` before the first row) to this step's,
        weighted ``Γ − Γ̄`` and ``Γ̄`` (first-order hold).
    Rx, Ru, Yx, Yu : dict
        State id → thermostat rows (m × nc, m × nu) and massless-node maps.
    factor : ndarray (ns, nsrc)
        Source factor per state.
    x0 : ndarray (nc,)
        Start state [°C].
    s0 : int
        Its state id (unused but for symmetry with the kernel).
    U : ndarray (n, nu)
        Raw inputs per step: boundary temperatures [°C], source powers [W] before the
        switches' factors (thermostat columns ignored).
    sched : ndarray (n,) of int
        Scheduled-state id per step.
    hsp, csp : ndarray (n, m)
        Setpoints [°C] (NaN = none).
    signals : ndarray (n, nsig)
        Condition signal values per step (in each signal's unit).
    qh, qc : ndarray (m,)
        Capacities [W].
    sw_init, has_off, terms, term_clause, clause_cond
        Switches and their conditions (terms index free nodes).
    nb, nsrc : int
        Numbers of boundaries and sources.
    warm : int
        Steps before the reported ones.
    ramp : ndarray (nb + nsrc,) of bool
        Inputs interpolated linearly over each step (first-order hold).
    u_before : ndarray (nu,)
        Raw inputs before the first row (boundary temperatures [°C], source powers [W]).
    flow : dict, optional
        Window links (as :func:`step_modal` takes them, in free-node indices): ``coef``,
        ``fac`` (ns, nfl), room and far nodes ``a``, ``b``, far kind ``bk``, far boundary
        input ``bj`` and ``bramp``, law sources ``ja``, ``jb``, wind per row ``wind``
        (n, nfl) [m/s] and ``wramp``, thermostat nodes ``th`` and their inputs ``pcols``.

    Returns
    -------
    X : ndarray (n − warm, nc)
        End-of-step capacitive temperatures [°C].
    S : ndarray (n − warm,)
        State ids.
    P : ndarray (n − warm, m)
        Thermostat powers [W].
    x_first : ndarray (nc,)
        Start state of the first reported step [°C].
    Q : ndarray (n − warm, nfl)
        Window links' law heat flows into the room [W].
    """
    n = U.shape[0]
    m = hsp.shape[1]
    nsw = sw_init.shape[0]
    nc = x0.shape[0]
    nfl = 0 if flow is None else len(flow["a"])
    pcols = nb + nsrc + np.arange(m)
    x = x0.copy()
    on = sw_init.copy()
    u0 = U[0].copy()
    u0[pcols] = 0.0
    temps = np.concatenate([x, Yx[0] @ x + Yu[0] @ u0])
    X = np.zeros((n, nc))
    S = np.zeros(n, dtype=np.int64)
    Pout = np.zeros((n, m))
    Qout = np.zeros((n, nfl))
    P = np.zeros(m)
    x_first = x0.copy()
    rcols = np.flatnonzero(ramp)
    uprev = np.asarray(u_before, dtype=float)
    for k in range(n):
        if k == warm:
            x_first = x.copy()
        bits = switch_bits(on, has_off, terms, term_clause, clause_cond, temps, signals[k])
        s = int(sched[k]) * (1 << nsw) + bits
        u = U[k].copy()
        u[pcols] = 0.0
        u[nb:nb + nsrc] *= factor[s]
        Phi, Gam, Gambar = mats[s]
        hold = u.copy()
        hold[rcols] = 0.0
        x1 = (Phi @ x + Gam @ hold + Gambar[:, rcols] @ u[rcols]
              + (Gam - Gambar)[:, rcols] @ uprev[rcols])
        if nfl:
            P, q = _reference_window(k, flow, s, x1, u, temps, U, uprev, Gam, Yx, Yu, hsp[k],
                                     csp[k], qh, qc, P)
            x1 = x1 + Gam[:, pcols] @ P + Gam[:, flow["ja"]] @ q
            u[pcols] = P
            u[flow["ja"]] = q
            far = flow["jb"] >= 0
            x1 = x1 - Gam[:, flow["jb"][far]] @ q[far]
            u[flow["jb"][far]] = -q[far]
            Pout[k] = P
            Qout[k] = q
        elif m:
            control_powers(Rx[s] @ x1 + Ru[s] @ u, Rx[s] @ Gam[:, pcols] + Ru[s][:, pcols],
                           hsp[k], csp[k], qh, qc, P)
            x1 = x1 + Gam[:, pcols] @ P
            u[pcols] = P
            Pout[k] = P
        uprev = U[k].copy()
        x = x1
        X[k] = x
        S[k] = s
        temps = np.concatenate([x, Yx[s] @ x + Yu[s] @ u])
    return X[warm:], S[warm:], Pout[warm:], x_first, Qout[warm:]


if HAVE_NUMBA:
    _column_nb = numba.njit(cache=True, inline="always")(_column)
    control_powers_nb = numba.njit(cache=True)(control_powers)
    coupled_powers_nb = numba.njit(cache=True)(coupled_powers)
    flow_drivers_nb = numba.njit(cache=True)(flow_drivers)
    law_departure_nb = numba.njit(cache=True)(law_departure)
    switch_bits_nb = numba.njit(cache=True)(switch_bits)

    step_modal_nb = numba.njit(parallel=True, cache=True, nogil=True)(step_modal)
    step_lanes_nb = numba.njit(parallel=True, cache=True, nogil=True)(step_lanes)
else:  # pragma: no cover
    step_modal_nb = None
    step_lanes_nb = None
