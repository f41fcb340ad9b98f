"""Triangular-lattice resistance by quadrature of reduced one-dimensional integrals.

Integrating one Brillouin-zone variable analytically (see :mod:`latgreen.exact.triangular`
for the derivation) gives, for any integers (p, q) (not only canonical ones),

    R(p, q) = I(|q|, |2p + q|),
    I(E, j) = (1/pi) int_0^pi [1 - t^E cos(j k/2)] / (2 w sqrt(3 + w^2)) dk,
    w = sin(k/2),  t = (A - sqrt(A^2 - rho^2))/rho = cos(k/2) / (1 + w^2 + w sqrt(3 + w^2))

(A = 3 - cos k = 2 + 2w^2, rho = 2 cos(k/2), A^2 - rho^2 = 4 w^2 (3 + w^2); the last form of t
has no cancellation and is analytic at k = pi where t = 0).  The twelve images of a site under
the point group give different integrands with the same value.  For a canonical site
0 <= n <= m the image (-n, m + n) has the largest exponent, E = m + n and j = m - n: t^E
confines the oscillating part to k < k_c ~ (digits) ln 10 / (E sqrt(3)/2), as in the square
lattice's panel rule.  The numerator is written (1 - t^E) + 2 t^E sin^2(j k/4): no 1 - cos
cancellation at k -> 0, where the integrand is bounded (t^E ~ exp(-sqrt(3) E k / 2)).

Batch rule (:func:`reduced_batch`): one set of Gauss-Legendre panels for many pairs (E, j):
panels of width ~ 1/lambda, lambda = max |sqrt(3) E/2 + i j/2| over the pairs, up to k_c of
the smallest E; beyond k_c only the pair-independent tail 1/(2 w sqrt(3 + w^2)) remains,
integrated once on geometric panels (it has a pole at k = 0, at distance k_c).  The powers
t^E (E ascending: multiply by t) and sin(j k/4) (three-term recurrence in j) are fixed-point
integer vectors over the nodes (numpy object arrays), each started at the smallest E and j
needed; guard bits cover the linear error growth of both recurrences.
:func:`reduced_batch_float` is the same rule in numpy float64.
"""

from __future__ import annotations

import math
from collections.abc import Sequence

import gmpy2
import mpmath
import numpy as np

from .square_quadrature import _choose_degree, _gl_nodes, _leggauss, _to_mpf

LN10 = math.log(10)
STRIP = 0.4  # widest panel in k (singularities at k = +-2.63i, the pole of the tail at 0)
RATE = math.sqrt(3) / 2  # t^E ~ exp(-RATE E k) near k = 0

Pair = tuple[int, int]


def pair(p: int, q: int) -> Pair:
    """(E, j) of the reduced integral for the (not necessarily canonical) image (p, q)."""
    return abs(q), abs(2 * p + q)


def _eta(k: float) -> float:
    """-ln t(k) in float64."""
    w = math.sin(k / 2)
    c = math.cos(k / 2)
    if c <= 0:
        return math.inf
    return -math.log(c / (1 + w * w + w * math.sqrt(3 + w * w)))


def _cutoff(e_min: int, wdigits: float) -> float:
    """k_c with t(k_c)^e_min <= 10^-wdigits (pi if the decay never gets there)."""
    if e_min == 0:
        return math.pi
    target = (wdigits * LN10 + 3) / e_min
    lo, hi = 0.0, math.pi
    if _eta(hi * (1 - 1e-12)) < target:
        return math.pi
    for _ in range(60):
        mid = (lo + hi) / 2
        if _eta(mid) < target:
            lo = mid
        else:
            hi = mid
    return hi


def _plan(pairs: Sequence[Pair], wdigits: float, k: int
          ) -> tuple[list[tuple[float, float]], float]:
    """Head panels [(a, b)] on [0, k_c] and k_c."""
    log10_fact = math.lgamma(2 * k + 1) / LN10
    h_u = 0.5 * 10 ** ((log10_fact - wdigits) / (2 * k))  # as in the square lattice's rule
    lam = max(max(math.hypot(RATE * e, j / 2) for e, j in pairs), 1.0)
    width = min(2.83 * h_u / lam, STRIP)
    k_c = _cutoff(min(e for e, _ in pairs), wdigits)
    count = max(1, math.ceil(k_c / width))
    edges = [k_c * i / count for i in range(count)] + [k_c]
    return list(zip(edges[:-1], edges[1:], strict=True)), k_c


