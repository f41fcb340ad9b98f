"""Lattice Green's functions of the triangular and honeycomb lattices at any energy.

G(E; r) = <0|(E - H)^-1|r>, hopping +1; a real E inside the band means E + i0
(so Im G(E; 0) <= 0).  DOS rho(E) = -Im G(E + i0; 0)/pi.

Triangular closed form at the origin (derived in NOTES.md; equivalent to Horiguchi,
J. Math. Phys. 13, 1411 (1972)).  With s = sqrt(E + 3), c+- = (E + 2)/2 +- s:

  G(E;0) = (1/pi) int_{-1}^{1} dc / sqrt((1-c)(1+c)) / S(c),   S(c)^2 = 4 (c - c+)(c - c-)

  * off the band (E complex, or real E > 6 or E < -3):  Carlson's form (DLMF 19.29.4)
        G = R_F(0, +-(s+1)^3 (s-3)/4, +-(s-1)^3 (s+3)/4) / (pi sigma)
    with the signs/branch factor sigma fixed rigorously from S(-1) = E + 2 (see _offband);
  * -2 < E < 6:   G = [K(k^2) - i K(1 - k^2)] / (2 pi sqrt s),  k^2 = (s-1)^3 (s+3)/(16 s);
  * -3 < E < -2:  G = -2 [2 K(k^2) + i K(1 - k^2)] / (pi sqrt((3-s)(s+1)^3)),
                  k^2 = (1-s)^3 (s+3) / ((3-s)(s+1)^3);
  K(m) the complete elliptic integral with parameter m (DLMF 19.2.8).
  E = -3, -2 (van Hove) and 6 are logarithmic singularities: ValueError.

Honeycomb: G_hc(E; A(0,0) -> A(m,n)) = E G_tri(E^2 - 3; m, n) because H_hc^2 restricted
to A equals 3 + H_tri; for real E inside the band E + i0 maps to E^2 - 3 + i0 sign(E).
"""
from __future__ import annotations

from fractions import Fraction
import re

import mpmath
from flint import acb, arb, ctx

import triangular as tri


# ----------------------------------------------------------------------------- energies

def energy(E: object) -> tuple[Fraction, Fraction]:
    """Parse an energy: int, Fraction, decimal string ("4.1" is 41/10), a complex string
    such as "1/2+3/10j" or "-2.5-0.1j", or a pair (re, im) of those.  Floats are refused."""
    if isinstance(E, tuple) and len(E) == 2:
        re_, im_ = (energy(x) for x in E)
        if re_[1] or im_[1]:
            raise ValueError(f"energy pair must have real parts, got {E!r}")
        return re_[0], im_[0]
    if isinstance(E, bool) or isinstance(E, (float, complex)):
        raise ValueError(f"energy must be exact (int, Fraction or string), not {type(E).__name__}")
    if isinstance(E, (int, Fraction)):
        return Fraction(E), Fraction(0)
    if isinstance(E, str):
        t = E.replace(" ", "")
        mt = re.fullmatch(r"([+-]?[0-9./]+(?:[eE][+-]?\d+)?)?(?:([+-][0-9./]*(?:[eE][+-]?\d+)?)j)?", t)
        try:
            if mt and t and (mt.group(1) or mt.group(2) is not None):
                r = Fraction(mt.group(1)) if mt.group(1) else Fraction(0)
                g = mt.group(2)
                i = Fraction(0) if g is None else (Fraction(g + "1") if g in "+-" else Fraction(g))
                return r, i
            if t.endswith("j") and mt is None:
                return Fraction(0), Fraction(t[:-1])
        except (ValueError, ZeroDivisionError):
            pass
    raise ValueError(f"cannot read energy {E!r} (use e.g. '4.1', '1/3', '2-0.5j' or (re, im))")


def _ball(x: Fraction) -> arb:
    return arb(int(x.numerator)) / int(x.denominator)


# ----------------------------------------------------------------------------- closed form

