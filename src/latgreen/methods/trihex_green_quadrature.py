"""G(E; r) of the triangular and honeycomb lattices by tanh-sinh quadrature of a reduced 1-D
integral: the independent method for their ``green``, ``dos`` and ``local_dos``.

It shares nothing with the exact forms (``exact/trihex_green.py``: recurrence + lattice
equation + elliptic closed forms) but the definition of G.

Triangular.  E - H(k) = a - b cos(k2 - k1/2), a = E - 2 cos k1, b = 4 cos(k1/2), and
(1/2pi) int dk2 e^{i n k2} / (a - b cos(k2 - k1/2)) = e^{i n k1/2} t^|n| / S (the geometric
series / residue), so with k = k1

    G(E; m, n) = (1/pi) int_0^pi cos((m + n/2) k) t^|n| / S dk,
    S = sqrt(a - b) sqrt(a + b) (two principal roots), t = b/(a + S), |t| <= 1.

Branches: the product of two principal roots is analytic in E for Im E > 0 (a +- b both have
Im = Im E) and ~ a as a -> oo; the principal root of the product would be wrong where a < 0.
On the band, E + i0 means principal roots of a +- b + i0 (mpmath's sqrt of a negative real is
+i sqrt|x|).  With u = cos(k/2): a - b = -4(u - u1)(u - u2), a + b = -4(u - u3)(u - u4),
u1,2 = (-1 +- s)/2, u3,4 = (1 +- s)/2, s = sqrt(E + 3).  On the band the roots in (0, 1) are
inverse-square-root singular points: [0, pi] is split there (for complex E at the points of
Re E, where the integrand is nearly singular), the factors u - u_j are computed as
-2 sin((k + k_j)/4) sin((k - k_j)/4) with k - k_j passed exactly, and next to each break point
k = k_j + v^2 is substituted (tanh-sinh nodes near an end point carry only absolute precision).
Each piece is at most about two half-periods of the oscillation cos((m + n/2) k).

Honeycomb (bond length 1, sites (m, n, s)): with f = 1 + e^{-ik1} + e^{-ik2},
|f|^2 = 3 + H_tri(k), the Bloch integrals are G_AA = int E e^{-ik.r}/(E^2 - |f|^2) and
G_AB = int f e^{-ik.r}/(E^2 - |f|^2), i.e. with w = E^2 - 3

    G(E; m, n, 0) = E G_tri(w; m, n),
    G(E; m, n, 1) = G_tri(w; m, n) + G_tri(w; m+1, n) + G_tri(w; m, n+1);

a real E on the band (E + i0) gives w + i0 sign(E).

Accuracy.  mpmath's tolerance is absolute, so the working precision is raised by the observed
cancellation log10(max |integrand| / |G|) (far sites off the band decay exponentially) and the
pass repeated until it covers ``dps`` digits relative to |G|.  Not a rigorous bound: the
balls of the exact forms are the rigorous values, this is the check they must agree with.
"""

from __future__ import annotations

from fractions import Fraction
from typing import Any

import mpmath

from ..errors import PrecisionError


def _mpq(x: Fraction) -> mpmath.mpf:
    return mpmath.mpf(x.numerator) / x.denominator


