"""The triangular and honeycomb lattices' ``green``, ``dos`` and ``local_dos`` backends
(registered in ``green_api.BACKENDS``).

green: the exact form a B0 + b B2 + c of G(E; site) (``exact/trihex_green.py``) evaluated as a
certified ball, each component correctly rounded to ``digits`` significant digits of its own;
the quadrature of the reduced integral must agree on every printed digit of both components.
dos: rho(E) = -Im G(E + i0; 0)/pi from the in-band elliptic closed forms
(``methods/trihex_green_closed.py``), confirmed by -Im of the quadrature / pi; 0 outside the
band (G is real there) and, on the honeycomb, at the Dirac point E = 0
(rho(E) = |E| rho_tri(E^2 - 3), rho_tri bounded at its band edge -3).
local_dos: -Im G(E + i0; site)/pi from the exact form, confirmed the same way.
"""

from __future__ import annotations

import math
from collections.abc import Sequence
from fractions import Fraction
from typing import Any

import mpmath
from flint import ctx

from ..energy import Energy
from ..errors import VerificationError
from ..exact import trihex_green as exact_green
from ..exact.forms import Constant, ExactForm
from ..lattices import Site, get_lattice
from ..methods.trihex_green_closed import dos_ball, dos_text
from ..rounding import agreement_digits
from . import Result
from .green_api import (
    GreenBackend,
    GreenResult,
    _certify_real,
    _frac,
    _modulus_bound,
    check_single_site,
    component_agreement,
)
from .square_green import quad_digits_needed
from .trihex_green import basis_text, quad_value

BAND = {"triangular": (Fraction(-3), Fraction(6)), "honeycomb": (Fraction(-3), Fraction(3))}
ORIGIN = {"triangular": (0, 0), "honeycomb": (0, 0, 0)}


def _site(lattice: str, site: Sequence[object]) -> tuple[Site, Site]:
    lat = get_lattice(lattice)
    s = lat.site(site)
    c = lat.canonical(s)
    check_single_site(lattice, c)
    return s, c


def _green(lattice: str, site: Sequence[object], E: Energy, digits: int) -> GreenResult:
    s, c = _site(lattice, site)
    form = exact_green.green_form(lattice, E, c)
    v = exact_green.evaluate(form, lattice, E, c, digits)
    zero = (str(v.re) == "0", str(v.im) == "0")  # exact zeros (symmetry, or a zero form)
    dps = quad_digits_needed(v, digits)
    with mpmath.workdps(dps + 5):
        q = quad_value(lattice, E, c, dps)
        qf = (_frac(q.real), _frac(q.imag))
    agree = component_agreement(v.center, qf, zero, digits)
    if agree < digits:
        raise VerificationError(f"{lattice} green at E = {E}, site {c}: recurrence and "
                                f"quadrature agree to only {agree} of {digits} digits")
    return GreenResult(lattice, s, c, E, digits, str(v.re), str(v.im), form,
                       v.re.half_ulp(), v.im.half_ulp(), _modulus_bound([v.re, v.im]),
                       ("recurrence", "quadrature"), agree, basis=basis_text(lattice, E))


def triangular_green(site: Sequence[object], E: Energy, digits: int) -> GreenResult:
    """G(E; m, n) of the triangular lattice.

    >>> from latgreen import green
    >>> g = green("triangular", (1, 0), energy="7", digits=20)
    >>> g.value, str(g.exact)
    ('0.048424468980008767226+0j', '7/6*G00 - 1/6')
    """
    return _green("triangular", site, E, digits)


def honeycomb_green(site: Sequence[object], E: Energy, digits: int) -> GreenResult:
    """G(E; m, n, s) of the honeycomb lattice (from A(0,0)).

    >>> from latgreen import green
    >>> str(green("honeycomb", (0, 0, 1), energy="4", digits=20).exact)
    '16/3*T00 - 1/3'
    """
    return _green("honeycomb", site, E, digits)


def _out_of_band(lattice: str, E: Energy, site: Site, canon: Site, digits: int,
                 quantity: str, why: str) -> Result:
    return Result(lattice, quantity, site, canon, digits, "0", ExactForm((Fraction(0),), ()),
                  "0", ("definition",), digits, notes=(why,), energy=str(E))


