"""Recycle-loop solvers on problems with known answers (independent closed forms)."""

import numpy as np
import pytest

from teakit.errors import ConvergenceError, InputError
from teakit.process.loop import broyden, wegstein


def linear_problem(B=50, m=4, seed=0):
    # x = A x + b with spectral radius < 1: the answer is (I - A)^-1 b (closed form).
    rng = np.random.default_rng(seed)
    A = rng.uniform(0.0, 1.0, (B, m, m))
    A *= 0.97 / np.abs(np.linalg.eigvals(A)).max(axis=-1)[:, None, None]
    b = rng.uniform(1.0, 2.0, (B, m))
    x_star = np.linalg.solve(np.eye(m)[None] - A, b[..., None])[..., 0]

    def g(x, idx):
        return np.einsum("bij,bj->bi", A[idx], x) + b[idx], {"sum": x.sum(axis=-1)}

    return g, x_star, b


@pytest.mark.parametrize("solver", [wegstein, broyden])
def test_linear_fixed_point(solver):
    g, x_star, b = linear_problem()
    x, info, conv, _it = solver(g, b.copy(), tol=1e-12, max_iter=2000)
    assert conv.all()
    np.testing.assert_allclose(x, x_star, rtol=1e-9)
    assert info["sum"].shape == (50,)


def test_broyden_is_much_faster_than_substitution_on_a_slow_loop():
    # A slow mode (spectral radius 0.97, like inerts with a 3 % purge) takes direct
    # substitution about 750 iterations to 1e-10 (0.97^750 = 1e-10); quasi-Newton with a
    # difference Jacobian needs a handful from a start within 30 % of the answer (steps are
    # capped at half the largest element, so a start far off takes proportionally longer).
    g, x_star, _b = linear_problem(B=10, m=3, seed=2)
    _, _, conv, it = broyden(g, 1.3 * x_star, tol=1e-10, max_iter=50)
    assert conv.all() and it <= 6
    _, _, conv_ws, _ = wegstein(g, 1.3 * x_star, tol=1e-10, max_iter=50, q_bounds=(0.0, 0.0), raise_on_failure=False)
    assert not conv_ws.all()


def test_divergent_members_are_named():
    def g(x, idx):  # x = 2x + 1 diverges from any start under substitution; x* = -1 < 0 is cut
        return 2.0 * x + 1.0, None

    with pytest.raises(ConvergenceError, match="members not converged: 0") as exc:
        wegstein(g, np.ones((3, 2)), max_iter=20)
    assert exc.value.members.tolist() == [0, 1, 2]
    x, _, conv, _ = wegstein(g, np.ones((3, 2)), max_iter=20, raise_on_failure=False)
    assert not conv.any() and np.all(np.isfinite(x))


def test_halt_flag_stops_members():
    g0, _, b = linear_problem(B=4, m=2)

    def g(x, idx):
        gx, _ = g0(x, idx)
        return gx, {"halt": idx == 2}

    _x, _, conv, _ = broyden(g, b.copy(), max_iter=100, raise_on_failure=False)
    assert conv.tolist() == [True, True, False, True]


def test_bad_arguments():
    g, _, b = linear_problem(B=2, m=2)
    with pytest.raises(InputError, match="max_iter must be a whole number from 1 to 10000"):
        wegstein(g, b, max_iter=0)
    with pytest.raises(InputError, match="jacobian must be"):
        broyden(g, b, jacobian="exact")

