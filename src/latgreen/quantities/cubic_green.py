"""sc, bcc, fcc: G(E; r), the density of states and the local DOS at an exact energy.

Registered in ``green_api.BACKENDS`` and, for green tables, ``quantities.PARAMETRISED``
(bottom of this module).  What is offered, and how each printed digit is confirmed (two
independent methods every time, or a one-line InputError):

* G(E; 0) at any admissible E (complex, real off the band, E + i0 on it; sc and fcc also
  E = 0): the closed forms of ``methods/cubic_green_closed.py`` as certified acb balls, each
  component correctly rounded; confirmed by the 1-D integral over k3 of the square lattice's
  closed form (``methods/cubic_green_integral.py``; sc, bcc) or, for the fcc, by the nested
  1-D integral of Carlson's R_F inside the band (``methods/fcc_green_nested.py``) and the
  reduced 2-D rule outside it.
* The nearest neighbour z: G = (E G(E; 0) - 1)/z, the lattice equation at the origin (all z
  neighbours are equivalent), as a ball from the same closed form; same checks.
* Other sites (coordinates up to 60) at every energy other than the band edges, the van
  Hove points and 0 (``recurrence_ok``): the exact form a + b G0 + c G0' + d G0''
  (``exact/cubic_energy.py``) as a certified ball, confirmed by the 1-D integral (sc, bcc),
  the nested per-site integral (``methods/fcc_green_sites.py``, fcc inside the band) or the
  reduced 2-D rule (fcc outside it).
* Other sites at the excluded real energies: the 1-D integral rounded with
  10 guard digits (the error bound is an estimate, said in ``notes``), confirmed by the
  time-domain Bessel integral (``methods/sc_green_bessel.py``; sc, coordinates up to 12, any
  energy) or else by the reduced 2-D rule (``methods/cubic_quadrature.green_energy_quad``;
  off the band only).  Refused (one method only): sc sites with a coordinate above 12 at the
  van Hove points, fcc sites beyond the nearest neighbour at E = 0, 12.
* dos(E) = -Im G(E + i0; 0)/pi: the closed form's ball, confirmed by the 1-D integral (sc,
  bcc) or the nested R_F integral (fcc); 0 outside the band and at its edges.
* local_dos(E; r): the origin and the nearest neighbour as dos; other sites inside the band
  from the exact form (confirmed as for green), or at the sc van Hove points from the 1-D
  integral confirmed by the Bessel integral; 0 outside the band.
* Tables at one energy (``CubicGreen``): where exact forms exist, every row its
  exact form (extent up to 20), checked by the second method above; otherwise sc at any
  energy and bcc off the band, extent up to 12, every row checked by the Bessel integral
  (sc) or the 2-D rule (bcc).
"""

from __future__ import annotations

import functools
import math
from collections.abc import Iterator, Sequence
from fractions import Fraction
from typing import Any

import mpmath

from ..energy import Energy
from ..errors import InputError, VerificationError
from ..exact import cubic_energy
from ..exact.complex_eval import ComplexRounded, certify_complex
from ..exact.forms import ExactForm
from ..lattices import Site, get_lattice
from ..lattices.cubic import Cubic
from ..methods.cubic_green_closed import origin_ball, origin_jet
from ..methods.cubic_green_integral import green_integral
from ..methods.cubic_quadrature import green_energy_quad
from ..methods.fcc_green_nested import green_fcc_nested
from ..methods.fcc_green_sites import fcc_green_sites
from ..methods.sc_green_bessel import MAX_ORDER as BESSEL_MAX
from ..methods.sc_green_bessel import green_bessel
from ..rounding import ZERO, Rounded, agreement_digits, round_interval
from . import PARAMETRISED, Result
from .base import EvaluatedBatch, Provider
from .green_api import (
    BACKENDS,
    GreenBackend,
    GreenResult,
    _certify_real,
    _frac,
    _modulus_bound,
    check_single_site,
    component_agreement,
)
from .square_green import column_of, quad_digits_needed

