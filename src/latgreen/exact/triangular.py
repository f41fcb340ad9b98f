"""Exact two-point resistances of the triangular lattice: R(m, n) = a + b*sqrt(3)/pi.

Coordinates: site (m, n) at m*a1 + n*a2, a1 = (1, 0), a2 = (1/2, sqrt(3)/2); canonical sites
0 <= n <= m (see :mod:`latgreen.lattices.triangular`).  Every form here is ``derived``.

Reduced integral.  R(r) = 2[G(6; 0) - G(6; r)] gives
R(m, n) = (1/4pi^2) int int (1 - cos(m k1 + n k2)) / (3 - cos k1 - cos k2 - cos(k1 - k2)).
With cos k2 + cos(k1 - k2) = rho cos(k2 - k1/2), rho = 2 cos(k1/2), A = 3 - cos k1 and
(1/2pi) int dk2 e^{i n k2} / (A - rho cos(k2 - phi)) = e^{i n phi} t^|n| / sqrt(A^2 - rho^2),
t = (A - sqrt(A^2 - rho^2))/rho, A^2 - rho^2 = (1 - c)(7 - c) = 4 w^2 (3 + w^2)
(c = cos k, w = sin(k/2)):

    R(m, n) = (1/pi) int_0^pi [1 - t^|n| cos((m + n/2) k)] / (2 w sqrt(3 + w^2)) dk.

Axis recurrence (derived).  Let V_m = R(m, 0) = (1/2pi) int_{-pi}^{pi} (1 - cos mk)/sqrt(D) dk,
D = (1 - c)(7 - c) = 7 - 8c + c^2, D' = (8 - 2c) sin k.  sin(mk) sqrt(D) is continuous and
2pi-periodic, so the integral of its derivative vanishes:
    0 = int [2m cos(mk) D + sin(mk) sin k (8 - 2c)] / (2 sqrt D) dk.
Expanding the products of trigonometric functions, the numerator is sum_j alpha_j cos(jk) with
alpha_{m+2} = (m+1)/2, alpha_{m+1} = -(8m+4), alpha_m = 15m, alpha_{m-1} = -(8m-4),
alpha_{m-2} = (m-1)/2, and sum_j alpha_j = 0, so cos(jk) may be replaced by cos(jk) - 1 (each
1/sqrt(D) integral diverges alone, the combination does not), giving sum_j alpha_j V_j = 0:

    (m+1) V_{m+2} - (16m+8) V_{m+1} + 30m V_m - (16m-8) V_{m-1} + (m-1) V_{m-2} = 0,

with V_{-j} = V_j, V_0 = 0.  Seeds: V_1 = 1/3 (2/z by superposition, common practice; also the
lattice equation at the origin) and the elementary integral (1 - cos 2k = 2(1 - c)(1 + c),
then x = 1 + c = 8 sin^2 theta)
    V_2 = (2/pi) int_0^2 sqrt(x/(8 - x)) dx = (2/pi)(4pi/3 - 2 sqrt 3) = 8/3 - 4 sqrt(3)/pi.
Hence V_m = a_m + b_m sqrt(3)/pi with rational a_m, b_m.  The characteristic polynomial
x^4 - 16x^3 + 30x^2 - 16x + 1 = (x - 1)^2 (x^2 - 14x + 1): the coefficients grow like
(7 + 4 sqrt 3)^m = 13.93^m while R ~ ln m, so a + b sqrt(3)/pi cancels catastrophically
(|a_200| ~ 2^752); the evaluator's precision follows the numerators' size.

Filling the sector (the lattice equation 6 R(r) = sum of the six neighbours, r != 0):
* row 1: at (m, 0) the mirror in the a1 axis gives R(m, -1) = R(m-1, 1), R(m+1, -1) = R(m, 1):
  R(m, 1) = [6 R(m,0) - R(m+1,0) - R(m-1,0)]/2 - R(m-1, 1), starting from R(0, 1) = R(1, 0);
* row n+1 (n >= 1), the lattice equation at (m, n) solved for R(m, n+1):
  R(m, n+1) = 6R(m,n) - R(m+1,n) - R(m-1,n) - R(m,n-1) - R(m+1,n-1) - R(m-1,n+1), for
  m = n+1, n+2, ...; the first step uses R(n, n+1) = R(n+1, n) (mirror m <-> n).
Row j needs row j - 1 one site further out, so reaching (m, n) needs the axis up to m + n.
The recurrence reproduces the unique solution of the lattice equations growing at most
logarithmically, seeded only by proven values.  The lattice equation at the diagonal sites
(never used while filling) is checked in the tests.

Arithmetic: the rational parts and the sqrt(3)/pi parts are two independent integer sequences,
each over its own common denominator (built while the axis recurrence divides by m + 1, and
doubled once for the halving in row 1, which is then exact).
"""

from __future__ import annotations

from collections.abc import Iterable
from dataclasses import dataclass
from fractions import Fraction
from math import gcd, lcm

from ..lattices.triangular import canonical_pair
from .forms import ONE, SQRT3_OVER_PI, Constant, ExactForm

BASIS: tuple[Constant, ...] = (ONE, SQRT3_OVER_PI)

# seeds V_0, V_1, V_2 of the two parts (rational part, sqrt(3)/pi part)
_SEEDS = ((Fraction(0), Fraction(1, 3), Fraction(8, 3)), (Fraction(0), Fraction(0), Fraction(-4)))


