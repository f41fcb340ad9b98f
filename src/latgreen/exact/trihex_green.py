"""Exact forms of the triangular and honeycomb lattices' Green's functions at a
(Gaussian-)rational energy, in a two-function basis:

    triangular:  G(E; m, n) = a G00 + b G20 + c,   G00 = G(E; 0,0), G20 = G(E; 2,0),
    honeycomb:   G(E; m, n, s) = a T00 + b T20 + c, T00 = G_tri(w; 0,0), T20 = G_tri(w; 2,0),
                 w = E^2 - 3 (E + i0 on the band becomes w + i0 sign(E)),

with a, b, c polynomials in E with rational coefficients, hence exact Gaussian rationals.  The
closed forms of the basis functions are in ``methods/trihex_green_closed.py``.  Every form is
``derived`` (each step an identity):

1. Lattice equation, from (E - H) G = delta: E G(r) - sum_(6 neighbours) G = delta_(r,0);
   neighbours +-(1,0), +-(0,1), +-(-1,1); point group C6v (``lattices/triangular.py``).
2. Axis recurrence.  G_m := G(E; m, 0) = (1/pi) int_0^pi cos(mk)/S dk (the reduced integral at
   n = 0), S^2 = P(c) = (E - 2c)^2 - 8(1 + c) = 4c^2 - (4E + 8)c + E^2 - 8, c = cos k.  Off
   the band S has no zero on [0, pi] and sin(mk) S vanishes at both ends, so the integral of
   d/dk[sin(mk) S] = [m cos(mk) P + sin(mk) (dP/dk)/2]/S, dP/dk = -(8c - 4E - 8) sin k, is 0.
   With cos(mk) c = [cos(m+1)k + cos(m-1)k]/2, cos(mk) c^2 = [cos(m+2)k + 2cos(mk) +
   cos(m-2)k]/4, sin(mk) sin k = [cos(m-1)k - cos(m+1)k]/2, sin(mk) sin k c = [cos(m-2)k -
   cos(m+2)k]/4 the numerator is a sum of cos(jk), giving

       (m+1) G_{m+2} - (E+2)(2m+1) G_{m+1} + (E^2-6) m G_m - (E+2)(2m-1) G_{m-1}
           + (m-1) G_{m-2} = 0,

   with G_{-j} = G_j; m = 0 is empty, m = 1 gives G_3.  It holds off the band (analytic
   continuation from real E > 6) and, as an identity between boundary values, on it.  At
   E = 6 it is the resistance recurrence of ``exact/triangular.py`` (coefficients 16m + 8, 30m,
   16m - 8).
3. Seeds: G_0 = G00, G_2 = G20, and G_1 = (E G00 - 1)/6 (1. at the origin, whose six
   neighbours are equivalent).
4. The sector 0 <= n <= m from the axis by the lattice equation, exactly as the resistance's
   fill (``exact/triangular.py``) with 6 replaced by E:
   row 1: G(m,1) = [E G(m,0) - G(m+1,0) - G(m-1,0)]/2 - G(m-1,1), G(0,1) = G(1,0);
   row n+1: G(m,n+1) = E G(m,n) - G(m+1,n) - G(m-1,n) - G(m,n-1) - G(m+1,n-1) - G(m-1,n+1),
   m = n+1, n+2, ..., first step G(n,n+1) = G(n+1,n).  Reaching (m, n) needs the axis to m + n.
   The lattice equations at the diagonal sites, never used while filling, are checked in the
   tests (exact zero residual; delta at the origin).
5. Honeycomb (``exact/honeycomb.py``): on the A sublattice H^2 = 3 + H_tri and
   (E - H)^-1 = (E + H)(E^2 - H^2)^-1, so G(E; m,n,0) = E G_tri(w; m,n) and, by the lattice
   equation at B(m,n) (no source there; its neighbours A(m,n), A(m+1,n), A(m,n+1)),
   G(E; m,n,1) = [G(m,n,0) + G(m+1,n,0) + G(m,n+1,0)]/E = G_tri(w;m,n) + G_tri(w;m+1,n)
   + G_tri(w;m,n+1).

6. The honeycomb's Dirac point E = 0 (w = -3, the triangular band bottom, where T00 diverges
   like log(w + 3)/(pi sqrt 3): the in-band closed form with K(k^2) ~ (1/2) log(16/(1 - k^2)),
   1 - k^2 ~ 16 sqrt(w + 3)/3).  The A sites are E G_tri(w) -> 0.  At a B site the form
   a T00 + b T20 + c has a finite limit: with T20 = alpha T00 + beta dT00/dw + gamma
   (``methods/trihex_green_closed.py``), alpha(-3) = -1/2, gamma(-3) = 1/6 and
   beta = -(w - 6)(w + 2)(w + 3)/3, so beta dT00/dw -> -3/(pi sqrt 3) = -sqrt(3)/pi, while
   (a + alpha b) T00 must tend to 0: a(-3) = b(-3)/2 exactly (asserted for every site; it
   holds).  Hence G(0; B) = c + b/6 - b sqrt(3)/pi with a, b, c the sums of the three
   triangular forms' coefficients at w = -3: rationals, printed over the basis
   (sqrt(3)/pi, 1).  The limit is real (Im T00 stays finite and Im dT00/dw ~ 1/sqrt(w + 3)
   is killed by beta).  Confirmed to 40 digits at every B site with |m|, |n| <= 5 by the
   independent 1-D integral ``methods/trihex_green_quadrature.hc_dirac_quad``.

Each coefficient (of G00, G20, 1) runs through the same linear recurrences from its own seeds,
so the three are computed as independent sequences of Gaussian rationals.

Symmetry zeros used when printing: for real E outside the band every coefficient and the basis
are real, so Im G = 0; on the honeycomb at E = iy (y > 0) the bipartite symmetry
G(-E; r) = -(-1)^s G(E; r) with G(conj E) = conj G(E) gives conj G = -(-1)^s G: Re G = 0 on
the A sites, Im G = 0 on the B sites.
"""