def _check_dos(lattice: str, E: Energy, canon: Site, centre: Fraction, digits: int,
               quantity: str) -> int:
    """Agreement of -Im(quadrature)/pi with the certified value (extra quadrature digits
    where Im G is much smaller than |G|)."""
    with mpmath.workdps(20):
        q = quad_value(lattice, E, canon, 15)
        extra = max(0, int(mpmath.ceil(mpmath.log10(abs(q) / abs(q.imag))))) if q.imag else 30
    dps = digits + extra + 3
    with mpmath.workdps(dps + 5):
        qf = _frac(-quad_value(lattice, E, canon, dps).imag / mpmath.pi)
    agree = agreement_digits(centre, qf, digits)
    if agree < digits:
        raise VerificationError(f"{lattice} {quantity} at E = {E}: closed form and quadrature "
                                f"agree to only {agree} of {digits} digits")
    return agree


def _dos(lattice: str, E: Energy, digits: int) -> Result:
    lo, hi = BAND[lattice]
    o = ORIGIN[lattice]
    if not lo < E.re < hi:
        return _out_of_band(lattice, E, o, o, digits, "dos",
                            f"outside the band [{lo}, {hi}] G is real: the density is 0")
    if lattice == "honeycomb" and E.re == 0:
        return _out_of_band(lattice, E, o, o, digits, "dos",
                            "the Dirac point: rho(E) = |E| rho_tri(E^2 - 3) vanishes at E = 0")
    top, bottom = dos_text(lattice, E.re)
    const = Constant(f"{top}/({bottom})", lambda: dos_ball(lattice, E.re, ctx.prec), top,
                     bottom)
    form = ExactForm((Fraction(1),), (const,))
    start = -(-(math.ceil((digits + 2) * 3.33) + 64) // 64) * 64
    r, centre = _certify_real(lambda b: dos_ball(lattice, E.re, b), start, digits,
                              f"the dos at E = {E}")
    agree = _check_dos(lattice, E, o, centre, digits, "dos")
    return Result(lattice, "dos", o, o, digits, str(r), form, r.half_ulp(),
                  ("closed-form", "quadrature"), agree, energy=str(E))


def triangular_dos(E: Energy, digits: int) -> Result:
    """rho(E) = -Im G(E + i0; 0)/pi of the triangular lattice (normalised to 1).

    >>> from latgreen import dos
    >>> r = dos("triangular", energy="1", digits=20)
    >>> r.value
    '0.084905841283555519446'
    >>> str(r.exact)
    'elliptic_k((3 - sqrt(4))*(sqrt(4) + 1)**3/(16*sqrt(4)))/(2*pi**2*4**(1/4))'
    """
    return _dos("triangular", E, digits)


def honeycomb_dos(E: Energy, digits: int) -> Result:
    """rho(E) = -Im G(E + i0; A,A)/pi = |E| rho_tri(E^2 - 3) of the honeycomb lattice."""
    return _dos("honeycomb", E, digits)


def _local_dos(lattice: str, site: Sequence[object], E: Energy, digits: int) -> Result:
    s, c = _site(lattice, site)
    lo, hi = BAND[lattice]
    if not lo < E.re < hi:
        return _out_of_band(lattice, E, s, c, digits, "local-dos",
                            f"outside the band [{lo}, {hi}] G is real: the density is 0")
    if exact_green.is_dirac(lattice, E):
        return _out_of_band(lattice, E, s, c, digits, "local-dos",
                            "at the Dirac point every G(0 + i0; r) is real (the limits "
                            "p + q sqrt(3)/pi, 0 on the A sites): the density is 0")
    form = exact_green.green_form(lattice, E, c)

    def build(bits: int) -> Any:
        return neg_imag_over_pi(exact_green.ball(form, lattice, E, bits), bits)

    from ..exact.square_green import neg_imag_over_pi, start_bits

    r, centre = _certify_real(build, start_bits(form, digits), digits,
                              f"the local-dos at E = {E}, site {c}")
    agree = _check_dos(lattice, E, c, centre, digits, "local-dos")
    return Result(lattice, "local-dos", s, c, digits, str(r), None, r.half_ulp(),
                  ("recurrence", "quadrature"), agree, energy=str(E))


def triangular_local_dos(site: Sequence[object], E: Energy, digits: int) -> Result:
    """-Im G(E + i0; m, n)/pi of the triangular lattice (off-diagonal ones can be < 0)."""
    return _local_dos("triangular", site, E, digits)


def honeycomb_local_dos(site: Sequence[object], E: Energy, digits: int) -> Result:
    """-Im G(E + i0; m, n, s)/pi of the honeycomb lattice."""
    return _local_dos("honeycomb", site, E, digits)


TRIHEX_BACKENDS = {
    "triangular": GreenBackend(triangular_green, triangular_dos, triangular_local_dos),
    "honeycomb": GreenBackend(honeycomb_green, honeycomb_dos, honeycomb_local_dos),
}
