"""fcc G(E + i0; r) at real energies inside the band, many sites at once, from the integral.

An independent numerical method: it uses only the integral definition of G (no recurrence,
no lattice equation, no closed form), so it can check exact forms at any site.

Conventions (DESIGN.md): hopping +1, eps(k) = 4(c1 c2 + c2 c3 + c3 c1), c_i = cos k_i, band
[-4, 12], fcc sites (l, m, n) with l + m + n even, G(E; r) = (2 pi)^-3 int e^{i k.r} d^3k /
(E + i0 - eps(k)).

Derivation (each step an identity; checked numerically in tests/test_fcc_green_sites.py).

1. Reflections k_i -> -k_i and cubic symmetry: with any permutation (j1, p, j2) of the
   site's coordinates,
       G = pi^-3 int_[0,pi]^3 cos(j1 k1) cos(p k2) cos(j2 k3) dk / (E - eps).
2. The k2 integral in closed form.  eps is linear in c2: E - eps = A - B c2 with
   A = E - 4 c1 c3, B = 4(c1 + c3), and (1/pi) int_0^pi cos(p w) dw / (A - B cos w) =
   rho^p / S, S = sqrt(A^2 - B^2), rho = (A - S)/B (Gradshteyn & Ryzhik 3.613.2), on the
   branch |rho| <= 1 that E + i0 selects: S = sqrt(A - B + i0) sqrt(A + B + i0) (principal
   roots).  So G = pi^-2 int int T_j1(x) T_j2(c) rho^p / S dx dc / sqrt((1-x^2)(1-c^2))
   over [-1, 1]^2, x = c1, c = c3, T_j the Chebyshev polynomials (cos(j k) = T_j(cos k)).
3. New variables (ours).  With kappa = (E + 4)/4,
       A - B = 4(kappa - P),  A + B = 4(kappa - Q),  P = (1 + x)(1 + c),  Q = (1 - x)(1 - c),
   so the singular curves A = +-B become P = kappa, Q = kappa.  Put xi = sqrt(P),
   eta = sqrt(Q).  (x, c) -> (xi, eta) maps [-1, 1]^2 two-to-one onto the triangle
   T = {xi, eta >= 0, xi + eta <= 2} (x and c are the two roots of z^2 - sigma z + pi_ with
   sigma = x + c = (xi^2 - eta^2)/2, pi_ = x c = (xi^2 + eta^2)/2 - 1; the diagonal x = c
   goes to xi + eta = 2).  Jacobian: dP dQ = 2 |x - c| dx dc, |x - c| = sqrt(W)/2 with
       W = (2 - xi - eta)(2 + xi + eta)(2 - xi + eta)(2 + xi - eta),
   and sqrt((1 - x^2)(1 - c^2)) = sqrt(P Q) = xi eta, so dx dc / sqrt((1-x^2)(1-c^2)) =
   4 dxi deta / sqrt(W).  With a = sqrt(kappa - xi^2 + i0), b = sqrt(kappa - eta^2 + i0)
   (principal roots: a, b lie in the closed first quadrant) one has S = 4ab,
   A - S = 2(a - b)^2, B = 2(b^2 - a^2), hence rho = (b - a)/(a + b), and |rho| <= 1 because
   Re(a conj(b)) >= 0.  Summing the two preimages (x, c), (c, x):
       G = pi^-2 int int_T N(xi, eta) rho^p / (a b sqrt(W)) dxi deta,
       N = T_j1(x) T_j2(c) + T_j1(c) T_j2(x),   x, c = (sigma +- sqrt(W)/2)/2,
   N being symmetric in x, c is a polynomial in xi^2, eta^2.
4. The reflection xi <-> eta is (x, c) -> (-x, -c): N -> (-1)^(j1+j2) N, rho -> -rho, so the
   integrand is multiplied by (-1)^(l+m+n) = 1 on the fcc lattice: G = 2 pi^-2 int over the
   half triangle H = {0 <= eta <= xi, xi + eta <= 2}.  (Also a check: a site with l + m + n
   odd would give 0.)
5. The integrand is singular only on straight lines: xi = s and eta = s (s = sqrt(kappa);
   a or b vanishes, inverse square roots), xi + eta = 2 and, through the corner B = (2, 0),
   xi - eta = 2 (factors of W).  H is cut along them into triangles, each integrated in
   polar coordinates (r, theta) about one vertex (its apex) by Gauss-Legendre products after
   r = R(theta)(1 - cos u)/2, theta = t0 + (t1 - t0)(1 - cos v)/2 (this removes the
   square-root end points).  The cells are chosen so that every singular line through a
   cell's non-apex vertex is one of the cell's own edges there (otherwise a line passing just
   beyond the end of the inner integral would make its integrand nearly singular), and every
   point where two singular lines cross is an apex; the point (s, s), where a = b = 0 and rho
   depends on the direction of approach, is an apex of all cells that touch it (about it
   rho depends on theta only, to leading order).  The layouts (E > 0: s > 1, E < 0: s < 1,
   E = 0: s = 1) are in :func:`_cells`.  Every integrand is then analytic on its cell after
   the substitutions, so the product rule converges geometrically.

Error control: each cell is integrated with n, then n + n/3, ... nodes per direction
(n starts at dps/2 + 4) until two successive rules agree to 10^-(dps+1) max_r |G(r)| / (number
of cells) for every site (max |G| from the first pass); the larger rule is kept.  This is an
estimate, not a bound; PrecisionError when n would pass MAX_NODES.  Measured against the
closed form of G(E; 0) and the lattice equation, the returned values carry about 1.4 dps
digits at dps = 30 (43 to 51 digits at E = -39/10, -5/2, -1/10, 0, 1/2, 5, 21/2).

Where it is slow or fails: the layouts degenerate as E -> 0+ (the points (s, s), (s, 2 - s)
and (1, 1) close in, three singular lines nearly meet) and as E -> 12 (the line
xi - eta = 2 passes within sqrt(2)(2 - s) of the apex (s, 2 - s) of the cell towards the
origin).  At 30 digits: E = 1/10, 45/4, 23/2, 119/10 exceed MAX_NODES (PrecisionError);
E = 1/5 and 1/4 pass (6 s); -39/10 <= E <= 0 and 1/2 <= E <= 11 take 1.4-20 s for 50 sites.
Not done: for E near 12, the quadrilateral (0,0), (s,0), (s,2-s), (1,1) as one polar cell
about (2, 0) with r from the line xi = s to the diagonal and the substitution r = e^t (the
1/r of W at (2, 0) then lies at t = -oo); for E near 0+, a graded refinement about (1, 1).
"""