from __future__ import annotations

from collections.abc import Iterator
from dataclasses import dataclass
from fractions import Fraction
from typing import Any

from flint import acb, arb, fmpq
from gmpy2 import mpq

from ..energy import Energy
from ..lattices.base import Site
from ..lattices.honeycomb import HONEYCOMB, column_sites
from ..lattices.triangular import canonical_pair
from ..methods.trihex_green_closed import basis_balls, hc_w
from .complex_eval import ComplexRounded, certify_complex
from .square_green import GreenForm, combine, start_bits

NAMES = {"triangular": ("G00", "G20"), "honeycomb": ("T00", "T20")}
DIRAC_NAMES = ("sqrt(3)/pi", "0")  # the honeycomb at E = 0: forms p*sqrt(3)/pi + q


def is_dirac(lattice: str, E: Energy) -> bool:
    """The honeycomb's Dirac point E = 0, where the forms are the limits of item 6."""
    return lattice == "honeycomb" and E.re == 0 and E.im == 0


@dataclass(frozen=True)
class GQ:
    """A Gaussian rational re + i im (gmpy2 mpq parts); real energies use plain mpq instead."""

    re: Any
    im: Any

    def __add__(self, o: Any) -> GQ:
        if isinstance(o, GQ):
            return GQ(self.re + o.re, self.im + o.im)
        return GQ(self.re + o, self.im)

    __radd__ = __add__

    def __sub__(self, o: Any) -> GQ:
        if isinstance(o, GQ):
            return GQ(self.re - o.re, self.im - o.im)
        return GQ(self.re - o, self.im)

    def __rsub__(self, o: Any) -> GQ:
        return GQ(o - self.re, -self.im)

    def __mul__(self, o: Any) -> GQ:
        if isinstance(o, GQ):
            return GQ(self.re * o.re - self.im * o.im, self.re * o.im + self.im * o.re)
        return GQ(self.re * o, self.im * o)

    __rmul__ = __mul__

    def __truediv__(self, k: Any) -> GQ:  # by a rational
        return GQ(self.re / k, self.im / k)

    def __neg__(self) -> GQ:
        return GQ(-self.re, -self.im)


def _scalar(re_: Fraction, im_: Fraction) -> Any:
    r = mpq(re_.numerator, re_.denominator)
    return r if im_ == 0 else GQ(r, mpq(im_.numerator, im_.denominator))


