"""Engine: sparse method, random networks (hypothesis), ISO 13786 wall convergence."""

import mpmath
import numpy as np
import pandas as pd
import pytest
from helpers_engine import TZ, hourly_weather
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

import thermonet as tn
from thermonet import constructions as cons
from thermonet.errors import NetworkError


def random_network(seed, n_nodes, massless_share=0.3, thermostat=True):
    rng = np.random.default_rng(seed)
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_boundary("deep", temperature=float(rng.uniform(5, 12)), kind="ground")
    names = []
    for i in range(n_nodes):
        cap = 0.0 if rng.random() < massless_share else float(10 ** rng.uniform(2, 8))
        names.append(net.add_node(f"n{i}", kind="air", capacitance=cap))
    # spanning tree to a boundary, then random extra links: always connected
    for i, name in enumerate(names):
        other = "out" if i == 0 else names[int(rng.integers(0, i))]
        net.add_link(other, name, conductance=float(10 ** rng.uniform(-1, 3)),
                     path=str(rng.choice(["opaque", "glazing", "internal"])))
    for _ in range(n_nodes):
        a, b = rng.choice(names + ["out", "deep"], size=2, replace=False)
        if a in ("out", "deep") and b in ("out", "deep"):
            continue
        net.add_link(str(a), str(b), conductance=float(10 ** rng.uniform(-1, 3)),
                     path=str(rng.choice(["ground", "buffer", "internal"])))
    n = 24 * 5
    w = hourly_weather(n, temp_air=rng.uniform(-10, 30, n))
    net.add_source(names[-1], power=pd.Series(rng.uniform(0, 2000, n), index=w.index),
                   path="solar")
    if thermostat:
        net.add_thermostat(names[0], heating_setpoint=19.0, cooling_setpoint=25.0,
                           max_heating_w=float(rng.uniform(100, 5000)))
    return net, w, names


@settings(max_examples=25, deadline=None, suppress_health_check=[HealthCheck.too_slow])
@given(seed=st.integers(0, 10_000), n_nodes=st.integers(1, 12), data=st.data())
def test_random_networks_close_their_balance(seed, n_nodes, data):
    # Invariant of the method (energy conservation): for ANY set of nodes the paths across
    # its boundary, the sources, heating/cooling and storage sum to zero every step.
    net, w, names = random_network(seed, n_nodes)
    res = tn.simulate(net, w, warmup_days=1)
    subset = data.draw(st.lists(st.sampled_from(names), min_size=1, unique=True))
    for freq in (None, "D"):
        b = res.balance(subset, freq=freq)
        scale = b.drop(columns="residual").abs().to_numpy().max()
        # relative to the largest term, with an absolute floor of 1e-9 kWh for sets whose
        # terms are themselves rounding noise (e.g. a massless node in a quiet corner).
        # Measured over 400 of these networks (seeds 0 … 10 000, 1–12 nodes): worst 7.6e-10
        # of the largest term (seed 5037, 3 nodes, per step), with modal forms accepted up to
        # an isothermal defect of 1e-12 (7e-12 had given 3e-9 on seed 55); 1e-8 leaves ~13
        assert np.abs(b["residual"].to_numpy()).max() <= 1e-8 * scale + 1e-9


@settings(max_examples=15, deadline=None)
@given(seed=st.integers(0, 10_000))
def test_random_invalid_inputs_raise_documented_errors(seed):
    rng = np.random.default_rng(seed)
    net = tn.Network()
    net.add_boundary("out", temperature=0.0)
    net.add_node("a", capacitance=1.0)
    bad = rng.choice([-1.0, np.nan, np.inf, -np.inf, -1e-9])
    kind = rng.integers(0, 4)
    with pytest.raises((NetworkError, TypeError)):
        if kind == 0:
            net.add_link("a", "out", conductance=float(bad), path="x")
        elif kind == 1:
            net.add_node("b", capacitance=float(bad))
        elif kind == 2:
            net.add_airflow("out", "a", flow_m3h=float(bad), path="x")
        else:
            net.add_source("a", power=float(bad) if not np.isfinite(bad) else None, path="x")


