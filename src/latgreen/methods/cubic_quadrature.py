"""Cubic-lattice Green's function and resistance by a reduced two-dimensional quadrature.

In G(E; l,m,n) = pi^-3 int_[0,pi]^3 cos(l k1) cos(m k2) cos(n k3) / (E - eps(k)) d^3k the
innermost integral has the closed form (Gradshteyn & Ryzhik 3.613.2; elementary by residues)

    (1/pi) int_0^pi cos(p w) / (A - B cos w) dw = rho^p / s,
    s = sqrt(A - B) sqrt(A + B),  rho = B / (A + s),     (A > |B|)

which leaves a 2-D integral over (k1, k2) (for fcc over (k1, k3), k2 inner):

* sc:  A = 6 - 2c1 - 2c2, B = 2, p = n;           G = pi^-2 int_[0,pi]^2
* bcc: A = 8, B = 8 c1 c2, p = n; the integrand is invariant under k1 -> pi - k1 and
  k2 -> pi - k2 on bcc sites (factors (-1)^(l+n), (-1)^(m+n) = 1):  G = 4 pi^-2 int_[0,pi/2]^2
* fcc: A = 12 - 4 c1 c3, B = 4(c1 + c3), p = m; invariant under (k1, k3) -> (pi - k1, pi - k3)
  on fcc sites (factor (-1)^(l+m+n) = 1): G = 2 pi^-2 int over the triangle k1 + k3 <= pi.

At the band edge E = z, A - B vanishes like |k|^2 at the corner k = 0 only (A - B formed from
u = 1 - cos k = 2 sin^2(k/2): sc 2(u1 + u2), bcc 8(u1 + c1 u2), fcc 4(2u1 + 2u2 - u1 u2), so
nothing cancels), and the integrand has a 1/|k| singularity there.  In polar coordinates
about the corner the Jacobian cancels it: r x integrand is analytic on the closed domain (sc,
bcc: two triangles theta <= pi/4, >= pi/4; fcc: theta in [0, pi/2], r <= pi/(cos + sin)), so
a product Gauss-Legendre rule converges exponentially.  R(r) = 2 [G(0) - G(r)] integrates the
bounded difference.  cos(a k) = T_a(cos k) by the three-term recurrence.

One column of sites shares the nodes, s, rho and the Chebyshev values: a batch costs one pass
over the nodes plus three array products per site.  Two arithmetics: gmpy2 ``mpfr`` at any
precision in numpy object arrays (:func:`resistance_sites`), numpy float64
(:func:`resistance_sites_float`, about 14 digits, for ``--verify fast``).

The error is not bounded: the values are independent checks of the exact forms, and what a
result records is their agreement.  Node counts: :func:`degree_for` (measured: at l = 20, 96
nodes per direction give 59 to 73 digits, 48 nodes 13 to 44); float64 with
max(96, 4 l + 40) nodes gives 14-15 digits.
"""

from __future__ import annotations

import math
from collections.abc import Iterator, Sequence
from functools import lru_cache
from typing import Any

import gmpy2
import mpmath
import numpy as np

from .square_quadrature import _gl_nodes, _to_mpf

LOG2_10 = 3.3219280948873623
Site = tuple[int, int, int]


def _order(lattice: str, site: Site) -> tuple[int, int, int]:
    """(a, b, p): the outer Chebyshev orders and the inner power for ``site``."""
    l, m, n = site
    return (l, n, m) if lattice == "fcc" else (l, m, n)


def degree_for(digits: int, extent: int) -> int:
    """mpmath Gauss-Legendre degree (3 * 2^(d-1) nodes per direction) for ``digits`` digits
    and sites up to ``extent``.  Measured (resistances against the exact forms): the
    agreement grows by about 0.95 digits per node per direction and the oscillation of
    cos(l k) costs about 1.7 l nodes (sc (20,20,n): 13 digits with 48 nodes, 59 with 96);
    we ask for ``digits`` + 5."""
    need = (digits + 5) / 0.95 + 1.7 * extent
    d = 5
    while 3 * 2 ** (d - 1) < need:
        d += 1
    return d


