"""The single-value API of the energy-dependent quantities: ``green``, ``dos``, ``local_dos``.

Each lattice registers a :class:`GreenBackend` in ``BACKENDS`` (the square's is in this
module; others live beside their providers and are registered at the bottom); the public
functions validate the lattice and dispatch.  For the square, ``green`` evaluates the exact
form a G00 + b G11 + c of G(E; m, n) as a certified ball and prints each component correctly
rounded to ``digits`` significant digits of its own (a component that is exactly 0 by
symmetry prints as ``0``); the quadrature of the reduced integral must agree on every
printed digit of both components.
"""

from __future__ import annotations

import math
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

import mpmath

from ..energy import Energy, parse_energy
from ..errors import InputError, PrecisionError, VerificationError
from ..exact import square_green as exact_green
from ..exact.complex_eval import round_arb
from ..exact.forms import Constant, ExactForm
from ..lattices import Site, get_lattice
from ..methods.square_green_closed import arb_q, dos_ball
from ..methods.square_green_quadrature import green_quad
from ..rounding import ZERO, Rounded, agreement_digits
from . import Result, check_digits, common_json
from .square_green import quad_digits_needed

BASIS_TEXT = ("G00 = G(E;0,0) = 2*elliptic_k(16/E**2)/(pi*E), G11 = G(E;1,1) = "
              "(E**2 - 8)/8*G00 - E*elliptic_e(16/E**2)/(4*pi) (parameter convention, "
              "principal branch, off the cut; on the cut the E + i0 limits of the README)")


# single values of G at an energy (green, local_dos): the largest canonical first coordinate.
# The certified exact form and the quadrature that confirms it cost about m^2 (2-D) or more
# (cubic: the confirming integrals); measured on one loaded core at 10 digits, the worst
# sites at these limits take: square (150, 150) at 1+1j 13 s, honeycomb local dos
# (30, 15, 1) ~8 s, cubic (10, 10, 10) a few seconds.  Tables reach further (tables/make.py).
SINGLE_SITE_LIMIT = {"square": 150, "triangular": 30, "honeycomb": 30,
                     "sc": 10, "bcc": 10, "fcc": 10}


def check_single_site(lattice: str, c: Site) -> None:
    """Refuse, at once, a single G value (or local DOS) beyond ``SINGLE_SITE_LIMIT``."""
    limit = SINGLE_SITE_LIMIT[lattice]
    if c[0] > limit:
        shown = str(c) if len(str(c)) <= 80 else f"(~1e{len(str(c[0])) - 1}, ...)"
        raise InputError(f"site {shown}: single values of G and of the local DOS at an energy "
                         f"are offered on the {lattice} lattice for canonical coordinates up "
                         f"to {limit} (beyond, the certified form and its confirming "
                         "quadrature take longer than a single answer may; tables at an "
                         "energy reach further)")


def _frac(x: Any) -> Fraction:
    sign, man, exp, _ = x._mpf_
    if not man:
        return Fraction(0)
    v = Fraction(int(man)) * Fraction(2) ** int(exp)
    return -v if sign else v


def _modulus_bound(bounds: Sequence[Rounded]) -> str:
    """A bound on |printed - true| from the components' half-ulps 5e-k: at most 1e-(k-1)."""
    ks = [r.exp - len(r.digits) for r in bounds if r.digits]
    return f"1e{max(ks) + 1:d}" if ks else "0"


@dataclass(frozen=True)
class GreenResult:
    """One verified complex value G(E; m, n).

    ``value`` is ``RE+IMj`` (Python/mpmath complex syntax); ``value_re``, ``value_im`` are the
    components, each correctly rounded to ``digits`` significant digits of its own (``0`` for
    a component that vanishes by symmetry); ``error_bound_re``/``_im`` bound each component's
    error (half a unit in its last place) and ``error_bound`` bounds |value - G|.
    """

    lattice: str
    site: Site
    canonical_site: Site
    energy: Energy
    digits: int
    value_re: str
    value_im: str
    exact: Any  # the lattice's exact form of G (printable), or None where there is none
    error_bound_re: str
    error_bound_im: str
    error_bound: str
    methods: tuple[str, ...]
    agreement_digits: int
    notes: tuple[str, ...] = field(default=())
    quantity: str = "green"
    basis: str = BASIS_TEXT  # what the names in ``exact`` stand for

    @property
    def value(self) -> str:
        im = self.value_im
        return f"{self.value_re}{'' if im.startswith('-') else '+'}{im}j"

    @property
    def mpc(self) -> mpmath.mpc:
        """The printed value as an mpmath complex number."""
        with mpmath.workdps(self.digits + 5):
            return mpmath.mpc(mpmath.mpf(self.value_re), mpmath.mpf(self.value_im))

    def to_json(self) -> dict[str, Any]:
        return {
            **common_json(self),
            "energy": str(self.energy),
            "value_re": self.value_re,
            "value_im": self.value_im,
            "error_bound_re": self.error_bound_re,
            "error_bound_im": self.error_bound_im,
            "exact_basis": self.basis,
        }


