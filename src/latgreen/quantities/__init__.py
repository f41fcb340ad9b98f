"""Quantities through their providers: the public single-value API lives here.

``resistance(lattice, site, digits)`` returns a :class:`Result`: the value correctly rounded
to ``digits`` significant digits, each of them confirmed by two independent methods, with the
exact form where one exists and a rigorous bound on the printed value's error.
"""

from __future__ import annotations

import operator
from collections.abc import Callable, Sequence
from dataclasses import dataclass, field
from fractions import Fraction
from typing import Any

import mpmath

from ..energy import Energy, parse_energy
from ..errors import InputError, VerificationError
from ..exact.evaluate import FixedPointEvaluator
from ..exact.forms import ExactForm
from ..lattices import Site, get_lattice
from ..lattices.base import short_repr
from ..rounding import Rounded, agreement_digits, round_interval
from .base import Batch, Provider
from .cubic_resistance import BCC_RESISTANCE, FCC_RESISTANCE, SC_RESISTANCE
from .honeycomb_resistance import HONEYCOMB_RESISTANCE
from .square_green import SquareGreen
from .square_resistance import SQUARE_RESISTANCE
from .triangular_resistance import TRIANGULAR_RESISTANCE
from .trihex_green import HoneycombGreen, TriangularGreen

MAX_DIGITS = 1000
# resistance beyond the exact range (quadrature confirmed by the far-field expansion): the
# largest canonical first coordinate served; beyond, the quadrature's cost (cubic: nodes
# grow with l, about 5-8 s at l = 60; 2-D: working precision grows with log r) or its
# float64 planning (2-D, r near 1e300) no longer fits a single answer
FAR_LIMIT = {"square": 10**30, "triangular": 10**20, "honeycomb": 10**20,
             "sc": 60, "bcc": 60, "fcc": 60}
QUANTITIES = ("resistance", "green", "dos")
PROVIDERS: dict[tuple[str, str], Provider] = {
    ("square", "resistance"): SQUARE_RESISTANCE,
    ("sc", "resistance"): SC_RESISTANCE,
    ("bcc", "resistance"): BCC_RESISTANCE,
    ("fcc", "resistance"): FCC_RESISTANCE,
    ("triangular", "resistance"): TRIANGULAR_RESISTANCE,
    ("honeycomb", "resistance"): HONEYCOMB_RESISTANCE,
}
# quantities with a parameter (the energy): a factory binds a provider to one energy
PARAMETRISED: dict[tuple[str, str], Callable[[Energy], Provider]] = {
    ("square", "green"): SquareGreen,
    ("triangular", "green"): TriangularGreen,
    ("honeycomb", "green"): HoneycombGreen,
}


def check_digits(digits: object) -> int:
    """Digits asked for: a positive integer (Python or numpy; bool, float, str refused) up to
    the ceiling ``MAX_DIGITS``."""
    if isinstance(digits, bool | str | bytes | float):
        raise InputError(f"digits must be an integer, got {short_repr(digits)}")
    try:
        digits = operator.index(digits)  # type: ignore[arg-type]
    except TypeError:
        raise InputError(f"digits must be an integer, got {short_repr(digits)}") from None
    if digits <= 0:
        raise InputError(f"digits must be positive, got {digits}")
    if digits > MAX_DIGITS:
        raise InputError(f"digits above the ceiling of {MAX_DIGITS} are not supported, "
                         f"got {digits}")
    return digits


def get_provider(lattice: str, quantity: str, energy: object = None) -> Provider:
    """The provider of (lattice, quantity); a quantity with an energy is bound to it."""
    lat = get_lattice(lattice)
    if quantity not in QUANTITIES:
        raise InputError(f"unknown quantity {quantity!r}; available: {', '.join(QUANTITIES)}")
    factory = PARAMETRISED.get((lat.name, quantity))
    if factory is not None:
        if energy is None:
            raise InputError(f"quantity {quantity!r} needs an energy (--energy E)")
        return factory(parse_energy(energy, lat.name))
    if energy is not None:
        if quantity == "green":
            raise InputError(f"a green table is not available for the {lat.name} lattice yet; "
                             f"single values: latgreen green {lat.name} ... --energy E")
        raise InputError(f"quantity {quantity!r} takes no energy")
    if quantity == "dos":
        raise InputError("a dos table is a grid of energies: use --energies A:B:COUNT")
    try:
        return PROVIDERS[(lat.name, quantity)]
    except KeyError:
        raise InputError(f"quantity {quantity!r} is not available for the {lat.name} lattice "
                         "yet") from None