CHUNK_NODES = 40_000  # nodes held at once (memory stays bounded at any degree)


def _polar_layout(lattice: str, degree: int, bits: int) -> tuple[list, list, Any]:
    """The Gauss-Legendre nodes/weights mapped to [0, 1] (mpfr), the polar pieces
    (theta0, theta1, kind) of the reduced domain about the corner k = 0 and the lattice's
    prefactor: sc/bcc two triangles split at pi/4 (side pi resp. pi/2, radial limit by cos
    resp. sin), fcc one triangle k1 + k3 <= pi (module docstring)."""
    raw = _gl_nodes(degree, bits + 20)
    mpfr = gmpy2.mpfr
    std = [((gmpy2.mul_2exp(mpfr(xm), xe) + 1) / 2, gmpy2.mul_2exp(mpfr(wm), we) / 2)
           for xm, xe, wm, we in raw]
    pi = gmpy2.const_pi()
    pieces: list[tuple[Any, Any, tuple[str, Any] | None]]
    if lattice == "fcc":
        pieces = [(mpfr(0), pi / 2, None)]
        factor = 2 / pi**2
    else:
        side = pi if lattice == "sc" else pi / 2
        pieces = [(mpfr(0), pi / 4, ("c", side)), (pi / 4, pi / 2, ("s", side))]
        factor = (1 if lattice == "sc" else 4) / pi**2
    return std, pieces, factor


def _polar_nodes_mp(lattice: str, degree: int, bits: int) -> Iterator[tuple[list, list, list]]:
    """(k1, k2, weight) lists in mpfr, weight including r, the polar Jacobian and the
    lattice's prefactor, in chunks of about CHUNK_NODES nodes."""
    std, pieces, factor = _polar_layout(lattice, degree, bits)
    pi = gmpy2.const_pi()
    k1s, k2s, ws = [], [], []
    for t0, t1, kind in pieces:
        dt = t1 - t0
        for xt, wt in std:
            t = t0 + dt * xt
            c, s = gmpy2.cos(t), gmpy2.sin(t)
            R = pi / (c + s) if kind is None else kind[1] / (c if kind[0] == "c" else s)
            for xr, wr in std:
                r = R * xr
                k1s.append(r * c)
                k2s.append(r * s)
                ws.append(factor * wt * dt * R * wr * r)
            if len(ws) >= CHUNK_NODES:
                yield k1s, k2s, ws
                k1s, k2s, ws = [], [], []
    if ws:
        yield k1s, k2s, ws


def _setup(lattice: str, k1: np.ndarray, k2: np.ndarray, w: np.ndarray, sin, sqrt):
    """Per node: c1, c2, rho and W = w / s (object arrays or float arrays alike)."""
    h1 = np.array([sin(x / 2) for x in k1], dtype=k1.dtype) if k1.dtype == object \
        else np.sin(k1 / 2)
    h2 = np.array([sin(x / 2) for x in k2], dtype=k2.dtype) if k2.dtype == object \
        else np.sin(k2 / 2)
    u1, u2 = 2 * h1 * h1, 2 * h2 * h2
    c1, c2 = 1 - u1, 1 - u2
    if lattice == "sc":
        A = 6 - 2 * c1 - 2 * c2
        B = 2 + 0 * c1
        AmB = 2 * (u1 + u2)
    elif lattice == "bcc":
        A = 8 + 0 * c1
        B = 8 * c1 * c2
        AmB = 8 * (u1 + c1 * u2)
    else:
        A = 12 - 4 * c1 * c2
        B = 4 * (c1 + c2)
        AmB = 4 * (2 * u1 + 2 * u2 - u1 * u2)
    prod = AmB * (A + B)
    s = np.array([sqrt(x) for x in prod], dtype=object) if prod.dtype == object \
        else np.sqrt(prod)
    rho = B / (A + s)
    return c1, c2, rho, w / s