LOG2_10 = 3.3219280948873623
MAX_DIGITS_CLOSED = 300  # closed form + one quadrature (about 2 s at 200 digits)
MAX_DIGITS_QUAD = 100  # two quadratures (the 2-D rule's largest degree, 384 nodes)
CLOSED_TEXT = {
    "sc": "G(E;0) = (1/E)(1 - 9 xi^4)/((1 - xi)^3 (1 + 3 xi)) (2 K(k^2)/pi)^2, "
          "k^2 = 16 xi^3/((1 - xi)^3 (1 + 3 xi)), xi^2 = (1 - sqrt(1 - 4/E^2))/(1 + "
          "sqrt(1 - 36/E^2)) (Joyce 1973; branches as documented)",
    "bcc": "G(E;0) = (1/E)(2 K(u)/pi)^2, u = (1 - sqrt(1 - 64/E^2))/2 (branches as "
           "documented)",
    "fcc": "G(E;0) = xi (1 - 3 xi)(1 + xi)/((1 - xi)^3 (1 + 3 xi)) (2 K(k^2)/pi)^2, w = E/4, "
           "xi = (sqrt(1 + 1/w) - 1)/(1 + sqrt(1 - 3/w)), k^2 = 1/2 - (2/w)(1 + 1/w)^(-3/2) - "
           "(1/2)(1 - 1/w)(1 + 1/w)^(-3/2) sqrt(1 - 3/w) (xi, k from Joyce & Delves 2011; "
           "prefactor identified)",
}
FCC_NOTE = ("the fcc closed form's prefactor was identified by us (exact rational fit in xi, "
            "verified to 40 digits against quadrature, the band-edge Watson value and the "
            "walk counts); the printed digits are confirmed by the 2-D quadrature (off the "
            "band) or the nested R_F integral (inside it)")


class ClosedForm:
    """The printable closed form of G(E; 0) (``GreenResult.exact``)."""

    how = "derived"

    def __init__(self, lattice: str) -> None:
        self.lattice = lattice
        self.how = {"bcc": "derived", "sc": "from the literature (Joyce 1973)",
                    "fcc": "identified"}[lattice]

    def __str__(self) -> str:
        return CLOSED_TEXT[self.lattice]


def parity(lattice: str, c: Site) -> int:
    """The sublattice sign exponent: G(-E; r) = -(-1)^parity G(E; r)."""
    return (sum(c) if lattice == "sc" else c[0]) % 2


def zero_parts(lattice: str, E: Energy, c: Site) -> tuple[bool, bool]:
    """(Re G = 0, Im G = 0) exactly: Im G = 0 for real E outside the band or on its edges
    (G real there); with G(-x + i0) = -(-1)^p conj G(x + i0) and, for E = iy, -E = conj E:
    at E = iy and at E = 0 (sc) Re G = 0 for even parity p, Im G = 0 for odd."""
    lo, hi = get_lattice(lattice).band
    if E.im == 0 and not lo < E.re < hi:
        return False, True
    if E.re == 0 and lattice != "fcc":
        even = parity(lattice, c) == 0
        return even, not even
    return False, False


