"""Sparse matrices of fixed pattern (one row per cell, one pair of entries per internal face) and their solves."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pymetis
import scipy.sparse as sp
import scipy.sparse.linalg as spla

from .jit import jit
from .kernels import scatter_matrix


@dataclass(frozen=True, eq=False)
class CellMatrixPattern:
    """CSR pattern of a cell-to-cell operator; ``*_pos`` map coefficients to CSR data slots."""

    indptr: np.ndarray
    indices: np.ndarray
    diag_pos: np.ndarray
    pn_pos: np.ndarray
    np_pos: np.ndarray
    n: int

    @classmethod
    def from_faces(cls, owner: np.ndarray, neighbour: np.ndarray, n_int: int, n_cells: int):
        p, q = owner[:n_int], neighbour[:n_int]
        rows = np.concatenate([np.arange(n_cells), p, q])
        cols = np.concatenate([np.arange(n_cells), q, p])
        tag = np.arange(1, len(rows) + 1, dtype=np.float64)
        m = sp.csr_matrix((tag, (rows, cols)), shape=(n_cells, n_cells))
        m.sort_indices()
        slot = np.empty(len(rows), dtype=np.int64)
        slot[m.data.astype(np.int64) - 1] = np.arange(len(rows))
        return cls(m.indptr.copy(), m.indices.copy(), slot[:n_cells], slot[n_cells:n_cells + n_int],
                   slot[n_cells + n_int:], n_cells)

    def matrix(self, diag: np.ndarray, off: np.ndarray) -> sp.csr_matrix:
        data = np.empty(len(self.indices))
        scatter_matrix(diag, off, self.diag_pos, self.pn_pos, self.np_pos, data)
        return sp.csr_matrix((data, self.indices, self.indptr), shape=(self.n, self.n))


def solve_direct(matrix: sp.csr_matrix, rhs: np.ndarray | list[np.ndarray]):
    """Sparse LU (SuperLU, COLAMD ordering); several right-hand sides share one factorisation."""
    lu = spla.splu(matrix.tocsc(), permc_spec="COLAMD")
    if isinstance(rhs, list):
        return [lu.solve(b) for b in rhs]
    return lu.solve(rhs)


class OrderedFactorisation:
    """Sparse LU of SPD matrices of one pattern, in one fill-reducing ordering computed once for the pattern.

    The ordering is METIS nested dissection (Karypis & Kumar 1998, SIAM J. Sci. Comput. 20:359 [from
    memory]) of the cell adjacency graph; SuperLU then factorises the permuted matrix in its given order
    (symmetric mode, diagonal pivots). Measured on the demo's pressure-correction matrix at level fine
    (26812 cells): 57 ms a factorisation against 96 ms with SuperLU ordering each matrix itself by minimum
    degree, for 3 % more fill; building the ordering costs 0.17 s once per solve.
    """

    def __init__(self, pattern: CellMatrixPattern):
        rows = np.repeat(np.arange(pattern.n), np.diff(pattern.indptr))
        off_diagonal = rows != pattern.indices
        counts = np.bincount(rows[off_diagonal], minlength=pattern.n)
        adjacency = pymetis.CSRAdjacency(np.concatenate([[0], np.cumsum(counts)]), pattern.indices[off_diagonal])
        self.perm = np.asarray(pymetis.nested_dissection(adjacency)[0], dtype=np.int64)
        # the permuted matrix's CSC structure, and where each CSR data slot of the pattern goes in it
        tag = sp.csr_matrix((np.arange(1, len(pattern.indices) + 1, dtype=np.float64), pattern.indices,
                             pattern.indptr), shape=(pattern.n, pattern.n))
        permuted = tag[self.perm][:, self.perm].tocsc()
        permuted.sort_indices()
        self.slot = permuted.data.astype(np.int64) - 1
        self.indptr, self.indices, self.n = permuted.indptr, permuted.indices, pattern.n

    def factorise(self, data: np.ndarray):
        """A solve function x = A^-1 b for the matrix of this pattern with CSR data ``data``."""
        matrix = sp.csc_matrix((data[self.slot], self.indices, self.indptr), shape=(self.n, self.n))
        lu = spla.splu(matrix, permc_spec="NATURAL", diag_pivot_thresh=0.0, options={"SymmetricMode": True})
        perm = self.perm

        def solve(b: np.ndarray) -> np.ndarray:
            x = np.empty_like(b)
            x[perm] = lu.solve(b[perm])
            return x
        return solve


# --- Iterative solvers for the SIMPLEC outer loop ------------------------------------------------------------
# The outer iteration only needs each linear system solved loosely: the converged answer is fixed by the
# discrete equations' residuals, not by the inner tolerance (which only changes the path to it).


@jit
def ilu0_factor(indptr, indices, diag_pos, data, lu):
    """ILU(0) of a CSR matrix with sorted indices, in place into ``lu``: L (unit, below diag) and U share the
    pattern of A; fill outside the pattern is dropped (Saad 2003, Algorithm 10.4, IKJ variant)."""
    lu[:] = data
    for i in range(len(indptr) - 1):
        end = indptr[i + 1]
        for kk in range(indptr[i], diag_pos[i]):
            k = indices[kk]
            lu[kk] /= lu[diag_pos[k]]
            factor = lu[kk]
            p = kk + 1
            for jj in range(diag_pos[k] + 1, indptr[k + 1]):
                j = indices[jj]
                while p < end and indices[p] < j:
                    p += 1
                if p < end and indices[p] == j:
                    lu[p] -= factor * lu[jj]


@jit
def ilu0_apply(indptr, indices, diag_pos, lu, rhs, out):
    """z = (LU)^-1 r by forward then backward substitution on the ILU(0) factors."""
    n = len(indptr) - 1
    for i in range(n):
        s = rhs[i]
        for kk in range(indptr[i], diag_pos[i]):
            s -= lu[kk] * out[indices[kk]]
        out[i] = s
    for i in range(n - 1, -1, -1):
        s = out[i]
        for kk in range(diag_pos[i] + 1, indptr[i + 1]):
            s -= lu[kk] * out[indices[kk]]
        out[i] = s / lu[diag_pos[i]]


@jit
def csr_matvec(indptr, indices, data, x, out):
    """out = A x for a CSR matrix."""
    for i in range(len(indptr) - 1):
        s = 0.0
        for kk in range(indptr[i], indptr[i + 1]):
            s += data[kk] * x[indices[kk]]
        out[i] = s


@dataclass
class SolveStats:
    """Counters of one solver over a run: calls, Krylov iterations, factorisations, direct fallbacks."""

    calls: int = 0
    iterations: int = 0
    factorisations: int = 0
    fallbacks: int = 0


class DirectSolver:
    """Every system by sparse LU (:func:`solve_direct`); the reference the iterative solvers are checked against."""

    def __init__(self, pattern: CellMatrixPattern):
        self.stats = SolveStats()

    def solve(self, matrix: sp.csr_matrix, rhs: np.ndarray, guess: np.ndarray | None = None) -> np.ndarray:
        self.stats.calls += 1
        self.stats.factorisations += 1
        return solve_direct(matrix, rhs)

    def operator_changed(self):
        """Nothing is kept between calls."""


class MomentumSolver:
    """ILU(0)-preconditioned BiCGSTAB (van der Vorst 1992) for the non-symmetric momentum systems.

    Warm-started from ``guess`` (the current velocity field): it solves A dx = r0 = b - A x0 until
    ||r|| <= ``tolerance`` ||r0||, then returns x0 + dx. If that fails within ``max_iterations`` it falls back
    to :func:`solve_direct`, so a hard system costs time, never accuracy.
    """

    def __init__(self, pattern: CellMatrixPattern, tolerance: float = 1e-2, max_iterations: int = 200):
        self.pattern, self.tolerance, self.max_iterations = pattern, tolerance, max_iterations
        self.lu = np.empty(len(pattern.indices))
        self.stats = SolveStats()

    def solve(self, matrix: sp.csr_matrix, rhs: np.ndarray, guess: np.ndarray | None = None) -> np.ndarray:
        pt = self.pattern
        _check_layout(pt, matrix)
        self.stats.calls += 1
        x0 = np.zeros(pt.n) if guess is None else np.asarray(guess, dtype=np.float64)
        r0 = rhs - _matvec(pt, matrix.data, x0)
        ilu0_factor(pt.indptr, pt.indices, pt.diag_pos, matrix.data, self.lu)
        dx, iterations = _bicgstab(pt, matrix.data, self.lu, r0, self.tolerance, self.max_iterations)
        self.stats.iterations += iterations
        if dx is None:
            self.stats.fallbacks += 1
            return solve_direct(matrix, rhs)
        return x0 + dx


def _check_layout(pt: CellMatrixPattern, matrix: sp.csr_matrix):
    """The kernels read ``matrix.data`` in the pattern's CSR slots: refuse any other layout."""
    if not (matrix.shape == (pt.n, pt.n) and np.array_equal(matrix.indptr, pt.indptr)
            and np.array_equal(matrix.indices, pt.indices)):
        raise ValueError("matrix must be built by CellMatrixPattern.matrix of the solver's own pattern")


