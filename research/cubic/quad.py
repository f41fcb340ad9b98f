"""Independent high-precision quadrature for the cubic lattice Green functions.

Method (derived in NOTES.md, section B): in
    G(E; l,m,n) = pi^-3 int_{[0,pi]^3} cos(l k1) cos(m k2) cos(n k3) / (E - eps(k)) d^3k
the innermost integral is done in closed form (Gradshteyn & Ryzhik 3.613.2),
    (1/pi) int_0^pi cos(p w) / (A - B cos w) dw = rho^p / s,
    s = sqrt(A - B) sqrt(A + B),  rho = B / (A + s),
valid for A off the segment [-|B|, |B|] (the branch of s that behaves like A at infinity
makes |rho| < 1).  The remaining 2-D integral has, at the band edge E = z, an integrable
1/|k| singularity at a corner (the points where eps(k) = z).  In polar coordinates about that
corner the Jacobian r cancels it: the integrand becomes analytic on the closed domain, so a
product Gauss-Legendre rule converges exponentially.  Symmetries used:

* sc:  A = E - 2c1 - 2c2, B = 2 (k3 inner);  domain [0,pi]^2, corner (0,0).
* bcc: A = E, B = 8 c1 c2 (k3 inner); the integrand is invariant under k1 -> pi - k1 and
  k2 -> pi - k2 (a factor (-1)^(l+n), resp. (-1)^(m+n), = 1 on bcc sites), so
  G = (4/pi^2) int_{[0,pi/2]^2}, corner (0,0).
* fcc: A = E - 4 c1 c3, B = 4 (c1 + c3) (k2 inner); invariant under (k1, k3) -> (pi-k1, pi-k3)
  (factor (-1)^(l+m+n) = 1), so G = (2/pi^2) int over the triangle k1 + k3 <= pi, corner (0,0).

A - B is formed from 1 - cos x = 2 sin^2(x/2) so that nothing cancels near the corner.
Error control: the rule is applied with n and 2n nodes per dimension (n doubling until the
two agree to the requested digits plus guard digits); the returned value is the finer one,
rounded to the digits requested.  This is an estimate, not a proven bound.
"""
from __future__ import annotations

from functools import lru_cache

import gmpy2
import mpmath
from gmpy2 import mpc, mpfr

from cubic import Z, check_lattice, check_site

_LOG2_10 = 3.3219280948873626


@lru_cache(maxsize=32)
def _gl_nodes(degree: int, prec: int) -> tuple[tuple[str, str], ...]:
    """Gauss-Legendre nodes/weights on [0, 1] (3*2^(degree-1) points) as decimal strings."""
    with mpmath.workprec(prec):
        g = mpmath.calculus.quadrature.GaussLegendre(mpmath.mp)
        nodes = g.calc_nodes(degree, prec)
        return tuple(((mpmath.nstr((x + 1) / 2, int(prec / _LOG2_10) + 5),
                       mpmath.nstr(w / 2, int(prec / _LOG2_10) + 5)) for x, w in nodes))


def _nodes(degree: int, prec: int) -> list[tuple[mpfr, mpfr]]:
    return [(mpfr(x), mpfr(w)) for x, w in _gl_nodes(degree, prec)]


def _one_minus_cos(x):
    s = gmpy2.sin(x / 2)
    return 2 * s * s


def _csqrt(x):
    if isinstance(x, mpc):
        return gmpy2.sqrt(x)
    return gmpy2.sqrt(x) if x >= 0 else gmpy2.sqrt(mpc(x))


def _inner(A, AmB, ApB, B, p: int):
    """rho^p / s for the closed-form inner integral (see module docstring)."""
    s = _csqrt(AmB) * _csqrt(ApB)
    if p == 0:
        return 1 / s
    rho = B / (A + s)
    return rho ** p / s


def _cheb(c, a: int):
    """cos(a k) = T_a(cos k) by the three-term recurrence (stable for |c| <= 1)."""
    if a == 0:
        return 1
    t0, t1 = 1, c
    for _ in range(a - 1):
        t0, t1 = t1, 2 * c * t1 - t0
    return t1


def _integrand(lattice: str, E, dE, k1, k2, site, site0=None):
    """Reduced 2-D integrand F(k1, k2) (or F_site0 - F_site when site0 is given).

    dE = E - z (exact zero at the band edge, which keeps A - B free of cancellation).
    For fcc the pair (k1, k2) stands for (k1, k3).  1 - cos k = 2 sin^2(k/2).
    """
    h1, h2 = gmpy2.sin(k1 / 2), gmpy2.sin(k2 / 2)
    u1, u2 = 2 * h1 * h1, 2 * h2 * h2
    c1, c2 = 1 - u1, 1 - u2
    if lattice == "sc":
        A = E - 2 * c1 - 2 * c2
        B = mpfr(2)
        AmB = dE + 2 * (u1 + u2)
        ApB = A + B
        a, b, p = site
    elif lattice == "bcc":
        A = E
        B = 8 * c1 * c2
        AmB = dE + 8 * (u1 + c1 * u2)
        ApB = A + B
        a, b, p = site
    else:  # fcc: (k1, k3) outer, k2 inner
        A = E - 4 * c1 * c2
        B = 4 * (c1 + c2)
        AmB = dE + 4 * (2 * u1 + 2 * u2 - u1 * u2)
        ApB = A + B
        a, p, b = site

    def f(a, b, p):
        return _inner(A, AmB, ApB, B, p) * _cheb(c1, a) * _cheb(c2, b)

    if site0 is None:
        return f(a, b, p)
    if lattice == "fcc":
        a0, p0, b0 = site0
    else:
        a0, b0, p0 = site0
    return f(a0, b0, p0) - f(a, b, p)