def _offband(E: acb) -> acb:
    """G_tri(E; 0) for Im E > 0, or real E > 6, or real E < -3 (E given as an acb ball).

        G(E; 0) = 2 R_F(0, p, q) / (pi (E + 2)),
        p = (s-1)(s+3)/(s+1)^2 = (c+ - 1)/(c+ + 1),  q = (s+1)(s-3)/(s-1)^2 = (c- - 1)/(c- + 1),

    R_F Carlson's symmetric integral with principal square roots (DLMF 19.16.1), valid for
    p, q off (-inf, 0].  Derivation (NOTES.md): with c = cos k = cos^2(k/2) - sin^2(k/2) and
    u = tan^2(k/2), c+- - c = [(c+- - 1) + (c+- + 1) u]/(1 + u); the branch of the integrand
    S(k) = sqrt(a - b) sqrt(a + b) is continuous and S(pi) = E + 2, which fixes every sign.
    """
    s = (E + 3).sqrt()
    p = (s - 1) * (s + 3) / (s + 1) ** 2
    q = (s + 1) * (s - 3) / (s - 1) ** 2
    return 2 * acb.elliptic_rf(acb(0), p, q) / (arb.pi() * (E + 2))


def _inband(Eq: Fraction) -> acb:
    """G_tri(E + i0; 0) for real E in (-3, -2) or (-2, 6) (formulas derived in NOTES.md).

    The branch is chosen from the exact rational E, never from a ball."""
    E = _ball(Eq)
    s = (E + 3).sqrt()
    pi = arb.pi()
    if Eq > -2:
        k2 = (s - 1) ** 3 * (s + 3) / (16 * s)
        kc2 = (3 - s) * (s + 1) ** 3 / (16 * s)
        return (acb(k2).elliptic_k() - 1j * acb(kc2).elliptic_k()) / (2 * pi * s.sqrt())
    if Eq < -2:
        d = (3 - s) * (s + 1) ** 3
        k2 = (1 - s) ** 3 * (s + 3) / d
        kc2 = 16 * s / d
        return -2 * (2 * acb(k2).elliptic_k() + 1j * acb(kc2).elliptic_k()) / (pi * d.sqrt())
    raise ValueError("E = -2 (van Hove point): G is logarithmically divergent")


def _tri_origin(re_: Fraction, im_: Fraction, sign_i0: int = 1) -> acb:
    """G_tri at E = re + i im (current flint precision); real in-band E means E + i0
    (sign_i0 = 1) or E - i0 (sign_i0 = -1)."""
    if im_ == 0:
        if re_ in (-3, -2, 6):
            raise ValueError(f"E = {re_} is a logarithmic singularity of the triangular G(E;0)")
        if -3 < re_ < 6:
            g = _inband(re_)
            return g if sign_i0 > 0 else g.conjugate()
        return _offband(acb(_ball(re_)))
    if im_ > 0:
        return _offband(acb(_ball(re_), _ball(im_)))
    return _offband(acb(_ball(re_), _ball(-im_))).conjugate()


def _with_precision(fn, digits: int) -> acb:
    if isinstance(digits, bool) or not isinstance(digits, int) or digits < 1:
        raise ValueError(f"digits must be a positive integer, got {digits!r}")
    old = ctx.prec
    try:
        prec = int(digits * 3.33) + 40
        while True:
            ctx.prec = prec
            g = fn()
            if g.rel_accuracy_bits() >= digits * 3.33 + 7 or (g.real.is_zero() and g.imag.is_zero()):
                return g
            if prec > 40000:
                raise ValueError(f"could not reach {digits} digits (E too close to a singularity?)")
            prec *= 2
    finally:
        ctx.prec = old


def green_tri(E: object, digits: int) -> acb:
    """Rigorous acb ball for the triangular G(E; 0,0), relative radius < 10^-(digits+2).

    >>> green_tri("10", 20).str(20, radius=False)   # 1/E + 6/E^3 + 12/E^4 + 90/E^5 + ...
    '0.10888411000466742657'
    """
    re_, im_ = energy(E)
    return _with_precision(lambda: _tri_origin(re_, im_), digits)