def _chebyshev(c: np.ndarray, wanted: set[int]) -> dict[int, np.ndarray]:
    out: dict[int, np.ndarray] = {}
    t0, t1 = 1 + 0 * c, c
    top = max(wanted, default=0)
    for k in range(top + 1):
        if k in wanted:
            out[k] = t0
        t0, t1 = t1, 2 * c * t1 - t0
    return out


def _powers(x: np.ndarray, wanted: set[int]) -> dict[int, np.ndarray]:
    out: dict[int, np.ndarray] = {}
    p = 1 + 0 * x
    for k in range(max(wanted, default=0) + 1):
        if k in wanted:
            out[k] = p
        p = p * x
    return out


def _sums(lattice: str, sites: Sequence[Site], c1, c2, rho, W) -> tuple[object, list]:
    """sum_j W_j and sum_j W_j rho_j^p T_a(c1_j) T_b(c2_j) for every site."""
    orders = [_order(lattice, s) for s in sites]
    Ta = _chebyshev(c1, {o[0] for o in orders})
    Tb = _chebyshev(c2, {o[1] for o in orders})
    Rp = _powers(rho, {o[2] for o in orders})
    base = W.sum()
    out = []
    cache: dict[tuple[int, int], np.ndarray] = {}
    for a, b, p in orders:
        f = cache.get((a, p))
        if f is None:
            f = cache[(a, p)] = W * Ta[a] * Rp[p]
        out.append((f * Tb[b]).sum())
    return base, out


def resistance_sites(lattice: str, sites: Sequence[Site], digits: int,
                     degree: int | None = None) -> list[mpmath.mpf]:
    """R at canonical ``sites`` (any list, best one column) to about ``digits`` digits.

    >>> # 1/3 = 2/z (common practice); R(1,1,0): our exact form, 0.395... from memory
    >>> [mpmath.nstr(v, 20) for v in resistance_sites("sc", [(1, 0, 0), (1, 1, 0)], 25)]
    ['0.33333333333333333333', '0.39507915234185137202']
    """
    if not sites:
        return []
    extent = max(s[0] for s in sites)
    bits = int((digits + 15) * LOG2_10) + 32
    d = degree if degree is not None else degree_for(digits, extent)
    with gmpy2.context(gmpy2.get_context(), precision=bits):
        base: Any = 0
        sums: list[Any] = [0] * len(sites)
        for chunk in _polar_nodes_mp(lattice, d, bits):
            k1, k2, w = (np.array(x, dtype=object) for x in chunk)
            c1, c2, rho, W = _setup(lattice, k1, k2, w, gmpy2.sin, gmpy2.sqrt)
            b, part = _sums(lattice, sites, c1, c2, rho, W)
            base += b
            sums = [x + y for x, y in zip(sums, part, strict=True)]
        return [_to_mpf(2 * (base - x)) if any(s) else mpmath.mpf(0)
                for s, x in zip(sites, sums, strict=True)]


def green_origin(lattice: str, digits: int) -> mpmath.mpf:
    """G(z; 0) at the band edge by the same rule (about ``digits`` digits).

    >>> mpmath.nstr(green_origin("bcc", 20), 16)  # W_bcc / 8 (OEIS A091670)
    '0.1741504912107096'
    """
    bits = int((digits + 15) * LOG2_10) + 32
    with gmpy2.context(gmpy2.get_context(), precision=bits):
        total: Any = 0
        for chunk in _polar_nodes_mp(lattice, degree_for(digits + 10, 0), bits):
            k1, k2, w = (np.array(x, dtype=object) for x in chunk)
            _, _, _, W = _setup(lattice, k1, k2, w, gmpy2.sin, gmpy2.sqrt)
            total += W.sum()
        return _to_mpf(total)


