"""Linear solvers of the SIMPLEC loop on systems of a real (wall-graded) mesh pattern, checked against
scipy's sparse direct solve (``scipy.sparse.linalg.spsolve``, SuperLU) and, for ILU(0), its defining
property (Saad 2003, "Iterative Methods for Sparse Linear Systems", 2nd ed., Sec. 10.3.2: the product LU
equals A on A's sparsity pattern)."""
import numpy as np
import pytest
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from geometry.pipes import straight_pipe
from solver.linear import (LINEAR_SOLVERS, CellMatrixPattern, MomentumSolver, OrderedFactorisation, PressureSolver,
                           ilu0_factor, linear_solvers)


@pytest.fixture(scope="module")
def mesh():
    # Graded 1:300 towards the wall, as the wall-resolved meshes are: cell aspect ratios up to ~1e3.
    return straight_pipe(0.5, 0.025, 30, 16, wall_ratio=300.0)


@pytest.fixture(scope="module")
def pattern(mesh):
    return CellMatrixPattern.from_faces(mesh.owner, mesh.neighbour, mesh.n_internal, mesh.n_cells)


def face_conductance(mesh, rng):
    """Diffusion-like face coefficients S/d spread over decades, as on the graded mesh, times noise."""
    n_int = mesh.n_internal
    d = mesh.cell_centre[mesh.neighbour[:n_int]] - mesh.cell_centre[mesh.owner[:n_int]]
    return mesh.face_area[:n_int] / np.linalg.norm(d, axis=1) * rng.uniform(0.5, 2.0, n_int)


def momentum_like(mesh, pattern, rng):
    """Non-symmetric, diagonally dominant: diffusion plus upwind convection, under-relaxed (alpha = 0.8)."""
    k = face_conductance(mesh, rng)
    flux = rng.normal(0.0, 1.0, len(k)) * k
    off = np.column_stack([-k - np.maximum(-flux, 0.0), -k - np.maximum(flux, 0.0)])
    diag = np.bincount(mesh.owner[:mesh.n_internal], -off[:, 0], mesh.n_cells) \
        + np.bincount(mesh.neighbour[:mesh.n_internal], -off[:, 1], mesh.n_cells)
    diag += rng.uniform(0.0, 1.0, mesh.n_cells) * diag.mean()  # boundary and source contributions
    return pattern.matrix(diag / 0.8, off)


def pressure_like(mesh, pattern, k, pinned=False):
    """Symmetric Laplacian of face conductances ``k``; Dirichlet-like diagonal at the last cells, or singular
    (pure Neumann) and pinned."""
    off = np.column_stack([-k, -k])
    diag = np.bincount(mesh.owner[:mesh.n_internal], k, mesh.n_cells) \
        + np.bincount(mesh.neighbour[:mesh.n_internal], k, mesh.n_cells)
    if pinned:
        diag[0] += diag.sum()  # as the flow solver pins a domain with no pressure boundary
    else:
        diag[-16:] += diag[-16:]
    return pattern.matrix(diag, off)


def residual_ratio(A, x, b, x0):
    return np.linalg.norm(b - A @ x) / np.linalg.norm(b - A @ x0)


def test_ilu0_product_equals_matrix_on_its_pattern(mesh, pattern, rng):
    A = momentum_like(mesh, pattern, rng)
    lu = np.empty_like(A.data)
    ilu0_factor(pattern.indptr, pattern.indices, pattern.diag_pos, A.data, lu)
    factors = sp.csr_matrix((lu, pattern.indices, pattern.indptr), shape=A.shape).toarray()
    lower = np.tril(factors, -1) + np.eye(pattern.n)
    upper = np.triu(factors)
    dense = A.toarray()
    on_pattern = dense != 0.0
    assert np.abs((lower @ upper - dense)[on_pattern]).max() <= 1e-12 * np.abs(dense).max()
    assert np.abs(lower @ upper - dense).max() > 1e-6 * np.abs(dense).max()  # 2-D pattern: fill was dropped


@pytest.mark.parametrize("tolerance", [1e-2, 1e-6])
def test_momentum_solver_reaches_its_tolerance(mesh, pattern, rng, tolerance):
    A = momentum_like(mesh, pattern, rng)
    b = rng.normal(size=pattern.n)
    x0 = rng.normal(size=pattern.n)
    solver = MomentumSolver(pattern, tolerance=tolerance)
    x = solver.solve(A, b, x0)
    assert residual_ratio(A, x, b, x0) <= tolerance
    assert solver.stats.fallbacks == 0


def test_momentum_solver_tight_matches_spsolve(mesh, pattern, rng):
    A = momentum_like(mesh, pattern, rng)
    b = rng.normal(size=pattern.n)
    x = MomentumSolver(pattern, tolerance=1e-12).solve(A, b, np.zeros(pattern.n))
    exact = spla.spsolve(A.tocsc(), b)
    assert np.abs(x - exact).max() <= 1e-9 * np.abs(exact).max()