def axis_part(seeds: tuple[Fraction, Fraction, Fraction], M: int) -> tuple[list[int], int]:
    """(X, L) with V_m = X[m] / L for m = 0..M, by the axis recurrence in integers.

    The common denominator L grows by the factor needed whenever the division by m + 1 is not
    exact; the last four values are rescaled at once, the others at the end.

    >>> X, L = axis_part(_SEEDS[1], 4)
    >>> [Fraction(x, L) for x in X]
    [Fraction(0, 1), Fraction(0, 1), Fraction(-4, 1), Fraction(-48, 1), Fraction(-560, 1)]
    """
    L = lcm(*(s.denominator for s in seeds))
    vals = [int(s * L) for s in seeds][: M + 1]
    scale = [L] * len(vals)
    for m in range(1, M - 1):
        v1 = vals[m - 2] if m >= 2 else vals[1]  # V_{-1} = V_1 (times 0 at m = 1 anyway)
        S = (16 * m + 8) * vals[m + 1] - 30 * m * vals[m] + (16 * m - 8) * vals[m - 1] \
            - (m - 1) * v1
        q, r = divmod(S, m + 1)
        if r:
            f = (m + 1) // gcd(S, m + 1)
            L *= f
            for i in range(max(0, m - 2), m + 2):
                vals[i] *= f
                scale[i] = L
            q = S * f // (m + 1)
        vals.append(q)
        scale.append(L)
    return [v * (L // s) for v, s in zip(vals, scale, strict=True)], L


@dataclass
class Part:
    """One part (rational, or sqrt(3)/pi) of R over the sector: R(m, n) = rows[n][m - n] / den,
    for the kept rows n and n <= m <= M - n."""

    rows: dict[int, list[int]]
    den: int


def sector_part(seeds: tuple[Fraction, Fraction, Fraction], M: int, n_max: int,
                keep: set[int] | None = None) -> Part:
    """Axis to M, then rows 1..n_max by the lattice equation (module docstring).  With
    ``keep``, only those rows are kept (a single far site needs O(M) memory, not O(M^2))."""
    X, L = axis_part(seeds, max(M, 2))
    X = [2 * x for x in X[: M + 1]]  # the halving in row 1 is exact over 2L
    rows = {0: X}
    if n_max >= 1 and M >= 1:
        out = []
        prev = X[1]
        for m in range(1, M):
            twice = 6 * X[m] - X[m + 1] - X[m - 1]
            if twice & 1:  # pragma: no cover - would be a bug in the derivation
                raise ArithmeticError(f"row 1 of the triangular recurrence: odd at m = {m}")
            prev = twice // 2 - prev
            out.append(prev)
        rows[1] = out
    for n in range(1, n_max):
        cur, low = rows[n], rows[n - 1]  # cur[i] = R(n + i, n), low[i] = R(n - 1 + i, n - 1)
        out = []
        prev = cur[1]  # R(n, n + 1) = R(n + 1, n)
        for i in range(1, M - 2 * n):
            prev = 6 * cur[i] - cur[i + 1] - cur[i - 1] - low[i + 1] - low[i + 2] - prev
            out.append(prev)
        rows[n + 1] = out
        if keep is not None and n - 1 not in keep:
            del rows[n - 1]
    if keep is not None:
        rows = {n: r for n, r in rows.items() if n in keep}
    return Part(rows, 2 * L)


class Sector:
    """Exact R(m, n) = a + b sqrt(3)/pi on the canonical sites needed to reach (m, n) with
    m + n <= M and n <= n_max (a table of extent N: M = 2N, n_max = N)."""

    def __init__(self, M: int, n_max: int, keep: set[int] | None = None) -> None:
        self.M, self.n_max, self.keep = M, n_max, keep
        self.a = sector_part(_SEEDS[0], M, n_max, keep)
        self.b = sector_part(_SEEDS[1], M, n_max, keep)

    @classmethod
    def for_extent(cls, extent: int) -> Sector:
        return cls(2 * extent, extent)

    @classmethod
    def for_sites(cls, sites: Iterable[tuple[int, int]]) -> Sector:
        cs = [canonical_pair(m, n) for m, n in sites]
        return cls(max((m + n for m, n in cs), default=0), max((n for _, n in cs), default=0),
                   {n for _, n in cs})

    @property
    def dens(self) -> tuple[int, int]:
        return (self.a.den, self.b.den)

    def nums(self, m: int, n: int) -> tuple[int, int]:
        """Numerators over :attr:`dens` at any site (canonicalised first)."""
        m, n = canonical_pair(m, n)
        if n > self.n_max or m + n > self.M or (self.keep is not None and n not in self.keep):
            raise ValueError(f"site {(m, n)} is outside this sector")
        return (self.a.rows[n][m - n], self.b.rows[n][m - n])

    def form(self, m: int, n: int) -> ExactForm:
        p, q = self.nums(m, n)
        return ExactForm((Fraction(p, self.a.den), Fraction(q, self.b.den)), BASIS)


def reduce_column(nums: list[tuple[int, int]], dens: tuple[int, int]
                  ) -> tuple[list[tuple[int, ...]], tuple[int, int]]:
    """Divide numerators and denominators of a batch by their common factors, so that the
    evaluator's precision follows the batch's own sizes, not the whole table's."""
    ga = gcd(dens[0], *(p for p, _ in nums))
    gb = gcd(dens[1], *(q for _, q in nums))
    return [(p // ga, q // gb) for p, q in nums], (dens[0] // ga, dens[1] // gb)


def resistance_form(m: int, n: int) -> ExactForm:
    """Exact R(m, n) at any site (cost O(n (m + n)) big-integer operations).

    >>> str(resistance_form(2, 1)), str(resistance_form(3, 0)), str(resistance_form(-1, 2))
    ('10*sqrt(3)/pi - 5', '27 - 48*sqrt(3)/pi', '2*sqrt(3)/pi - 2/3')
    """
    return Sector.for_sites([(m, n)]).form(m, n)