def _polar_rule(lattice: str, E, dE, site, site0, degree: int, prec: int):
    """Product Gauss-Legendre rule in polar coordinates about the singular corner."""
    pi = gmpy2.const_pi()
    nodes = _nodes(degree, prec)
    total = 0
    if lattice == "fcc":
        # triangle k1 + k3 <= pi, theta in [0, pi/2], r <= pi / (cos t + sin t); weight 2/pi^2
        pieces = [(mpfr(0), pi / 2, lambda c, s: pi / (c + s))]
        factor = 2 / pi ** 2
    else:
        side = pi if lattice == "sc" else pi / 2
        pieces = [(mpfr(0), pi / 4, lambda c, s: side / c),
                  (pi / 4, pi / 2, lambda c, s: side / s)]
        factor = (1 if lattice == "sc" else 4) / pi ** 2
    for t0, t1, rmax in pieces:
        dt = t1 - t0
        for xt, wt in nodes:
            t = t0 + dt * xt
            c, s = gmpy2.cos(t), gmpy2.sin(t)
            R = rmax(c, s)
            acc = 0
            for xr, wr in nodes:
                r = R * xr
                acc += wr * r * _integrand(lattice, E, dE, r * c, r * s, site, site0)
            total += wt * dt * R * acc
    return factor * total


def _energy(lattice: str, E) -> tuple[object, object]:
    """Parse an energy (string / int / Fraction / mpmath number / complex) to (E, E - z)."""
    z = Z[lattice]
    if E is None:
        return mpfr(z), mpfr(0)
    if isinstance(E, float):
        raise ValueError("energies must be given exactly (str, int, Fraction), not as float")
    prec = gmpy2.get_context().precision
    with mpmath.workprec(prec + 10):
        c = mpmath.mpmathify(E)
        d = int(prec / _LOG2_10) + 5
        re_s, im_s = mpmath.nstr(mpmath.re(c), d), mpmath.nstr(mpmath.im(c), d)
    if mpmath.im(c) != 0:
        e = mpc(mpfr(re_s), mpfr(im_s))
        return e, e - z
    x = mpfr(re_s)
    lo, hi = {"sc": (-6, 6), "bcc": (-8, 8), "fcc": (-4, 12)}[lattice]
    if lo <= x < hi:
        raise ValueError(f"real energy {E} lies inside the {lattice} band [{lo}, {hi}]: "
                         "the quadrature handles the upper band edge and energies off the band")
    return x, x - z


def _adaptive(lattice, E, site, site0, dps, factor=1):
    prec = int((dps + 15) * _LOG2_10)
    with gmpy2.context(gmpy2.get_context(), precision=prec):
        Ev, dE = _energy(lattice, E)
        prev = None
        degree = 5 if dps <= 30 else (6 if dps <= 65 else 7)
        tol = mpfr(10) ** (-(dps + 3))
        while degree <= 8:
            val = _polar_rule(lattice, Ev, dE, site, site0, degree, prec)
            if prev is not None and abs(val - prev) <= tol * max(abs(val), mpfr(1) / 1000):
                return _to_mpmath(val * factor, dps), degree
            prev = val
            degree += 1
    raise ValueError(f"polar Gauss-Legendre rule did not reach {dps} digits for {lattice} "
                     f"site {site} (E = {E})")


def _to_mpmath(x, dps):
    """Round to `dps` significant digits (only those were checked; RULES 7)."""
    with mpmath.workdps(dps + 10):
        if isinstance(x, mpc):
            v = mpmath.mpc(str(x.real), str(x.imag))
            return mpmath.mpc(mpmath.nstr(v.real, dps), mpmath.nstr(v.imag, dps))
        return mpmath.mpf(mpmath.nstr(mpmath.mpf(str(x)), dps))


def green_quad(lattice: str, site, dps: int = 50, E=None) -> mpmath.mpf:
    """G(E; site) by the reduced 2-D polar Gauss-Legendre quadrature (see module docstring).

    E = None means the upper band edge E = z.  Other admissible energies: real E outside
    the band, or complex E (given as str / Fraction / mpmath number).  Returns an mpmath
    number rounded to `dps` significant digits (the digits checked by the n-vs-2n rule; the
    internal value usually agrees with the exact forms to ~10 more digits).
    """
    check_lattice(lattice)
    site = check_site(lattice, site)
    if not isinstance(dps, int) or dps < 5:
        raise ValueError(f"dps must be an integer >= 5 (got {dps!r})")
    val, _ = _adaptive(lattice, E, site, None, dps)
    return val


def green_edge_quad(lattice: str, site, dps: int = 50) -> mpmath.mpf:
    """G(z; site) at the band edge E = z by the polar Gauss-Legendre quadrature."""
    return green_quad(lattice, site, dps)


def resistance_quad(lattice: str, site, dps: int = 50) -> mpmath.mpf:
    """R(r) = 2 [G(z; 0) - G(z; r)], integrating the difference of the integrands.

    The difference is bounded near the corner (the 1/|k| singularity cancels), which is why
    resistances converge faster than G itself.
    """
    check_lattice(lattice)
    site = check_site(lattice, site)
    if not isinstance(dps, int) or dps < 5:
        raise ValueError(f"dps must be an integer >= 5 (got {dps!r})")
    if site == (0, 0, 0):
        return mpmath.mpf(0)
    val, _ = _adaptive(lattice, None, site, (0, 0, 0), dps, factor=2)
    return val