from __future__ import annotations

from collections.abc import Sequence
from dataclasses import dataclass
from typing import Any

import gmpy2
import mpmath

from ..energy import Energy
from ..errors import InputError, PrecisionError
from .square_quadrature import _legendre_roots

LOG2_10 = 3.3219280948873623
GUARD = 20  # guard digits of the working precision
MAX_NODES = 240  # per direction and cell

# the singular factors f = c - p xi - q eta, as (p, q, c-symbol): 's' stands for s, 2 for 2
# 0: s - xi, 1: s + xi  (kappa - xi^2 = f0 f1);  2: s - eta, 3: s + eta  (kappa - eta^2)
# 4: 2 - xi - eta, 5: 2 + xi + eta, 6: 2 - xi + eta, 7: 2 + xi - eta  (W = f4 f5 f6 f7)
_FACTORS = ((1, 0, "s"), (-1, 0, "s"), (0, 1, "s"), (0, -1, "s"),
            (1, 1, 2), (-1, -1, 2), (1, -1, 2), (-1, 1, 2))


@dataclass(frozen=True)
class _Cell:
    """Polar cell: apex (x0, y0), theta in [t0, t1], r from 0 to the far line
    p xi + q eta = c; ``through``: indices of the singular factors vanishing at the apex;
    ``far``: index of the singular factor vanishing on the far line, or -1."""

    x0: Any
    y0: Any
    t0: Any
    t1: Any
    line: tuple[Any, Any, Any]
    through: tuple[int, ...]
    far: int


