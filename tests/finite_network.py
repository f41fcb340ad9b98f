"""Exact two-point resistances of a finite resistor network (Fractions), for property checks
of finite patches only; it says nothing about the infinite-lattice values."""

from __future__ import annotations

from fractions import Fraction
from typing import Any


def grounded_inverse(nodes: list[Any], edges: list[tuple[Any, Any]]) -> dict[tuple[Any, Any],
                                                                              Fraction]:
    """Inverse M of the Laplacian with nodes[0] grounded (its row and column removed), by
    exact Gauss-Jordan elimination; then R(i, j) = M_ii + M_jj - 2 M_ij."""
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
                A[r] = [x - f * y for x, y in zip(A[r], A[c], strict=True)]
    return {(nodes[r + 1], nodes[c + 1]): A[r][k + c] for r in range(k) for c in range(k)}


def two_point(M: dict[tuple[Any, Any], Fraction], u: Any, v: Any) -> Fraction:
    def g(a: Any, b: Any) -> Fraction:
        return M.get((a, b), Fraction(0))

    return g(u, u) + g(v, v) - 2 * g(u, v)
