"""Closed forms of G(E; 0) for the sc and bcc lattices as rigorous acb balls, at any exact
energy (E + i0 on the band), and for the fcc lattice (prefactor identified).

Conventions (DESIGN.md): hopping +1, G(E; 0) = <0|(E - H)^-1|0>, analytic on C minus the band
([-6, 6] sc, [-8, 8] bcc), G(conj E) = conj G(E); on the band the retarded limit E + i0.
K(m) is the complete elliptic integral of the first kind of *parameter* m (DLMF 19.2;
python-flint ``acb.elliptic_k``, principal branch, cut [1, oo)).  Both lattices are bipartite
(H -> -H under the sublattice sign), so G(-E; 0) = -G(E; 0) off the band and, with the
conjugation, G(-x + i0; 0) = -conj G(x + i0; 0) for real x: only Re E >= 0 is evaluated.

bcc (derived; research notes of the cubic lattices, section D).  A bcc step changes each
coordinate by +-1 independently, so there are C(2N, N)^3 closed walks of length 2N and
G(E; 0) = sum_N C(2N, N)^3 E^(-2N-1) = E^-1 3F2(1/2, 1/2, 1/2; 1, 1; 64/E^2)
((1/2)_N / N! = C(2N, N)/4^N).  Clausen's formula [2F1(a, b; a+b+1/2; y)]^2 =
3F2(2a, 2b, a+b; 2a+2b, a+b+1/2; y) (DLMF 16.12.2) with a = b = 1/4, the quadratic
transformation 2F1(a, b; a+b+1/2; 4u(1-u)) = 2F1(2a, 2b; a+b+1/2; u) (DLMF 15.8.18) and
2F1(1/2, 1/2; 1; u) = (2/pi) K(u) (DLMF 19.5.1) give

    G_bcc(E; 0) = (1/E) (2 K(u)/pi)^2,   u = (1 - sqrt(1 - 64/E^2))/2       (4u(1-u) = 64/E^2).

1 - 64/E^2 lies on (-oo, 0] only for real E in [-8, 8], so the principal root is analytic off
the band, Re u <= 1/2 keeps K off its cut, and the identity theorem extends the series
identity (|E| > 8) to all of C minus [-8, 8].  On the band, 0 < x < 8: 1 - 64/(x + i0)^2 lies
just above the negative axis, so sqrt -> +i t, t = sqrt(64/x^2 - 1), u = (1 - i t)/2 (built
explicitly, never evaluated on a cut).  E = 0 is refused (energy.py): the DOS diverges.

sc (Joyce, Phil. Trans. R. Soc. Lond. A 273, 583 (1973); the form below written from memory
and confirmed by our 1-D integral, ``methods/cubic_green_integral.py``, on and off the band;
the parameter xi and the modulus k agree with those of Joyce, J. Phys. A 35, 9811 (2002), in
whose normalisation w = E/2: xi_J = (1/w)[1 + sqrt(1 - 9/w^2)]^(-1/2) [1 + sqrt(1 - 1/w^2)]^(-1/2)
has xi_J^2 = our xi^2 because (1 - s)(1 + s) = 1/w^2 for s = sqrt(1 - 1/w^2)): with zeta = 6/E,

    xi^2 = (1 - sqrt(1 - zeta^2/9)) / (1 + sqrt(1 - zeta^2)),
    k^2  = 16 xi^3 / ((1 - xi)^3 (1 + 3 xi)),
    G_sc(E; 0) = (1/E) (1 - 9 xi^4) / ((1 - xi)^3 (1 + 3 xi)) (2 K(k^2)/pi)^2.

Branches (checked against the 1-D integral on a grid of the quadrant Re E >= 0, Im E >= 0, see
tests/test_cubic_green.py): principal roots throughout for Re E > 0, Im E >= 0; on the band
0 < x < 6 the exact real E gives the retarded value (1 - zeta^2/9 and 1 - zeta^2, when
negative, are approached from above for E = x + i0, which is the side the principal root takes
on its cut, so sqrt -> +i|.|; xi^2 then lies in the open lower half plane).  On the imaginary
axis E = iy, xi^2 is a negative real, on the cut of the outer root: the limit from Re E > 0
is xi = -i sqrt(-xi^2) (used explicitly).  At E = 0 (the limit along E = iy, y -> 0:
xi^2 = -1/3 - (2i/9) E + O(E^2), so (1 - 9 xi^4)/E -> -4i/3, xi -> -i/sqrt(3),
(1 - xi)^3 (1 + 3 xi) -> 16 i e^(-i pi/3)/(3 sqrt 3), k^2 -> e^(i pi/3)):

    G_sc(0 + i0; 0) = -(sqrt(3)/4) e^(i pi/3) (2 K(e^(i pi/3))/pi)^2,   purely imaginary.

fcc (identified; band [-4, 12]).  With w = E/4 (the fcc normalisation of Joyce & Delves,
J. Stat. Phys. 145, 2011: G_JD(w) = pi^-3 int d^3k/(w - c1c2 - c2c3 - c3c1) = 4 G_fcc(4w; 0)),
their abstract gives the parameter and the modulus

    xi = (-1 + sqrt(1 + 1/w)) / (1 + sqrt(1 - 3/w)),
    k^2 = 1/2 - (2/w)(1 + 1/w)^(-3/2) - (1/2)(1 - 1/w)(1 + 1/w)^(-3/2) sqrt(1 - 3/w),

but not the prefactor of G(0, 0, 0; w).  We identified it: G_JD(w)/(2K(k^2)/pi)^2 at twelve
real w > 3 (our 2-D quadrature, 40 digits) is fitted exactly, on four points held out, by a
rational function of xi of degrees (3, 4) with integer coefficients, which factors as

    G_fcc(E; 0) = xi (1 - 3 xi)(1 + xi) / ((1 - xi)^3 (1 + 3 xi)) (2 K(k^2)/pi)^2.

Checks (tests/test_cubic_green.py): at E = 12 (w = 3) it gives Watson's W_fcc/4 to all 30
published digits; its large-E series reproduces the closed-walk counts (OEIS A002899,
recounted by brute force); it agrees with the 2-D quadrature to 40 digits at complex E and at
real E on both sides outside the band, and inside the band with the independent 1-D integral
of Carlson's R_F (``methods/fcc_green_nested.py``); its DOS has the moments 1, 0, 12, 48.
Status: *identified* (conjectural beyond the digits verified).

Branches.  The roots' arguments 1 + 4/E and 1 - 12/E lie on (-oo, 0] only for real E in
[-4, 0) and (0, 12], so the principal roots are analytic off the band.  On the band, E + i0:
for 0 < E < 12, 1 - 12/(E + i0) lies just above the negative axis, which the principal root
of the exact real value already takes (+i|.|^(1/2)); for -4 < E < 0, 1 + 4/(E + i0) lies just
*below* it, so sqrt(1 + 1/w) = -i |1 + 4/E|^(1/2) is built explicitly.  E = 0 is the limit
E -> 0 (w -> 0: xi -> -i/sqrt(3), k^2 -> e^(i pi/3), the prefactor -> -i sqrt(3)/4):

    G_fcc(0 + i0; 0) = -(i sqrt(3)/4) (2 K(e^(i pi/3))/pi)^2,

confirmed by the nested integral to 40 digits.  E = -4 is refused (the DOS diverges).

All inputs of the roots are exact Gaussian rationals (zeta^2 = 36/E^2 formed in Fractions);
the balls are python-flint's, so every result is a rigorous enclosure.
"""

