"""Far-field expansion of the square-lattice resistance, with an error term.

With r = sqrt(m^2 + n^2), theta = atan2(n, m):

    pi R = ln r + gamma + (3/2) ln 2                      (Cserti, Am. J. Phys. 68, 896 (2000))
           - cos(4 theta) / (12 r^2)                      (listed with OEIS A355565)
           - [3/40 cos(4 theta) + 5/48 cos(8 theta)] / r^4
           - [51/112 cos(8 theta) + 35/72 cos(12 theta)] / r^6
           + E(r, theta).

The r^-4 and r^-6 coefficients were *identified* by us: a least-squares fit of the exact
values (this package's recurrence, 80 digits) over 100 <= m <= 240 returned them to 9 and
8 digits, and the small rationals above were recognised; the r^-2 coefficient came out of the
same fit unchanged.  The remainder bound |E| <= ERROR_C8 / r^8 is a fitted estimate of the
r^-8 harmonics (their fitted coefficients sum to about 13 in absolute value) with a safety
factor; the test suite checks it against exact values for every octant site with
10 <= r <= 150, and it is only used for r >= MIN_R.  It is an estimate, not a proof, and the
tables say so: the asymptotic method only ever *confirms* digits computed otherwise.
"""

from __future__ import annotations

import mpmath

MIN_R = 10
ERROR_C8 = 30


def resistance_asymptotic(m: int, n: int, digits: int) -> tuple[mpmath.mpf, mpmath.mpf]:
    """(value, error estimate) of the far-field expansion at site (m, n), r >= MIN_R.

    >>> v, e = resistance_asymptotic(40, 30, 30)
    >>> print(mpmath.nstr(v, 12), mpmath.nstr(e, 3))
    1.75993139804 2.44e-13
    """
    r2 = m * m + n * n
    if r2 < MIN_R * MIN_R:
        raise ValueError(f"the far-field expansion is only used for r >= {MIN_R}")
    with mpmath.workdps(digits + 10):
        r = mpmath.sqrt(r2)
        th = mpmath.atan2(n, m)
        c = [mpmath.cos(4 * k * th) for k in range(4)]
        f = mpmath.mpf
        s = (
            mpmath.log(r) + mpmath.euler + f(3) / 2 * mpmath.ln2
            - c[1] / (12 * r**2)
            - (f(3) / 40 * c[1] + f(5) / 48 * c[2]) / r**4
            - (f(51) / 112 * c[2] + f(35) / 72 * c[3]) / r**6
        )
        return s / mpmath.pi, ERROR_C8 / (mpmath.pi * r**8)