@lru_cache(maxsize=6)
def _polar_nodes_float(lattice: str, k: int) -> tuple[np.ndarray, np.ndarray, np.ndarray]:
    x, wx = np.polynomial.legendre.leggauss(k)
    x, wx = (x + 1) / 2, wx / 2
    pi = math.pi
    pieces: list[tuple[float, float, tuple[str, float] | None]]
    if lattice == "fcc":
        pieces = [(0.0, pi / 2, None)]
        factor = 2 / pi**2
    else:
        side = pi if lattice == "sc" else pi / 2
        pieces = [(0.0, pi / 4, ("c", side)), (pi / 4, pi / 2, ("s", side))]
        factor = (1 if lattice == "sc" else 4) / pi**2
    k1s, k2s, ws = [], [], []
    for t0, t1, kind in pieces:
        t = t0 + (t1 - t0) * x
        c, s = np.cos(t), np.sin(t)
        R = pi / (c + s) if kind is None else kind[1] / (c if kind[0] == "c" else s)
        r = R[:, None] * x[None, :]
        k1s.append((r * c[:, None]).ravel())
        k2s.append((r * s[:, None]).ravel())
        ws.append((factor * (t1 - t0) * (wx * R)[:, None] * wx[None, :] * r).ravel())
    return np.concatenate(k1s), np.concatenate(k2s), np.concatenate(ws)


def float_nodes(extent: int) -> int:
    """Nodes per direction of the float64 rule for sites up to ``extent``."""
    return max(96, 4 * extent + 40)


def resistance_sites_float(lattice: str, sites: Sequence[Site]) -> list[float]:
    """R at canonical ``sites`` in float64 (about 14 digits).

    >>> # 1/4 = 2/z (common practice); R(2,0,0): our exact form
    >>> [round(v, 12) for v in resistance_sites_float("bcc", [(1, 1, 1), (2, 0, 0)])]
    [0.25, 0.275575675319]
    """
    if not sites:
        return []
    k1, k2, w = _polar_nodes_float(lattice, float_nodes(max(s[0] for s in sites)))
    c1, c2, rho, W = _setup(lattice, k1, k2, w, math.sin, math.sqrt)
    base, sums = _sums(lattice, sites, c1, c2, rho, W)
    return [float(2 * (base - x)) if any(s) else 0.0 for s, x in zip(sites, sums, strict=True)]


# ---------------------------------------------------------------- G(E; r) off the band

def _csqrt(x: Any) -> Any:
    """Principal square root, complex for a negative real."""
    if isinstance(x, gmpy2.mpc) or x >= 0:
        return gmpy2.sqrt(x)
    return gmpy2.sqrt(gmpy2.mpc(x))


def _energy_integrand(lattice: str, E: Any, dE: Any, k1: Any, k2: Any,
                      site: Site) -> Any:
    """The reduced integrand of G(E; site) (module docstring) at one node; dE = E - z is
    passed separately so that A - B is free of cancellation.  The inner closed form
    rho^p / s with s = sqrt(A - B) sqrt(A + B) (two principal roots, ~ A at infinity, so
    |rho| < 1) holds for A off [-|B|, |B|], i.e. for every node when E is off the band."""
    h1, h2 = gmpy2.sin(k1 / 2), gmpy2.sin(k2 / 2)
    u1, u2 = 2 * h1 * h1, 2 * h2 * h2
    c1, c2 = 1 - u1, 1 - u2
    a, b, p = _order(lattice, site)
    if lattice == "sc":
        A, B, AmB = E - 2 * c1 - 2 * c2, gmpy2.mpfr(2), dE + 2 * (u1 + u2)
    elif lattice == "bcc":
        A, B, AmB = E, 8 * c1 * c2, dE + 8 * (u1 + c1 * u2)
    else:
        A, B, AmB = E - 4 * c1 * c2, 4 * (c1 + c2), dE + 4 * (2 * u1 + 2 * u2 - u1 * u2)
    s = _csqrt(AmB) * _csqrt(A + B)
    v = 1 / s
    if p:
        v *= (B / (A + s)) ** p
    ta = _cheb_scalar(c1, a)
    tb = _cheb_scalar(c2, b)
    return v * ta * tb


def _cheb_scalar(c: Any, a: int) -> Any:
    t0, t1 = 1, c
    if a == 0:
        return 1
    for _ in range(a - 1):
        t0, t1 = t1, 2 * c * t1 - t0
    return t1


