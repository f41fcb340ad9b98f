"""sc and bcc Green's functions at any energy as 1-D integrals of the square lattice's.

Conventions (DESIGN.md): hopping +1, G(E; r) = <0|(E - H)^-1|r>, E + i0 on the band;
bcc sites (l, m, n) in units of half the cube edge.  For every lattice point r,
G(E; r) = (2 pi)^-3 int_[-pi,pi]^3 e^(i k.r) / (E - eps(k)) d^3k (NOTES of the cubic
lattices, section A), and for the square lattice G_sq(w; p, q) = (2 pi)^-2 int e^(i(p u + q v))
/ (w - 2 cos u - 2 cos v) du dv.

sc (eps = 2 c1 + 2 c2 + 2 c3, c_i = cos k_i).  Doing the (k1, k2) integral first at fixed k3 is
the square lattice at the shifted energy w = E - 2 cos k3; the k3 average of
e^(i n k3) f(cos k3) is (1/pi) int_0^pi cos(n k) f(cos k) dk:

    G_sc(E; l, m, n) = (1/pi) int_0^pi cos(n k) G_sq(E - 2 cos k; l, m) dk.          (S)

bcc (eps = 8 c1 c2 c3).  c1 c2 = [cos(k1 + k2) + cos(k1 - k2)]/2, so with u = k1 + k2,
v = k1 - k2 and t = 2 c3, eps = t (2 cos u + 2 cos v): at fixed k3 a square lattice with
hopping t.  The map (k1, k2) -> (u, v) is a surjective homomorphism of the torus (2-to-1), so
it carries the normalised Haar measure to itself; on bcc sites l, m have equal parity, so
e^(i(l k1 + m k2)) = e^(i(p u + q v)) with the integers p = (l + m)/2, q = (l - m)/2.  Hence,
for t != 0, the (k1, k2) average is (1/t) G_sq(E/t; p, q) (for the square lattice with hopping
t, (w - t eps_sq)^-1 = t^-1 (w/t - eps_sq)^-1).  The square lattice is bipartite: as analytic
functions G_sq(-w; p, q) = -(-1)^(p+q) G_sq(w; p, q), so (1/t) G_sq(E/t) = (-1)^(p+q) (1/|t|)
G_sq(E/|t|) for t < 0 -- this also fixes the retarded side: E/|t| stays in the upper half
plane, x/|t| + i0 on the band.  k3 -> pi - k3 flips t and multiplies cos(n k3) by (-1)^n;
with p + q = l the two halves of [0, pi] carry the same value times (-1)^(l+n) = 1 on bcc
sites.  Therefore

    G_bcc(E; l, m, n) = (2/pi) int_0^(pi/2) cos(n k) G_sq(E/(2 cos k); (l+m)/2, (l-m)/2)
                        / (2 cos k) dk.                                                 (B)

At the origin: G_bcc(E; 0) = (2/pi) int_0^(pi/2) G_sq(E/(2 cos k); 0, 0)/(2 cos k) dk.
Near k = pi/2 the integrand tends to cos(n k) t^(|p|+|q|) times a power series in t^2/E^2:
it is smooth there (the series below is used for |w| >= 32).

The square lattice's G_sq(w; p, q) at a real or complex (not exact) argument w:
* |w| >= 32: the walk series G_sq(w; p, q) = sum_N c_N w^(-N-1), c_N = C(N, (N+p+q)/2)
  C(N, (N+p-q)/2) (N - p - q even; rotated coordinates, common practice), no cancellation;
* otherwise G00 = 2 K(16/w^2)/(pi w), G11 = ((w^2-8)/8) G00 - w E(16/w^2)/(4 pi), and on the
  band (real |w| < 4, w + i0) the cut formulas of ``methods/square_green_closed.py``
  (K(q) - i K(q'))/(2 pi), q = w^2/16, q' = 1 - q; then the lattice equation and the diagonal
  recurrence of ``exact/square_green.py`` run on the values, with (p+q) log10 max(|w|, 4) + 10
  guard digits against their cancellation.  K(m) is formed as pi/(2 agm(1, sqrt(1 - m)))
  (DLMF 19.8.5) with 1 - m (resp. q') taken from the exact products (w - 4)(w + 4), so that
  nothing cancels at the square's band edges.

The integrands have integrable logarithmic singularities where the square's argument crosses
its band edges +-4 and its van Hove point 0: [0, pi] (sc) or [0, pi/2] (bcc) is split there
(sc: cos k = (E - a)/2, a in {4, 0, -4}; bcc: cos k = +-E/8), at the real parts of these
points for complex E, and into pieces against the oscillation of cos(n k).  Each piece is
integrated by mpmath's tanh-sinh rule, which handles logarithmic end-point singularities;
the distance to the singular end point is carried separately (k = p + h) so that w - a is a
product of sines of h, never a difference of rounded numbers.  Error control: mpmath's
estimate must be below 10^-(dps+3) |G| (an estimate, not a proven bound).
"""