def _pass(re_: Fraction, im_: Fraction, m: int, n: int, wdps: int) -> tuple[Any, Any]:
    """One quadrature at ``wdps`` digits, Im E >= 0: (value, max |integrand|)."""
    with mpmath.workdps(wdps):
        Ec = mpmath.mpc(_mpq(re_), _mpq(im_))
        th = m + mpmath.mpf(n) / 2
        an = abs(n)
        s = mpmath.sqrt(Ec + 3)
        roots = [(-1 + s) / 2, (-1 - s) / 2, (1 + s) / 2, (1 - s) / 2]  # a-b: 0,1; a+b: 2,3
        on_band = im_ == 0 and -3 < re_ < 6
        kr: dict[int, Any] = {}  # real roots u_j = cos(k_j/2) in (0, 1): k_j
        if on_band:
            for j, u in enumerate(roots):
                if 0 < mpmath.re(u) < 1:
                    kr[j] = 2 * mpmath.acos(mpmath.re(u))
        pts = sorted({mpmath.mpf(0), +mpmath.pi, *kr.values()})
        if im_ != 0 and -3 < re_ < 6:  # nearly singular points for complex E
            sr = mpmath.sqrt(_mpq(re_) + 3)
            for u in ((sr - 1) / 2, (sr + 1) / 2, (1 - sr) / 2):
                if 0 < u < 1:
                    pts.append(2 * mpmath.acos(u))
            pts = sorted(set(pts))
        big = [mpmath.mpf(0)]

        def integrand(k: Any, anchor: Any, dx: Any) -> Any:
            u = mpmath.cos(k / 2)
            d = []
            for j, uj in enumerate(roots):
                if j in kr:
                    kj = kr[j]
                    diff = dx if kj == anchor else k - kj
                    d.append(-2 * mpmath.sin((k + kj) / 4) * mpmath.sin(diff / 4))
                else:
                    d.append(u - uj)
            amb = -4 * d[0] * d[1]  # a - b
            apb = -4 * d[2] * d[3]  # a + b
            if on_band:
                amb, apb = mpmath.mpc(amb).real, mpmath.mpc(apb).real
            S = mpmath.sqrt(amb) * mpmath.sqrt(apb)
            a = (amb + apb) / 2
            return mpmath.cos(th * k) * (4 * u / (a + S)) ** an / S

        pieces = max(1, int(abs(th) / 2))
        total = mpmath.mpc(0)

        def sub(v: Any, x: Any, sgn: int, h: Any) -> Any:
            # k = x + sgn v^2 next to a break point x; the size of the integrand is recorded
            # only away from the (integrable) end-point singularities
            f = 2 * v * integrand(x + sgn * v * v, x, sgn * v * v)
            if v * v > h / 64:
                big[0] = max(big[0], abs(f))
            return f

        def mid(k: Any) -> Any:
            f = integrand(k, None, None)
            big[0] = max(big[0], abs(f))
            return f

        for x, y in zip(pts[:-1], pts[1:], strict=True):
            h = (y - x) / (2 * pieces)
            for j in range(pieces):
                lo, hi = x + 2 * j * h, x + 2 * (j + 1) * h
                if j == 0:
                    total += mpmath.quad(lambda v, x=x, h=h: sub(v, x, 1, h), [0, mpmath.sqrt(h)])
                else:
                    total += mpmath.quad(lambda t, lo=lo: mid(lo + t), [0, h])
                if j == pieces - 1:
                    total += mpmath.quad(lambda v, y=y, h=h: sub(v, y, -1, h), [0, mpmath.sqrt(h)])
                else:
                    total += mpmath.quad(lambda t, hi=hi: mid(hi - t), [0, h])
        return total / mpmath.pi, big[0] / mpmath.pi


def tri_quad(re_: Fraction, im_: Fraction, m: int, n: int, dps: int, sign: int = 1) -> Any:
    """Triangular G(E; m, n) at E = re + i im to about ``dps`` digits relative to |G|, as an
    mpmath.mpc created at ``dps`` digits; a real E on the band means E + i0 (sign = 1) or
    E - i0 (sign = -1); Im E < 0 by conjugation."""
    conj = im_ < 0 or (im_ == 0 and sign < 0)
    im_ = abs(im_)
    wdps = dps + 15
    for _ in range(6):
        v, M = _pass(re_, im_, m, n, wdps)
        with mpmath.workdps(wdps):
            av = abs(v)
            cancel = int(mpmath.log10(M / av)) + 1 if 0 < av < M else (0 if av else wdps)
        if dps + cancel + 10 <= wdps:
            with mpmath.workdps(dps):
                return mpmath.conj(v) if conj else +v
        wdps = dps + cancel + 15
    raise PrecisionError(f"quadrature of the triangular G({re_}+{im_}j; {m},{n}) did not reach "
                         f"{dps} digits")


