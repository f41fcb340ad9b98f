"""Far-field expansion of the cubic-lattice resistances, with an error estimate.

Near each point k0 of the Brillouin cube where eps = z, z - eps(k0 + q) = alpha q^2 + P4(q) +
P6(q) + O(q^8) (sc: q^2 - sum q_i^4/12 + sum q_i^6/360; bcc: 4q^2 - q^4 + (2/3) sum q_i^4 + ...;
fcc: 4q^2 - q^4/2 + (1/6) sum q_i^4 + ...; such points: sc 1, bcc 4, fcc 2, each with phase 1
on the lattice).  Expanding 1/(alpha q^2 + P4 + P6) and using, for r != 0,
FT[P(q)/|q|^(2n)] = P(-i d/dx) (c_n r^(2n-3)), c_n = Gamma(3/2 - n)/(4^n pi^(3/2) Gamma(n)):

    G(z; r) = a/r + (b + c S)/r^3 + P8(l, m, n)/(den pi r^13) + O(r^-7),
    S = (l^4 + m^4 + n^4)/r^4,   r^2 = l^2 + m^2 + n^2 (bcc, fcc: half-cube-edge units),

    (a, b, c) pi = sc (1/4, -3/32, 5/32), bcc (1/4, 3/16, -5/16), fcc (1/8, 3/128, -5/128),
    P8 = A sum x^8 + B sum_{i!=j} x_i^6 x_j^2 + C sum_{i<j} x_i^4 x_j^4 + D sum x_i^4 x_j^2 x_k^2,
    (A, B, C, D; den) = sc (23, -244, 621, -228; 128), bcc (11, -250, 633, 216; 32),
                        fcc (-37, -22, 1185, -2040; 1024)

(the leading terms agree with v/(4 pi alpha r), v the volume per site 1, 4, 2; P8 was computed
with sympy from the same formula).  R(r) = 2 G(z; 0) - 2 G(z; r).

The remainder O(r^-7) is not bounded rigorously: against the exact forms the remainder of R
times r^7 / 2 stays below 0.55 / 2.2 / 0.14 (sc / bcc / fcc; every canonical site with
r >= 8 and l <= 20, the largest at the smallest r); the error estimate below is
2 ERROR_C7 / r^7 with ERROR_C7 = 1 / 4 / 0.3, and the expansion is only used for
r >= MIN_R (tested over that region).  It only ever
*confirms* digits computed otherwise.
"""

from __future__ import annotations

import flint
import mpmath

MIN_R = 8
ERROR_C7 = {"sc": mpmath.mpf(1), "bcc": mpmath.mpf(4), "fcc": mpmath.mpf("0.3")}
_COEF = {"sc": ((1, 4), (-3, 32), (5, 32)), "bcc": ((1, 4), (3, 16), (-5, 16)),
         "fcc": ((1, 8), (3, 128), (-5, 128))}
_COEF5 = {"sc": (23, -244, 621, -228, 128), "bcc": (11, -250, 633, 216, 32),
          "fcc": (-37, -22, 1185, -2040, 1024)}


def _p8(lattice: str, l: int, m: int, n: int) -> tuple[int, int]:
    A, B, C, D, den = _COEF5[lattice]
    a, b, c = l * l, m * m, n * n
    val = (A * (a**4 + b**4 + c**4)
           + B * (a**3 * (b + c) + b**3 * (a + c) + c**3 * (a + b))
           + C * (a * a * b * b + a * a * c * c + b * b * c * c)
           + D * (a * a * b * c + b * b * a * c + c * c * a * b))
    return val, den


def green_asymptotic(lattice: str, site: tuple[int, int, int], digits: int) -> mpmath.mpf:
    """The three-term far-field value of G(z; site) (site != 0)."""
    l, m, n = site
    (a1, a2), (b1, b2), (c1, c2) = _COEF[lattice]
    with mpmath.workdps(digits + 10):
        r2 = mpmath.mpf(l * l + m * m + n * n)
        r = mpmath.sqrt(r2)
        S = mpmath.mpf(l**4 + m**4 + n**4) / r2**2
        p8, den = _p8(lattice, l, m, n)
        return +((mpmath.mpf(a1) / a2) / (mpmath.pi * r)
                 + (mpmath.mpf(b1) / b2 + mpmath.mpf(c1) / c2 * S) / (mpmath.pi * r**3)
                 + mpmath.mpf(p8) / (den * mpmath.pi * r**13))


def resistance_asymptotic(lattice: str, site: tuple[int, int, int],
                          digits: int) -> tuple[mpmath.mpf, mpmath.mpf]:
    """(value, error estimate) of R(site) by the far-field expansion, r >= MIN_R.

    >>> v, e = resistance_asymptotic("sc", (30, 0, 0), 20)  # our own value
    >>> print(mpmath.nstr(v, 12), mpmath.nstr(e, 3))
    0.500155376583 9.14e-11
    """
    from ..exact.cubic import WATSON_FACTOR, watson

    l, m, n = site
    r2 = l * l + m * m + n * n
    if r2 < MIN_R * MIN_R:
        raise ValueError(f"the far-field expansion is only used for r >= {MIN_R}")
    old = flint.ctx.prec
    try:
        flint.ctx.prec = int((digits + 20) * 3.33) + 20
        g0 = watson(lattice)() / WATSON_FACTOR[lattice]
        g0_text = g0.str(digits + 15, radius=False)
    finally:
        flint.ctx.prec = old
    with mpmath.workdps(digits + 10):
        v = 2 * mpmath.mpf(g0_text) - 2 * green_asymptotic(lattice, site, digits)
        err = 2 * ERROR_C7[lattice] / mpmath.sqrt(r2) ** 7
        return +v, +err
