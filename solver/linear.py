"""Sparse matrices of fixed pattern (one row per cell, one pair of entries per internal face) and their solves."""
from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import scipy.sparse as sp
import scipy.sparse.linalg as spla

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
