"""Closed forms of the square lattice's G(E; 0, 0) and G(E; 1, 1) as rigorous acb balls.

Conventions (DESIGN.md): hopping +1 to the 4 nearest neighbours, band [-4, 4],

    G(E; m, n) = (2 pi)^-2 int int cos(m x) cos(n y) / (E - 2 cos x - 2 cos y) dx dy,

analytic in E on C minus [-4, 4]; on the band the retarded limit E + i0.  K(m), E(m) are the
complete elliptic integrals of *parameter* m = k^2 (DLMF 19.2; python-flint ``acb.elliptic_k``,
``acb.elliptic_e``).

Off the cut.  For |E| > 4, G(E;0,0) = sum_k c_k / E^(k+1) with c_k the number of closed walks
of length k: c_(2k) = binom(2k,k)^2 (OEIS A002894), c_odd = 0.  With K(m) = (pi/2) sum_k
(binom(2k,k)/4^k)^2 m^k (DLMF 19.5.1), (2/(pi E)) K(16/E^2) has the same series.  K is analytic
on C minus [1, oo) (principal branch) and E -> 16/E^2 maps E into [1, oo) exactly when E is real
with 0 < |E| <= 4.  So F(E) = (2/(pi E)) K(16/E^2) is analytic on the connected domain C minus
[-4, 4], equals G for |E| > 4, and by the identity theorem G(E;0,0) = F(E) everywhere off the
cut, including |E| < 4 off the real axis.

On the cut (0 < |x| < 4, E = x + i0).  m = 16/E^2 approaches the real axis (> 1) from below for
x > 0, from above for x < 0.  Splitting K's integral at sin(theta_0) = m^(-1/2):
K(m -+ i0) = m^(-1/2) [K(1/m) -+ i K(1 - 1/m)] for m > 1.  With q = x^2/16, q' = 1 - q:

    G(x + i0; 0,0) = [K(q) - i K(q')] / (2 pi)             (0 < x < 4),
    G(-x + i0; m,n) = -(-1)^(m+n) conj G(x + i0; m,n)      (bipartite symmetry, below),

so Im G(x + i0; 0,0) < 0 on both sides and the density of states is K(1 - x^2/16)/(2 pi^2).
Trap: mpmath and flint return K(m - i0) for real m > 1, so the naive formula is right for
0 < x < 4 but gives the *advanced* value for -4 < x < 0; K is never evaluated on its cut here.

G(E;1,1).  Rotating the zone (u = (x+y)/2, v = (x-y)/2; 2cos x + 2cos y = 4 cos u cos v),
averaging over v ((1/2pi) int dv/(A - B cos v) = (A^2 - B^2)^(-1/2)) and putting phi = 2u:

    G(E; n, n) = (1/2pi) int_0^2pi cos(n phi) / sqrt(E^2 - 8 - 8 cos phi) dphi.      (D)

For n = 1, cos phi = [A - (A - B cos phi)]/B with A = E^2 - 8, B = 8 and
(1/2pi) int sqrt(A - B cos phi) dphi = (2E/pi) E(16/E^2) give

    G(E;1,1) = ((E^2 - 8)/8) G(E;0,0) - (E/(4 pi)) E(16/E^2),

valid off the cut by the same continuation argument; on the cut (0 < x < 4, q as above)
E(m - i0) = sqrt(m) [E(q) - q' K(q)] + i sqrt(m) [E(q') - q K(q')], q = 1/m, hence

    G(x+i0;1,1) = ((x^2-8)/8) G(x+i0;0,0) - (1/pi) [E(q) - q' K(q) + i (E(q') - q K(q'))].

Bipartite symmetry: the sublattice sign (-1)^(m+n) maps H to -H, so G(-E) = -(-1)^(m+n) G(E)
off the cut; with G(conj E) = conj G(E) this gives the reflection used above.

Every ball is computed at ``prec + 20`` bits with E entered exactly (fmpq) and pi as
``arb.pi()``: Arb's guarantees make the results rigorous enclosures.
"""

from __future__ import annotations

import functools
from fractions import Fraction

from flint import acb, arb, ctx, fmpq

from ..energy import Energy


def arb_q(x: Fraction) -> arb:
    return arb(fmpq(x.numerator, x.denominator))


def _cut_values(x: Fraction) -> tuple[acb, acb]:
    """(G(x+i0;0,0), G(x+i0;1,1)) for 0 < x < 4 at the current flint precision."""
    q = arb_q(x * x / 16)
    qc = 1 - q
    Kq, Eq = acb(q).elliptic_k(), acb(q).elliptic_e()
    Kc, Ec = acb(qc).elliptic_k(), acb(qc).elliptic_e()
    pi = arb.pi()
    g00 = (Kq - acb(0, 1) * Kc) / (2 * pi)
    g11 = arb_q((x * x - 8) / 8) * g00 - (Eq - qc * Kq + acb(0, 1) * (Ec - q * Kc)) / pi
    return g00, g11


def _closed(er: Fraction, ei: Fraction, prec: int) -> tuple[acb, acb]:
    old = ctx.prec
    try:
        # on the cut, K(1 - x^2/16) needs the bits of x^2's denominator to see that its
        # argument is not 1 when x is tiny (E = 10^-30 is exact)
        ctx.prec = prec + 20 + (2 * er.denominator.bit_length() if ei == 0 else 0)
        if ei == 0 and abs(er) < 4:
            g00, g11 = _cut_values(abs(er))
            if er < 0:  # G(-x+i0; m,n) = -(-1)^(m+n) conj G(x+i0; m,n), m+n even here
                g00, g11 = -g00.conjugate(), -g11.conjugate()
        else:
            z = acb(arb_q(er), arb_q(ei))
            m = 16 / (z * z)
            pi = arb.pi()
            g00 = 2 * m.elliptic_k() / (pi * z)
            g11 = (z * z - 8) / 8 * g00 - z * m.elliptic_e() / (4 * pi)
        return +g00, +g11
    finally:
        ctx.prec = old


@functools.lru_cache(maxsize=64)
def basis_balls(E: Energy, prec: int) -> tuple[acb, acb]:
    """Balls (G(E;0,0), G(E;1,1)) with about ``prec`` bits (cached per energy and precision).

    >>> from latgreen.energy import parse_energy
    >>> g00, g11 = basis_balls(parse_energy("9/2"), 64)
    >>> g00.real.str(15, radius=False)
    '0.316235097306710'
    """
    return _closed(E.re, E.im, prec)


def dos_ball(x: Fraction, prec: int) -> arb:
    """rho(x) = K(1 - x^2/16) / (2 pi^2) for 0 < |x| < 4 (from the cut formula above)."""
    old = ctx.prec
    try:
        ctx.prec = prec + 20 + 2 * x.denominator.bit_length()  # see _closed
        v = acb(arb_q(1 - x * x / 16)).elliptic_k().real / (2 * arb.pi() ** 2)
        return +v
    finally:
        ctx.prec = old