def component_agreement(centre: tuple[Fraction, Fraction], q: tuple[Fraction, Fraction],
                        zero: tuple[bool, bool], digits: int) -> int:
    """Digits on which both components agree; a component 0 by symmetry agrees when the
    quadrature's is below 10^-digits |G|, a value that is exactly 0 when the quadrature's
    modulus is below 10^-digits."""
    size2 = q[0] * q[0] + q[1] * q[1]  # exact: G can be far below float64's range
    if all(zero):  # G = 0 exactly (e.g. the honeycomb's Dirac point): |quadrature| < 10^-digits
        return digits if size2 * 100**digits <= 1 else 0
    out = digits
    for c, x, z in zip(centre, q, zero, strict=True):
        if z:
            if x * x * 100**digits > size2:
                return 0
        else:
            out = min(out, agreement_digits(c, x, digits))
    return out


def _square_green(site: Sequence[object], E: Energy, digits: int) -> GreenResult:
    """G(E; site) = <0|(E - H)^-1|site> at an exact energy (a string such as "9/2" or
    "1.5+0.5j"; E + i0 on the band), to ``digits`` verified significant digits per component.

    >>> g = green("square", (1, 0), energy="9/2", digits=20)
    >>> g.value, str(g.exact), g.methods
    ('0.10576448447004864316+0j', '9/8*G00 - 1/4', ('recurrence', 'quadrature'))
    """
    lat = get_lattice("square")
    s = lat.site(site)
    c = lat.canonical(s)
    check_single_site("square", c)
    form = exact_green.green_form(E, c[0], c[1])
    v = exact_green.evaluate(form, E, (c[0], c[1]), digits)
    zero = exact_green.zero_parts(E, c[0], c[1])
    dps = quad_digits_needed(v, digits)
    with mpmath.workdps(dps + 5):
        q = green_quad(E, c[0], c[1], dps)
        qf = (_frac(q.real), _frac(q.imag))
    agree = component_agreement(v.center, qf, zero, digits)
    if agree < digits:
        raise VerificationError(f"square green at E = {E}, site {c}: recurrence and quadrature "
                                f"agree to only {agree} of {digits} digits")
    return GreenResult("square", s, c, E, digits, str(v.re), str(v.im), form,
                       v.re.half_ulp(), v.im.half_ulp(), _modulus_bound([v.re, v.im]),
                       ("recurrence", "quadrature"), agree)


def _real_energy(energy: object, what: str, lattice: str = "square",
                 quantity: str = "dos") -> Energy:
    E = parse_energy(energy, lattice, quantity)
    if not E.is_real:
        raise InputError(f"the {what} is taken at real energies (E + i0); got {E}: for complex "
                         "E use the green quantity")
    return E


