"""Closed forms of the triangular lattice's G(E; 0,0) and G(E; 2,0) as rigorous acb balls, and
through them the honeycomb's basis and both densities of states.

Conventions (DESIGN.md): hopping +1, G(E; r) = <0|(E - H)^-1|r>, triangular band [-3, 6],
honeycomb band [-3, 3], E + i0 on the band.  K(m), E(m): complete elliptic integrals of
*parameter* m (DLMF 19.2); R_F, R_D: Carlson's symmetric integrals (DLMF 19.16.1, 19.16.5),
principal branches (python-flint ``acb.elliptic_k/_e/_rf/_rd``).

G(E; 0) (derivation in research notes, now here).  The reduced integral (``methods/
trihex_green_quadrature.py``) at the origin is G = (1/pi) int_0^pi dk / S, with c = cos k,
S^2 = P(c) = 4c^2 - (4E + 8)c + E^2 - 8 = 4(c - c+)(c - c-), c+- = (E + 2)/2 +- s,
s = sqrt(E + 3).

* Off the band (Im E > 0; real E > 6 or E < -3): with u = tan^2(k/2),
  c+- - c = [(c+- - 1) + (c+- + 1)u]/(1 + u), and the principal roots factorise along the
  path (the segments avoid the negative axis; the constant is fixed at k = pi, S(pi) = E + 2):

      G(E; 0) = 2 R_F(0, p, q) / (pi (E + 2)),
      p = (s - 1)(s + 3)/(s + 1)^2,  q = (s + 1)(s - 3)/(s - 1)^2.

  E -> oo: p, q -> 1, R_F(0,1,1) = pi/2, G -> 1/E.  Im E < 0 by conjugation.
* -2 < E < 6 (E + i0; real roots -1 < c- < 1 < c+: Re from [-1, c-], Im from [c-, 1]):
      G = [K(m) - i K(1 - m)] / (2 pi sqrt s),  m = (s-1)^3 (s+3)/(16 s),
      1 - m = (3 - s)(s + 1)^3/(16 s).
* -3 < E < -2 (roots -1 < c- < c+ < 1):
      G = -2 [2 K(m) + i K(1 - m)] / (pi sqrt D),  D = (3 - s)(s + 1)^3,
      m = (1 - s)^3 (s + 3)/D,  1 - m = 16 s/D.
  (Complete integrals between consecutive real roots of a quartic, e.g. Byrd & Friedman
  252.00/256.00, from memory; each formula is confirmed against the quadrature at 40 digits
  in tests/test_trihex_green.py.)

dG(E; 0)/dE.  Off the band by DLMF 19.18.1 (dR_F/dz = -R_D(x, y, z)/6, R_F symmetric):
  dR_F(0,p,q)/dE = -[R_D(0,q,p) p' + R_D(0,p,q) q']/6, p' = 4/(s (s+1)^3),
  q' = 4/(s (s-1)^3) (dp/ds = 8/(s+1)^3, dq/ds = 8/(s-1)^3, ds/dE = 1/(2s));
in the band by dK/dm = [E(m) - (1-m) K(m)]/(2 m (1-m)) (DLMF 19.4.1 with m = k^2) and
dm/ds = 3 (s-1)^2 (s+1)^2/(16 s^2) (-2 < E < 6), dm/ds = -48 (s-1)^2/((s-3)^2 (s+1)^4),
dD/ds = -4 (s-2)(s+1)^2 (-3 < E < -2).  On the band G(x + i0) is the boundary value of an
analytic function that is smooth in x away from -3, -2, 6, so its x-derivative is the
boundary value of dG/dE.

G(E; 2,0) (Picard-Fuchs reduction, derived here).  With I_j = int_0^pi c^j/S dk and
J_j = int_0^pi c^j/S^3 dk (off the band, where S has no zero on [0, pi]):
d/dk[sin k c^j/S] integrates to 0, i.e. int N_j(c)/S^3 dk = 0 with
N_j = c^(j+1) P - j c^(j-1) (1 - c^2) P + (1 - c^2) c^j P'/2; I_j = int c^j P/S^3;
G' = -(1/pi) int (E - 2c)/S^3; and the lattice equation at the origin, E G(0) - 6 G(1,0) = 1
(the six neighbours are equal by symmetry), gives int (c - E/6)/S dk = -pi/6.  Solving
c^2 P = alpha P + beta (E - 2c) + gamma (c P - E P/6) + l0 N_0 + l1 N_1 identically in c
(sympy; alpha = 2 + E/3 - E^2/12, beta = E^3/6 - E^2/6 - 4E - 6, gamma = E/2 + 1,
l0 = -5E/6 - 2, l1 = 1) and G(2,0) = (2 I_2 - I_0)/pi:

    G(E; 2,0) = -(E^2 - 4E - 18)/6 G(E;0) - (E - 6)(E + 2)(E + 3)/3 dG(E;0)/dE - (E + 2)/6.

Both sides are analytic off the band, so the identity holds there and, as boundary values, on
the band.  Checked against the quadrature to 47 digits at 19 energies in all three regions
(development run) and to 40 digits in the tests.

Honeycomb: on the A sublattice H^2 = 3 + H_tri (``exact/honeycomb.py``), so with w = E^2 - 3
the honeycomb's basis is (G_tri(w; 0,0), G_tri(w; 2,0)); real E on the band (E + i0) maps to
w + i0 sign(E), and for E < 0 the conjugates of the values at w + i0 are taken.

Densities of states rho(E) = -Im G(E + i0; 0)/pi, from the in-band forms:
  triangular: K(1 - m)/(2 pi^2 sqrt s) (-2 < E < 6), 2 K(1 - m)/(pi^2 sqrt D) (-3 < E < -2);
  honeycomb: rho(E) = |E| rho_tri(E^2 - 3) (0 at the Dirac point E = 0).

Every ball is computed at ``prec + 20`` bits (plus the bits of a real energy's denominator,
which the in-band parameters need near the singular points) with E entered exactly (fmpq):
Arb's guarantees make the results rigorous enclosures.
"""