def test_momentum_solver_falls_back_to_direct(mesh, pattern, rng):
    A = momentum_like(mesh, pattern, rng)
    b = rng.normal(size=pattern.n)
    solver = MomentumSolver(pattern, tolerance=1e-14, max_iterations=1)
    x = solver.solve(A, b)
    assert solver.stats.fallbacks == 1
    assert np.allclose(x, spla.spsolve(A.tocsc(), b), rtol=1e-10, atol=0.0)


@pytest.mark.parametrize("pinned", [False, True])
def test_pressure_solver_reuses_its_factorisation(mesh, pattern, rng, pinned):
    k = face_conductance(mesh, rng)
    A = pressure_like(mesh, pattern, k, pinned)
    b = rng.normal(size=pattern.n)
    if pinned:
        b -= b.mean()  # a closed domain's imbalance sums to zero
    solver = PressureSolver(pattern, tolerance=1e-6, refresh_iterations=50)
    first = solver.solve(A, b)
    assert np.abs(first - spla.spsolve(A.tocsc(), b)).max() <= 1e-10 * np.abs(first).max()
    # The next outer iteration's matrix: face coefficients drift by a few per cent.
    drifted = pressure_like(mesh, pattern, k * rng.uniform(0.95, 1.05, len(k)), pinned)
    x = solver.solve(drifted, b)
    assert solver.stats.factorisations == 1 and solver.stats.iterations > 0
    assert np.linalg.norm(b - drifted @ x) <= 1e-6 * np.linalg.norm(b)
    exact = spla.spsolve(drifted.tocsc(), b)
    assert np.abs(x - exact).max() <= 1e-4 * np.abs(exact).max()


def test_pressure_solver_refactorises_when_cg_stalls(mesh, pattern, rng):
    solver = PressureSolver(pattern, tolerance=1e-8, refresh_iterations=3)
    b = rng.normal(size=pattern.n)
    solver.solve(pressure_like(mesh, pattern, face_conductance(mesh, rng)), b)
    other = pressure_like(mesh, pattern, face_conductance(mesh, rng) * rng.uniform(0.1, 10.0, mesh.n_internal))
    x = solver.solve(other, b)  # the first matrix's LU is a poor preconditioner for this one
    assert solver.stats.factorisations == 2
    assert np.abs(x - spla.spsolve(other.tocsc(), b)).max() <= 1e-10 * np.abs(x).max()


def test_pressure_solver_factorises_again_after_operator_changed(mesh, pattern, rng):
    solver = PressureSolver(pattern, tolerance=1e-8, refresh_iterations=50)
    A = pressure_like(mesh, pattern, face_conductance(mesh, rng))
    b = rng.normal(size=pattern.n)
    solver.solve(A, b)
    solver.solve(A, b)  # the same operator: its own LU preconditions it exactly
    assert solver.stats.factorisations == 1 and solver.stats.iterations == 1
    solver.operator_changed()
    other = pressure_like(mesh, pattern, face_conductance(mesh, rng))
    x = solver.solve(other, b)
    assert solver.stats.factorisations == 2 and solver.stats.iterations == 1
    assert np.abs(x - spla.spsolve(other.tocsc(), b)).max() <= 1e-10 * np.abs(x).max()


@pytest.mark.parametrize("kind", sorted(LINEAR_SOLVERS))
def test_every_kind_solves_both_systems(mesh, pattern, rng, kind):
    momentum, pressure = linear_solvers(kind, pattern)
    for solver, A in ((momentum, momentum_like(mesh, pattern, rng)), (pressure, pressure_like(mesh, pattern, face_conductance(mesh, rng)))):
        b = rng.normal(size=pattern.n)
        x0 = np.zeros(pattern.n)
        for _ in range(2):  # the second call exercises any reuse
            x = solver.solve(A, b, x0)
        if solver is pressure:
            solver.operator_changed()  # every pressure solver takes the outer iteration's notice
            x = solver.solve(A, b, x0)
        assert residual_ratio(A, x, b, x0) <= 1e-2


def test_unknown_kind_is_refused(pattern):
    with pytest.raises(ValueError, match="linear_solver"):
        linear_solvers("multigrid", pattern)


def test_matrix_of_another_layout_is_refused(mesh, pattern, rng):
    A = momentum_like(mesh, pattern, rng).tocsc().tocsr()[::-1]
    with pytest.raises(ValueError, match="CellMatrixPattern.matrix"):
        MomentumSolver(pattern).solve(A, np.ones(pattern.n))


@pytest.mark.parametrize("pinned", [False, True])
def test_ordered_factorisation_solves_exactly(mesh, pattern, rng, pinned):
    """The nested-dissection ordering is a permutation of the cells, and the factorisation in it solves the
    pressure-like system to rounding (scipy's spsolve, its own ordering, as the reference)."""
    ordering = OrderedFactorisation(pattern)
    assert np.array_equal(np.sort(ordering.perm), np.arange(pattern.n))
    A = pressure_like(mesh, pattern, face_conductance(mesh, rng), pinned=pinned)
    b = rng.normal(size=pattern.n)
    x = ordering.factorise(A.data)(b)
    reference = spla.spsolve(A.tocsc(), b)
    assert np.abs(x - reference).max() <= 1e-9 * np.abs(reference).max()
    assert np.linalg.norm(A @ x - b) <= 1e-10 * np.linalg.norm(b)