def green_hc(E: object, digits: int) -> acb:
    """Rigorous acb ball for the honeycomb G(E; A(0,0) -> A(0,0)) = E G_tri(E^2 - 3; 0).

    E = 0 (Dirac point) gives 0; E = +-1 (van Hove) and +-3 (band edges) raise ValueError.
    """
    re_, im_ = energy(E)
    if im_ == 0:
        if re_ == 0:
            return acb(0)
        if abs(re_) in (1, 3):
            raise ValueError(f"E = {re_} is a logarithmic singularity of the honeycomb G(E;0)")
    w_re, w_im = re_ * re_ - im_ * im_ - 3, 2 * re_ * im_
    sgn = 1 if re_ > 0 else -1

    def fn() -> acb:
        return acb(_ball(re_), _ball(im_)) * _tri_origin(w_re, w_im, sgn)
    return _with_precision(fn, digits)


def dos_tri(E: object, digits: int) -> arb:
    """Triangular density of states rho(E) = -Im G(E + i0; 0)/pi, per site (integrates to 1)."""
    re_, im_ = energy(E)
    if im_ != 0:
        raise ValueError("the density of states needs a real energy")
    if not -3 <= re_ <= 6:
        return arb(0)
    g = green_tri(E, digits)
    old = ctx.prec
    try:
        ctx.prec = int(digits * 3.33) + 40
        return -g.imag / arb.pi()
    finally:
        ctx.prec = old


def dos_hc(E: object, digits: int) -> arb:
    """Honeycomb density of states rho(E) = -Im G_hc(E + i0; A,A)/pi (integrates to 1)."""
    re_, im_ = energy(E)
    if im_ != 0:
        raise ValueError("the density of states needs a real energy")
    if not -3 <= re_ <= 3:
        return arb(0)
    g = green_hc(E, digits)
    old = ctx.prec
    try:
        ctx.prec = int(digits * 3.33) + 40
        return -g.imag / arb.pi()
    finally:
        ctx.prec = old


# ----------------------------------------------------------------------------- quadrature

def _sqrt_i0(x: mpmath.mpc) -> mpmath.mpc:
    # principal square root; mpmath maps a negative real to +i sqrt|x| (the E + i0 side)
    return mpmath.sqrt(x)