from __future__ import annotations

import functools
from fractions import Fraction

from flint import acb, arb, ctx, fmpq

from ..energy import Energy

TRI_SINGULAR = (Fraction(-3), Fraction(-2), Fraction(6))


def arb_q(x: Fraction) -> arb:
    return arb(fmpq(x.numerator, x.denominator))


def _dk(K: acb, E: acb, m: acb, mc: acb) -> acb:
    """dK/dm = [E(m) - (1 - m) K(m)] / (2 m (1 - m)) (DLMF 19.4.1), 1 - m passed as mc."""
    return (E - mc * K) / (2 * m * mc)


def _kd(m: acb, mc: acb) -> tuple[acb, acb]:
    K = m.elliptic_k()
    return K, _dk(K, m.elliptic_e(), m, mc)


def _inband(x: Fraction) -> tuple[acb, acb]:
    """(G, dG/dE) at x + i0 for -3 < x < 6, x != -2, at the current precision."""
    s = acb(arb_q(x + 3).sqrt())
    pi = arb.pi()
    if x > -2:
        m = (s - 1) ** 3 * (s + 3) / (16 * s)
        mc = (3 - s) * (s + 1) ** 3 / (16 * s)
        dm = 3 * (s - 1) ** 2 * (s + 1) ** 2 / (16 * s**2)
        K, dK = _kd(m, mc)
        Kc, dKc = _kd(mc, m)
        r = s.sqrt()
        g = (K - acb(0, 1) * Kc) / (2 * pi * r)
        dg = (dK * dm + acb(0, 1) * dKc * dm) / (2 * pi * r) - g / (2 * s)
    else:
        D = (3 - s) * (s + 1) ** 3
        dD = -4 * (s - 2) * (s + 1) ** 2
        m = (1 - s) ** 3 * (s + 3) / D
        mc = 16 * s / D
        dm = -48 * (s - 1) ** 2 / ((s - 3) ** 2 * (s + 1) ** 4)
        K, dK = _kd(m, mc)
        Kc, dKc = _kd(mc, m)
        r = D.sqrt()
        g = -2 * (2 * K + acb(0, 1) * Kc) / (pi * r)
        dg = -2 * (2 * dK * dm - acb(0, 1) * dKc * dm) / (pi * r) - g * dD / (2 * D)
    return g, dg / (2 * s)


def _offband(E: acb) -> tuple[acb, acb]:
    """(G, dG/dE) for Im E > 0 or real E outside [-3, 6], at the current precision."""
    s = (E + 3).sqrt()
    p = (s - 1) * (s + 3) / (s + 1) ** 2
    q = (s + 1) * (s - 3) / (s - 1) ** 2
    pi = arb.pi()
    z = acb(0)
    g = 2 * acb.elliptic_rf(z, p, q) / (pi * (E + 2))
    dp, dq = 4 / (s * (s + 1) ** 3), 4 / (s * (s - 1) ** 3)
    drf = -(acb.elliptic_rd(z, q, p) * dp + acb.elliptic_rd(z, p, q) * dq) / 6
    return g, -g / (E + 2) + 2 * drf / (pi * (E + 2))