def _matvec(pt: CellMatrixPattern, data: np.ndarray, x: np.ndarray) -> np.ndarray:
    out = np.empty(pt.n)
    csr_matvec(pt.indptr, pt.indices, data, x, out)
    return out


def _bicgstab(pt, data, lu, b, tolerance, max_iterations):
    """Right-preconditioned BiCGSTAB for A x = b from x = 0; returns (x, iterations), x None on failure."""
    x = np.zeros(pt.n)
    target = tolerance * np.linalg.norm(b)
    if target == 0.0:
        return x, 0
    r = b.copy()
    r_hat = b.copy()
    p, v = np.zeros(pt.n), np.zeros(pt.n)
    p_hat, s_hat = np.empty(pt.n), np.empty(pt.n)
    rho_old = alpha = omega = 1.0
    for k in range(1, max_iterations + 1):
        rho = r_hat @ r
        if rho == 0.0 or omega == 0.0:
            return None, k
        p = r + (rho / rho_old) * (alpha / omega) * (p - omega * v)
        ilu0_apply(pt.indptr, pt.indices, pt.diag_pos, lu, p, p_hat)
        v = _matvec(pt, data, p_hat)
        rv = r_hat @ v
        if rv == 0.0:
            return None, k
        alpha = rho / rv
        s = r - alpha * v
        x += alpha * p_hat
        if np.linalg.norm(s) <= target:
            return x, k
        ilu0_apply(pt.indptr, pt.indices, pt.diag_pos, lu, s, s_hat)
        t = _matvec(pt, data, s_hat)
        tt = t @ t
        omega = (t @ s) / tt if tt > 0.0 else 0.0
        x += omega * s_hat
        r = s - omega * t
        rho_old = rho
        if np.linalg.norm(r) <= target:
            return x, k
    return None, max_iterations


