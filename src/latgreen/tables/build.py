"""Compute and cross-check the rows of a table, batch by batch.

Every row's value comes from its exact form, evaluated with a proven error term and
correctly rounded (:mod:`latgreen.exact.evaluate`).  An independent method then confirms it:

* ``full``: the high-precision quadrature at the table's digits, for every row; a row
  whose two values agree to fewer than ``digits`` digits stops the build;
* ``fast``: the float64 quadrature for every row (at least ``FAST_MIN_AGREEMENT`` digits
  required), plus the high-precision quadrature on a deterministic sample of batches (the
  first ten, the last, and about twenty spread between), which must agree to all digits.

Each row records the methods that confirmed it and to how many digits they agree, so a
reader of a ``fast`` table sees exactly which rows carry a full independent check.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator
from dataclasses import dataclass

from ..errors import VerificationError
from ..exact.evaluate import FixedPointEvaluator
from ..quantities import Provider, mpf_fraction
from ..rounding import agreement_digits

FAST_MIN_AGREEMENT = 12
FULL_AUTO_LIMIT = 2_000_000  # "auto" picks full when sites * digits stays below this


@dataclass(frozen=True)
class Row:
    site: tuple[int, ...]
    value: str
    exact: str
    exact_how: str
    error_bound: str
    methods: str
    agreement_digits: int


def choose_verify(mode: str, sites: int, digits: int) -> str:
    if mode != "auto":
        return mode
    return "full" if sites * digits <= FULL_AUTO_LIMIT else "fast"


def sampled(key: int, extent: int) -> bool:
    """The batches a ``fast`` build checks at full precision."""
    step = max(1, extent // 20)
    return key <= 10 or key == extent or key % step == 0


def rows(provider: Provider, extent: int, digits: int, verify: str, with_exact: bool = True,
         on_batch: Callable[[int], None] | None = None) -> Iterator[Row]:
    """Yield the verified rows of the table in site order."""
    for bi, batch in enumerate(provider.batches(extent)):
        ev = FixedPointEvaluator(batch.basis, batch.dens, digits)
        evaluated = [ev.evaluate(nums) for nums in batch.nums]
        full = verify == "full" or sampled(bi, extent)
        if full:
            checks = [mpf_fraction(q) for q in provider.quad_batch(batch, digits)]
            need = digits
            method = "quadrature"
        else:
            from fractions import Fraction

            checks = [Fraction(q) for q in provider.quad_float_batch(batch)]
            need = min(FAST_MIN_AGREEMENT, digits)
            method = "quadrature-float64"
        for k, site in enumerate(batch.sites):
            e = evaluated[k]
            if not any(site):
                agree, methods = digits, "definition"
            else:
                agree = agreement_digits(e.center, checks[k], digits)
                methods = f"recurrence;{method}"
                if agree < need:
                    raise VerificationError(
                        f"{provider.lattice.name} {provider.quantity} at {site}: recurrence "
                        f"and {method} agree to only {agree} digits (need {need})")
            form = batch.form(k) if with_exact else None
            yield Row(
                site=site,
                value=str(e.rounded),
                exact=str(form) if form is not None else "",
                exact_how=batch.how if with_exact else "",
                error_bound=e.rounded.half_ulp(),
                methods=methods,
                agreement_digits=agree,
            )
        if on_batch is not None:
            on_batch(len(batch.sites))