def hc_quad(re_: Fraction, im_: Fraction, site: tuple[int, int, int], dps: int) -> Any:
    """Honeycomb G(E; A(0,0) -> site) from the Bloch integrals (module docstring), to about
    ``dps`` digits relative to |G| (sums of three triangular values carry 5 more digits)."""
    if re_ == 0 and im_ == 0:  # the Dirac point: its own integral (w = -3 is singular)
        return hc_dirac_quad(site, dps)
    m, n, s = site
    w_re, w_im = re_ * re_ - im_ * im_ - 3, 2 * re_ * im_
    sign = 1 if re_ >= 0 else -1
    with mpmath.workdps(dps + 10):
        if s == 0:
            val = mpmath.mpc(_mpq(re_), _mpq(im_)) * tri_quad(w_re, w_im, m, n, dps + 5, sign)
        else:
            parts = [tri_quad(w_re, w_im, p, q, dps + 5, sign)
                     for p, q in ((m, n), (m + 1, n), (m, n + 1))]
            val = parts[0] + parts[1] + parts[2]
            big = max(abs(x) for x in parts)
            if abs(val) * 10**5 < big:  # the sum cancels: redo with the digits it costs
                extra = int(mpmath.log10(big / abs(val))) + 6 if val else dps
                with mpmath.workdps(dps + extra + 10):
                    parts = [tri_quad(w_re, w_im, p, q, dps + extra, sign)
                             for p, q in ((m, n), (m + 1, n), (m, n + 1))]
                    val = parts[0] + parts[1] + parts[2]
    with mpmath.workdps(dps):
        return +val


def hc_dirac_quad(site: tuple[int, int, int], dps: int) -> Any:
    """Honeycomb G(0; A(0,0) -> site) at the Dirac point E = 0, the limit E -> 0 (real).

    On the A sites it is 0 (G_AA = E G_tri(E^2 - 3), and E log E -> 0).  On the B sites
    G_AB(0) = -(1/4pi^2) int int e^{-ik.r}/conj(f) d^2k, conj(f) = a + e^{ik2}, a = 1 + e^{ik1}
    = 2 cos(k1/2) e^{ik1/2}, an integrable 1/|k - K| singularity at the Dirac points.  The k2
    integral by the geometric series in e^{ik2} (|a| > 1 for |k1| < 2pi/3, |a| < 1 beyond)
    leaves, with k = k1 and the symmetry k -> -k (the integrand at -k is the conjugate),

        n >= 0:  G = -((-1)^n/pi) int_0^{2pi/3} cos((m + (n+1)/2) k) / (2 cos(k/2))^(n+1) dk,
        n <= -1: G =  ((-1)^n/pi) int_{2pi/3}^{pi} cos((m + (n+1)/2) k) (2 cos(k/2))^(-n-1) dk,

    both integrands smooth on their closed intervals (tanh-sinh on pieces shorter than the
    oscillation's half period).  It shares nothing with the exact forms but the definition of
    G (they come from the triangular recurrence at w = -3; ``exact/trihex_green.py``).

    >>> with mpmath.workdps(20):
    ...     print(mpmath.nstr(hc_dirac_quad((0, 0, 1), 15), 15))  # nearest neighbour: -1/3
    -0.333333333333333
    """
    m, n, s = site
    if s == 0:
        return mpmath.mpf(0)
    with mpmath.workdps(dps + 10):
        pi = mpmath.pi
        freq = m + mpmath.mpf(n + 1) / 2
        if n >= 0:
            lo, hi, sign = mpmath.mpf(0), 2 * pi / 3, -1
            f = lambda k: mpmath.cos(freq * k) / (2 * mpmath.cos(k / 2)) ** (n + 1)  # noqa: E731
        else:
            lo, hi, sign = 2 * pi / 3, pi, 1
            f = lambda k: mpmath.cos(freq * k) * (2 * mpmath.cos(k / 2)) ** (-n - 1)  # noqa: E731
        pieces = int(abs(freq) * (hi - lo) / pi) + 1
        pts = [lo + (hi - lo) * j / pieces for j in range(pieces + 1)]
        val = sign * (-1) ** (n % 2) * mpmath.quad(f, pts) / pi
    with mpmath.workdps(dps):
        return +val