def _energy_rule(lattice: str, E: Any, dE: Any, site: Site, degree: int, bits: int) -> Any:
    """Product Gauss-Legendre rule in polar coordinates about the corner k = 0 (the same
    pieces as at the band edge; off the band the integrand is analytic, the polar rule is
    kept so that E close to z is no worse than E = z)."""
    std, pieces, factor = _polar_layout(lattice, degree, bits)
    pi = gmpy2.const_pi()
    total: Any = 0
    for t0, t1, kind in pieces:
        dt = t1 - t0
        for xt, wt in std:
            t = t0 + dt * xt
            c, s = gmpy2.cos(t), gmpy2.sin(t)
            R = pi / (c + s) if kind is None else kind[1] / (c if kind[0] == "c" else s)
            acc: Any = 0
            for xr, wr in std:
                r = R * xr
                acc += wr * r * _energy_integrand(lattice, E, dE, r * c, r * s, site)
            total += wt * dt * R * acc
    return factor * total


def green_energy_quad(lattice: str, site: Site, E: Any, dps: int) -> mpmath.mpc:
    """G(E; site) at a canonical ``site`` by the reduced 2-D polar Gauss-Legendre rule, for
    complex E (Im E > 0) or real E outside the band or at its upper edge (E is an
    ``energy.Energy``); about ``dps`` digits relative to |G|.  Degrees d and d + 1 must agree
    to dps + 3 digits (an estimate, not a bound); PrecisionError otherwise (E very close to
    the band).  For sc and bcc a real E below the band is mapped by the bipartite symmetry
    G(-E; r) = -(-1)^(l+m+n) G(E; r) (sc), -(-1)^l G(E; r) (bcc); for the fcc it is
    integrated directly (A < -|B| at every node: the product of the two principal roots is
    then -sqrt((A - B)(A + B)), again the branch ~ A).

    >>> from latgreen.energy import parse_energy
    >>> mpmath.nstr(green_energy_quad("sc", (0, 0, 0), parse_energy("7", "sc"), 15).real, 12)
    '0.170523806949'
    """
    from ..errors import PrecisionError

    z = {"sc": 6, "bcc": 8, "fcc": 12}[lattice]
    lo = {"sc": -6, "bcc": -8, "fcc": -4}[lattice]
    sign = 1
    er, ei = E.re, E.im
    if ei == 0 and lo < er < z:
        raise ValueError(f"real energy {E} inside the {lattice} band: the reduced 2-D rule "
                         "needs Im E > 0 or E outside the band")
    if ei == 0 and er <= lo and lattice != "fcc":
        par = sum(site) if lattice == "sc" else site[0]
        sign, er = -(-1) ** par, -er
    bits = int((dps + 15) * LOG2_10) + 32
    with gmpy2.context(gmpy2.get_context(), precision=bits):
        Ev: Any
        if ei == 0:
            Ev = gmpy2.mpfr(er.numerator) / er.denominator
            dE = gmpy2.mpfr(er - z) if (er - z).denominator == 1 else \
                gmpy2.mpfr((er - z).numerator) / (er - z).denominator
        else:
            Ev = gmpy2.mpc(gmpy2.mpfr(er.numerator) / er.denominator,
                           gmpy2.mpfr(ei.numerator) / ei.denominator)
            dE = Ev - z
        tol = gmpy2.mpfr(10) ** -(dps + 3)
        prev = None
        degree = 5 if dps <= 30 else (6 if dps <= 65 else 7)
        while degree <= 8:
            val = _energy_rule(lattice, Ev, dE, site, degree, bits)
            if prev is not None and abs(val - prev) <= tol * abs(val):
                re_ = _to_mpf(gmpy2.mpfr(val.real) if isinstance(val, gmpy2.mpc) else val)
                im_ = _to_mpf(val.imag) if isinstance(val, gmpy2.mpc) else mpmath.mpf(0)
                with mpmath.workprec(bits):
                    return mpmath.mpc(sign * re_, sign * im_)
            prev = val
            degree += 1
    raise PrecisionError(f"the reduced 2-D rule did not reach {dps} digits for {lattice} "
                         f"G({E}; {site}) (E too close to the band)")