@dataclass(frozen=True)
class Result:
    """One verified value.

    ``value`` holds exactly ``digits`` significant digits, correctly rounded; ``error_bound``
    bounds |value - true value| (half a unit in the last place).  ``methods`` lists the
    independent methods whose values agree to ``agreement_digits`` significant digits.
    """

    lattice: str
    quantity: str
    site: Site
    canonical_site: Site
    digits: int
    value: str
    exact: ExactForm | None
    error_bound: str
    methods: tuple[str, ...]
    agreement_digits: int
    notes: tuple[str, ...] = field(default=())
    energy: str | None = None  # for quantities taken at an energy (dos, local dos)

    @property
    def mpf(self) -> mpmath.mpf:
        """The value as an mpmath number (exactly the printed decimal, at enough precision)."""
        with mpmath.workdps(self.digits + 5):
            return mpmath.mpf(self.value)

    def to_json(self) -> dict[str, Any]:
        return {**common_json(self),
                **({"energy": self.energy} if self.energy is not None else {})}


def common_json(r: Any) -> dict[str, Any]:
    """The JSON keys every single-value result has (``Result``, ``GreenResult``), in order."""
    return {
        "lattice": r.lattice,
        "quantity": r.quantity,
        "site": list(r.site),
        "canonical_site": list(r.canonical_site),
        "digits": r.digits,
        "value": r.value,
        "exact": None if r.exact is None else str(r.exact),
        "exact_how": None if r.exact is None else r.exact.how,
        "error_bound": r.error_bound,
        "methods": list(r.methods),
        "agreement_digits": r.agreement_digits,
        "notes": list(r.notes),
    }


def mpf_fraction(x: mpmath.mpf) -> Fraction:
    """Exact value of an mpmath number."""
    sign, man, exp, _ = x._mpf_
    if not man:
        return Fraction(0)
    v = Fraction(int(man)) * Fraction(2) ** int(exp)
    return -v if sign else v


def resistance(lattice: str, site: Sequence[object], digits: int = 50) -> Result:
    """Two-point resistance between the origin and ``site`` of an infinite lattice of unit
    resistors, to ``digits`` verified significant digits.

    >>> r = resistance("square", (3, 1), digits=30)
    >>> r.value, str(r.exact), r.methods
    ('0.880751588151456963579102076757', '46/(3*pi) - 4', ('recurrence', 'quadrature'))
    """
    provider = get_provider(lattice, "resistance")
    digits = provider.check_digits(check_digits(digits))
    lat = provider.lattice
    s = lat.site(site)
    c = lat.canonical(s)
    common: dict[str, Any] = dict(lattice=lat.name, quantity="resistance", site=s,
                                  canonical_site=c, digits=digits)
    if not any(c):
        return Result(**common, value="0", exact=ExactForm((Fraction(0),), (), "derived"),
                      error_bound="0", methods=("definition",), agreement_digits=digits)
    limit = FAR_LIMIT.get(lat.name)
    if limit is not None and max(abs(x) for x in c) > limit:
        raise InputError(
            f"{lat.name} site {_site_text(c)} is too far out: resistances are computed for "
            f"canonical coordinates up to {_site_text((limit,))[1:-1].lstrip('~')} (exact "
            f"forms up to {provider.exact_limit}, beyond them quadrature confirmed by the "
            "far-field expansion, whose cost grows with the distance)")
    form = provider.exact_form(c)
    if form is not None:
        nums, dens = form.integer_row()
        ev = FixedPointEvaluator(form.basis, dens, digits).evaluate(nums)
        q = provider.quad(c, digits)
        agree = agreement_digits(ev.center, mpf_fraction(q), digits)
        if agree < digits:
            raise VerificationError(
                f"{lat.name} resistance at {c}: recurrence and quadrature agree to only "
                f"{agree} of {digits} digits")
        notes: tuple[str, ...] = ()
        if form.how == "identified":
            notes = ("the exact form rests on seed values identified by integer-relation "
                     f"search and verified to {form.verified_digits} digits (conjectural "
                     "beyond); the printed digits are confirmed by the quadrature",)
        return Result(**common, value=str(ev.rounded), exact=form,
                      error_bound=ev.rounded.half_ulp(), methods=("recurrence", "quadrature"),
                      agreement_digits=agree, notes=notes)
    return _far_site(provider, c, digits, common)


