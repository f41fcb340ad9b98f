"""Polya's return probability of the cubic lattices, P = 1 - 1/(z G(z; 0)).

z G(z; 0) is the expected number of visits of the simple random walk to its starting point
(1 + P + P^2 + ... = 1/(1 - P)).  With g the Watson integral (``exact/cubic.py``),
z G(z; 0) = 3 g (sc), g (bcc), 3 g (fcc), and with g = a K (K the Gamma part):

    sc:  P = 1 - 32 pi**3/(sqrt(6)*gamma(1/24)*gamma(5/24)*gamma(7/24)*gamma(11/24))
    bcc: P = 1 - 4 pi**3/gamma(1/4)**4
    fcc: P = 1 - (16/9) 2**(2/3)*pi**4/gamma(1/3)**6

(sc: Glasser & Zucker, PNAS 74, 1800 (1977), OEIS A086230; bcc: from OEIS A091670; fcc from
Watson's fcc integral).  Two independent methods: the closed form evaluated with a proven
error term, and the polar quadrature of G(z; 0) (``methods/cubic_quadrature.py``).
"""

from __future__ import annotations

from fractions import Fraction
from typing import TYPE_CHECKING

from ..errors import InputError, VerificationError
from ..exact.cubic import GAMMA_TEXT, WATSON_FACTOR, WATSON_SCALE, gamma_product
from ..exact.evaluate import evaluate_form
from ..exact.forms import ONE, Constant, ExactForm, compound
from ..lattices import get_lattice
from ..methods import cubic_quadrature
from ..rounding import agreement_digits

if TYPE_CHECKING:
    from . import Result

LATTICES = ("sc", "bcc", "fcc")
MAX_DIGITS = 300


def inverse_constant(lattice: str) -> Constant:
    """1/K, K the Gamma part of the lattice's Watson integral."""
    top, bottom = GAMMA_TEXT[lattice]
    k = gamma_product(lattice)
    name = f"{bottom}/({top})" if compound(top) else f"{bottom}/{top}"
    return Constant(name, lambda: 1 / k(), top=bottom, bottom=top)


def return_probability_form(lattice: str) -> ExactForm:
    """P = 1 - c/K exactly (derived: Watson's integral in Gamma form and the definition).

    >>> str(return_probability_form("bcc"))
    '1 - 4*pi**3/gamma(1/4)**4'
    """
    z = get_lattice(lattice).z
    c = Fraction(WATSON_FACTOR[lattice]) / (z * WATSON_SCALE[lattice])
    return ExactForm((Fraction(1), -c), (ONE, inverse_constant(lattice)), "derived")


def return_probability(lattice: str, digits: int = 50) -> Result:
    """Polya's return probability of the simple random walk on a cubic lattice.

    >>> r = return_probability("sc", digits=30)  # OEIS A086230
    >>> r.value, r.methods
    ('0.340537329550999142826273184433', ('closed-form', 'quadrature'))
    """
    from . import Result, check_digits, mpf_fraction  # noqa: F811

    lat = get_lattice(lattice)
    if lat.name not in LATTICES:
        raise InputError(f"the return probability is available for {', '.join(LATTICES)} "
                         f"(a walk on the {lat.name} lattice returns with probability 1)")
    digits = check_digits(digits)
    if digits > MAX_DIGITS:
        raise InputError(f"return probability: at most {MAX_DIGITS} digits (the quadrature "
                         f"that confirms them grows too costly beyond), got {digits}")
    form = return_probability_form(lat.name)
    ev = evaluate_form(form, digits)
    g0 = mpf_fraction(cubic_quadrature.green_origin(lat.name, digits + 5))
    q = 1 - 1 / (lat.z * g0)
    agree = agreement_digits(ev.center, q, digits)
    if agree < digits:
        raise VerificationError(f"{lat.name} return probability: closed form and quadrature "
                                f"agree to only {agree} of {digits} digits")
    return Result(lattice=lat.name, quantity="return-probability", site=(), canonical_site=(),
                  digits=digits, value=str(ev.rounded), exact=form,
                  error_bound=ev.rounded.half_ulp(), methods=("closed-form", "quadrature"),
                  agreement_digits=agree)


__all__ = ["LATTICES", "return_probability", "return_probability_form"]