def _tri_pair(re_: Fraction, im_: Fraction, sign: int) -> tuple[acb, acb]:
    """(G_tri(E;0,0), G_tri(E;2,0)) at E = re + i im, current precision; a real E inside the
    band means E + i0 (sign = 1) or E - i0 (sign = -1)."""
    if im_ == 0 and re_ in TRI_SINGULAR:  # pragma: no cover - refused by the energy check
        raise ValueError(f"E = {re_} is a singular point of the triangular G(E;0)")
    conj = im_ < 0 or (im_ == 0 and sign < 0 and -3 < re_ < 6)
    if im_ == 0 and -3 < re_ < 6:
        g, d = _inband(re_)
        E = acb(arb_q(re_))
    else:
        E = acb(arb_q(re_), arb_q(abs(im_)))
        g, d = _offband(E)
    g2 = -(E * E - 4 * E - 18) / 6 * g - (E - 6) * (E + 2) * (E + 3) / 3 * d - (E + 2) / 6
    if conj:
        return g.conjugate(), g2.conjugate()
    return g, g2


def _bits(x: Fraction) -> int:
    return 2 * (x.numerator.bit_length() + x.denominator.bit_length())


@functools.lru_cache(maxsize=64)
def tri_basis(re_: Fraction, im_: Fraction, sign: int, prec: int) -> tuple[acb, acb]:
    """Balls (G_tri(E;0,0), G_tri(E;2,0)) with about ``prec`` bits (cached).

    >>> g0, g2 = tri_basis(Fraction(7), Fraction(0), 1, 64)
    >>> g0.real.str(15, radius=False), g2.real.str(15, radius=False)
    ('0.184363830554293', '0.0161091846596725')
    """
    old = ctx.prec
    try:
        ctx.prec = prec + 20 + (_bits(re_) if im_ == 0 else 0)
        g, g2 = _tri_pair(re_, im_, sign)
        return +g, +g2
    finally:
        ctx.prec = old


def hc_w(E: Energy) -> tuple[Fraction, Fraction, int]:
    """(Re w, Im w, sign) with w = E^2 - 3: the honeycomb's basis energy; on the band E + i0
    becomes w + i0 sign(E)."""
    return E.re * E.re - E.im * E.im - 3, 2 * E.re * E.im, 1 if E.re >= 0 else -1


def basis_balls(lattice: str, E: Energy, prec: int) -> tuple[acb, acb]:
    """The two basis functions of ``lattice``'s exact forms at E (see the module docstring):
    triangular (G(E;0,0), G(E;2,0)); honeycomb (G_tri(w;0,0), G_tri(w;2,0)), w = E^2 - 3."""
    if lattice == "triangular":
        return tri_basis(E.re, E.im, 1, prec)
    if E.re == 0 and E.im == 0:  # the Dirac point: forms over (sqrt(3)/pi, 1), see
        old = ctx.prec           # exact/trihex_green.py item 6
        try:
            ctx.prec = prec
            return acb(arb(3).sqrt() / arb.pi()), acb(0)
        finally:
            ctx.prec = old
    return tri_basis(*hc_w(E), prec)


def _tri_dos(x: Fraction) -> arb:
    """rho_tri(x) for -3 < x < 6, x != -2, at the current precision."""
    s = arb_q(x + 3).sqrt()
    pi = arb.pi()
    if x > -2:
        mc = (3 - s) * (s + 1) ** 3 / (16 * s)
        return acb(mc).elliptic_k().real / (2 * pi**2 * s.sqrt())
    D = (3 - s) * (s + 1) ** 3
    return 2 * acb(16 * s / D).elliptic_k().real / (pi**2 * D.sqrt())


def dos_ball(lattice: str, x: Fraction, prec: int) -> arb:
    """rho(x) inside the band (x not singular), as a ball with about ``prec`` bits."""
    old = ctx.prec
    try:
        ctx.prec = prec + 20 + _bits(x)
        if lattice == "triangular":
            v = _tri_dos(x)
        elif x == 0:
            v = arb(0)
        else:
            v = abs(arb_q(x)) * _tri_dos(x * x - 3)
        return +v
    finally:
        ctx.prec = old


def dos_text(lattice: str, x: Fraction) -> tuple[str, str]:
    """(top, bottom) of the printed closed form of rho(x) (sympy syntax, bottom a product).

    >>> dos_text("triangular", Fraction(1))
    ('elliptic_k((3 - sqrt(4))*(sqrt(4) + 1)**3/(16*sqrt(4)))', '2*pi**2*4**(1/4)')
    """
    def q(v: Fraction) -> str:
        return str(v.numerator) if v.denominator == 1 else f"({v.numerator}/{v.denominator})"

    y = x if lattice == "triangular" else x * x - 3
    f = f"{q(abs(x))}*" if lattice == "honeycomb" else ""
    X = q(y + 3)
    s = f"sqrt({y + 3})"
    if y > -2:
        return (f"{f}elliptic_k((3 - {s})*({s} + 1)**3/(16*{s}))", f"2*pi**2*{X}**(1/4)")
    D = f"(3 - {s})*({s} + 1)**3"
    return (f"2*{f}elliptic_k(16*{s}/({D}))", f"pi**2*sqrt({D})")