def _tail_panels(k_c: float, wdigits: float, k: int) -> list[tuple[float, float]]:
    """Geometric panels from k_c to pi for the tail, whose integrand has a pole at k = 0.

    A k-node rule on [a, b] converges like rho^(-2k), rho = 1 + delta + sqrt(delta^2 + 2 delta)
    with delta = 2a/(b - a) (the pole's distance in half-lengths): [a, 2a] gives rho = 5.83,
    enough below about 1.5 k digits; beyond, the panels shrink to reach 10^-wdigits."""
    rho = 10 ** ((wdigits + 5) / (2 * k))
    delta = (rho + 1 / rho) / 2 - 1
    grow = min(1.0, 2 / delta)  # b = a (1 + grow)
    out = []
    a = k_c
    while a < math.pi:
        b = min(math.pi, max(a * (1 + grow), a + 1e-300), a + STRIP)
        out.append((a, b))
        a = b
    return out


def _mpfr_nodes(panels: Sequence[tuple[float, float]], degree: int, bits: int
                ) -> tuple[list[gmpy2.mpfr], list[gmpy2.mpfr]]:
    """Nodes and weights (current gmpy2 precision); a panel end equal to the float pi stands
    for pi itself."""
    raw = _gl_nodes(degree, bits + 20)
    mpfr = gmpy2.mpfr
    std = [(gmpy2.mul_2exp(mpfr(xm), xe), gmpy2.mul_2exp(mpfr(wm), we)) for xm, xe, wm, we in raw]
    pi = gmpy2.const_pi()

    def end(v: float) -> gmpy2.mpfr:
        return pi if v == math.pi else mpfr(v)

    xs, ws = [], []
    for a, b in panels:
        lo, hi = end(a), end(b)
        half, mid = (hi - lo) / 2, (hi + lo) / 2
        for x, w in std:
            xs.append(mid + half * x)
            ws.append(half * w)
    return xs, ws


def reduced_batch(pairs: Sequence[Pair], digits: int) -> list[mpmath.mpf]:
    """I(E, j) for every pair, aiming at ``digits`` significant digits (not certified: an
    independent check of the exact values).

    >>> [mpmath.nstr(v, 20) for v in reduced_batch([pair(-1, 3), pair(-1, 2)], 30)]
    ['0.51328895421792049511', '0.43599112417691743236']
    """
    if not pairs:
        return []
    if any(e < 0 or j < 0 for e, j in pairs):
        raise ValueError("reduced_batch expects E >= 0 and j >= 0")
    e_max = max(e for e, _ in pairs)
    j_max = max(j for _, j in pairs)
    wdigits = digits + 12 + math.log10(max(e_max, j_max) + 1)
    bits = int(wdigits * 3.33) + 32
    degree = _choose_degree(wdigits)
    head, k_c = _plan(pairs, wdigits, 3 * 2 ** (degree - 1))
    fb = bits + 64
    with gmpy2.context(gmpy2.get_context(), precision=bits):
        one = gmpy2.mpfr(2) ** fb
        xs, ws = _mpfr_nodes(head, degree, bits)
        W, T, C, S0, S1, P0 = [], [], [], [], [], []
        e_min = min(e for e, _ in pairs)
        # the sine recurrence starts at the smallest j needed (a single far site needs one
        # sine per node, not j of them)
        j0 = max(1, min(j for _, j in pairs))
        for x, wt in zip(xs, ws, strict=True):
            w = gmpy2.sin(x / 2)
            q = gmpy2.sqrt(3 + w * w)
            t = gmpy2.cos(x / 2) / (1 + w * w + w * q)
            W.append(int(gmpy2.rint(wt / (2 * w * q) * one)))
            T.append(int(gmpy2.rint(t * one)))
            C.append(int(gmpy2.rint(2 * gmpy2.cos(x / 4) * one)))
            S0.append(int(gmpy2.rint(gmpy2.sin((j0 - 1) * x / 4) * one)))
            S1.append(int(gmpy2.rint(gmpy2.sin(j0 * x / 4) * one)))
            P0.append(int(gmpy2.rint(t**e_min * one)))
        tail = gmpy2.mpfr(0)
        if k_c < math.pi:
            txs, tws = _mpfr_nodes(_tail_panels(k_c, wdigits, 3 * 2 ** (degree - 1)), degree,
                                   bits)
            for x, wt in zip(txs, tws, strict=True):
                w = gmpy2.sin(x / 2)
                tail += wt / (2 * w * gmpy2.sqrt(3 + w * w))
        pi = gmpy2.const_pi()
        Wv = np.array(W, dtype=object)
        Tv = np.array(T, dtype=object)
        Cv = np.array(C, dtype=object)
        ONE = 1 << fb
        # t^E for every E needed, ascending: U[E] = sum W (1 - t^E), V[E] = W t^E
        es = sorted({e for e, _ in pairs})
        U: dict[int, int] = {}
        V: dict[int, np.ndarray] = {}
        P = np.array(P0, dtype=object)
        e = e_min
        for target in es:
            while e < target:
                P = (P * Tv) >> fb
                e += 1
            U[e] = int((Wv * (ONE - P)).sum())
            V[e] = (Wv * P) >> fb
        # sin^2(j k/4) for every j needed, ascending: Q[j] (scale 2^fb)
        js = sorted({j for _, j in pairs})
        Q: dict[int, np.ndarray] = {}
        s_prev = np.array(S0, dtype=object)
        s_cur = np.array(S1, dtype=object)
        j = j0
        for target in js:
            if target == 0:
                Q[0] = np.zeros(len(W), dtype=object)
                continue
            while j < target:
                s_prev, s_cur = s_cur, ((Cv * s_cur) >> fb) - s_prev
                j += 1
            Q[j] = (s_cur * s_cur) >> fb
        scale = gmpy2.mpfr(2) ** (2 * fb)
        out = []
        for e, j in pairs:
            tot = U[e] + 2 * int((V[e] * Q[j]).sum())
            out.append(_to_mpf((gmpy2.mpfr(tot) / scale + tail) / pi))
    return out