def test_sparse_method_agrees_with_exact():
    # The CF rational exponential (Trefethen, Weideman & Schmelzer 2006) against the exact
    # modal step on random stiff networks with massless nodes and a thermostat.
    for seed in range(4):
        net, w, _ = random_network(seed, 10)
        a = tn.simulate(net, w, method="exact")
        b = tn.simulate(net, w, method="sparse", sparse_tol=1e-9)
        np.testing.assert_allclose(a.temperatures, b.temperatures, atol=1e-6)
        np.testing.assert_allclose(a.heating, b.heating, atol=1e-4 * (1 + a.heating.max()))
        assert b.worst_residual() < 1e-9
        assert b.info["exp_error_bound"] <= 1e-9


@pytest.mark.parametrize("seed", [11, 12, 13])
def test_sparse_free_running_march_agrees_with_exact(seed):
    # The compiled free-running march of the sparse method (no thermostat, no switch) against
    # the exact modal step, on random stiff networks with massless nodes; balances close.
    net, w, names = random_network(seed, 14, thermostat=False)
    a = tn.simulate(net, w, method="exact", warmup_days=1, interpolate=())
    b = tn.simulate(net, w, method="sparse", sparse_tol=1e-9, warmup_days=1, interpolate=())
    np.testing.assert_allclose(a.temperatures, b.temperatures, atol=1e-6)
    np.testing.assert_allclose(a.mean_temperatures, b.mean_temperatures, atol=1e-6)
    # outdoor air interpolated between labels: the sparse step applies the exponential to the
    # departure from a ramp's particular solution, whose offset on heavy, weakly linked nodes
    # (C/G of days) reaches ~1e4 K, so its relative error 1e-11 shows as ~1e-7 K at the end
    # of a step and, through C·ΔT/h in the step-mean equation, ~1e-3 K in the means
    a = tn.simulate(net, w, method="exact", warmup_days=1)
    b = tn.simulate(net, w, method="sparse", sparse_tol=1e-9, warmup_days=1)
    np.testing.assert_allclose(a.temperatures, b.temperatures, atol=1e-6)
    np.testing.assert_allclose(a.mean_temperatures, b.mean_temperatures, atol=2e-3)
    assert b.worst_residual() < 1e-9
    sub = names[: len(names) // 2]
    bal = b.balance(sub, freq="D")
    # measured ≤ 2.0e-13 of the largest daily term over 30 seeds; 1e-11: a margin of ~50
    assert np.abs(bal["residual"]).max() <= 1e-11 * bal.drop(columns="residual").abs().max().max()


@pytest.mark.parametrize("interpolate", [(), None])
def test_sparse_compiled_march_equals_the_general_loop(interpolate, monkeypatch):
    # Twin test: the compiled free march (pole solves interleaved, step means solved a block
    # of steps at a time) against the general sparse loop (one step at a time, the same
    # factors) on the same random stiff networks with massless nodes, held and interpolated
    # outdoor air; both meet the same equations, so they agree to rounding.
    from thermonet.engine import sparse

    for seed in (11, 12):
        net, w, _ = random_network(seed, 14, thermostat=False)
        opts = dict(method="sparse", sparse_tol=1e-9, warmup_days=1, interpolate=interpolate)
        fast = tn.simulate(net, w, **opts)
        monkeypatch.setattr(sparse, "COMPILED_FREE_MARCH", False)
        loop = tn.simulate(net, w, **opts)
        monkeypatch.setattr(sparse, "COMPILED_FREE_MARCH", True)
        scale = max(1.0, float(np.abs(loop.temperatures.to_numpy()).max()))
        # interpolated air: both apply the exponential to the departure from a ramp's
        # particular solution, offset by up to ~1e4 K on heavy, weakly linked nodes (see the
        # test above), so rounding there is ~1e-12 K·1e4 at the end of a step and more in the
        # means (C·ΔT/h); measured 6e-10 and 5e-7 K on seed 12 (scale 30 K)
        t_tol, m_tol = (1e-11, 1e-9) if interpolate == () else (1e-9, 1e-6)
        np.testing.assert_allclose(fast.temperatures, loop.temperatures, rtol=0,
                                   atol=t_tol * scale)
        np.testing.assert_allclose(fast.mean_temperatures, loop.mean_temperatures, rtol=0,
                                   atol=m_tol * scale)
        assert fast.worst_residual() < 1e-9 and loop.worst_residual() < 1e-9


@pytest.mark.parametrize("seed", [3, 4, 5])
def test_sparse_steady_start_equals_the_dense_one(seed, monkeypatch):
    # Twin test: the steady start of a large network factorises its conductance matrix with
    # SuperLU (run.SPARSE_START); forced on these small random networks (massless nodes,
    # a thermostat with a capacity limit) it must give the dense LU's start to rounding.
    from thermonet.engine import run

    net, w, _ = random_network(seed, 14)
    opts = dict(warmup_days=0, interpolate=())
    monkeypatch.setattr(run, "SPARSE_START", 0)
    sparse_start = tn.simulate(net, w, **opts)
    monkeypatch.setattr(run, "SPARSE_START", 10**9)
    dense_start = tn.simulate(net, w, **opts)
    scale = max(1.0, float(np.abs(dense_start.temperatures.to_numpy()).max()))
    np.testing.assert_allclose(sparse_start.temperatures, dense_start.temperatures, rtol=0,
                               atol=1e-9 * scale)
    assert sparse_start.worst_residual() < 1e-9


def test_sparse_rational_error_bound():
    # The CF rational approximation of e^s on s ≤ 0 (Trefethen, Weideman & Schmelzer 2006,
    # BIT 46, 653–670): its uniform error falls geometrically, about 9.28^−n (the CF
    # singular value; a least-squares fit of the residues is within a small factor of it).
    # Checked here on points the fit never saw.
    from thermonet.engine.sparse import DEGREES, rational_exp

    s = -np.concatenate([np.logspace(-9, 9, 3001), np.linspace(0.0, 60.0, 1237)])
    for n in DEGREES:
        z, c, r_inf, bound = rational_exp(n)
        assert len(z) == n // 2 and (z.imag > 0).all()
        r = r_inf + 2 * np.real(np.sum(c[None, :] / (s[:, None] - z[None, :]), axis=1))
        assert np.abs(r - np.exp(s)).max() <= bound + 1e-15   # + rounding of the sum
        assert bound <= max(4 * 9.28 ** (-n), 1e-13)   # floor: rounding of the sum


def test_iso13786_wall_refined_converges_to_transfer_matrix():
    # ISO 13786:2017 transfer-matrix method (thermonet.constructions, itself checked against
    # the semi-infinite analytic limit in test_constructions) vs the wall simulated as an RC
    # chain under a 24 h sinusoid: decrement factor and time shift converge as the wall is
    # refined. Inside air held at 0 °C, outside air 10 cos ωt; inside surface flux measured.
    wall = cons.Construction("heavy", [cons.Layer("gypsum_plaster_1300", 0.015),
                                       cons.Layer("concrete_2200", 0.20),
                                       cons.Layer("mineral_wool", 0.10),
                                       cons.Layer("brick_clay", 0.01)])
    dyn = cons.dynamic_characteristics(wall)
    step = 600.0
    n = int(8 * 86400 / step)
    idx = pd.date_range("2025-06-01 00:10", periods=n, freq="10min", tz=TZ)
    om = 2 * np.pi / 86400
    t_mid = (np.arange(n) + 0.5) * step
    w = pd.DataFrame({"temp_air": 10 * np.cos(om * t_mid)}, index=idx)
    errors = []
    for frac in (1.0, 1 / 3, 1 / 8):
        chain = cons.rc_chain(wall, fraction_of_penetration_depth=frac)
        net = tn.Network()
        net.add_boundary("in", temperature=0.0)
        net.add_boundary("out", temperature="temp_air")
        nodes = [net.add_node(f"w{i}", kind="mass", capacitance=c)
                 for i, c in enumerate(chain.capacitances)]
        net.add_link("in", nodes[0], conductance=1 / 0.13, path="si")
        for i, g in enumerate(chain.conductances):
            net.add_link(nodes[i], nodes[i + 1], conductance=g, path="wall")
        net.add_link(nodes[-1], "out", conductance=1 / 0.04, path="se")
        res = tn.simulate(net, w, warmup_days=5)
        q = -res.flows.iloc[:, 0].to_numpy()[-144 * 2:]  # heat into the room [W/m²]
        t = t_mid[-144 * 2:]
        a, b = np.linalg.lstsq(np.column_stack([np.cos(om * t), np.sin(om * t)]), q,
                               rcond=None)[0]
        f = np.hypot(a, b) / (10 * dyn.u_value)
        lag_h = (np.arctan2(b, a) / om / 3600) % 24
        errors.append((abs(f - dyn.decrement_factor), abs(lag_h - dyn.time_shift)))
    assert errors[0][0] > errors[1][0] > errors[2][0]
    assert errors[2][0] < 0.01 * dyn.decrement_factor
    assert errors[2][1] < 0.1  # hours


def test_relinearised_radiation_matches_stefan_boltzmann_exchange():
    # Grey two-surface exchange Q = σ(T_a⁴ − T_b⁴)/R_tot (Stefan–Boltzmann law; Incropera,
    # Fundamentals of Heat and Mass Transfer, §13.3). Linearised at 20 °C the link is far off
    # for hot surfaces; re-linearised daily at the mean surface temperature it agrees closely
    # (linearisation error ~ (ΔT / 2T_m)²).
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("air", kind="air", capacitance=1e5)
    net.add_node("hot", kind="surface", capacitance=2e4)
    net.add_node("cold", kind="surface", capacitance=2e4)
    net.add_link("air", "hot", conductance=20, path="internal")
    net.add_link("air", "cold", conductance=20, path="internal")
    net.add_link("cold", "out", conductance=30, path="glazing")
    net.add_source("hot", power=3000, path="internal")
    rad = net.add_radiation("hot", "cold", area=10, path="internal")
    w = hourly_weather(24 * 20, temp_air=5.0)
    sigma = 5.670374419e-8
    r_tot = (2 * 0.1 / 0.9 + 1) / 10  # (1−ε)/(εA) twice + 1/(A F)

    def mismatch(res):
        T = res.temperatures.iloc[-1] + 273.15
        exact = sigma * (T["hot"] ** 4 - T["cold"] ** 4) / r_tot
        return abs(res.flows[rad].iloc[-1] - exact) / exact

    fixed = tn.simulate(net, w)
    relin = tn.simulate(net, w, relinearise="D")
    assert mismatch(fixed) > 0.2
    assert mismatch(relin) < 0.005
    b = relin.balance_w(list(net.nodes))
    assert b["residual"].abs().max() < 1e-9 * b.drop(columns="residual").abs().to_numpy().max()
    assert relin.info["states"] > 1


# ------------------------------------------------------------ stiff networks, ZOH matrices
def _stiff_chain_matrices(seed, n=6):
    """K, E, C of a random chain with capacitances over 9 decades (well posed)."""
    rng = np.random.default_rng(seed)
    C = 10 ** rng.uniform(-1, 8, n)
    g = 10 ** rng.uniform(-1, 4, n + 1)
    K = np.zeros((n, n))
    E = np.zeros((n, 3))            # two boundaries, one source
    for i in range(n + 1):          # link i joins node i-1 and node i (ends: boundaries)
        a, b = i - 1, i
        for x in (a, b):
            if 0 <= x < n:
                K[x, x] += g[i]
        if 0 <= a < n and b < n:
            K[a, b] -= g[i]
            K[b, a] -= g[i]
    E[0, 0] = g[0]
    E[n - 1, 1] = g[n]
    E[n // 2, 2] = 1.0
    return K, E, C


@pytest.mark.parametrize("seed", [0, 1, 2])
def test_doubling_matches_van_loan_expm(seed):
    # Reference: the augmented-matrix exponential of Van Loan (1978, IEEE TAC 23(3),
    # 395–404), computed with scipy.linalg.expm (Al-Mohy & Higham 2009), on a network that
    # is mildly stiff so that expm itself is accurate. Φ, Γ, Φ̄ = (1/h)∫Φ, Γ̄ = (1/h)∫∫Φ B.
    from scipy.linalg import expm

    from thermonet.engine.discretise import zoh_doubling

    K, E, C = _stiff_chain_matrices(seed, n=5)
    K *= 1e-3                         # keep ‖hA‖ moderate for the reference
    E[:, :2] *= 1e-3                  # (boundary columns are conductances too)
    h = 3600.0
    n, nu = E.shape
    A = -K / C[:, None]
    B = E / C[:, None]
    big = np.zeros((2 * n + nu, 2 * n + nu))
    big[:n, :n] = A * h
    big[:n, n:2 * n] = np.eye(n) * h
    big[n:2 * n, 2 * n:] = B * h
    X = expm(big)
    Phi_ref = X[:n, :n]
    J1 = X[:n, n:2 * n]               # ∫₀^h e^{sA} ds
    J2B = X[:n, 2 * n:]               # ∫₀^h ∫₀^s e^{rA} dr ds B
    # one more integral, J₃B = ∫∫∫ e^{rA} B, from the same construction evaluated with
    # mpmath at 40 digits (scipy's expm of this larger block matrix is only good to ~1e-9)
    big3 = np.zeros((3 * n + nu, 3 * n + nu))
    big3[:n, :n] = A * h
    big3[:n, n:2 * n] = np.eye(n) * h
    big3[n:2 * n, 2 * n:3 * n] = np.eye(n) * h
    big3[2 * n:3 * n, 3 * n:] = B * h
    with mpmath.workdps(40):
        X3 = mpmath.expm(mpmath.matrix(big3.tolist()))
        J3B = np.array([[float(X3[i, 3 * n + j]) for j in range(nu)] for i in range(n)])
    Phi, Gam, Phibar, Gambar, Gam3 = zoh_doubling(K, E, C, h, nb=2)
    assert np.allclose(Phi, Phi_ref, rtol=1e-11, atol=1e-13)
    assert np.allclose(Gam, J1 @ B, rtol=1e-11, atol=1e-13)
    assert np.allclose(Phibar, J1 / h, rtol=1e-11, atol=1e-13)
    assert np.allclose(Gambar, J2B / h, rtol=1e-11, atol=1e-13)
    assert np.allclose(Gam3, J3B / h**2, rtol=1e-11, atol=1e-13)


@pytest.mark.parametrize("seed", [3, 4])
def test_doubling_agrees_with_modal_form_and_keeps_uniform_temperature(seed):
    # Two independent constructions of the same exact step must agree; and with all
    # boundaries at one temperature nothing changes: rows of [Φ, Γ_b] sum to 1 (the
    # isothermal invariant the doubling enforces by construction, GTH 1985).
    from thermonet.engine.discretise import Discretised, modal_form, zoh_doubling

    K, E, C = _stiff_chain_matrices(seed)
    h = 900.0
    lam, Q, W = modal_form(K, E, C)
    n = len(C)
    d = Discretised(h=h, nb=2, C=C[None], K=K[None, None], E=E[None, None],
                    Yx=np.zeros((1, 1, 0, n)), Yu=np.zeros((1, 1, 0, 3)), lam=lam[None, None],
                    Q=Q[None, None], W=W[None, None], dense=np.zeros((1, 1), bool))
    mats = zoh_doubling(K, E, C, h, nb=2)
    Phi, Gam, Phibar, Gambar, _ = mats
    for ref, got in zip(d.matrices(0, 0), mats, strict=True):
        assert np.allclose(got, ref, rtol=1e-8, atol=1e-10)
    assert np.abs(Phi.sum(axis=1) + Gam[:, :2].sum(axis=1) - 1).max() < 1e-14
    assert np.abs(Phibar.sum(axis=1) + Gambar[:, :2].sum(axis=1) - 1).max() < 1e-12


def test_phi2_large_arguments():
    # (x − 1 + e^{−x})/x² has no cancellation for x ≥ 1, so the direct formula is a
    # reference there; for huge x it tends to 1/x (and x² would overflow beyond 1e154)
    from thermonet.engine.discretise import phi2

    x = np.array([1.0001, 1.5, 3.0, 10.0, 1e3, 1e6, 1e12])
    assert np.allclose(phi2(x), (x - 1 + np.exp(-x)) / x**2, rtol=1e-14, atol=0)
    huge = np.array([1e160, 1e300])
    assert np.allclose(phi2(huge), 1 / huge, rtol=1e-14)
    # continuous across the switch-over points 1e-2 and 1
    for x0 in (1e-2, 1.0):
        lo, hi = phi2(np.array([x0 * (1 - 1e-12), x0 * (1 + 1e-12)]))
        assert abs(hi - lo) < 1e-12


def test_heated_building_starts_at_its_setpoint():
    # With constant weather and a thermostat, the start state is the steady state with the
    # thermostat acting, so from the very first step the heating power is U·A·ΔT exactly
    # (steady conduction through series resistances; Incropera et al. 2007, §3.1).
    w = hourly_weather(48, temp_air=-5.0)
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=5e5)
    net.add_node("wall", capacitance=2e7)
    net.add_link("out", "wall", conductance=30.0, path="opaque")
    net.add_link("wall", "room", conductance=120.0, path="internal")
    net.add_airflow("out", "room", flow_m3h=60.0, path="infiltration")
    net.add_thermostat("room", heating_setpoint=20.0)
    res = tn.simulate(net, w, warmup_days=0)
    ua = 1 / (1 / 30.0 + 1 / 120.0) + 60.0 * 1200.0 / 3600.0
    assert np.allclose(res.heating.to_numpy(), ua * 25.0, rtol=1e-12)
    assert np.allclose(res.temperatures["room"].to_numpy(), 20.0, atol=1e-10)
    # the same start in the sparse method
    sp_ = tn.simulate(net, w, warmup_days=0, method="sparse", sparse_tol=1e-10)
    assert np.allclose(sp_.heating.to_numpy(), ua * 25.0, rtol=1e-8)


def test_options_a_method_ignores_are_named_and_diagnostics():
    w = hourly_weather(24, temp_air=0.0)
    net = tn.Network()
    net.add_boundary("out", temperature="temp_air")
    net.add_node("room", kind="air", capacitance=1e5)
    net.add_link("out", "room", conductance=10.0, path="opaque")
    with pytest.warns(UserWarning, match="sparse_tol= is ignored by method='exact'"):
        tn.simulate(net, w, method="exact", sparse_tol=1e-8)
    with pytest.warns(UserWarning, match="kernel='numpy' is ignored by method='sparse'"):
        tn.simulate(net, w, method="sparse", kernel="numpy")
    with pytest.raises(ValueError, match="sparse_tol must be"):
        tn.simulate(net, w, method="sparse", sparse_tol=-1.0)
    with pytest.raises(ValueError, match="kernel must be"):
        tn.simulate(net, w, kernel="gpu")
    d = tn.simulate(net, w).diagnostics()
    assert d["method"] == "exact" and d["steps"] == 24 and d["doubling_states"] == 0
    assert d["worst_residual"] < 1e-12
