"""Checks of the exact Euler Riemann solver used as a reference by the
shock-tube tests (tests/reference/exact_euler.py).

External references:
* Toro, *Riemann Solvers and Numerical Methods for Fluid Dynamics*, 3rd ed.,
  Springer 2009, Table 4.3 (star values of tests 1-5, Table 4.1 initial data).
  The tabulated numbers are quoted from memory and were recomputed by an
  independent calculation that agrees with them (methods notes, section 1,
  tags [M] + [C]).
* Sod (1978, J. Comput. Phys. 27, 1) shock tube: wave speeds and positions at
  t = 0.2, and the gamma = 5/3 star state; computed by an independent
  calculation (methods notes, section 1, tag [C]).
* The Rankine-Hugoniot conditions and the isentropic simple-wave relations of
  the Euler equations (Toro 2009, ch. 3-4), checked directly on the sampled
  solution.
"""
import math

import numpy as np
import pytest

from tests.reference.exact_euler import sample, solution, star_state, wave_speeds

GAMMA = 1.4

# Toro (2009) Table 4.1 initial states and Table 4.3 exact star values, from
# memory (methods notes tag [M], recomputed [C]).  Values are strings so that
# the check uses the number of digits shown in the table.
TORO_TABLE_4_3 = [
    # left (rho, u, p), right (rho, u, p), p*, u*, rho*_L, rho*_R, waves
    ((1.0, 0.0, 1.0), (0.125, 0.0, 0.1),
     "0.30313", "0.92745", "0.42632", "0.26557", ("rarefaction", "shock")),
    ((1.0, -2.0, 0.4), (1.0, 2.0, 0.4),
     "0.00189", "0.00000", "0.02185", "0.02185", ("rarefaction", "rarefaction")),
    ((1.0, 0.0, 1000.0), (1.0, 0.0, 0.01),
     "460.894", "19.5975", "0.57506", "5.99924", ("rarefaction", "shock")),
    ((1.0, 0.0, 0.01), (1.0, 0.0, 100.0),
     "46.0950", "-6.19633", "5.99242", "0.57511", ("shock", "rarefaction")),
    ((5.99924, 19.5975, 460.894), (5.99242, -6.19633, 46.0950),
     "1691.64", "8.68975", "14.2823", "31.0426", ("shock", "shock")),
]


def _tolerance(text: str) -> float:
    """Half a unit in the last tabulated digit, or 1e-5 relative (test 5 uses
    rounded input states, so its last digit differs slightly: methods notes)."""
    decimals = len(text.split(".")[1]) if "." in text else 0
    return max(0.5 * 10.0 ** (-decimals), 1e-5 * abs(float(text)))


@pytest.mark.parametrize("case", range(5), ids=[f"toro{k + 1}" for k in range(5)])
def test_star_values_match_toro_table_4_3(case):
    left, right, p, u, rl, rr, waves = TORO_TABLE_4_3[case]
    st = star_state(left, right, GAMMA)
    for name, got, want in (("p*", st.p, p), ("u*", st.u, u),
                            ("rho*_L", st.rho_l, rl), ("rho*_R", st.rho_r, rr)):
        assert abs(got - float(want)) <= _tolerance(want) * (1 + 1e-9), \
            f"Toro test {case + 1}: {name} = {got!r}, Table 4.3 gives {want}"
    assert (st.left_wave, st.right_wave) == waves


def test_sod_wave_speeds_and_positions():
    # Sod (1978) tube, gamma = 1.4; speeds and t = 0.2 positions from the methods
    # notes section 1 (tag [C], independent calculation).
    left, right = (1.0, 0.0, 1.0), (0.125, 0.0, 0.1)
    sp = wave_speeds(left, right, GAMMA)
    assert sp["left_head"] == pytest.approx(-1.183216, abs=1e-6)
    assert sp["left_tail"] == pytest.approx(-0.070273, abs=1e-6)
    assert sp["contact"] == pytest.approx(0.927453, abs=1e-6)
    assert sp["right_shock"] == pytest.approx(1.752156, abs=1e-6)
    for key, x in (("left_head", 0.26336), ("left_tail", 0.48595),
                   ("contact", 0.68549), ("right_shock", 0.85043)):
        assert 0.5 + 0.2 * sp[key] == pytest.approx(x, abs=1e-5)


def test_sod_gamma_five_thirds():
    # Sod tube with gamma = 5/3: methods notes section 1 (tag [C]).
    st = star_state((1.0, 0.0, 1.0), (0.125, 0.0, 0.1), 5.0 / 3.0)
    assert st.p == pytest.approx(0.293945, abs=1e-6)
    assert st.u == pytest.approx(0.841195, abs=1e-6)
    assert st.rho_l == pytest.approx(0.479689, abs=1e-6)
    assert st.rho_r == pytest.approx(0.229806, abs=1e-6)
    sp = wave_speeds((1.0, 0.0, 1.0), (0.125, 0.0, 0.1), 5.0 / 3.0)
    assert sp["right_shock"] == pytest.approx(1.844473, abs=1e-6)