def _axis(e: Any, seeds: tuple[Any, Any, Any], M: int) -> list[Any]:
    """G_0..G_M of one coefficient sequence by the five-term recurrence (docstring, 2.)."""
    g = list(seeds[: M + 1])
    ep2, e26 = e + 2, e * e - 6
    for m in range(1, M - 1):
        gm2 = g[m - 2] if m >= 2 else g[1]
        g.append((ep2 * (2 * m + 1) * g[m + 1] - e26 * m * g[m] + ep2 * (2 * m - 1) * g[m - 1]
                  - (m - 1) * gm2) / (m + 1))
    return g


def _sector(e: Any, seeds: tuple[Any, Any, Any], M: int, n_max: int) -> dict[int, list[Any]]:
    """rows[n][i] = G(n + i, n) for n <= n_max, n + i <= M - n (docstring, 4.)."""
    X = _axis(e, seeds, max(M, 2))[: M + 1]
    rows = {0: X}
    if n_max >= 1 and M >= 1:
        out, prev = [], X[1]
        for m in range(1, M):
            prev = (e * X[m] - X[m + 1] - X[m - 1]) / 2 - prev
            out.append(prev)
        rows[1] = out
    for n in range(1, n_max):
        cur, low = rows[n], rows[n - 1]
        out, prev = [], cur[1]
        for i in range(1, M - 2 * n):
            prev = e * cur[i] - cur[i + 1] - cur[i - 1] - low[i + 1] - low[i + 2] - prev
            out.append(prev)
        rows[n + 1] = out
    return rows


def _fr(x: Any) -> tuple[Fraction, Fraction]:
    if isinstance(x, GQ):
        return (Fraction(int(x.re.numerator), int(x.re.denominator)),
                Fraction(int(x.im.numerator), int(x.im.denominator)))
    return Fraction(int(x.numerator), int(x.denominator)), Fraction(0)


class TriSector:
    """The triangular forms' three coefficient sequences at energy (re, im) over the sites
    (m, n) with 0 <= n <= n_max and m + n <= M."""

    def __init__(self, re_: Fraction, im_: Fraction, M: int, n_max: int) -> None:
        e = _scalar(re_, im_)
        zero, one = mpq(0), mpq(1)
        seeds = ((one, e / 6, zero), (zero, zero, one), (zero, mpq(-1, 6), zero))
        self.M, self.n_max = M, n_max
        self.rows = [_sector(e, s, M, n_max) for s in seeds]

    def coeffs(self, m: int, n: int) -> tuple[Any, Any, Any]:
        m, n = canonical_pair(m, n)
        if n > self.n_max or m + n > self.M:  # pragma: no cover - callers size the sector
            raise ValueError(f"site {(m, n)} is outside this sector")
        return tuple(r[n][m - n] for r in self.rows)


def _form(lattice: str, c: tuple[Any, Any, Any], dirac: bool = False) -> GreenForm:
    names = DIRAC_NAMES if dirac else NAMES[lattice]
    return GreenForm(tuple(_fr(x) for x in c), names=names)


def _dirac_limit(c: tuple[Any, Any, Any]) -> tuple[Any, Any, Any]:
    """(a, b, c) of a B site at w = -3 -> (-b, 0, c + b/6): G = -b sqrt(3)/pi + c + b/6."""
    a, b, k = c
    if a != b / 2:  # pragma: no cover - a proven identity (module docstring, item 6)
        raise ArithmeticError("the Dirac-point limit does not exist: a(-3) != b(-3)/2")
    return -b, mpq(0), k + b / 6


def tri_sites(site: Site) -> list[tuple[int, int]]:
    """The triangular sites whose G_tri(w) make up the honeycomb G at ``site``."""
    m, n, s = site
    return [(m, n)] if s == 0 else [(m, n), (m + 1, n), (m, n + 1)]


def _hc_coeffs(sec: TriSector, e: Any, site: Site) -> tuple[Any, Any, Any]:
    parts = [sec.coeffs(p, q) for p, q in tri_sites(site)]
    if site[2] == 0:
        return tuple(e * x for x in parts[0])
    out = tuple(parts[0][j] + parts[1][j] + parts[2][j] for j in range(3))
    return _dirac_limit(out) if e == 0 else out