def _angle(x0: Any, y0: Any, x1: Any, y1: Any) -> Any:
    return gmpy2.atan2(y1 - y0, x1 - x0)


def _cells(s: Any, sign: int) -> list[_Cell]:
    """The cells of the half triangle H (module docstring, step 5); ``sign`` is the sign of
    E (s > 1, s < 1, s = 1).  Lines: vert xi = s, horiz eta = s, hyp xi + eta = 2."""
    pi = gmpy2.const_pi()
    one, two, zero = gmpy2.mpfr(1), gmpy2.mpfr(2), gmpy2.mpfr(0)
    vert, axis, hyp, diag = (one, zero, s), (zero, one, zero), (one, one, two), \
        (one, -one, zero)
    cells = []
    if sign > 0:
        # V = (s, 2 - s) where vert meets hyp; B = (2, 0)
        vx, vy = s, 2 - s
        tv0 = _angle(vx, vy, zero, zero)  # towards the origin, in (-pi, -pi/2)
        cells.append(_Cell(two, zero, 3 * pi / 4, pi, vert, (4, 6), 0))
        cells.append(_Cell(vx, vy, tv0, -pi / 2, axis, (0, 4), -1))
        cells.append(_Cell(vx, vy, 3 * pi / 4, tv0 + 2 * pi, diag, (0, 4), -1))
        return cells
    # D = (s, s): vert and horiz cross; (1, 1) when s = 1 (hyp through D as well)
    dx = dy = s
    thr = (0, 2, 4) if sign == 0 else (0, 2)
    cells.append(_Cell(dx, dy, -3 * pi / 4, -pi / 2, axis, thr, -1))  # D, O, A
    # the corner B = (2, 0) gets its own fan; the boundary between the fans is M -> Y' -> Y
    # with Y on hyp, Y' on the segment D-Y (so the D fan meets Y edge-on), M on the axis
    m = (2 + s) / 2
    yy = s / 2
    Yx, Yy = 2 - yy, yy
    tM = _angle(dx, dy, m, zero)
    if sign == 0:
        # D is on hyp: the D fan ends on the ray D -> Y itself, B's fan is [B; Y, M]
        cells.append(_Cell(dx, dy, -pi / 2, tM, axis, thr, -1))
        cells.append(_Cell(dx, dy, tM, -pi / 4, _through(m, zero, Yx, Yy), thr, -1))
        cells.append(_Cell(two, zero, 3 * pi / 4, pi, _through(m, zero, Yx, Yy), (4, 6), -1))
        return cells
    cells.append(_Cell(dx, dy, zero, pi / 4, hyp, thr, 4))  # D, C, (1, 1)
    Ypx, Ypy = (dx + Yx) / 2, (dy + Yy) / 2
    tY = _angle(dx, dy, Yx, Yy)
    tBYp = _angle(two, zero, Ypx, Ypy)
    cells.append(_Cell(dx, dy, -pi / 2, tM, axis, thr, -1))  # D, A, M
    cells.append(_Cell(dx, dy, tM, tY, _through(m, zero, Ypx, Ypy), thr, -1))  # D, M, Y'
    cells.append(_Cell(dx, dy, tY, zero, hyp, thr, 4))  # D, Y, C
    cells.append(_Cell(two, zero, 3 * pi / 4, tBYp, _through(Yx, Yy, Ypx, Ypy), (4, 6), -1))
    cells.append(_Cell(two, zero, tBYp, pi, _through(Ypx, Ypy, m, zero), (4, 6), -1))
    return cells


def _through(x1: Any, y1: Any, x2: Any, y2: Any) -> tuple[Any, Any, Any]:
    """(p, q, c) of the line p xi + q eta = c through two points."""
    p, q = y2 - y1, x1 - x2
    return p, q, p * x1 + q * y1


_GL: dict[int, tuple[int, list[tuple[Any, Any]]]] = {}