def green_quad(E: object, m: int, n: int, dps: int) -> mpmath.mpc:
    """Triangular G(E; m, n) by quadrature of the reduced 1-D integral (NOTES.md)

        G(E; m,n) = (1/pi) int_0^pi cos((m + n/2) k) t^|n| / S dk,
        a = E - 2 cos k, b = 4 cos(k/2), S = sqrt(a - b) sqrt(a + b) (principal roots),
        t = b/(a + S) (|t| <= 1),

    from int dk2/(2 pi) e^{i n k2}/(a - b cos(k2 - k/2)) = e^{i n k/2} t^|n|/S.
    For real E in the band the limit E + i0 is taken (principal roots of a +- b + i0) and
    the interval is split where a = +-b, i.e. cos(k/2) in {(s-1)/2, (s+1)/2, (1-s)/2},
    s = sqrt(E + 3); the inverse-square-root end-point singularities suit tanh-sinh.
    For complex E with Re E in the band the same split points (from Re E) are used;
    accuracy still drops when Im E is tiny (nearly singular integrand): compare two dps.
    """
    re_, im_ = energy(E)
    m, n = tri.check_site(m, n)
    if isinstance(dps, bool) or not isinstance(dps, int) or dps < 5:
        raise ValueError(f"dps must be an integer >= 5, got {dps!r}")
    if im_ == 0 and re_ in (-3, -2, 6):
        raise ValueError(f"E = {re_} is a logarithmic singularity of the triangular G")
    with mpmath.workdps(dps + 15):
        Ec = mpmath.mpc(mpmath.mpf(re_.numerator) / re_.denominator,
                        mpmath.mpf(im_.numerator) / im_.denominator)
        th = m + mpmath.mpf(n) / 2
        an = abs(n)
        s = mpmath.sqrt(Ec + 3)
        roots = [(-1 + s) / 2, (-1 - s) / 2, (1 + s) / 2, (1 - s) / 2]   # a-b: 0,1; a+b: 2,3
        kr = {}            # real roots u_j = cos(k_j/2) inside (0, 1): k_j
        for j, u in enumerate(roots):
            if im_ == 0 and 0 < mpmath.re(u) < 1 and -3 < re_ < 6:
                kr[j] = 2 * mpmath.acos(mpmath.re(u))
        pts = sorted(set([mpmath.mpf(0), +mpmath.pi] + list(kr.values())))
        if im_ != 0 and -3 < re_ < 6:        # near-singular points for complex E
            sr = mpmath.sqrt(Ec.real + 3)
            for u in ((sr - 1) / 2, (sr + 1) / 2, (1 - sr) / 2):
                if 0 < u < 1:
                    pts.append(2 * mpmath.acos(u))
            pts = sorted(set(pts))

        def integrand(k, anchor, dx):
            # dx = k - anchor exactly (anchor a break point); differences u - u_j for a root
            # at the anchor use cos(k/2) - cos(k_j/2) = -2 sin((k + k_j)/4) sin((k - k_j)/4)
            u = mpmath.cos(k / 2)
            d = []
            for j, uj in enumerate(roots):
                if j in kr:
                    kj = kr[j]
                    diff = dx if kj == anchor else k - kj
                    d.append(-2 * mpmath.sin((k + kj) / 4) * mpmath.sin(diff / 4))
                else:
                    d.append(u - uj)
            amb = -4 * d[0] * d[1]                       # a - b
            apb = -4 * d[2] * d[3]                       # a + b
            S = _sqrt_i0(amb) * _sqrt_i0(apb)
            b = 4 * u
            a = (amb + apb) / 2
            return mpmath.cos(th * k) * (b / (a + S)) ** an / S

        pieces = max(1, int(abs(th) / 2))
        total = mpmath.mpf(0)
        for x, y in zip(pts[:-1], pts[1:]):
            h = (y - x) / (2 * pieces)
            for j in range(pieces):
                lo, hi = x + 2 * j * h, x + 2 * (j + 1) * h
                # t = v^2 next to a break point: the 1/sqrt singularity becomes smooth
                # (tanh-sinh nodes near an end point carry only absolute precision)
                if j == 0:
                    total += mpmath.quad(lambda v: 2 * v * integrand(x + v * v, x, v * v),
                                         [0, mpmath.sqrt(h)])
                else:
                    total += mpmath.quad(lambda t: integrand(lo + t, None, None), [0, h])
                if j == pieces - 1:
                    total += mpmath.quad(lambda v: 2 * v * integrand(y - v * v, y, -v * v),
                                         [0, mpmath.sqrt(h)])
                else:
                    total += mpmath.quad(lambda t: integrand(hi - t, None, None), [0, h])
        val = total / mpmath.pi
    with mpmath.workdps(dps):
        return +val


def green_hc_quad(E: object, site: tuple[int, int, int], dps: int) -> mpmath.mpc:
    """Honeycomb G(E; A(0,0) -> site) by quadrature of the honeycomb Bloch integral

        G_AA = int E e^{-ik.r} / (E^2 - |f|^2),  G_AB = int f e^{-ik.r} / (E^2 - |f|^2),
        f = 1 + e^{-ik1} + e^{-ik2},  |f|^2 = 3 + H_tri(k),

    i.e. G_AA(m,n) = E G_tri(E^2-3; m,n) and G_AB(m,n) = sum of G_tri(E^2-3) at (m,n),
    (m+1,n), (m,n+1), each through green_quad.  Real E in the band: E + i0, mapped to
    E^2 - 3 + i0 sign(E).
    """
    import honeycomb as hc
    m, n, s = hc.check_site(*site)
    re_, im_ = energy(E)
    w = (re_ * re_ - im_ * im_ - 3, 2 * re_ * im_)
    conj = im_ == 0 and re_ < 0 and -3 < re_ < 3 and -3 < w[0] < 6
    with mpmath.workdps(dps + 5):
        def g(p: int, q: int) -> mpmath.mpc:
            v = green_quad(w, p, q, dps + 5)
            return mpmath.conj(v) if conj else v
        if s == 0:
            Ec = mpmath.mpc(mpmath.mpf(re_.numerator) / re_.denominator,
                            mpmath.mpf(im_.numerator) / im_.denominator)
            val = Ec * g(m, n)
        else:
            val = g(m, n) + g(m + 1, n) + g(m, n + 1)
    with mpmath.workdps(dps):
        return +val