class PressureSolver:
    """Preconditioned conjugate gradients (Hestenes & Stiefel 1952) for the SPD pressure-correction system.

    Preconditioner: the sparse LU of an earlier outer iteration's pressure matrix, kept while its coefficients
    drift slowly. Factorised in symmetric mode (diagonal pivots, symmetric ordering: the pattern's nested
    dissection, :class:`OrderedFactorisation`), it is an SPD operator, as CG requires. When CG does not
    reach ``tolerance`` ||b|| within ``refresh_iterations`` iterations, the current matrix is factorised and
    solved directly, and that factorisation preconditions the next calls.
    The outer iteration holds its operator for several iterations (``SolverSettings.pressure_operator_lag``)
    and calls :meth:`operator_changed` when it rebuilds it; in between CG converges in one iteration.
    """

    def __init__(self, pattern: CellMatrixPattern, tolerance: float = 1e-3, refresh_iterations: int = 10):
        self.pattern, self.tolerance, self.refresh_iterations = pattern, tolerance, refresh_iterations
        self.lu = None  # solve function of the held factorisation
        self.ordering = None  # built at the first factorisation
        self.stats = SolveStats()

    def solve(self, matrix: sp.csr_matrix, rhs: np.ndarray, guess: np.ndarray | None = None) -> np.ndarray:
        """Solve from zero (``guess`` is ignored: a pressure correction starts from nothing)."""
        _check_layout(self.pattern, matrix)
        self.stats.calls += 1
        if self.lu is not None:
            x, iterations = _pcg(self.pattern, matrix.data, self.lu, rhs, self.tolerance,
                                 self.refresh_iterations)
            self.stats.iterations += iterations
            if x is not None:
                return x
        self.stats.factorisations += 1
        if self.ordering is None:
            self.ordering = OrderedFactorisation(self.pattern)
        self.lu = self.ordering.factorise(matrix.data)
        return self.lu(rhs)

    def operator_changed(self):
        """The caller has rebuilt the operator: factorise the next matrix instead of trying the old LU on it."""
        self.lu = None


def _pcg(pt, data, precondition, b, tolerance, max_iterations):
    """Preconditioned CG for A x = b from x = 0; returns (x, iterations), x None if not converged."""
    x = np.zeros(pt.n)
    target = tolerance * np.linalg.norm(b)
    if target == 0.0:
        return x, 0
    r = b.copy()
    z = precondition(r)
    p = z.copy()
    rz = r @ z
    for k in range(1, max_iterations + 1):
        q = _matvec(pt, data, p)
        pq = p @ q
        if not pq > 0.0:
            return None, k
        alpha = rz / pq
        x += alpha * p
        r -= alpha * q
        if np.linalg.norm(r) <= target:
            return x, k
        z = precondition(r)
        rz_new = r @ z
        p = z + (rz_new / rz) * p
        rz = rz_new
    return None, max_iterations


LINEAR_SOLVERS = {
    "direct": (DirectSolver, DirectSolver),
    "iterative": (MomentumSolver, PressureSolver),
}


def linear_solvers(kind: str, pattern: CellMatrixPattern):
    """(momentum solver, pressure solver) of a ``LINEAR_SOLVERS`` kind, each with ``solve(A, b, guess)``."""
    if kind not in LINEAR_SOLVERS:
        raise ValueError(f"linear_solver must be one of {sorted(LINEAR_SOLVERS)}, got {kind!r}")
    momentum, pressure = LINEAR_SOLVERS[kind]
    return momentum(pattern), pressure(pattern)
