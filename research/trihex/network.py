"""Exact two-point resistances of a finite resistor network (Fractions), for property checks.

Only used to check solvers on finite patches (Foster's theorem); it says nothing about the
infinite-lattice values.
"""
from __future__ import annotations

from fractions import Fraction


def grounded_inverse(nodes: list, edges: list[tuple]) -> dict:
    """Inverse M of the Laplacian with node nodes[0] grounded (row/column removed).

    R(i, j) = M_ii + M_jj - 2 M_ij with M_{0,.} = 0.  Exact Gauss-Jordan over Fractions.
    """
    idx = {v: i for i, v in enumerate(nodes)}
    n = len(nodes)
    L = [[Fraction(0)] * n for _ in range(n)]
    for u, v in edges:
        i, j = idx[u], idx[v]
        L[i][i] += 1
        L[j][j] += 1
        L[i][j] -= 1
        L[j][i] -= 1
    k = n - 1
    A = [row[1:] + [Fraction(int(r == c)) for c in range(k)] for r, row in enumerate(L[1:])]
    for c in range(k):
        p = next(r for r in range(c, k) if A[r][c] != 0)
        A[c], A[p] = A[p], A[c]
        piv = A[c][c]
        A[c] = [x / piv for x in A[c]]
        for r in range(k):
            if r != c and A[r][c] != 0:
                f = A[r][c]
                A[r] = [x - f * y for x, y in zip(A[r], A[c])]
    M = {}
    for r in range(k):
        for c in range(k):
            M[(nodes[r + 1], nodes[c + 1])] = A[r][k + c]
    return M


def two_point(M: dict, u, v) -> Fraction:
    """R(u, v) from grounded_inverse (the grounded node has zero rows)."""
    g = lambda a, b: M.get((a, b), Fraction(0))
    return g(u, u) + g(v, v) - 2 * g(u, v)
