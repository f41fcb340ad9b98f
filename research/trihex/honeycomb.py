"""Honeycomb lattice: geometry, exact two-point resistances, quadrature.

Conventions (latgreen DESIGN.md, bond length 1): site (m, n, s); s = 0 is the A site of
cell (m, n) at m a1 + n a2, s = 1 the B site at m a1 + n a2 + (a1 + a2)/3, with
a1 = (sqrt3, 0), a2 = (sqrt3/2, 3/2).  Neighbours of A(0,0): B(0,0), B(-1,0), B(0,-1);
of B(m,n): A(m,n), A(m+1,n), A(m,n+1).  z = 3, band [-3, 3].

Positions are handled in "thirds": site (m, n, s) has position (u a1 + v a2)/3 with
(u, v) = (3m + s, 3n + s).  The point group (D6, 12 elements) about the hexagon centre
(u, v) = (-1, -1) maps the lattice to itself; six of its elements exchange A and B.

R(x) means the resistance between A(0,0) and x.  Its symmetry group is the stabiliser of
A(0,0) (C3v, 6 elements: the linear maps g of triangular.point_group() with
g(1,1) = (1,1) mod 3); on the A sublattice also x -> -x (reciprocity + translation), so A
sites have the full 12-element symmetry of the triangular lattice.
Canonical sites: A(m,n) with 0 <= n <= m; B(m,n) with u >= v >= -u/2 in thirds
(the 60-degree wedge between the mirror lines at -30 and +30 degrees).  Extent = m of the
canonical representative (then |n| <= m for both sublattices).

Exact forms (derived in NOTES.md), basis (1, sqrt3/pi):
  R(A(m,n)) = 3 R_tri(m,n)           (H^2 on A = 3 + H_tri, band edge E = 3 -> 6)
  R(B(m,n)) = R_tri(m,n) + R_tri(m+1,n) + R_tri(m,n+1)   (lattice equation at B(m,n))
"""
from __future__ import annotations

from fractions import Fraction

import mpmath

import triangular as tri

Z = 3
BAND = (-3, 3)
_CENTRE = (-1, -1)     # hexagon centre, thirds


def check_site(m: object, n: object, s: object) -> tuple[int, int, int]:
    """Validate a honeycomb site (integers, sublattice index s in {0, 1})."""
    for v in (m, n, s):
        if isinstance(v, bool) or not isinstance(v, int):
            raise ValueError(f"honeycomb site coordinates must be integers, got {(m, n, s)!r}")
    if s not in (0, 1):
        raise ValueError(f"honeycomb sublattice index s must be 0 (A) or 1 (B), got {s!r}")
    return int(m), int(n), int(s)


def thirds(m: int, n: int, s: int) -> tuple[int, int]:
    """Position of a site in units of (a1/3, a2/3): (3m + s, 3n + s)."""
    m, n, s = check_site(m, n, s)
    return 3 * m + s, 3 * n + s


def from_thirds(u: int, v: int) -> tuple[int, int, int]:
    """Inverse of thirds(); ValueError if (u, v)/3 is not a lattice site (hexagon centre)."""
    s = u % 3
    if s not in (0, 1) or (v - u) % 3:
        raise ValueError(f"thirds position {(u, v)} is not a honeycomb site")
    return (u - s) // 3, (v - s) // 3, s


def neighbours(m: int, n: int, s: int) -> list[tuple[int, int, int]]:
    """The three neighbours of a site."""
    m, n, s = check_site(m, n, s)
    if s == 0:
        return [(m, n, 1), (m - 1, n, 1), (m, n - 1, 1)]
    return [(m, n, 0), (m + 1, n, 0), (m, n + 1, 0)]


def point_group() -> list[tuple[tuple[tuple[int, int], tuple[int, int]], bool]]:
    """The 12 point-group elements (about the hexagon centre) as functions on sites.

    Element = (g, exchanges) with g a matrix of triangular.point_group(); it maps the site at
    thirds position x to the site at g (x - c) + c, c = hexagon centre.  `exchanges` tells
    whether A and B are swapped (the odd rotations and three of the mirrors).
    """
    out = []
    for g in tri.point_group():
        img = _apply(g, (0, 0, 0))
        out.append((g, img[2] == 1))
    return out


def _apply(g: tuple, site: tuple[int, int, int]) -> tuple[int, int, int]:
    u, v = thirds(*site)
    x, y = u - _CENTRE[0], v - _CENTRE[1]
    return from_thirds(g[0][0] * x + g[0][1] * y + _CENTRE[0], g[1][0] * x + g[1][1] * y + _CENTRE[1])


def apply(element: tuple[tuple, bool], site: tuple[int, int, int]) -> tuple[int, int, int]:
    """Apply a point_group() element to a site."""
    return _apply(element[0], site)


_STAB = [g for g in tri.point_group()
         if ((g[0][0] + g[0][1] - 1) % 3, (g[1][0] + g[1][1] - 1) % 3) == (0, 0)]