def _euler_flux(rho, u, p, gamma):
    e = p / (gamma - 1.0) + 0.5 * rho * u * u
    return np.array([rho, rho * u, e]), np.array([rho * u, rho * u * u + p, u * (e + p)])


@pytest.mark.parametrize("case", range(5), ids=[f"toro{k + 1}" for k in range(5)])
@pytest.mark.parametrize("gamma", [1.4, 5.0 / 3.0])
def test_sampled_solution_satisfies_jump_and_simple_wave_relations(case, gamma):
    """Shocks obey the Rankine-Hugoniot conditions F(b) - F(a) = S (U(b) - U(a));
    fans conserve entropy p/rho^gamma and the Riemann invariant u +- 2c/(gamma-1)
    (Toro 2009, ch. 3-4: standard theory of the Euler equations)."""
    left, right = TORO_TABLE_4_3[case][:2]
    sp = wave_speeds(left, right, gamma)
    eps = 1e-9
    for side, riem in (("left", +1.0), ("right", -1.0)):
        if f"{side}_shock" in sp:
            s = sp[f"{side}_shock"]
            ua, fa = _euler_flux(*[q[0] for q in sample(left, right, [s - eps], gamma)], gamma)
            ub, fb = _euler_flux(*[q[0] for q in sample(left, right, [s + eps], gamma)], gamma)
            scale = np.abs(fa) + np.abs(fb) + abs(s) * (np.abs(ua) + np.abs(ub))
            assert np.all(np.abs((fb - fa) - s * (ub - ua)) <= 1e-10 * scale)
        else:
            head, tail = sp[f"{side}_head"], sp[f"{side}_tail"]
            xi = np.linspace(min(head, tail) - 1e-3 * abs(head - tail),
                             max(head, tail) + 1e-3 * abs(head - tail), 401)
            rho, u, p = sample(left, right, xi, gamma)
            assert np.all(rho > 0) and np.all(p > 0)
            c = np.sqrt(gamma * p / rho)
            entropy = p / rho ** gamma
            invariant = u + riem * 2.0 * c / (gamma - 1.0)
            assert np.ptp(entropy) <= 1e-10 * entropy.max()
            assert np.ptp(invariant) <= 1e-10 * (np.abs(invariant).max() + c.max())
            # The fan is continuous: the characteristic speed u -+ c equals x/t inside.
            inside = (xi > min(head, tail)) & (xi < max(head, tail))
            lam = u - riem * c
            assert np.allclose(lam[inside], xi[inside], atol=1e-10 * np.abs(xi).max())
            # ... and joins its neighbours continuously at the head and the tail.
            for edge in (head, tail):
                a = np.array(sample(left, right, [edge - eps], gamma))
                b = np.array(sample(left, right, [edge + eps], gamma))
                assert np.allclose(a, b, rtol=1e-6, atol=1e-6 * np.abs(a).max())
        # The contact carries constant u and p across it.
        sc = sp["contact"]
        rho, u, p = sample(left, right, [sc - eps, sc + eps], gamma)
        assert u[0] == pytest.approx(u[1], abs=1e-10 * (1 + abs(u[0])))
        assert p[0] == pytest.approx(p[1], rel=1e-10)


def test_mirror_symmetry():
    # Swapping the states and reversing velocities mirrors the solution: a
    # symmetry of the Euler equations (common practice as a solver check).
    left, right = (1.0, 0.3, 2.0), (0.2, -0.5, 0.15)
    xi = np.linspace(-3.0, 3.0, 1201)
    r1, u1, p1 = sample(left, right, xi)
    r2, u2, p2 = sample((right[0], -right[1], right[2]), (left[0], -left[1], left[2]), -xi)
    # Exactly at a discontinuity the two samplings may take opposite sides.
    ok = np.abs(r1 - r2) < 1e-12
    assert ok.mean() > 0.99
    assert np.allclose(u1[ok], -u2[ok], atol=1e-12) and np.allclose(p1[ok], p2[ok], rtol=1e-12)


def test_solution_and_far_field():
    left, right = TORO_TABLE_4_3[0][:2]
    rho, u, p = solution(left, right, np.array([0.0, 1.0]), 0.2, x0=0.5)
    assert (rho[0], u[0], p[0]) == left
    assert (rho[1], u[1], p[1]) == right


def test_vacuum_generating_data_are_rejected():
    # Toro 2009 eq. 4.40: vacuum forms when 2(c_L + c_R)/(gamma-1) <= u_R - u_L.
    c = math.sqrt(1.4)
    with pytest.raises(ValueError):
        star_state((1.0, -5.0 * c - 0.1, 1.0), (1.0, 5.0 * c + 0.1, 1.0))