def _nodes(n: int, bits: int) -> list[tuple[Any, Any]]:
    """Gauss-Legendre nodes and weights of [-1, 1] (cached; at least ``bits`` bits)."""
    hit = _GL.get(n)
    if hit is None or hit[0] < bits:
        prec = (bits + 127) // 128 * 128
        _GL[n] = (prec, _legendre_roots(n, prec))
    return _GL[n][1]


def _csqrt(v: Any) -> Any:
    """sqrt(v + i0) for real v: principal root, +i sqrt(-v) below 0."""
    return gmpy2.mpc(gmpy2.sqrt(v), 0) if v >= 0 else gmpy2.mpc(0, gmpy2.sqrt(-v))


def _plan(sites: Sequence[tuple[int, int, int]]) -> tuple[list[tuple[int, int, int]], int, int]:
    """Each site as (j1, j2, p): p the largest coordinate (power of rho), j1 >= j2 the
    Chebyshev degrees; returns the plan, the largest degree and the largest power."""
    plan = []
    for site in sites:
        a, b, c = sorted((abs(v) for v in site), reverse=True)
        plan.append((b, c, a))
    jmax = max(max(t[0] for t in plan), 1)
    pmax = max(t[2] for t in plan)
    return plan, jmax, pmax


def _cell_sums(cell: _Cell, s: Any, n: int, bits: int, keys: list[tuple[int, int, int]],
               jmax: int, pmax: int) -> list[Any]:
    """int over the cell of N rho^p / (a b sqrt W) for every (j1, j2, p) in ``keys``."""
    std = _nodes(n, bits)
    pi = gmpy2.const_pi()
    fac0 = []
    for i, (p_, q_, c_) in enumerate(_FACTORS):
        c = s if c_ == "s" else gmpy2.mpfr(c_)
        fac0.append(gmpy2.mpfr(0) if i in cell.through else c - p_ * cell.x0 - q_ * cell.y0)
    lp, lq, lc = cell.line
    lnum = lc - lp * cell.x0 - lq * cell.y0
    th_half = (cell.t1 - cell.t0) / 2
    acc = [gmpy2.mpc(0)] * len(keys)
    for xv, wv in std:
        # theta = t0 + (t1 - t0)(1 - cos v)/2, v = pi (1 + xv)/2, dv = pi/2 dxv
        v = pi * (1 + xv) / 2
        cv, sv = gmpy2.cos(v), gmpy2.sin(v)
        th = cell.t0 + th_half * (1 - cv)
        ct, st = gmpy2.cos(th), gmpy2.sin(th)
        R = lnum / (lp * ct + lq * st)
        g = [-(p_ * ct + q_ * st) for p_, q_, _ in _FACTORS]
        wth = wv * (pi / 2) * th_half * sv
        for xu, wu in std:
            u = pi * (1 + xu) / 2
            cu, su = gmpy2.cos(u), gmpy2.sin(u)
            r = R * (1 - cu) / 2
            f = [fac0[i] + r * g[i] for i in range(8)]
            if cell.far >= 0:  # exact offset from the far line
                f[cell.far] = -g[cell.far] * (R * (1 + cu) / 2)
            xi, eta = cell.x0 + r * ct, cell.y0 + r * st
            a = _csqrt(f[0] * f[1])
            b = _csqrt(f[2] * f[3])
            sw = gmpy2.sqrt(f[4] * f[5] * f[6] * f[7])
            q = (wu * (pi / 2) * su * (R / 2) * r * wth) / (a * b * sw)
            rho = (b - a) / (a + b)
            sig = (xi - eta) * (xi + eta) / 2
            h = sw / 2
            x, c = (sig + h) / 2, (sig - h) / 2
            tx, tc = [gmpy2.mpfr(1), x], [gmpy2.mpfr(1), c]
            for _ in range(jmax - 1):
                tx.append(2 * x * tx[-1] - tx[-2])
                tc.append(2 * c * tc[-1] - tc[-2])
            qp = [q]
            for _ in range(pmax):
                qp.append(qp[-1] * rho)
            for k, (j1, j2, p) in enumerate(keys):
                acc[k] += (tx[j1] * tc[j2] + tc[j1] * tx[j2]) * qp[p]
    return acc


