"""Square-lattice resistance by quadrature of a reduced one-dimensional integral.

Atkinson & van Steenwijk, Am. J. Phys. 67, 486 (1999), appendix:

    R(m, n) = (1/pi) int_0^pi [1 - e^{-|m| s} cos(n y)] / sinh s  dy,   cosh s = 2 - cos y.

We substitute y = 2x and sigma = sin x.  Then s = 2 asinh(sigma) exactly,
sinh s = 2 sigma sqrt(1 + sigma^2), t = e^{-s} = (sqrt(1 + sigma^2) - sigma)^2 and

    R(m, n) = (1/pi) int_0^{pi/2} [(1 - t^m) + 2 t^m sin^2(n x)] / (sigma sqrt(1 + sigma^2)) dx,

where both terms of the numerator are non-negative, so nothing cancels near x = 0 (1 - t^m is
computed as -expm1(-2 m asinh sigma)).  We take m = max(|m|, |n|) in the exponent (the sum is
symmetric), so t^m confines the oscillating part to x < x_c ~ (working digits) * ln 10 / (2m):
there it is integrated by Gauss-Legendre panels whose width follows the decay and oscillation
scale 1/m; beyond x_c only the n-independent tail remains, integrated once per column on
geometric panels (the integrand has a pole at x = 0, at distance x_c).

One column m shares all nodes, so a whole column of the octant costs one pass over the nodes
per site.  Two arithmetics: gmpy2 ``mpfr`` at any precision (:func:`column`), and numpy float64
(:func:`column_float`) for a cheap 13+-digit check of very large tables.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from functools import lru_cache

import gmpy2
import mpmath
import numpy as np

LN10 = math.log(10)
HALF_PI = math.pi / 2  # as a panel end: stands for the exact pi/2
SING = math.asinh(1.0)  # the integrand's singularities nearest the real axis: x = +-0.88i


def _rho(wdigits: float, k: int) -> float:
    """Bernstein-ellipse parameter a k-node Gauss-Legendre panel needs for 10^-wdigits:
    the error falls like rho^(-2k); 20% to spare."""
    return math.exp(1.2 * wdigits * LN10 / (2 * k))


def _strip(wdigits: float, k: int) -> float:
    """Widest panel in x: its half-width a must keep the singularities at distance SING
    outside the ellipse, SING/a >= (rho - 1/rho)/2."""
    r = _rho(wdigits, k)
    return 2 * SING / ((r - 1 / r) / 2)


_GL_CACHE: dict[int, tuple[int, tuple[tuple[int, int, int, int], ...]]] = {}


def _gl_nodes(degree: int, prec: int) -> tuple[tuple[int, int, int, int], ...]:
    """Gauss-Legendre nodes on [-1, 1] (3 * 2^(degree-1) of them) as exact (man, exp) pairs,
    accurate to at least ``prec`` bits.  Computed once per degree at a precision rounded up
    to a multiple of 256 bits, and reused for every lower precision (extra bits of a node
    do no harm)."""
    hit = _GL_CACHE.get(degree)
    if hit is not None and hit[0] >= prec:
        return hit[1]
    prec = (prec + 255) // 256 * 256
    out = []
    for x, w in _legendre_roots(3 * 2 ** (degree - 1), prec):
        xm, xe = x.as_mantissa_exp()
        wm, we = w.as_mantissa_exp()
        out.append((int(xm), int(xe), int(wm), int(we)))
    _GL_CACHE[degree] = (prec, tuple(out))
    return _GL_CACHE[degree][1]


def _legendre_roots(n: int, prec: int) -> list[tuple[gmpy2.mpfr, gmpy2.mpfr]]:
    """Nodes x and weights w = 2 / ((1 - x^2) P_n'(x)^2) of the n-point Gauss-Legendre rule
    (DLMF 3.5.19), to ``prec`` bits: Newton's iteration on P_n (evaluated by its three-term
    recurrence, DLMF 18.9.1) from numpy's float64 roots, doubling the working precision at
    each step (the error squares), then repeated at 1.5 ``prec`` bits until the step is
    below 2^(-prec-8).  Pairs +x, -x, the positive roots in decreasing order."""
    x0 = np.polynomial.legendre.leggauss(n)[0]
    top = int(prec * 1.5)
    eps = gmpy2.mpfr(2) ** (-prec - 8)
    out: list[tuple[gmpy2.mpfr, gmpy2.mpfr]] = []

    def newton(r: gmpy2.mpfr) -> tuple[gmpy2.mpfr, gmpy2.mpfr, gmpy2.mpfr]:
        t1, t2 = gmpy2.mpfr(1), gmpy2.mpfr(0)
        for j in range(1, n + 1):
            t1, t2 = ((2 * j - 1) * r * t1 - (j - 1) * t2) / j, t1
        dp = n * (r * t1 - t2) / (r * r - 1)  # P_n'(r)
        return r - t1 / dp, t1 / dp, dp

    for x in sorted((float(v) for v in x0 if v > 0), reverse=True):
        p = 64
        with gmpy2.context(gmpy2.get_context(), precision=p):
            r = gmpy2.mpfr(x)
        while p < top:
            p = min(2 * p, top)
            with gmpy2.context(gmpy2.get_context(), precision=p):
                r = newton(gmpy2.mpfr(r))[0]
        with gmpy2.context(gmpy2.get_context(), precision=top):
            for _ in range(20):
                r, step, dp = newton(r)
                if abs(step) < eps:
                    break
            else:  # pragma: no cover - Newton converges quadratically from here
                raise ArithmeticError("Gauss-Legendre nodes did not converge")
            r, _, dp = newton(r)
            w = 2 / ((1 - r * r) * dp * dp)
            out.append((r, w))
            out.append((-r, w))  # negated inside the context: exact at this precision
    return out


@lru_cache(maxsize=8)
def _leggauss(k: int) -> tuple[np.ndarray, np.ndarray]:
    return np.polynomial.legendre.leggauss(k)


def _plan(m: int, wdigits: float, k: int) -> tuple[list[tuple[float, float]], float]:
    """Head panels [(a, b)] in x, and x_c where the oscillating part is below 10^-wdigits."""
    # width h in u = m x such that a k-node rule resolves cos(2u) e^{-2u} to 10^-wdigits:
    # error ~ (h/2 * omega/2 ...)^(2k)/(2k)!; solve crudely in logs with a safety factor.
    log10_fact = math.lgamma(2 * k + 1) / LN10
    h_u = 0.5 * 10 ** ((log10_fact - wdigits) / (2 * k))
    u_c = wdigits * LN10 / 2 + 2.0
    x_c = math.asin(min(1.0, math.sinh(u_c / m))) if u_c / m < 0.88 else math.pi / 2
    width = min(h_u / m, _strip(wdigits, k))
    count = max(1, math.ceil(x_c / width))
    edges = [x_c * j / count for j in range(count)] + [x_c]
    return list(zip(edges[:-1], edges[1:], strict=True)), x_c


def _choose_degree(wdigits: float) -> int:
    """mpmath GL degree (nodes = 3 * 2^(d-1)) for a working precision."""
    if wdigits <= 40:
        return 5  # 48 nodes
    if wdigits <= 150:
        return 6  # 96 nodes
    if wdigits <= 400:
        return 7
    return 8


def _tail_panels(x_c: float, wdigits: float, k: int) -> list[tuple[float, float]]:
    """Panels from x_c to pi/2, growing geometrically away from the pole at x = 0: a panel
    [a, b] needs (b + a)/(b - a) >= (rho + 1/rho)/2, and none wider than the strip."""
    r = _rho(wdigits, k)
    x = (r + 1 / r) / 2
    ratio = (x + 1) / (x - 1)
    strip = _strip(wdigits, k)
    out = []
    a = x_c
    while a < math.pi / 2:
        b = min(math.pi / 2, max(ratio * a, a + 1e-300), a + strip)
        out.append((a, b))
        a = b
    return out


def _mpfr_nodes(panels: Sequence[tuple[float, float]], degree: int, bits: int):
    """Nodes and weights on the given panels as gmpy2 mpfr (current context precision).

    A panel end equal to the float pi/2 stands for pi/2 itself, taken at full precision.
    """
    raw = _gl_nodes(degree, bits + 20)
    mpfr = gmpy2.mpfr
    std = [(gmpy2.mul_2exp(mpfr(xm), xe), gmpy2.mul_2exp(mpfr(wm), we))
           for xm, xe, wm, we in raw]
    half_pi = gmpy2.const_pi() / 2

    def end(v: float) -> gmpy2.mpfr:
        return half_pi if v == HALF_PI else mpfr(v)

    xs, ws = [], []
    for a, b in panels:
        lo, hi = end(a), end(b)
        half = (hi - lo) / 2
        mid = (hi + lo) / 2
        for x, w in std:
            xs.append(mid + half * x)
            ws.append(half * w)
    return xs, ws


JUMP = 64  # a gap in n above which the recurrence restarts from direct cosines


def column(m: int, ns: Sequence[int], digits: int) -> list[mpmath.mpf]:
    """R(m, n) for 0 <= n <= m (m >= 1) by the panel rule, aiming at ``digits`` digits.

    The result is not certified: it is an independent check of the exact values, and its
    agreement with them is what a table records.

    >>> [mpmath.nstr(v, 20) for v in column(3, [0, 1], 30)]
    ['0.86056273158902388309', '0.88075158815145696358']
    """
    if m < 1 or any(not 0 <= n <= m for n in ns):
        raise ValueError("column expects m >= 1 and 0 <= n <= m")
    wdigits = digits + 12 + math.log10(m + 1)
    bits = int(wdigits * 3.33) + 32
    degree = _choose_degree(wdigits)
    k = 3 * 2 ** (degree - 1)
    head, x_c = _plan(m, wdigits, k)
    with gmpy2.context(gmpy2.get_context(), precision=bits):
        xs, ws = _mpfr_nodes(head, degree, bits)
        base = gmpy2.mpfr(0)
        osc = []  # per node: weight * 2 t^m / (sigma sqrt(1+sigma^2))
        for x, w in zip(xs, ws, strict=True):
            sg = gmpy2.sin(x)
            q = sg * gmpy2.sqrt(1 + sg * sg)
            a = 2 * m * gmpy2.asinh(sg)
            base += w * -gmpy2.expm1(-a) / q
            osc.append(2 * w * gmpy2.exp(-a) / q)
        if x_c < math.pi / 2:
            txs, tws = _mpfr_nodes(_tail_panels(x_c, wdigits, k), degree, bits)
            for x, w in zip(txs, tws, strict=True):
                sg = gmpy2.sin(x)
                q = sg * gmpy2.sqrt(1 + sg * sg)
                base += w * -gmpy2.expm1(-2 * m * gmpy2.asinh(sg)) / q
        pi = gmpy2.const_pi()
        # The n-dependent part, sum_j osc_j sin^2(n x_j) = (sum_j osc_j - v_n)/2 with
        # v_n = sum_j osc_j cos(2 n x_j), for every n at once: the weighted terms
        # u_j = osc_j cos(2 n x_j) follow the three-term recurrence
        # u(n+1) = 2 cos(2 x_j) u(n) - u(n-1) (Chebyshev T_n), run in fixed-point integers
        # (64 guard bits cover its linear error growth), vectorised over the nodes with numpy
        # object arrays of gmpy2 integers: one product, one shift and one difference per
        # node and n, and a sum.  Nodes whose weight rounds to zero are dropped.
        fb = bits + 64
        one = gmpy2.mpfr(2) ** fb
        mpz = gmpy2.mpz
        keep = [j for j, o in enumerate(osc) if o * one >= 1]
        W = np.array([mpz(gmpy2.rint(osc[j] * one)) for j in keep] or [mpz(0)], dtype=object)
        C2 = np.array([mpz(gmpy2.rint(2 * gmpy2.cos(2 * xs[j]) * one)) for j in keep]
                      or [mpz(0)], dtype=object)
        total = mpz(W.sum())
        u_prev, u_cur = W, (C2 * W) >> (fb + 1)
        want = sorted(set(ns))
        sums: dict[int, gmpy2.mpz] = {0: mpz(0)}  # 2^(fb+1) sum_j osc_j sin^2(n x_j)
        n = 1
        for target in want:
            if target == 0:
                continue
            if target - n > JUMP:  # a far n: start the recurrence there, not at 1
                # (the nodes carry log2(m) extra bits, so cos(2 n x_j) keeps the precision)
                u_prev, u_cur = (np.array([mpz(gmpy2.rint(osc[j] * gmpy2.cos(2 * t * xs[j])
                                                          * one)) for j in keep]
                                          or [mpz(0)], dtype=object)
                                 for t in (target - 1, target))
                n = target
            while n < target:
                u_prev, u_cur = u_cur, ((C2 * u_cur) >> fb) - u_prev
                n += 1
            sums[target] = total - mpz(u_cur.sum())
        scale = gmpy2.mpfr(2) ** (fb + 1)
        out = [_to_mpf((base + gmpy2.mpfr(sums[n]) / scale) / pi) for n in ns]
    return out


def _to_mpf(x: gmpy2.mpfr) -> mpmath.mpf:
    """Exact conversion (mpmath would round to its current precision otherwise)."""
    man, exp = x.as_mantissa_exp()
    with mpmath.workprec(max(53, int(man).bit_length())):
        return mpmath.mpf((int(man), int(exp)))


def column_float(m: int, n_max: int | None = None) -> np.ndarray:
    """R(m, n) for n = 0..n_max (default m) in float64: about 14 correct digits.

    >>> bool(abs(column_float(1)[0] - 0.5) < 1e-14)
    True
    """
    n_max = m if n_max is None else n_max
    wdigits = 17.0
    k = 48  # two panels of 48 nodes beat six of 24 for the same accuracy
    head, x_c = _plan(m, wdigits, k)
    gx, gw = _leggauss(k)
    a = np.array([p[0] for p in head])
    b = np.array([p[1] for p in head])
    x = ((b - a)[:, None] / 2 * gx[None, :] + (b + a)[:, None] / 2).ravel()
    w = ((b - a)[:, None] / 2 * gw[None, :]).ravel()
    sg = np.sin(x)
    q = sg * np.sqrt(1 + sg * sg)
    e = 2 * m * np.arcsinh(sg)
    base = float(np.sum(w * -np.expm1(-e) / q))
    if x_c < math.pi / 2:
        tail = _tail_panels(x_c, wdigits, k)
        ta = np.array([p[0] for p in tail])
        tb = np.array([p[1] for p in tail])
        tx = ((tb - ta)[:, None] / 2 * gx[None, :] + (tb + ta)[:, None] / 2).ravel()
        tw = ((tb - ta)[:, None] / 2 * gw[None, :]).ravel()
        ts = np.sin(tx)
        base += float(np.sum(tw * -np.expm1(-2 * m * np.arcsinh(ts)) / (ts * np.sqrt(1 + ts * ts))))
    osc = 2 * w * np.exp(-e) / q
    ns = np.arange(n_max + 1, dtype=float)
    # sin(n x_j)^2 for every n and node, computed in place in a reused scratch array (the
    # same operations on the same C-contiguous layout as np.sin(np.outer(ns, x))**2, without
    # a fresh allocation per column)
    s = _scratch(len(ns) * len(x)).reshape(len(ns), len(x))
    np.multiply(ns[:, None], x[None, :], out=s)
    np.sin(s, out=s)
    np.multiply(s, s, out=s)
    return (base + s @ osc) / math.pi


_SCRATCH: list[np.ndarray] = [np.empty(0)]


def _scratch(size: int) -> np.ndarray:
    """A float64 work array of ``size`` elements, reused between calls in this process."""
    if _SCRATCH[0].size < size:
        _SCRATCH[0] = np.empty(max(size, 2 * _SCRATCH[0].size))
    return _SCRATCH[0][:size]


def resistance_quad(m: int, n: int, digits: int) -> mpmath.mpf:
    """R(m, n) for any site by the panel rule (symmetry applied first)."""
    m, n = abs(m), abs(n)
    if n > m:
        m, n = n, m
    if m == 0:
        return mpmath.mpf(0)
    return column(m, [n], digits)[0]


def resistance_quad_adaptive(m: int, n: int, digits: int) -> mpmath.mpf:
    """R(m, n) by mpmath's adaptive tanh-sinh on the original integral, split at the
    oscillation scale.  Slower; used as the per-site baseline and as a test cross-check."""
    m, n = abs(m), abs(n)
    if n > m:
        m, n = n, m
    if m == 0:
        return mpmath.mpf(0)
    with mpmath.workdps(digits + 10):
        def f(x):
            sg = mpmath.sin(x)
            q = sg * mpmath.sqrt(1 + sg * sg)
            a = 2 * m * mpmath.asinh(sg)
            return (-mpmath.expm1(-a) + 2 * mpmath.exp(-a) * mpmath.sin(n * x) ** 2) / q

        step = math.pi / (2 * max(m, 1))
        pts = [mpmath.mpf(0)]
        x = 0.0
        while x + step < math.pi / 2 and len(pts) < 400:
            x += step
            pts.append(mpmath.mpf(x))
        pts.append(mpmath.pi / 2)
        return mpmath.quad(f, pts) / mpmath.pi
