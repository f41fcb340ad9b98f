"""Second, independent quadrature for sc at the band edge: the Bessel (continuous-time) form.

    G(6; l,m,n) = int_0^oo e^{-6t} I_l(2t) I_m(2t) I_n(2t) dt

(from 1/(E - eps) = int_0^oo e^{-(E-eps)t} dt and (1/pi) int_0^pi e^{x cos k} cos(p k) dk
= I_p(x), DLMF 10.32.3).  The integrand decays only like (4 pi t)^{-3/2}; the tail is not
truncated but integrated term by term from the asymptotic expansion (DLMF 10.40.1)

    e^{-x} I_v(x) ~ (2 pi x)^{-1/2} sum_k (-1)^k a_k(v) x^{-k},
    a_k(v) = (4v^2 - 1^2)(4v^2 - 3^2)...(4v^2 - (2k-1)^2) / (k! 8^k),

so with x = 2t the product is (4 pi t)^{-3/2} sum_j c_j t^{-j} and
int_T^oo t^{-3/2-j} dt = T^{-1/2-j}/(j + 1/2).  The cut T is chosen so that the smallest
term of the series is below 10^-(dps+5) (the neglected remainder of each Bessel expansion is
exponentially small, of the order of its smallest term, for real x > 0).  [0, T] is done by
mpmath.quad (tanh-sinh) on subintervals.  Error control: an estimate (quad's own error
estimate plus the size of the last tail term), not a bound.
"""
from __future__ import annotations

import mpmath

from cubic import canonical, check_site


def _a(v: int, K: int) -> list:
    """a_0..a_K of DLMF 10.40.1 for order v (exact rationals as mpf at working precision)."""
    out = [mpmath.mpf(1)]
    for k in range(1, K + 1):
        out.append(out[-1] * (4 * v * v - (2 * k - 1) ** 2) / (k * 8))
    return out


def _tail(site, T, K):
    """int_T^oo of the asymptotic product, term by term; returns (value, last term size)."""
    series = []
    for v in site:
        a = _a(v, K)
        # coefficient of t^-k in e^{-2t} I_v(2t) (4 pi t)^{1/2}: (-1)^k a_k / 2^k
        series.append([(-1) ** k * a[k] / mpmath.mpf(2) ** k for k in range(K + 1)])
    c = [mpmath.mpf(0)] * (K + 1)
    p = series[0]
    for s in series[1:]:
        q = [mpmath.mpf(0)] * (K + 1)
        for i in range(K + 1):
            if p[i] == 0:
                continue
            for j in range(K + 1 - i):
                q[i + j] += p[i] * s[j]
        p = q
    c = p
    terms = [c[j] * T ** (-mpmath.mpf(1) / 2 - j) / (j + mpmath.mpf(1) / 2) for j in range(K + 1)]
    return (4 * mpmath.pi) ** (-mpmath.mpf(3) / 2) * mpmath.fsum(terms), abs(terms[-1])


def green_bessel_sc(site, dps: int = 50) -> mpmath.mpf:
    """G(6; site) on sc by the Bessel integral with an asymptotic tail (see module doc)."""
    l, m, n = canonical(*check_site("sc", site))
    if not isinstance(dps, int) or dps < 5:
        raise ValueError(f"dps must be an integer >= 5 (got {dps!r})")
    with mpmath.workdps(dps + 15):
        nu = max(l, m, n)
        # smallest term ~ exp(-4T) for large T; push T beyond nu^2 so the terms decay early
        T = mpmath.mpf(int((dps + 8) * mpmath.log(10) / 3) + nu * nu // 2 + 10)
        K = int(2 * T)

        def f(t):
            x = 2 * t
            return mpmath.exp(-6 * t) * (mpmath.besseli(l, x) * mpmath.besseli(m, x)
                                        * mpmath.besseli(n, x))

        pts = [mpmath.mpf(0)] + [mpmath.mpf(2) ** k for k in range(-1, 10)
                                 if mpmath.mpf(2) ** k < T] + [T]
        head, err = mpmath.quad(f, pts, error=True)
        tail, last = _tail((l, m, n), T, K)
        if err > mpmath.mpf(10) ** (-dps - 3) or last > mpmath.mpf(10) ** (-dps - 3):
            raise ValueError(f"Bessel quadrature did not reach {dps} digits for site {site}")
        return mpmath.mpf(mpmath.nstr(head + tail, dps))   # only dps digits were checked


def resistance_bessel_sc(site, dps: int = 50) -> mpmath.mpf:
    """R(site) = 2 [G(6;0) - G(6;site)] on sc, both by green_bessel_sc."""
    with mpmath.workdps(dps + 15):
        return 2 * (green_bessel_sc((0, 0, 0), dps) - green_bessel_sc(site, dps))