def _sector_for(lattice: str, E: Energy, M: int, n_max: int) -> TriSector:
    if lattice == "triangular":
        return TriSector(E.re, E.im, M, n_max)
    w_re, w_im, _ = hc_w(E)
    return TriSector(w_re, w_im, M, n_max)


def columns(lattice: str, E: Energy, extent: int) -> Iterator[tuple[int, list[Site],
                                                                    list[GreenForm]]]:
    """(m, sites, forms) for the columns m = 0..extent of the canonical region, in table
    order (the whole sector is computed first).

    >>> from latgreen.energy import parse_energy
    >>> [str(f) for _, _, fs in columns("triangular", parse_energy("7"), 1) for f in fs]
    ['G00', '7/6*G00 - 1/6', '29/12*G00 - 1/2*G20 - 5/12']
    """
    if lattice == "triangular":
        sec = _sector_for(lattice, E, 2 * extent, extent)
        for m in range(extent + 1):
            yield m, [(m, n) for n in range(m + 1)], [_form(lattice, sec.coeffs(m, n))
                                                      for n in range(m + 1)]
        return
    sec = _sector_for(lattice, E, 2 * (extent + 1), extent + 1)
    e = _scalar(E.re, E.im)
    dirac = is_dirac(lattice, E)
    for m in range(extent + 1):
        sites = column_sites(m)
        yield m, sites, [_form(lattice, _hc_coeffs(sec, e, x), dirac) for x in sites]


def green_form(lattice: str, E: Energy, site: Site) -> GreenForm:
    """The exact form of G(E; site) at a canonical site of ``lattice``.

    >>> from latgreen.energy import parse_energy
    >>> str(green_form("honeycomb", parse_energy("1/2+1j", "honeycomb"), (0, 0, 1)))
    '(-1/4 + 1/3*I)*T00 - 1/3'
    """
    if lattice == "triangular":
        m, n = canonical_pair(*site)
        return _form(lattice, _sector_for(lattice, E, m + n, n).coeffs(m, n))
    site = HONEYCOMB.canonical(site)
    ts = [canonical_pair(p, q) for p, q in tri_sites(site)]
    sec = _sector_for(lattice, E, max(p + q for p, q in ts), max(q for _, q in ts))
    return _form(lattice, _hc_coeffs(sec, _scalar(E.re, E.im), site), is_dirac(lattice, E))


def zero_parts(lattice: str, E: Energy, site: Site) -> tuple[bool, bool]:
    """(Re G = 0, Im G = 0) exactly, by the symmetries in the module docstring."""
    lo, hi = (-3, 6) if lattice == "triangular" else (-3, 3)
    if is_dirac(lattice, E):  # real limits; 0 on the A sites
        return site[2] == 0, True
    if E.im == 0:
        return False, not lo <= E.re <= hi
    if lattice == "honeycomb" and E.re == 0:
        return site[2] == 0, site[2] == 1
    return False, False


def _acb_cq(x: tuple[Fraction, Fraction]) -> acb:
    return acb(arb(fmpq(x[0].numerator, x[0].denominator)),
               arb(fmpq(x[1].numerator, x[1].denominator)))


def ball(form: GreenForm, lattice: str, E: Energy, bits: int) -> acb:
    """a B0 + b B2 + c as a ball at ``bits`` of working precision (B0, B2 the basis)."""
    return combine(form, *basis_balls(lattice, E, bits), bits)


def evaluate(form: GreenForm, lattice: str, E: Energy, site: Site, digits: int
             ) -> ComplexRounded:
    """Both components correctly rounded to ``digits`` significant digits each (or exactly 0
    by symmetry), certified by balls whose precision follows the coefficient sizes."""
    zero = zero_parts(lattice, E, site)
    if all(x == 0 for c in form.coeffs for x in c):  # e.g. B sites at the Dirac point
        zero = (True, True)
    return certify_complex(lambda bits: ball(form, lattice, E, bits), start_bits(form, digits),
                           digits, zero, f"G({E};{site})")