def _certify_real(build: Any, start: int, digits: int, what: str) -> tuple[Rounded, Fraction]:
    bits = start
    while True:
        r, c = round_arb(build(bits), digits)
        if r is not None:
            return r, c
        if bits > 8 * start + 4096:
            raise PrecisionError(f"could not certify {digits} digits of {what} (it may be 0)")
        bits = (bits + bits // 2 + 63) // 64 * 64


def _dos_result(E: Energy, site: Site, canon: Site, digits: int, quantity: str,
                build: Any, start: int, exact: ExactForm | None) -> Result:
    if abs(E.re) > 4:  # Im G = 0 exactly off the band (G is real there)
        return Result("square", quantity, site, canon, digits, "0",
                      ExactForm((Fraction(0),), ()), "0", ("definition",), digits,
                      notes=("outside the band [-4, 4] G is real: the density is 0",),
                      energy=str(E))
    r, centre = _certify_real(build, start, digits, f"the {quantity} at E = {E}")
    dps = digits + 3
    with mpmath.workdps(dps + 5):
        q = -green_quad(E, canon[0], canon[1], dps).imag / mpmath.pi
        qf = _frac(q)
    agree = agreement_digits(centre, qf, digits)
    if agree < digits:
        raise VerificationError(f"square {quantity} at E = {E}: closed form and quadrature "
                                f"agree to only {agree} of {digits} digits")
    return Result("square", quantity, site, canon, digits, str(r), exact, r.half_ulp(),
                  ("closed-form" if quantity == "dos" else "recurrence", "quadrature"), agree,
                  energy=str(E))


def _square_dos(E: Energy, digits: int) -> Result:
    """Density of states per site rho(E) = -Im G(E + i0; 0, 0)/pi = K(1 - E^2/16)/(2 pi^2)
    for 0 < |E| < 4 (K of parameter m, DLMF 19.2), 0 outside the band; normalised to 1.

    >>> r = dos("square", energy="2.5", digits=20)
    >>> r.value, str(r.exact)
    ('0.099286025262700925750', 'elliptic_k(39/64)/(2*pi**2)')
    """
    q = 1 - E.re * E.re / 16
    qt = str(q.numerator) if q.denominator == 1 else f"{q.numerator}/{q.denominator}"
    from flint import acb, arb

    const = Constant(f"elliptic_k({qt})/pi**2",
                     lambda: acb(arb_q(q)).elliptic_k().real / arb.pi() ** 2)
    form = ExactForm((Fraction(1, 2),), (const,))
    start = -(-(math.ceil((digits + 2) * 3.33) + 64) // 64) * 64
    return _dos_result(E, (0, 0), (0, 0), digits, "dos", lambda b: dos_ball(E.re, b), start,
                       form)


def _square_local_dos(site: Sequence[object], E: Energy, digits: int) -> Result:
    """Local density of states rho(E; m, n) = -Im G(E + i0; m, n)/pi (real E; 0 off the
    band), from the exact form (real coefficients a, b: -(a Im G00 + b Im G11)/pi).  The
    off-diagonal ones can be negative.  ``exact`` is None (the form is that of G)."""
    lat = get_lattice("square")
    s = lat.site(site)
    c = lat.canonical(s)
    check_single_site("square", c)
    form = exact_green.green_form(E, c[0], c[1])

    def build(bits: int) -> Any:
        return exact_green.neg_imag_over_pi(exact_green.ball(form, E, bits), bits)

    return _dos_result(E, s, c, digits, "local-dos", build,
                       exact_green.start_bits(form, digits), None)


@dataclass(frozen=True)
class GreenBackend:
    """One lattice's energy-dependent quantities.  The callables receive a parsed energy
    (real for ``dos``/``local_dos``: the caller has refused complex ones) and checked digits;
    ``green``/``local_dos`` receive the site as given (they validate it with the lattice)."""

    green: Callable[[Sequence[object], Energy, int], GreenResult]
    dos: Callable[[Energy, int], Result]
    local_dos: Callable[[Sequence[object], Energy, int], Result]


BACKENDS: dict[str, GreenBackend] = {
    "square": GreenBackend(_square_green, _square_dos, _square_local_dos),
}


def _backend(lattice: str, what: str) -> GreenBackend:
    lat = get_lattice(lattice)
    try:
        return BACKENDS[lat.name]
    except KeyError:
        raise InputError(f"{what} is not available for the {lat.name} lattice yet; available "
                         f"for: {', '.join(sorted(BACKENDS))}") from None


def green(lattice: str, site: Sequence[object], energy: object, digits: int = 50) -> GreenResult:
    """G(E; site) = <0|(E - H)^-1|site> at an exact energy (a string such as "9/2" or
    "1.5+0.5j"; E + i0 on the band), to ``digits`` verified significant digits per component.

    >>> g = green("square", (1, 0), energy="9/2", digits=20)
    >>> g.value
    '0.10576448447004864316+0j'
    """
    b = _backend(lattice, "green")
    digits = check_digits(digits)
    return b.green(site, parse_energy(energy, get_lattice(lattice).name), digits)


def dos(lattice: str, energy: object, digits: int = 50) -> Result:
    """Density of states per site rho(E) = -Im G(E + i0; 0)/pi at a real exact energy,
    normalised to 1 (0 outside the band).

    >>> dos("square", energy="2.5", digits=20).value
    '0.099286025262700925750'
    """
    b = _backend(lattice, "dos")
    digits = check_digits(digits)
    return b.dos(_real_energy(energy, "density of states", get_lattice(lattice).name), digits)


def local_dos(lattice: str, site: Sequence[object], energy: object, digits: int = 50) -> Result:
    """Local density of states rho(E; site) = -Im G(E + i0; site)/pi at a real exact energy
    (the off-diagonal ones can be negative)."""
    b = _backend(lattice, "local dos")
    digits = check_digits(digits)
    return b.local_dos(site, _real_energy(energy, "local density of states",
                                          get_lattice(lattice).name, "local-dos"), digits)


from . import cubic_green  # noqa: E402, F401 - registers the sc, bcc and fcc backends
from .trihex_green_api import TRIHEX_BACKENDS  # noqa: E402 - uses the above

BACKENDS.update(TRIHEX_BACKENDS)

__all__ = ["BACKENDS", "ZERO", "GreenBackend", "GreenResult", "dos", "green", "local_dos"]