from __future__ import annotations

from collections.abc import Callable
from fractions import Fraction
from typing import Any, TypeVar

from flint import acb, acb_series, arb, ctx, fmpq

from ..energy import Energy

Cq = tuple[Fraction, Fraction]
T = TypeVar("T", acb, acb_series)
Lift = Callable[[acb], Any]


def _acb(x: Cq) -> acb:
    return acb(arb(fmpq(x[0].numerator, x[0].denominator)),
               arb(fmpq(x[1].numerator, x[1].denominator)))


def _inv_sq(E: Energy) -> Cq:
    """1/E^2 exactly."""
    a, b = E.re * E.re - E.im * E.im, 2 * E.re * E.im  # E^2
    n = a * a + b * b
    return a / n, -b / n


def _root(arg: T, c0: acb) -> T:
    """The square root of ``arg`` (an acb, or an acb_series in h = E - E0) on the branch
    whose value at h = 0 is ``c0``, chosen by the caller from exact inputs (branches
    above).  For a series, c0 sqrt(arg/arg(0)) is the unique analytic root with constant
    term c0 (arg(0) != 0: the energies where it vanishes are refused before)."""
    if isinstance(arg, acb):
        return c0
    return c0 * (arg / arg.coeffs()[0]).sqrt()


def _const(x: Any) -> acb:
    return x if isinstance(x, acb) else x.coeffs()[0]


