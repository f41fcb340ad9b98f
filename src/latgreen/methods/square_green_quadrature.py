"""G(E; m, n) of the square lattice by tanh-sinh quadrature of a reduced 1-D integral.

The independent method for the ``green`` and ``dos`` quantities: it shares nothing with the
exact forms but the definition of G.  The x-integral is done analytically: for a not in
[-2, 2], (1/2pi) int_{-pi}^{pi} cos(m x) / (a - 2 cos x) dx = t^|m| / w with
w = sqrt(a-2) sqrt(a+2), t = 2/(a + w) (a = 2 cosh s, w = 2 sinh s, t = e^-s, Re s > 0: the
geometric series / the residue at z = t).  Hence

    G(E; m, n) = (1/pi) int_0^pi cos(n y) t(y)^|m| / w(y) dy,   a(y) = E - 2 cos y.

Branches: sqrt(a-2) sqrt(a+2) (two principal roots) is analytic on C minus [-2, 2] and ~ a at
infinity, so |t| < 1.  For Im E > 0 nothing crosses a cut.  On the cut (real E, a + i0):
|a| > 2: w = sign(a) sqrt(a^2 - 4); |a| < 2: w = i sqrt(4 - a^2), t = (a - i sqrt(4 - a^2))/2.
Indices are swapped so that |m| >= |n| (t^|m| carries the decay).

Numerics:
* a -+ 2 = 4 sin((y + al)/2) sin((y - al)/2), cos al = (E -+ 2)/2, formed as products with
  y - al = (p - al) + h from the split point p and offset h: no cancellation at the inner band
  edges (tanh-sinh nodes closer to an end point than one ulp would otherwise cost ~20 digits);
* [0, pi] is split at Re al (singularities inside the band, near-singularities close to it)
  and into max(m, n)//4 + 1 pieces against the oscillation; each piece [p, q] is mapped by
  y = p + (q - p) sin^2 phi, which smooths end-point inverse-square-root singularities;
* mpmath's tolerance is absolute, so passes are rescaled by the previous estimate and the
  working precision is raised by the observed cancellation log10(max|integrand| / |G|).  A
  value is returned when mpmath's (heuristic) error estimate is below 10^-(dps+3) relative and
  the previous pass agrees to the digits it aimed at.  Not a rigorous bound: this is the
  independent check, the balls of the exact forms are the rigorous values.
"""

from __future__ import annotations

from typing import Any

import mpmath

from ..energy import Energy
from ..errors import PrecisionError


def green_quad(E: Energy, m: int, n: int, dps: int) -> mpmath.mpc:
    """G(E; m, n) to about ``dps`` significant digits (relative to |G|), as an mpmath.mpc
    created at ``dps`` digits."""
    m, n = abs(m), abs(n)
    if n > m:
        m, n = n, m
    scale, maxdeg, prev, prev_digits = mpmath.mpf(1), None, None, 0
    wdps, target = max(15, dps // 2 + 10), max(5, dps // 2)
    for _ in range(10):
        v, err, M = _quad_pass(E, m, n, wdps, scale, maxdeg)
        with mpmath.workdps(wdps):
            av = abs(v)
            if av == 0:
                scale, wdps = scale * mpmath.mpf(10) ** -wdps, wdps + 10
                continue
            cancel = int(mpmath.log10(M / av)) + 1 if av < M else 0
            trusted = cancel + 8 <= wdps - target and err <= av * mpmath.mpf(10) ** -(target + 3)
            good = (trusted and target >= dps and prev is not None
                    and mpmath.mpf(10) ** -3 <= av <= 10**3
                    and abs(v * scale - prev) <= abs(v * scale) * mpmath.mpf(10) ** -prev_digits)
            if good:
                with mpmath.workdps(dps):
                    return +(v * scale)
            if trusted:
                if prev is not None and target >= dps:
                    # disagreement with the previous pass: change the rule, not just redo it
                    wdps, maxdeg = wdps + 10, (maxdeg or 8) + 2
                prev, prev_digits = v * scale, target
                target = dps
            elif cancel + 8 <= wdps - target:
                maxdeg = (maxdeg or 8) + 2
            wdps = max(wdps, target + cancel + 15)
            scale = abs(v * scale)
    raise PrecisionError(f"quadrature of G({E};{m},{n}) did not reach {dps} digits")


def _quad_pass(E: Energy, m: int, n: int, wdps: int, scale: mpmath.mpf,
               maxdeg: int | None) -> tuple[Any, Any, Any]:
    """One pass at ``wdps`` digits of (1/pi) int_0^pi f / scale: (value, mpmath's error
    estimate, max |integrand| / pi seen at the nodes)."""
    er, ei = E.re, E.im
    with mpmath.workdps(wdps):
        Ez = mpmath.mpc(mpmath.mpf(er.numerator) / er.denominator,
                        mpmath.mpf(ei.numerator) / ei.denominator)
        on_cut = ei == 0
        alp = mpmath.acos((Ez - 2) / 2)  # cos alp = (E - 2)/2
        alm = mpmath.acos((Ez + 2) / 2)  # cos alm = (E + 2)/2
        inv = 1 / scale
        big = [mpmath.mpf(0)]

        def f(p: Any, h: Any) -> Any:
            y = p + h
            am2 = 4 * mpmath.sin((y + alp) / 2) * mpmath.sin(((p - alp) + h) / 2)  # a - 2
            ap2 = 4 * mpmath.sin((y + alm) / 2) * mpmath.sin(((p - alm) + h) / 2)  # a + 2
            if on_cut:
                am2, ap2 = am2.real, ap2.real
                a = am2 + 2
                if am2 < 0 < ap2:  # |a| < 2: a + i0
                    r = mpmath.sqrt(-am2 * ap2)
                    w, t = mpmath.mpc(0, r), mpmath.mpc(a, -r) / 2
                else:
                    w = mpmath.sqrt(am2 * ap2)
                    if a < 0:
                        w = -w
                    t = 2 / (a + w)
            else:
                a = am2 + 2
                w = mpmath.sqrt(am2) * mpmath.sqrt(ap2)
                t = 2 / (a + w)
            return mpmath.cos(n * y) * t**m / w * inv

        pi = +mpmath.pi
        pts = [mpmath.mpf(0), pi]
        for al in (alp, alm):
            c = mpmath.re(al)
            if 0 < c < pi and (mpmath.im(al) == 0 or not on_cut):
                pts.append(c)
        pieces = max(m, n) // 4 + 1
        pts += [pi * k / pieces for k in range(1, pieces)]
        pts = sorted(set(pts))
        total, err = mpmath.mpc(0), mpmath.mpf(0)
        for p, q in zip(pts[:-1], pts[1:], strict=True):
            L = q - p

            def g(phi: Any, p: Any = p, q: Any = q, L: Any = L) -> Any:
                s, c = mpmath.sin(phi), mpmath.cos(phi)
                v = (f(p, L * s * s) if phi < pi / 4 else f(q, -L * c * c)) * 2 * L * s * c
                big[0] = max(big[0], abs(v))
                return v

            kw = {"maxdegree": maxdeg} if maxdeg else {}
            v, e = mpmath.quad(g, [0, pi / 2], error=True, **kw)
            total += v
            err += e
        return total / pi, err / pi, big[0] / pi
