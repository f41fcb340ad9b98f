"""Far-field expansion of G(z; r) at the band edge (derivation in NOTES.md, section F).

    G(z; r) = a / r + (b + c S) / r^3 + P8(l,m,n) / (den pi r^13) + O(r^-7),
    S = (l^4 + m^4 + n^4) / r^4,
    r^2 = l^2 + m^2 + n^2 (bcc, fcc: units of half the cube edge),

    sc:  a = 1/(4 pi),  b = -3/(32 pi),  c = 5/(32 pi)
    bcc: a = 1/(4 pi),  b = 3/(16 pi),   c = -5/(16 pi)
    fcc: a = 1/(8 pi),  b = 3/(128 pi),  c = -5/(128 pi)

obtained from z - eps(k) = alpha k^2 + P4(k) + P6(k) + O(k^8) near each point where
eps = z and FT[P(q)/|q|^(2n)] = P(-i d/dr) (c_n r^(2n-3)), c_n = Gamma(3/2-n)/(4^n pi^(3/2)
Gamma(n)) (r != 0); P8 (the r^-5 term) was computed with sympy (NOTES.md F).  The remainder
is not bounded rigorously; see NOTES.md F and the tests for the observed sizes.
"""
from __future__ import annotations

import mpmath

from cubic import check_lattice, check_site

# (a, b, c) as multiples of 1/pi
_COEF = {"sc": (mpmath.mpf(1) / 4, -mpmath.mpf(3) / 32, mpmath.mpf(5) / 32),
         "bcc": (mpmath.mpf(1) / 4, mpmath.mpf(3) / 16, -mpmath.mpf(5) / 16),
         "fcc": (mpmath.mpf(1) / 8, mpmath.mpf(3) / 128, -mpmath.mpf(5) / 128)}
_COEF_Q = {"sc": ((1, 4), (-3, 32), (5, 32)),
           "bcc": ((1, 4), (3, 16), (-5, 16)),
           "fcc": ((1, 8), (3, 128), (-5, 128))}


# r^-5 term: (A sum x^8 + B sum_{i!=j} x_i^6 x_j^2 + C sum_{i<j} x_i^4 x_j^4
#             + D sum_i x_i^4 x_j^2 x_k^2) / (den pi r^13)     (NOTES.md F)
_COEF5 = {"sc": (23, -244, 621, -228, 128),
          "bcc": (11, -250, 633, 216, 32),
          "fcc": (-37, -22, 1185, -2040, 1024)}


def _p8(lattice: str, l: int, m: int, n: int) -> tuple[int, int]:
    A, B, C, D, den = _COEF5[lattice]
    a, b, c = l * l, m * m, n * n
    val = (A * (a ** 4 + b ** 4 + c ** 4)
           + B * (a ** 3 * (b + c) + b ** 3 * (a + c) + c ** 3 * (a + b))
           + C * (a * a * b * b + a * a * c * c + b * b * c * c)
           + D * (a * a * b * c + b * b * a * c + c * c * a * b))
    return val, den


def green_asymptotic(lattice: str, site, dps: int = 20, terms: int = 3) -> mpmath.mpf:
    """Far-field value of G(z; site): a/r + (b + c S)/r^3 [+ P8/(den pi r^13)].

    terms = 2: remainder O(r^-5); terms = 3 (default): remainder O(r^-7).
    """
    check_lattice(lattice)
    l, m, n = check_site(lattice, site)
    if (l, m, n) == (0, 0, 0):
        raise ValueError("the far-field expansion is not defined at r = 0")
    if terms not in (2, 3):
        raise ValueError("terms must be 2 or 3")
    (a1, a2), (b1, b2), (c1, c2) = _COEF_Q[lattice]
    with mpmath.workdps(dps + 10):
        r2 = mpmath.mpf(l * l + m * m + n * n)
        r = mpmath.sqrt(r2)
        S = mpmath.mpf(l ** 4 + m ** 4 + n ** 4) / r2 ** 2
        pi = mpmath.pi
        v = (mpmath.mpf(a1) / a2) / (pi * r) + (mpmath.mpf(b1) / b2
                                               + mpmath.mpf(c1) / c2 * S) / (pi * r ** 3)
        if terms == 3:
            p8, den = _p8(lattice, l, m, n)
            v += mpmath.mpf(p8) / (den * pi * r ** 13)
        return v


def resistance_asymptotic(lattice: str, site, dps: int = 20) -> mpmath.mpf:
    """R(r) = 2 G(z;0) - 2 G_asymptotic(r) + O(r^-7), G(z;0) from the Watson constant."""
    from cubic import green_edge_origin
    g0 = green_edge_origin(lattice, dps + 10)
    with mpmath.workdps(dps + 10):
        return 2 * mpmath.mpf(g0.str(dps + 8, radius=False)) - 2 * green_asymptotic(
            lattice, site, dps)