def _sc_from_xi(E: T, xi: T) -> T:
    d = (1 - xi) ** 3 * (1 + 3 * xi)
    k2 = 16 * xi**3 / d
    return (1 - 9 * xi**4) / d * (2 * k2.elliptic_k() / arb.pi()) ** 2 / E


def _sc_quadrant(E: Energy, lift: Lift) -> Any:
    """G_sc(E; 0) for Re E >= 0, Im E >= 0, E != 0, at the current precision."""
    ir, ii = _inv_sq(E)
    Ez = lift(_acb((E.re, E.im)))
    iz2 = 1 / Ez**2
    s9 = _root(1 - 4 * iz2, _acb((1 - 4 * ir, -4 * ii)).sqrt())  # sqrt(1 - zeta^2/9)
    s1 = _root(1 - 36 * iz2, _acb((1 - 36 * ir, -36 * ii)).sqrt())  # sqrt(1 - zeta^2)
    r = (1 - s9) / (1 + s1)  # xi^2
    r0 = _const(r)
    # E = iy: xi^2 < 0, take the limit from Re E > 0
    xi = _root(r, acb(0, -(-r0.real).sqrt()) if E.re == 0 else r0.sqrt())
    return _sc_from_xi(Ez, xi)


def _sc_zero() -> acb:
    w = acb(arb(1) / 2, arb(3).sqrt() / 2)  # e^(i pi/3)
    return -(arb(3).sqrt() / 4) * w * (2 * w.elliptic_k() / arb.pi()) ** 2


def _bcc_quadrant(E: Energy, lift: Lift) -> Any:
    """G_bcc(E; 0) for Re E >= 0, Im E >= 0, E != 0, at the current precision."""
    ir, ii = _inv_sq(E)
    Ez = lift(_acb((E.re, E.im)))
    if E.im == 0 and E.re < 8:  # on the band: sqrt(1 - 64/(x + i0)^2) = +i sqrt(64/x^2 - 1)
        s0 = acb(0, arb(fmpq((64 * ir - 1).numerator, (64 * ir - 1).denominator)).sqrt())
    else:
        s0 = _acb((1 - 64 * ir, -64 * ii)).sqrt()
    s = _root(1 - 64 / Ez**2, s0)
    u = (1 - s) / 2
    return (2 * u.elliptic_k() / arb.pi()) ** 2 / Ez


def _fcc(E: Energy, lift: Lift) -> Any:
    """G_fcc(E; 0) at the current precision, E != 0, -4."""
    Ez = lift(_acb((E.re, E.im)))
    n = E.re * E.re + E.im * E.im
    inv = (E.re / n, -E.im / n)  # 1/E exactly
    if E.im == 0 and -4 < E.re < 0:  # 1 + 4/(E + i0) lies just below the negative axis
        t = 1 + 4 * inv[0]
        c1 = acb(0, -arb(fmpq((-t).numerator, (-t).denominator)).sqrt())
    else:
        c1 = _acb((1 + 4 * inv[0], 4 * inv[1])).sqrt()  # sqrt(1 + 1/w), w = E/4
    iw = 4 / Ez  # 1/w
    r1 = _root(1 + iw, c1)
    r3 = _root(1 - 3 * iw, _acb((1 - 12 * inv[0], -12 * inv[1])).sqrt())  # sqrt(1 - 3/w)
    k2 = arb(1) / 2 - 2 * iw / r1**3 - (1 - iw) * r3 / (2 * r1**3)
    xi = (r1 - 1) / (1 + r3)
    pre = xi * (1 - 3 * xi) * (1 + xi) / ((1 - xi) ** 3 * (1 + 3 * xi))
    return pre * (2 * k2.elliptic_k() / arb.pi()) ** 2


def _scalar(x: acb) -> acb:
    return x