from __future__ import annotations

from functools import lru_cache
from math import comb
from typing import Any

import mpmath

from ..energy import Energy
from ..errors import PrecisionError

SERIES_FROM = 32


@lru_cache(maxsize=256)
def _walk_counts(p: int, q: int, terms: int) -> tuple[tuple[int, int], ...]:
    """(N, C(N, (N+p+q)/2) C(N, (N+p-q)/2)) for the first ``terms`` admissible N."""
    out: list[tuple[int, int]] = []
    N = p + q
    while len(out) < terms:
        out.append((N, comb(N, (N + p + q) // 2) * comb(N, (N + p - q) // 2)))
        N += 2
    return tuple(out)


def _series(w: Any, p: int, q: int) -> Any:
    """sum_N c_N w^(-N-1) at the current precision, |w| >= SERIES_FROM."""
    eps = mpmath.mpf(2) ** -(mpmath.mp.prec + 10)
    ratio = 16 / abs(w) ** 2
    # c_(N+2)/c_N <= 16 and the terms fall by at least 16/|w|^2 per step
    terms = int(mpmath.ceil(mpmath.log(eps) / mpmath.log(ratio))) + 4
    iw, s = 1 / w, mpmath.mpf(0)
    iw2 = iw * iw
    x = iw ** (p + q + 1)
    for _, c in _walk_counts(p, q, terms):
        s += c * x
        x *= iw2
    return s


def _K_from_comp(mc: Any) -> Any:
    """K(m) from m' = 1 - m (DLMF 19.8.5: K = pi / (2 agm(1, sqrt(m'))))."""
    return mpmath.pi / (2 * mpmath.agm(1, mpmath.sqrt(mc)))


def _basis(w: Any, wm4: Any, wp4: Any, on_cut: bool) -> tuple[Any, Any]:
    """(G_sq(w; 0,0), G_sq(w; 1,1)); wm4 = w - 4 and wp4 = w + 4 given separately
    (accurately); on_cut: w is real and the retarded value w + i0 is wanted."""
    pi = mpmath.pi
    # inside the square's band: decided by the signs of the accurate w - 4 and w + 4, not by
    # |w| < 4 (w itself is rounded: next to a band edge it may fall on the wrong side)
    if on_cut and wm4 < 0 < wp4:
        x = abs(w)
        # q = x^2/16 and q' = 1 - q = -(w - 4)(w + 4)/16, each from the side where it is
        # accurate (so that neither leaves [0, 1] by rounding)
        q = x * x / 16
        if q > 0.5:
            qc = -(wm4 * wp4) / 16
            q = 1 - qc
        else:
            qc = 1 - q
        Kq, Kc = _K_from_comp(qc), _K_from_comp(q)
        Eq, Ec = mpmath.ellipe(q), mpmath.ellipe(qc)
        g00 = mpmath.mpc(Kq, -Kc) / (2 * pi)
        g11 = (x * x - 8) / 8 * g00 - mpmath.mpc(Eq - qc * Kq, Ec - q * Kc) / pi
        if w < 0:  # G(-x + i0; m, n) = -(-1)^(m+n) conj G(x + i0; m, n), m + n even
            g00, g11 = -mpmath.conj(g00), -mpmath.conj(g11)
        return g00, g11
    if on_cut:
        w, wm4, wp4 = mpmath.re(w), mpmath.re(wm4), mpmath.re(wp4)
    mc = wm4 * wp4 / (w * w)  # 1 - 16/w^2
    m = 1 - mc if on_cut else 16 / (w * w)
    K = _K_from_comp(mc)
    g00 = 2 * K / (pi * w)
    g11 = (w * w - 8) / 8 * g00 - w * mpmath.ellipe(m) / (4 * pi)
    return g00, g11


def square_value(w: Any, wm4: Any, wp4: Any, p: int, q: int, on_cut: bool) -> Any:
    """G_sq(w; p, q) (module docstring) at the current mpmath precision."""
    p, q = abs(p), abs(q)
    if q > p:
        p, q = q, p
    if abs(w) >= SERIES_FROM:
        return _series(w, p, q)
    guard = int((p + q) * mpmath.log10(max(abs(w), 4))) + 10
    with mpmath.workdps(mpmath.mp.dps + guard):
        g00, g11 = _basis(w, wm4, wp4, on_cut)
        if p == 0:
            return +g00
        if p == 1 and q == 1:
            return +g11
        # columns of the octant: G(m, n), 0 <= n <= m (exact/square_green.py, on values)
        prev, cur = [g00], [(w * g00 - 1) / 4, g11]
        dprev, dcur = g00, g11
        for k in range(1, p):
            dnext = (k * (w * w - 8) / 2 * dcur - (2 * k - 1) * dprev) / (2 * k + 1)
            new = []
            for n in range(k):
                below = cur[n - 1] if n > 0 else cur[1]
                new.append(w * cur[n] - prev[n] - cur[n + 1] - below)
            new.append(w * cur[k] / 2 - cur[k - 1])
            new.append(dnext)
            prev, cur, dprev, dcur = cur, new, dcur, dnext
        return +cur[q]


def _mp(x: Any) -> Any:
    return mpmath.mpf(x.numerator) / x.denominator


def _energy(E: Energy) -> Any:
    return mpmath.mpc(_mp(E.re), _mp(E.im)) if E.im else _mp(E.re)


def _splits(lattice: str, E: Energy) -> tuple[Any, list[tuple[Any, Any]]]:
    """(upper end of the k range, [(k_a, a)]): the points where the square's argument is a
    (a in {4, 0, -4}), as complex angles k_a (cos k_a = (E - a)/2 for sc, E/8 for bcc) whose
    real parts lie inside the range (for real E: the real ones)."""
    Ez = _energy(E)
    pi = +mpmath.pi
    out = []
    if lattice == "sc":
        top = pi
        for a in (4, 0, -4):
            out.append((mpmath.acos((Ez - a) / 2), a))
    else:
        top = pi / 2
        out.append((mpmath.acos(Ez / 8), 4))
        out.append((mpmath.acos(-Ez / 8), -4))
    keep = []
    for ka, a in out:
        r = mpmath.re(ka)
        if 0 < r < top and (E.im != 0 or mpmath.im(ka) == 0):
            keep.append((ka, a))
    return top, keep


def _integrand(lattice: str, E: Energy, site: tuple[int, int, int]) -> Any:
    """f(base, h): the full integrand (with its prefactor 1/pi or 2/pi) at k = base + h.

    The square's w - a (a in {4, 0, -4}) is 2 (cos k_a - cos k) = 4 sin((k + k_a)/2)
    sin((k - k_a)/2) with cos k_a = (E - a)/2 (sc); for bcc E -+ 8 cos k = 8 (cos k_(+-) - cos k)
    with cos k_(+-) = +-E/8, and w -+ 4 = (E -+ 8 cos k)/(2 cos k).  The second sine takes
    (base - k_a) + h, exactly h when the piece starts at k_a."""
    l, m, n = site
    Ez = _energy(E)
    on_cut = E.im == 0
    pi = +mpmath.pi
    if lattice == "sc":
        sq = (l, m)
        fac = 1 / pi
        cos_ka = {a: (Ez - a) / 2 for a in (4, 0, -4)}
    else:
        sq = ((l + m) // 2, (l - m) // 2)
        fac = 2 / pi
        cos_ka = {4: Ez / 8, -4: -Ez / 8}
    # k_a and pi - k_a = acos(-cos k_a), each accurate: next to k = k_a = pi the first sine's
    # argument (k + k_a)/2 is close to pi and is taken as pi minus ((pi - k) + (pi - k_a))/2
    kas = {a: (mpmath.acos(c), mpmath.acos(-c)) for a, c in cos_ka.items()}

    def sine_sum(base: Any, h: Any, ka: Any, kc: Any) -> Any:
        """sin((k + k_a)/2), k = base + h."""
        if mpmath.re(base + ka) > pi:
            return mpmath.sin(((pi - base) + kc - h) / 2)
        return mpmath.sin((base + h + ka) / 2)

    def f(base: Any, h: Any) -> Any:
        k = base + h
        d = {a: 4 * sine_sum(base, h, ka, kc) * mpmath.sin(((base - ka) + h) / 2)
             for a, (ka, kc) in kas.items()}  # 2 (cos k_a - cos k)
        if on_cut:
            d = {a: mpmath.re(v) for a, v in d.items()}
        if lattice == "sc":
            val = square_value(d[0], d[4], d[-4], sq[0], sq[1], on_cut)
        else:
            t = 2 * mpmath.cos(k)
            val = square_value(Ez / t, 4 * d[4] / t, -4 * d[-4] / t, sq[0], sq[1],
                               on_cut) / t
        return fac * mpmath.cos(n * k) * val

    return f


def _pieces(lattice: str, E: Energy, n: int) -> list[Any]:
    """Split points of the k range (module docstring), sorted, end points included."""
    top, splits = _splits(lattice, E)
    pts = [mpmath.mpf(0), top] + [mpmath.re(ka) for ka, _ in splits]
    count = n // 4 + 1
    pts += [top * j / count for j in range(1, count)]
    return sorted(set(pts))


def _one_pass(lattice: str, E: Energy, site: tuple[int, int, int], wdps: int,
              maxdeg: int | None) -> tuple[Any, Any]:
    with mpmath.workdps(wdps):
        f = _integrand(lattice, E, site)
        pts = _pieces(lattice, E, site[2])
        total, err = mpmath.mpc(0), mpmath.mpf(0)
        kw = {"maxdegree": maxdeg} if maxdeg else {}
        for p, q in zip(pts[:-1], pts[1:], strict=True):
            half = (q - p) / 2
            # each half of the piece measured from its own end point (k = p + h, k = q - h)
            v1, e1 = mpmath.quad(lambda h, p=p: f(p, h), [0, half], error=True, **kw)
            v2, e2 = mpmath.quad(lambda h, q=q: f(q, -h), [0, half], error=True, **kw)
            total += v1 + v2
            err += e1 + e2
        return total, err


def green_integral(lattice: str, E: Energy, site: tuple[int, int, int], dps: int) -> Any:
    """G(E; site) for ``lattice`` in {"sc", "bcc"} by (S) or (B) of the module docstring, to
    about ``dps`` significant digits relative to |G| (mpmath's error estimate, not a bound).
    ``site`` is canonical (l >= m >= n >= 0) and on the lattice.  Returns an mpmath number
    (mpc) created at ``dps + 10`` digits.

    >>> from latgreen.energy import parse_energy
    >>> # sc at the band edge: W_sc / 2 = 0.2527310098... (Watson; OEIS A086231 / 6)
    >>> mpmath.nstr(green_integral("sc", parse_energy("6", "sc"), (0, 0, 0), 20).real, 15)
    '0.252731009858663'
    """
    l, m, n = site
    # sc: G(l, m, n) is symmetric in its coordinates, so (S) may integrate along any axis;
    # the other orders are tried when the first one's error estimate stalls (seen at the van
    # Hove energies E = +-2, where some square sites converge slowly at the end k = 0)
    orders = [(l, m, n), (m, n, l), (l, n, m)] if lattice == "sc" else [(l, m, n)]
    for order in dict.fromkeys(orders):
        wdps, maxdeg = dps + 15, None
        for _ in range(3):
            v, err = _one_pass(lattice, E, order, wdps, maxdeg)
            with mpmath.workdps(wdps):
                if v != 0 and err <= abs(v) * mpmath.mpf(10) ** -(dps + 3):
                    with mpmath.workdps(dps + 10):
                        return +v
            wdps, maxdeg = wdps + 10, (maxdeg or 6) + 2
    raise PrecisionError(f"the 1-D integral for {lattice} G({E}; {site}) did not reach "
                         f"{dps} digits")