def _check(E: Energy, sites: Sequence[Any]) -> list[tuple[int, int, int]]:
    if not isinstance(E, Energy):
        raise InputError(f"energy {E!r} must be an exact Energy (latgreen.energy.parse_energy)")
    if E.im != 0:
        raise InputError(f"energy {E} is not real: the per-site fcc integral takes real "
                         "energies inside the band (-4, 12)")
    if not -4 < E.re < 12:
        raise InputError(f"energy {E} is outside the fcc band (-4, 12) where this per-site "
                         "integral applies")
    out = []
    for site in sites:
        if (not isinstance(site, tuple) or len(site) != 3
                or not all(isinstance(v, int) and not isinstance(v, bool) for v in site)):
            raise InputError(f"fcc site {site!r} must be a tuple of three integers")
        if sum(site) % 2:
            raise InputError(f"{site} is not an fcc site: l + m + n must be even")
        out.append(site)
    if not out:
        raise InputError("no sites given")
    return out


def fcc_green_sites(E: Energy, sites: list[tuple[int, int, int]], dps: int
                    ) -> list[mpmath.mpc]:
    """G(E + i0; r) of the fcc lattice for every site r, real E with -4 < E < 12, to about
    ``dps`` digits relative to the largest |G| among the sites (an estimate; module
    docstring).  One set of nodes serves all sites.

    >>> from latgreen.energy import parse_energy
    >>> g0, g1 = fcc_green_sites(parse_energy("5", "fcc"), [(0, 0, 0), (1, 1, 0)], 15)
    >>> mpmath.nstr(g0, 12)
    '(0.151466945629 - 0.0940540744585j)'
    >>> bool(abs(5 * g0 - 1 - 12 * g1) < 1e-14)  # E G(0) - 1 = 12 G(1,1,0): common practice
    True
    """
    sites = _check(E, sites)
    if not isinstance(dps, int) or dps < 1:
        raise InputError(f"dps must be a positive integer, not {dps!r}")
    plan, jmax, pmax = _plan(sites)
    keys = sorted(set(plan))
    index = [keys.index(t) for t in plan]
    bits = int((dps + GUARD) * LOG2_10) + 16
    sign = (E.re > 0) - (E.re < 0)
    with gmpy2.context(gmpy2.get_context(), precision=bits):
        kappa = (gmpy2.mpfr(E.re.numerator) / E.re.denominator + 4) / 4
        s = gmpy2.sqrt(kappa)
        cells = _cells(s, sign)
        n0 = max(12, dps // 2 + 4)
        # the scale max |G| from a first pass at n0 (good to a few digits at least)
        first = [_cell_sums(c, s, n0, bits, keys, jmax, pmax) for c in cells]
        scale = max(abs(sum(col)) for col in zip(*first, strict=True))
        tol = gmpy2.mpfr(10) ** -(dps + 1) * scale / len(cells)
        tot = [gmpy2.mpc(0)] * len(keys)
        for cell, prev in zip(cells, first, strict=True):
            n = n0
            while True:
                n2 = n + max(4, n // 3)
                if n2 > MAX_NODES:
                    raise PrecisionError(f"the fcc per-site integral did not reach {dps} "
                                         f"digits at E = {E} with {MAX_NODES} nodes per "
                                         "direction")
                cur = _cell_sums(cell, s, n2, bits, keys, jmax, pmax)
                if max(abs(a - b) for a, b in zip(cur, prev, strict=True)) <= tol:
                    break
                prev, n = cur, n2
            tot = [t + c for t, c in zip(tot, cur, strict=True)]
        fac = 2 / gmpy2.const_pi() ** 2
        vals = [fac * tot[k] for k in index]
        with mpmath.workdps(dps + GUARD):
            return [mpmath.mpc(mpmath.mpf(str(v.real)), mpmath.mpf(str(v.imag)))
                    for v in vals]