def _site_text(c: Site) -> str:
    """A site for messages: coordinates of more than 12 digits as powers of ten."""
    def one(x: int) -> str:
        return str(x) if abs(x) < 10**12 else f"{'-' if x < 0 else ''}~1e{len(str(abs(x))) - 1}"
    return "(" + ", ".join(one(x) for x in c) + ")"


def _far_site(provider: Provider, c: Site, digits: int, common: dict[str, Any]) -> Result:
    """Beyond the exact range: quadrature confirmed by the far-field expansion.  The digits
    the expansion can confirm are known before the quadrature runs: more are refused at
    once."""
    asy = provider.asymptotic(c, digits + 15)
    if asy is None:  # pragma: no cover - every provider with a finite exact range has one
        raise InputError(f"site {c} is beyond the exact range and no second method covers it")
    a_val, a_err = asy
    with mpmath.workdps(digits + 15):
        reach = int(mpmath.floor(-mpmath.log10(2 * a_err / abs(a_val))))
    if digits > reach:
        raise InputError(
            f"site {_site_text(c)} is beyond the exact range (coordinates up to "
            f"{provider.exact_limit}); there the far-field expansion confirms only {reach} "
            f"digits: ask for at most --digits {reach}")
    with mpmath.workdps(digits + 15):
        q = provider.quad(c, digits + 10)
        slack = mpmath.mpf(10) ** (-(digits + 9)) * abs(q)  # the quadrature's own target
        agree = agreement_digits(mpf_fraction(q), mpf_fraction(a_val), digits + 10)
        differ = abs(q - a_val) > a_err + slack
    if differ:
        raise VerificationError(
            f"{provider.lattice.name} resistance at {c}: quadrature and far-field expansion "
            f"differ by more than the expansion's error estimate")
    # the quadrature has 10 guard digits; round it, and say so
    with mpmath.workdps(digits + 15):
        tol = mpmath.mpf(10) ** (-(digits + 8)) * abs(q)
        lo, hi = mpf_fraction(q - tol), mpf_fraction(q + tol)
    den = lo.denominator * hi.denominator
    r = round_interval(lo.numerator * hi.denominator, hi.numerator * lo.denominator, den, digits)
    if r is None:
        raise InputError(f"site {c}: the value lies too close to a rounding boundary at "
                         f"{digits} digits; ask for one digit more or less")
    assert isinstance(r, Rounded)
    return Result(**common, value=str(r), exact=None, error_bound=r.half_ulp(),
                  methods=("quadrature", "asymptotic"), agreement_digits=min(agree, digits),
                  notes=("beyond the exact range: the quadrature carries 10 guard digits "
                         "(error estimate, not a proof); the far-field expansion confirms "
                         f"{min(agree, digits)} digits",))


def return_probability(lattice: str, digits: int = 50) -> Result:
    """Polya's return probability P = 1 - 1/(z G(z; 0)) of a cubic lattice (sc, bcc, fcc),
    by the Gamma-function closed form, confirmed by quadrature of G(z; 0).

    >>> return_probability("bcc", digits=20).value  # 1 - 1/W_bcc, W_bcc: OEIS A091670
    '0.28222998895387000218'
    """
    from .polya import return_probability as rp

    return rp(lattice, digits)


from .green_api import GreenResult, dos, green, local_dos  # noqa: E402 - uses the above

__all__ = ["MAX_DIGITS", "PROVIDERS", "Batch", "GreenResult", "Provider", "Result",
           "check_digits", "dos", "get_provider", "green", "local_dos", "resistance",
           "return_probability"]