def reduced_batch_float(pairs: Sequence[Pair]) -> np.ndarray:
    """I(E, j) for every pair in float64: about 14 correct digits.

    >>> bool(abs(reduced_batch_float([pair(1, 0)])[0] - 1 / 3) < 1e-14)
    True
    """
    if not pairs:
        return np.zeros(0)
    k = 48
    head, k_c = _plan(pairs, 17.0, k)
    gx, gw = _leggauss(k)

    def nodes(panels: Sequence[tuple[float, float]]) -> tuple[np.ndarray, np.ndarray]:
        a = np.array([p[0] for p in panels])
        b = np.array([p[1] for p in panels])
        x = ((b - a)[:, None] / 2 * gx[None, :] + (b + a)[:, None] / 2).ravel()
        return x, ((b - a)[:, None] / 2 * gw[None, :]).ravel()

    x, wt = nodes(head)
    w = np.sin(x / 2)
    q = np.sqrt(3 + w * w)
    W = wt / (2 * w * q)
    lnt = np.log(np.cos(x / 2) / (1 + w * w + w * q))
    tail = 0.0
    if k_c < math.pi:
        tx, tw = nodes(_tail_panels(k_c, 17.0, k))
        ts = np.sin(tx / 2)
        tail = float(np.sum(tw / (2 * ts * np.sqrt(3 + ts * ts))))
    E = np.array([e for e, _ in pairs], dtype=float)
    J = np.array([j for _, j in pairs], dtype=float)
    tE = np.exp(np.outer(E, lnt))
    s = np.sin(np.outer(J, x / 4))
    vals = (-np.expm1(np.outer(E, lnt)) + 2 * tE * s * s) @ W
    return np.asarray((vals + tail) / math.pi)


def resistance_quad(m: int, n: int, digits: int) -> mpmath.mpf:
    """R(m, n) at any site by the panel rule, on the image with the largest exponent."""
    from ..lattices.triangular import canonical_pair

    m, n = canonical_pair(m, n)
    if m == 0:
        return mpmath.mpf(0)
    return reduced_batch([pair(-n, m + n)], digits)[0]


def reduced_adaptive(p: int, q: int, digits: int) -> mpmath.mpf:
    """R(p, q) by mpmath's adaptive tanh-sinh on the image (p, q) as given (exponent |q|,
    frequency p + q/2), [0, pi] split into pieces shorter than the oscillation's half period.
    Slow (0.3-4 s per site at 50 digits); the per-site cross-check of the panel rule."""
    if (p, q) == (0, 0):
        return mpmath.mpf(0)
    with mpmath.workdps(digits + 15):
        th = p + mpmath.mpf(q) / 2
        an = abs(q)

        def f(k: mpmath.mpf) -> mpmath.mpf:
            w = mpmath.sin(k / 2)
            r = mpmath.sqrt(3 + w * w)
            eta = mpmath.asinh(w * r / mpmath.cos(k / 2))
            return (-mpmath.expm1(-an * eta) + 2 * mpmath.exp(-an * eta)
                    * mpmath.sin(th * k / 2) ** 2) / (2 * w * r)

        pieces = max(2, int(abs(th)) + 1)
        pts = [mpmath.pi * i / pieces for i in range(pieces + 1)]
        val = mpmath.quad(f, pts) / mpmath.pi
    return val