def _start_bits(digits: int) -> int:
    return -(-(math.ceil((digits + 2) * LOG2_10) + 64) // 64) * 64


def _inside(lattice: str, E: Energy) -> bool:
    lo, hi = get_lattice(lattice).band
    return E.im == 0 and lo < E.re < hi


NEIGHBOUR = {"sc": (1, 0, 0), "bcc": (1, 1, 1), "fcc": (1, 1, 0)}


class NeighbourForm(ClosedForm):
    """G(E; nearest neighbour) = (E G(E; 0) - 1)/z, the lattice equation at the origin."""

    def __str__(self) -> str:
        z = get_lattice(self.lattice).z
        return f"(E*G0 - 1)/{z}, G0 = G(E;0) (see exact_basis)"


def _ball(lattice: str, c: Site, E: Energy, bits: int) -> Any:
    """G(E; 0), or G(E; nearest neighbour) = (E G(E; 0) - 1)/z: the lattice equation
    (E - H) G = delta at the origin, whose z neighbours are equivalent by symmetry."""
    g = origin_ball(lattice, E, bits)
    if not any(c):
        return g
    from flint import acb, arb, ctx, fmpq

    old = ctx.prec
    try:
        ctx.prec = bits + 30
        Ez = acb(arb(fmpq(E.re.numerator, E.re.denominator)),
                 arb(fmpq(E.im.numerator, E.im.denominator)))
        return (Ez * g - 1) / get_lattice(lattice).z
    finally:
        ctx.prec = old


def _check_value(lattice: str, c: Site, E: Energy, dps: int) -> tuple[str, Any]:
    """(method, value) of the independent check at the origin or the nearest neighbour:
    the 1-D integral (sc, bcc); for the fcc the nested R_F integral inside the band (at the
    neighbour through the same lattice equation, with 10 more digits against its
    cancellation) and the 2-D rule outside it."""
    c3 = (c[0], c[1], c[2])
    if lattice != "fcc":
        return "integral", green_integral(lattice, E, c3, dps)
    if not _inside(lattice, E):
        return "quadrature", green_energy_quad(lattice, c3, E, dps)
    q0 = green_fcc_nested(E, dps + 10)
    if not any(c):
        return "integral", q0
    with mpmath.workdps(dps + 20):
        x = mpmath.mpf(E.re.numerator) / E.re.denominator
        return "integral", (x * q0 - 1) / 12


def _origin(lattice: str, s: Site, E: Energy, digits: int, c: Site = (0, 0, 0)) -> GreenResult:
    """G(E; 0) or G(E; nearest neighbour) from the closed form, confirmed by the 1-D
    integral (sc, bcc), the nested R_F integral (fcc inside the band) or the 2-D quadrature
    (fcc outside it)."""
    zero = zero_parts(lattice, E, c)
    v = certify_complex(lambda bits: _ball(lattice, c, E, bits), _start_bits(digits) + 64,
                        digits, zero, f"G({E};{c})")
    dps = quad_digits_needed(v, digits)
    with mpmath.workdps(dps + 5):
        second, q = _check_value(lattice, c, E, dps)
        qf = (_frac(mpmath.re(q)), _frac(mpmath.im(q)))
    agree = component_agreement(v.center, qf, zero, digits)
    if agree < digits:
        raise VerificationError(f"{lattice} G({E}; {c}): closed form and {second} agree to "
                                f"only {agree} of {digits} digits")
    form = ClosedForm(lattice) if not any(c) else NeighbourForm(lattice)
    return GreenResult(lattice, s, c, E, digits, str(v.re), str(v.im), form,
                       v.re.half_ulp(), v.im.half_ulp(), _modulus_bound([v.re, v.im]),
                       ("closed-form", second), agree,
                       notes=(FCC_NOTE,) if lattice == "fcc" else (),
                       basis="G0: " + CLOSED_TEXT[lattice] + "; K(m): complete elliptic "
                             "integral of parameter m (DLMF 19.2)")


def _round_estimate(x: Any, tol: Any, digits: int, what: str) -> tuple[Rounded, Fraction]:
    """Round x known to +-tol (an estimate) to ``digits`` digits."""
    lo, hi = _frac(x - tol), _frac(x + tol)
    den = lo.denominator * hi.denominator
    r = round_interval(lo.numerator * hi.denominator, hi.numerator * lo.denominator, den,
                       digits)
    if r is None:
        raise InputError(f"{what}: the value lies too close to a rounding boundary at "
                         f"{digits} digits; ask for one digit more or less")
    assert isinstance(r, Rounded)
    return r, _frac(x)


def _extra_digits(lattice: str, c: Site, E: Energy, zero: tuple[bool, bool],
                  method: Any) -> int:
    """log10(|G| / smaller non-zero component), from a 15-digit scouting pass of
    ``method``: the quadratures' accuracy is relative to |G|."""
    with mpmath.workdps(30):
        g = method(15)
        comps = [abs(x) for x, zz in ((mpmath.re(g), zero[0]), (mpmath.im(g), zero[1]))
                 if not zz]
        small = min(comps) if comps else abs(g)
        return max(0, int(mpmath.ceil(mpmath.log10(abs(g) / small)))) if small else 30


def integral_value(lattice: str, c: Site, E: Energy, digits: int) -> ComplexRounded:
    """Both components of the 1-D integral rounded to ``digits`` digits of their own, with
    10 guard digits (an estimate, not a proven bound); centres exact."""
    c3 = (c[0], c[1], c[2])
    zero = zero_parts(lattice, E, c)
    extra = _extra_digits(lattice, c, E, zero,
                          lambda d: green_integral(lattice, E, c3, d))
    dps = digits + extra + 10
    what = f"{lattice} G({E}; {c})"
    with mpmath.workdps(dps + 10):
        a = green_integral(lattice, E, c3, dps)
        tol = mpmath.mpf(10) ** -(digits + extra + 8) * abs(a)
        parts: list[Rounded] = []
        centre: list[Fraction] = []
        for x, zz in ((mpmath.re(a), zero[0]), (mpmath.im(a), zero[1])):
            if zz:
                if abs(x) > tol:  # pragma: no cover - a symmetry or the integral is wrong
                    raise VerificationError(f"{what}: a component that is 0 by symmetry is "
                                            "not")
                parts.append(ZERO)
                centre.append(Fraction(0))
            else:
                r, cx = _round_estimate(x, tol, digits, what)
                parts.append(r)
                centre.append(cx)
    return ComplexRounded(parts[0], parts[1], (centre[0], centre[1]), 0)


def _method_value(lattice: str, c: Site, E: Energy, digits: int, method: Any
                  ) -> tuple[Fraction, Fraction]:
    """``method(dps)`` (a quadrature whose accuracy is relative to |G|) run accurately enough
    to confirm each component to ``digits`` digits of its own (exact Fractions)."""
    zero = zero_parts(lattice, E, c)
    extra = _extra_digits(lattice, c, E, zero, method)
    with mpmath.workdps(digits + extra + 20):
        b = method(digits + extra + 3)
        return _frac(mpmath.re(b)), _frac(mpmath.im(b))


def quad_value(lattice: str, c: Site, E: Energy, digits: int) -> tuple[Fraction, Fraction]:
    """The reduced 2-D rule's value (off the band)."""
    c3 = (c[0], c[1], c[2])
    return _method_value(lattice, c, E, digits, lambda d: green_energy_quad(lattice, c3, E, d))


def bessel_value(c: Site, E: Energy, digits: int) -> tuple[Fraction, Fraction]:
    """sc: the time-domain Bessel integral's value."""
    c3 = (c[0], c[1], c[2])
    return _method_value("sc", c, E, digits, lambda d: green_bessel(E, c3, d))


def integral_check(lattice: str, c: Site, E: Energy, digits: int) -> tuple[Fraction, Fraction]:
    """sc, bcc: the 1-D integral's value."""
    c3 = (c[0], c[1], c[2])
    return _method_value(lattice, c, E, digits, lambda d: green_integral(lattice, E, c3, d))


def fcc_sites_check(c: Site, E: Energy, digits: int) -> tuple[Fraction, Fraction]:
    """fcc, real E inside the band: the per-site nested integral."""
    return fcc_sites_many([c], E, digits)[0]


def fcc_sites_many(sites: list[Site], E: Energy, digits: int) -> list[tuple[Fraction, Fraction]]:
    """fcc, real E inside the band: the nested integral at all ``sites`` in one pass over its
    nodes (its accuracy is relative to the largest |G|, so a 15-digit scouting pass says how
    many more digits the smallest component needs)."""
    c3 = [(c[0], c[1], c[2]) for c in sites]
    with mpmath.workdps(30):
        scout = fcc_green_sites(E, c3, 15)
        big = max(abs(g) for g in scout)
        small = min((abs(x) for g, c in zip(scout, sites, strict=True)
                     for x, zz in zip((g.real, g.imag), zero_parts("fcc", E, c), strict=True)
                     if not zz), default=big)
        extra = max(0, int(mpmath.ceil(mpmath.log10(big / small)))) if small else 30
    dps = digits + extra + 3
    with mpmath.workdps(dps + 20):
        return [(_frac(mpmath.re(g)), _frac(mpmath.im(g)))
                for g in fcc_green_sites(E, c3, dps)]


# ------------------------------------------------ exact forms through G0, G0', G0''

REC_BASIS = ("G0 = G(E;0) by the closed form (" + "{closed}" + "); dG0, d2G0 = its first and "
             "second derivatives in E (the same closed form in power-series arithmetic)")


def recurrence_ok(lattice: str, E: Energy) -> bool:
    """The exact forms a + b G0 + c G0' + d G0'' (exact/cubic_energy.py) are offered: every
    energy but the band edges, the van Hove points and E = 0."""
    return cubic_energy.available(lattice, cubic_energy.field(E))


@functools.lru_cache(maxsize=32)
def _jet(lattice: str, E: Energy, bits: int) -> Any:
    """G0, G0', G0'' at E (shared by every row of a table at that precision)."""
    return origin_jet(lattice, E, bits)


def _rec_ball(lattice: str, v: Any, E: Energy, bits: int) -> Any:
    from flint import ctx

    jet = _jet(lattice, E, bits)
    old = ctx.prec
    try:
        ctx.prec = bits + 30
        return cubic_energy.ball(v, jet)
    finally:
        ctx.prec = old


def recurrence_value(lattice: str, c: Site, E: Energy, digits: int) -> ComplexRounded:
    """G(E; c), canonical c, from its exact form as a certified ball (each component
    correctly rounded, or exactly 0 by symmetry)."""
    v = cubic_energy.green_vectors(lattice, cubic_energy.field(E), c[0])[c]
    return certify_complex(lambda bits: _rec_ball(lattice, v, E, bits),
                           cubic_energy.start_bits(v, digits), digits,
                           zero_parts(lattice, E, c), f"{lattice} G({E};{c})")


def check_method(lattice: str, E: Energy) -> tuple[str, str]:
    """(name, text) of the independent check of the exact forms at E: the 1-D integral (sc,
    bcc), the nested per-site integral (fcc inside the band) or the reduced 2-D rule (fcc
    outside it)."""
    if lattice != "fcc":
        return "integral", "the 1-D integral over k3 of the square lattice's closed form"
    if _inside(lattice, E):
        return "integral", "the nested per-site integral (methods/fcc_green_sites.py)"
    return "quadrature", "the reduced 2-D polar Gauss-Legendre rule"


def check_value(lattice: str, c: Site, E: Energy, digits: int
                ) -> tuple[str, str, tuple[Fraction, Fraction]]:
    """The independent check of the exact form (``check_method``): (name, text, value)."""
    name, text = check_method(lattice, E)
    if lattice != "fcc":
        return name, text, integral_check(lattice, c, E, digits)
    if _inside(lattice, E):
        return name, text, fcc_sites_check(c, E, digits)
    return name, text, quad_value(lattice, c, E, digits)


def _site_exact(lattice: str, s: Site, c: Site, E: Energy, digits: int) -> GreenResult:
    v = recurrence_value(lattice, c, E, digits)
    name, text, q = check_value(lattice, c, E, digits)
    zero = zero_parts(lattice, E, c)
    agree = component_agreement(v.center, q, zero, digits)
    if agree < digits:
        raise VerificationError(f"{lattice} G({E}; {c}): exact form and {text} agree to "
                                f"only {agree} of {digits} digits")
    form = cubic_energy.green_form(lattice, cubic_energy.field(E), c,
                                   ClosedForm(lattice).how)
    return GreenResult(lattice, s, c, E, digits, str(v.re), str(v.im), form,
                       v.re.half_ulp(), v.im.half_ulp(), _modulus_bound([v.re, v.im]),
                       ("recurrence", name), agree,
                       notes=((FCC_NOTE,) if lattice == "fcc" else ()) +
                       ("exact form derived from the lattice equation, the relations "
                        "s_i L(s) = sum_e e_i G(s+e) and their E-derivatives "
                        f"(exact/cubic_energy.py); confirmed on {agree} digits by {text}",),
                       basis=REC_BASIS.format(closed=CLOSED_TEXT[lattice]))


def _second(lattice: str, c: Site, E: Energy, digits: int
            ) -> tuple[str, str, tuple[Fraction, Fraction]]:
    """The independent check of the 1-D integral at a site r != 0: (method name, text,
    value).  sc with coordinates up to 12: the time-domain Bessel integral at any energy;
    otherwise off the band the reduced 2-D rule, and inside the band none (InputError)."""
    if lattice == "sc" and max(c) <= BESSEL_MAX:
        return "bessel", "the time-domain Bessel integral", bessel_value(c, E, digits)
    if _inside(lattice, E):
        _refuse_one_method(lattice, c, E)
    return "quadrature", "the reduced 2-D rule", quad_value(lattice, c, E, digits)


def _refuse_one_method(lattice: str, c: Site, E: Energy, what: str = "G(E; r)") -> None:
    """InputError where no exact form exists (the excluded energies of
    exact/cubic_energy.py) and the 1-D integral has no independent check: sc sites with a
    coordinate above 12 at the van Hove points, every fcc site beyond the neighbour there."""
    if lattice == "sc" and max(c) <= BESSEL_MAX or recurrence_ok(lattice, E):
        return
    if lattice == "fcc":
        raise InputError(f"fcc {what} beyond the nearest neighbour (1, 1, 0) at E = {E}: "
                         "offered at every energy other than " +
                         ", ".join(str(x) for x in cubic_energy.EXCLUDED["fcc"]) +
                         " (exact forms and a second method exist only there)")
    where = f"with a coordinate above {BESSEL_MAX} " if lattice == "sc" else ""
    raise InputError(f"{lattice} {what} at E = {E} beyond the nearest neighbour "
                     f"{NEIGHBOUR[lattice]} {where}has one method here (the 1-D integral) and "
                     "no independent check: ask at any energy other than " +
                     ", ".join(str(x) for x in cubic_energy.EXCLUDED[lattice]))


def _site(lattice: str, s: Site, c: tuple[int, int, int], E: Energy,
          digits: int) -> GreenResult:
    if recurrence_ok(lattice, E):
        return _site_exact(lattice, s, c, E, digits)
    if lattice == "fcc":
        _refuse_one_method(lattice, c, E)
    zero = zero_parts(lattice, E, c)
    what = f"{lattice} G({E}; {c})"
    if _inside(lattice, E):
        _refuse_one_method(lattice, c, E)  # before the costly integral
    v = integral_value(lattice, c, E, digits)
    name, text, bf = _second(lattice, c, E, digits)
    agree = component_agreement(v.center, bf, zero, digits)
    if agree < digits:
        raise VerificationError(f"{what}: 1-D integral and {text} agree to only {agree} of "
                                f"{digits} digits")
    return GreenResult(lattice, s, c, E, digits, str(v.re), str(v.im), None,
                       v.re.half_ulp(), v.im.half_ulp(), _modulus_bound([v.re, v.im]),
                       ("integral", name), agree,
                       notes=("no closed form at r != 0 here: the value is the 1-D integral "
                              "with 10 guard digits (error estimate, not a proof), confirmed "
                              f"on {agree} digits by {text}",),
                       basis="")


def _green(lattice: str) -> Any:
    def green(site: Sequence[object], E: Energy, digits: int) -> GreenResult:
        lat = get_lattice(lattice)
        s = lat.site(site)
        c = lat.canonical(s)
        check_single_site(lattice, c)
        closed = not any(c) or c == NEIGHBOUR[lattice]
        cap = MAX_DIGITS_CLOSED if closed else MAX_DIGITS_QUAD
        if digits > cap:
            raise InputError(f"{lattice} G at {c}: at most {cap} digits (the confirming "
                             "quadrature" + ("s grow" if not closed else " grows") +
                             " too costly beyond)")
        if not any(c) or c == NEIGHBOUR[lattice]:
            return _origin(lattice, s, E, digits, c)
        return _site(lattice, s, (c[0], c[1], c[2]), E, digits)

    green.__doc__ = f"G(E; site) of the {lattice} lattice (module docstring)."
    return green


def _minus_im_over_pi(ball: Any) -> Any:
    """bits -> -Im(ball(bits))/pi, the density from a G ball at the same precision."""
    from flint import arb, ctx

    def build(bits: int) -> Any:
        b = ball(bits)
        old = ctx.prec
        try:
            ctx.prec = bits + 30
            return -b.imag / arb.pi()
        finally:
            ctx.prec = old

    return build


def _zero_result(lattice: str, quantity: str, s: Site, c: Site, E: Energy,
                 digits: int) -> Result:
    lo, hi = get_lattice(lattice).band
    return Result(lattice, quantity, s, c, digits, "0", ExactForm((Fraction(0),), ()), "0",
                  ("definition",), digits,
                  notes=(f"outside the open band ({lo}, {hi}) G is real: the density is 0",),
                  energy=str(E))


def _density(lattice: str, quantity: str, s: Site, E: Energy, digits: int,
             c: Site = (0, 0, 0)) -> Result:
    """-Im G(E + i0; c)/pi for c = 0 or the nearest neighbour (_ball), confirmed by the
    1-D integral."""
    if digits > MAX_DIGITS_CLOSED:
        raise InputError(f"the {lattice} {quantity}: at most {MAX_DIGITS_CLOSED} digits (the "
                         "confirming quadrature grows too costly beyond)")
    if not _inside(lattice, E):
        return _zero_result(lattice, quantity, s, c, E, digits)
    build = _minus_im_over_pi(lambda bits: _ball(lattice, c, E, bits))

    r, centre = _certify_real(build, _start_bits(digits) + 64, digits,
                              f"the {quantity} at E = {E}")
    dps = digits + 3
    with mpmath.workdps(dps + 5):
        q = -mpmath.im(_check_value(lattice, c, E, dps)[1]) / mpmath.pi
        qf = _frac(q)
    agree = agreement_digits(centre, qf, digits)
    if agree < digits:
        raise VerificationError(f"{lattice} {quantity} at E = {E}: closed form and 1-D "
                                f"integral agree to only {agree} of {digits} digits")
    return Result(lattice, quantity, s, c, digits, str(r), None, r.half_ulp(),
                  ("closed-form", "integral"), agree,
                  notes=(f"-Im of {'' if not any(c) else '(E*G0 - 1)/z, G0 = '}"
                         f"{CLOSED_TEXT[lattice]}, divided by pi",), energy=str(E))


def _dos(lattice: str) -> Any:
    def dos(E: Energy, digits: int) -> Result:
        return _density(lattice, "dos", (0, 0, 0), E, digits)

    return dos


def _local_dos(lattice: str) -> Any:
    def local_dos(site: Sequence[object], E: Energy, digits: int) -> Result:
        lat = get_lattice(lattice)
        s = lat.site(site)
        c = lat.canonical(s)
        check_single_site(lattice, c)
        if not any(c) or c == NEIGHBOUR[lattice]:
            return _density(lattice, "local-dos", s, E, digits, c)
        if not _inside(lattice, E):
            return _zero_result(lattice, "local-dos", s, c, E, digits)
        if recurrence_ok(lattice, E):
            return _local_dos_exact(lattice, s, c, E, digits)
        _refuse_one_method(lattice, c, E, "local DOS")
        return _local_dos_site(s, c, E, digits)

    return local_dos


def _local_dos_exact(lattice: str, s: Site, c: Site, E: Energy, digits: int) -> Result:
    """-Im G(E + i0; r)/pi from the exact form (a certified ball), confirmed by the check of
    ``check_value``."""
    if digits > MAX_DIGITS_QUAD:
        raise InputError(f"the {lattice} local DOS at {c}: at most {MAX_DIGITS_QUAD} digits")
    v = cubic_energy.green_vectors(lattice, cubic_energy.field(E), c[0])[c]
    build = _minus_im_over_pi(lambda bits: _rec_ball(lattice, v, E, bits))

    what = f"the {lattice} local DOS at E = {E}, site {c}"
    r, centre = _certify_real(build, cubic_energy.start_bits(v, digits), digits, what)
    name, text, q = check_value(lattice, c, E, digits + 2)
    with mpmath.workdps(digits + 30):
        qf = _frac(-mpmath.mpf(q[1].numerator) / q[1].denominator / mpmath.pi)
    agree = agreement_digits(centre, qf, digits)
    if agree < digits:
        raise VerificationError(f"{what}: exact form and {text} agree to only {agree} of "
                                f"{digits} digits")
    return Result(lattice, "local-dos", s, c, digits, str(r), None, r.half_ulp(),
                  ("recurrence", name), agree,
                  notes=(f"-Im of the exact form "
                         f"{cubic_energy.green_form(lattice, cubic_energy.field(E), c)}, "
                         "divided by pi; " + REC_BASIS.format(closed=CLOSED_TEXT[lattice]),),
                  energy=str(E))


def _local_dos_site(s: Site, c: Site, E: Energy, digits: int) -> Result:
    """sc inside the band: -Im G(E + i0; r)/pi from the 1-D integral (10 guard digits, an
    estimate), confirmed by the Bessel integral."""
    if digits > MAX_DIGITS_QUAD:
        raise InputError(f"the sc local DOS at {c}: at most {MAX_DIGITS_QUAD} digits")
    c3 = (c[0], c[1], c[2])
    zero = (True, False)  # only the imaginary part matters here
    extra = _extra_digits("sc", c, E, zero, lambda d: green_integral("sc", E, c3, d))
    what = f"the sc local DOS at E = {E}, site {c}"
    with mpmath.workdps(digits + extra + 30):
        a = green_integral("sc", E, c3, digits + extra + 10)
        x = -mpmath.im(a) / mpmath.pi
        r, centre = _round_estimate(x, mpmath.mpf(10) ** -(digits + extra + 8) * abs(a) /
                                    mpmath.pi, digits, what)
        extra_b = _extra_digits("sc", c, E, zero, lambda d: green_bessel(E, c3, d))
        b = green_bessel(E, c3, digits + extra_b + 3)
        qf = _frac(-mpmath.im(b) / mpmath.pi)
    agree = agreement_digits(centre, qf, digits)
    if agree < digits:
        raise VerificationError(f"{what}: 1-D integral and Bessel integral agree to only "
                                f"{agree} of {digits} digits")
    return Result("sc", "local-dos", s, c, digits, str(r), None, r.half_ulp(),
                  ("integral", "bessel"), agree,
                  notes=("the value is the 1-D integral with 10 guard digits (error estimate, "
                         "not a proof), confirmed by the time-domain Bessel integral",),
                  energy=str(E))


for _name in ("sc", "bcc", "fcc"):
    BACKENDS[_name] = GreenBackend(_green(_name), _dos(_name), _local_dos(_name))


# ---------------------------------------------------------------- tables at one energy

class TableForm:
    """A table cell's exact form (no commas: the CSV is written without quoting): ``G0``
    (the closed form named in the descriptor), ``(E*G0 - 1)/z`` or empty."""

    def __init__(self, text: str, how: str) -> None:
        self.text, self.how = text, how

    def __str__(self) -> str:
        return self.text


class CubicGreen(Provider):
    """sc / bcc / fcc x green bound to one energy.  Batches are the columns (l, m) of the
    canonical region.  Where the exact forms a + b G0 + c G0' + d G0'' exist
    (``recurrence_ok``: all but the excluded real energies) every row is its exact form as a
    certified ball, checked by the 1-D integral (sc, bcc), the nested per-site integral (fcc
    inside the band) or the reduced 2-D rule (fcc outside it).  Elsewhere: the origin
    and the nearest neighbour from the closed form, every other site from the 1-D integral
    with 10 guard digits, checked by the Bessel integral (sc, extent up to 12) or the 2-D
    rule (bcc off the band); fcc refused."""

    complex_valued = True
    exact_limit = 60
    table_limit = BESSEL_MAX
    max_digits = MAX_DIGITS_QUAD
    parallel_min_sites = 20
    primary_text = ("closed forms of G(E;0) (and (E G0 - 1)/z at the nearest neighbour) as "
                    "certified python-flint balls; other sites: the 1-D integral over k3 of "
                    "the square lattice's closed form, rounded with 10 guard digits (error "
                    "bound an estimate)")
    check_text = "the reduced 2-D polar Gauss-Legendre rule"
    check_name = "quadrature"
    energy: Energy

    def __init__(self, lattice: str, energy: Energy) -> None:
        self.lattice = get_lattice(lattice)
        self.quantity = "green"
        self.energy = energy
        self.exact = recurrence_ok(lattice, energy)
        if self.exact:
            self.table_limit = 20
            self.primary_text = (
                "recurrence: exact forms a + b*G0 + c*dG0 + d*d2G0 (rational a..d; the lattice "
                "equation, s_i L(s) = sum_e e_i G(s+e) and their E-derivatives, "
                "exact/cubic_energy.py) evaluated as certified python-flint balls, G0 and its "
                "derivatives from the closed form in power-series arithmetic")
            self.check_name, self.check_text = check_method(lattice, energy)
        elif lattice == "sc":  # table_limit <= BESSEL_MAX: every sc row has the Bessel check
            self.check_text = "the time-domain Bessel integral (methods/sc_green_bessel.py)"
            self.check_name = "bessel"
        self.energy_methods = {
            "primary": self.primary_text + f"; G0 = {CLOSED_TEXT[lattice]}",
            "check": self.check_text + " at full digits (of each component) for every row"}
        if lattice == "fcc" and not self.exact:  # E = 0, 12 (-4 is refused on parsing)
            excl = ", ".join(str(x) for x in cubic_energy.EXCLUDED[lattice])
            raise InputError(f"an fcc green table needs an energy other than {excl}: "
                             "elsewhere only the origin and the nearest neighbour have two "
                             "methods here")
        # bcc: its only excluded energy inside the band, 0, is refused on parsing

    def _columns(self, extent: int) -> Iterator[list[Site]]:
        lat = self.lattice
        assert isinstance(lat, Cubic)
        for l in range(extent + 1):
            for m in range(l + 1):
                col = lat.column(l, m)
                if col:
                    yield col

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        return self._columns(extent)

    def value(self, c: Site, digits: int) -> ComplexRounded:
        name, E = self.lattice.name, self.energy
        if self.exact:
            return recurrence_value(name, c, E, digits)
        if not any(c) or c == NEIGHBOUR[name]:
            return certify_complex(lambda bits: _ball(name, c, E, bits),
                                   _start_bits(digits) + 64, digits, zero_parts(name, E, c),
                                   f"G({E};{c})")
        return integral_value(name, c, E, digits)

    def form(self, c: Site) -> Any:
        name = self.lattice.name
        if self.exact:
            return cubic_energy.green_form(name, cubic_energy.field(self.energy), c,
                                           ClosedForm(name).how)
        how = ClosedForm(name).how
        if not any(c):
            return TableForm("G0", how)
        if c == NEIGHBOUR[name]:
            return TableForm(f"(E*G0 - 1)/{self.lattice.z}", how)
        return TableForm("", "")

    def evaluated_batches(self, extent: int, digits: int, with_exact: bool, start: int = 0,
                          stop: int | None = None) -> Iterator[tuple[int, EvaluatedBatch]]:
        for bi, sites in enumerate(self._columns(extent)):
            if bi < start:
                continue
            if stop is not None and bi >= stop:
                return
            vals = [self.value(c, digits) for c in sites]
            yield bi, EvaluatedBatch(sites, column_of(vals, 0),
                                     [self.form(c) for c in sites] if with_exact else None,
                                     imag=column_of(vals, 1))

    def exact_form(self, site: Site) -> Any:
        return self.form(site)

    def row_method(self, c: Site) -> str:
        if self.exact:
            return f"recurrence;{self.check_name}"
        closed = not any(c) or c == NEIGHBOUR[self.lattice.name]
        return f"{'closed-form' if closed else 'integral'};{self.check_name}"

    def quad_sites(self, sites: list[Site], digits: int) -> list:
        name, E = self.lattice.name, self.energy
        if self.exact and name == "fcc" and _inside(name, E):
            return fcc_sites_many(sites, E, digits)
        if self.exact:
            return [check_value(name, c, E, digits)[2] for c in sites]
        return [_second(name, c, E, digits)[2] for c in sites]

    def memory_estimate(self, extent: int) -> int:
        return 100_000_000

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        return self.lattice.region_size(extent) * (2 * (2 * digits + 80) + 400)


for _name in ("sc", "bcc", "fcc"):
    PARAMETRISED[(_name, "green")] = functools.partial(CubicGreen, _name)