def origin_ball(lattice: str, E: Energy, prec: int) -> acb:
    """G(E; 0) of ``lattice`` ("sc", "bcc", "fcc") as an acb ball at about ``prec`` bits.

    >>> from latgreen.energy import parse_energy
    >>> # W_bcc / 8 at the band edge (OEIS A091670: W_bcc = 1.3932039296...)
    >>> origin_ball("bcc", parse_energy("8", "bcc"), 80).real.str(12, radius=False)
    '0.174150491211'
    """
    quad = _sc_quadrant if lattice == "sc" else _bcc_quadrant
    old = ctx.prec
    try:
        ctx.prec = prec + 30
        if lattice == "fcc":
            if E.im == 0 and E.re == -4:
                raise ValueError("G_fcc(E; 0) diverges at E = -4")
            if E.im == 0 and E.re == 0:  # the limit (module docstring)
                w = acb(arb(1) / 2, arb(3).sqrt() / 2)  # e^(i pi/3)
                return +(acb(0, -arb(3).sqrt() / 4) * (2 * w.elliptic_k() / arb.pi()) ** 2)
            return +_fcc(E, _scalar)
        if E.im == 0 and E.re == 0:
            if lattice != "sc":
                raise ValueError("G_bcc(E; 0) diverges at E = 0")
            v = _sc_zero()
        elif E.re >= 0:
            v = quad(E, _scalar)
        else:  # G(E) = -G(-E) = -conj G(-conj E)  (bipartite, conjugation)
            v = -quad(Energy(-E.re, E.im), _scalar).conjugate()
        return +v
    finally:
        ctx.prec = old


def dos_ball(lattice: str, x: Fraction, prec: int) -> arb:
    """rho(x) = -Im G(x + i0; 0)/pi for real x inside the band (open interval)."""
    old = ctx.prec
    try:
        ctx.prec = prec + 30
        v = -origin_ball(lattice, Energy(x, Fraction(0)), prec).imag / arb.pi()
        return +v
    finally:
        ctx.prec = old


# real energies where G0' or G0'' is infinite (band edges, van Hove points) or the closed form
# has a removable singularity (E = 0)
JET_EXCLUDED = {"sc": (-6, -2, 0, 2, 6), "bcc": (-8, 0, 8), "fcc": (-4, 0, 12)}


def origin_jet(lattice: str, E: Energy, prec: int, order: int = 3) -> list[acb]:
    """G(E; 0) and its first ``order - 1`` derivatives in E, [G, G', G'', ...], as acb balls
    at about ``prec`` bits: the closed forms above evaluated in power-series arithmetic
    (python-flint ``acb_series``, E -> E + h), each square root on the branch the scalar
    form takes at h = 0 (``_root``), so that the series is the Taylor expansion of the same
    analytic function (for real E on the band: of the retarded branch, continued from the
    upper half plane).  Re E < 0 (sc, bcc) via G(E) = -conj G(-conj E), whose k-th
    derivative is (-1)^(k+1) conj G^(k)(-conj E).  Refused where a derivative is infinite
    or the form has a removable singularity: the band edges, the van Hove points
    (sc +-2, fcc 0) and E = 0.

    >>> from latgreen.energy import parse_energy
    >>> g = origin_jet("bcc", parse_energy("9", "bcc"), 80)
    >>> # G' = -sum_N (2N+1) C(2N,N)^3 E^(-2N-2): the walk series, common practice
    >>> g[1].real.str(10, radius=False)
    '-0.02260199923'
    """
    if E.im == 0 and E.re in JET_EXCLUDED[lattice]:
        raise ValueError(f"the derivatives of the {lattice} G(E; 0) are not finite (or the "
                         f"closed form is singular) at E = {E}")
    old = ctx.prec
    try:
        ctx.prec = prec + 30

        def lift(x: acb) -> acb_series:
            return acb_series([x, 1], prec=order)

        if lattice == "fcc":
            c = _fcc(E, lift).coeffs()
        elif E.re >= 0:
            c = (_sc_quadrant if lattice == "sc" else _bcc_quadrant)(E, lift).coeffs()
        else:
            q = (_sc_quadrant if lattice == "sc" else _bcc_quadrant)(
                Energy(-E.re, E.im), lift).coeffs()
            c = [(-1) ** (k + 1) * q[k].conjugate() for k in range(len(q))]
        c = list(c) + [acb(0)] * (order - len(c))
        out, f = [], 1
        for k in range(order):
            out.append(+(c[k] * f))
            f *= k + 1
        return out
    finally:
        ctx.prec = old