def canonical(m: int, n: int, s: int) -> tuple[int, int, int]:
    """Canonical representative of the site, for the resistance from A(0,0).

    >>> canonical(-1, 0, 1), canonical(0, -1, 1), canonical(-1, 1, 0)
    ((0, 0, 1), (0, 0, 1), (1, 0, 0))
    """
    m, n, s = check_site(m, n, s)
    if s == 0:
        p, q = tri.canonical(m, n)
        return p, q, 0
    u, v = thirds(m, n, s)
    for g in _STAB:
        x = g[0][0] * u + g[0][1] * v
        y = g[1][0] * u + g[1][1] * v
        if x >= y and x + 2 * y >= 0:
            return from_thirds(x, y)
    raise AssertionError("unreachable")  # pragma: no cover


def relative(x: tuple[int, int, int], y: tuple[int, int, int]) -> tuple[int, int, int]:
    """Canonical site c with R(x, y) = R(A(0,0), c), for any two sites.

    If x is a B site a sublattice-exchanging point-group element first maps x to an A
    site; then a lattice translation moves it to A(0,0).
    """
    x, y = check_site(*x), check_site(*y)
    if x[2] == 1:
        e = next(el for el in point_group() if el[1])
        x, y = apply(e, x), apply(e, y)
    return canonical(y[0] - x[0], y[1] - x[1], y[2])


def distance2(m: int, n: int, s: int) -> Fraction:
    """Squared Euclidean distance from A(0,0) (bond length 1): (u^2 + u v + v^2)/3 in thirds."""
    u, v = thirds(m, n, s)
    return Fraction(u * u + u * v + v * v, 3)


def sector_sites(N: int) -> list[tuple[int, int, int]]:
    """Canonical sites of extent <= N, sorted by (m, n, s)."""
    if isinstance(N, bool) or not isinstance(N, int) or N < 0:
        raise ValueError(f"extent N must be a non-negative integer, got {N!r}")
    out = []
    for m in range(N + 1):
        for n in range(-m, m + 1):
            for s in (0, 1):
                if (m, n, s) == canonical(m, n, s):
                    out.append((m, n, s))
    return sorted(out)


def resistance_exact(N: int) -> dict[tuple[int, int, int], tuple[Fraction, Fraction]]:
    """Exact R(A(0,0), x) = a + b sqrt3/pi for all canonical sites x of extent <= N.

    A sites: 3 R_tri (from G_hc(E; A->A') = E G_tri(E^2 - 3) at the band edge E = 3,
    NOTES.md); B sites: mean of the three A neighbours (lattice equation at B), i.e.
    R(B(m,n)) = R_tri(m,n) + R_tri(m+1,n) + R_tri(m,n+1).

    >>> resistance_exact(1)[(0, 0, 1)]   # nearest neighbour 2/z
    (Fraction(2, 3), Fraction(0, 1))
    """
    if isinstance(N, bool) or not isinstance(N, int) or N < 0:
        raise ValueError(f"extent N must be a non-negative integer, got {N!r}")
    T = tri.resistance_exact(N + 2)

    def rt(p: int, q: int) -> tuple[Fraction, Fraction]:
        return T[tri.canonical(p, q)]

    out: dict[tuple[int, int, int], tuple[Fraction, Fraction]] = {}
    for m, n, s in sector_sites(N):
        if s == 0:
            a, b = rt(m, n)
            out[(m, n, 0)] = (3 * a, 3 * b)
        else:
            t = [rt(m, n), rt(m + 1, n), rt(m, n + 1)]
            out[(m, n, 1)] = (sum(x[0] for x in t), sum(x[1] for x in t))
    return out


def lattice_residual(table: dict, m: int, n: int, s: int) -> tuple[Fraction, Fraction]:
    """3 R(x) - sum over the 3 neighbours, from a table keyed by canonical sites."""
    a0, b0 = table[canonical(m, n, s)]
    sa, sb = 3 * a0, 3 * b0
    for y in neighbours(m, n, s):
        a, b = table[canonical(*y)]
        sa -= a
        sb -= b
    return sa, sb


def resistance_quad(m: int, n: int, s: int, dps: int) -> mpmath.mpf:
    """R(A(0,0), (m,n,s)) by quadrature of the honeycomb Brillouin-zone integral

        R = (1/4pi^2) int int 2 [3 - Re(f^{s} e^{-i(m k1 + n k2)})] / (9 - |f|^2) dk1 dk2 ,
        f = 1 + e^{-i k1} + e^{-i k2}  (f^0 := 3 on the A sublattice),

    with 9 - |f|^2 = 2[3 - cos k1 - cos k2 - cos(k1 - k2)].  Here k1 is integrated
    analytically (triangular.py integrates k2), i.e. each cosine term is evaluated through
    triangular.reduced_integral at the mirrored site (n, m), a different 1-D integrand.
    """
    m, n, s = canonical(m, n, s)
    terms = [(m, n)] if s == 0 else [(m, n), (m + 1, n), (m, n + 1)]
    with mpmath.workdps(dps + 5):
        tot = mpmath.fsum(tri.reduced_integral(q, p, dps + 5) for p, q in terms)
        val = 3 * tot if s == 0 else tot
    with mpmath.workdps(dps):
        return +val
