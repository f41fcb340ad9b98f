"""What a (lattice, quantity) provider offers to the API and the table builder.

A provider turns the lattice's exact forms and independent methods into *batches*: groups of
sites that share one set of denominators (one evaluator, one quadrature rule).  The table
builder and the single-value API both go through it, so adding a lattice means writing a
provider and registering it, nothing else.
"""

from __future__ import annotations

from collections.abc import Iterator, Sequence
from dataclasses import dataclass

import mpmath

from ..exact.evaluate import FixedPointEvaluator, RoundedColumn
from ..exact.forms import Constant, ExactForm
from ..lattices import Lattice, Site


@dataclass
class Batch:
    """Sites whose exact forms are sum_i nums[k][i] / dens[i] * basis[i]."""

    sites: list[Site]
    nums: list[tuple[int, ...]]
    dens: tuple[int, ...]
    basis: tuple[Constant, ...]
    how: str = "derived"
    hows: list[str] | None = None  # per site, where they differ (then ``how`` is unused)
    verified: list[int | None] | None = None  # per site: digits an identified seed has

    def form(self, k: int) -> ExactForm:
        from ..exact.forms import ExactForm, form_from_integers

        f = form_from_integers(self.nums[k], self.dens, self.basis,
                               self.how if self.hows is None else self.hows[k])
        if self.verified is not None and self.verified[k] is not None:
            f = ExactForm(f.coeffs, f.basis, f.how, self.verified[k])
        return f


@dataclass
class EvaluatedBatch:
    """A batch with its values certified to the table's digits (and exact forms if asked)."""

    sites: list[Site]
    rounded: RoundedColumn  # the value, or its real part for a complex quantity
    forms: list[ExactForm] | None
    imag: RoundedColumn | None = None  # the imaginary part of a complex quantity
    # the exact forms already printed (str(form), form.how), where a provider prints them
    # faster than the forms would; then ``forms`` may be None
    texts: tuple[list[str], list[str]] | None = None


class Provider:
    """Base class: one lattice x one quantity."""

    lattice: Lattice
    quantity: str
    exact_limit: int  # largest extent for which exact forms are produced on request
    complex_valued = False  # rows carry a real and an imaginary part
    energy: object = None  # the energy a parametrised provider is bound to (an Energy)
    table_limit: int | None = None  # largest table extent (None: memory decides)
    parallel_min_sites = 3000  # a worker pool pays off from this many rows
    full_auto_limit = 2_000_000  # --verify auto: full while sites x digits stays below this
    max_digits: int | None = None  # below the global ceiling where the check is costly

    def check_digits(self, digits: int) -> int:
        """Refuse digits the independent check cannot confirm in reasonable time."""
        if self.max_digits is not None and digits > self.max_digits:
            from ..errors import InputError

            raise InputError(f"{self.lattice.name} {self.quantity}: at most {self.max_digits} "
                             f"digits (the quadrature that confirms them grows too costly "
                             f"beyond), got {digits}")
        return digits
    # how the table descriptor describes the methods
    primary_text = ("recurrence: exact forms derived from proven seeds and the lattice "
                    "equation, evaluated in fixed point with a proven error term")
    check_text = "quadrature of the reduced one-dimensional integral"

    def batches(self, extent: int) -> Iterator[Batch]:
        raise NotImplementedError

    def exact_form(self, site: Site) -> ExactForm | None:
        raise NotImplementedError

    def evaluated_batches(self, extent: int, digits: int, with_exact: bool, start: int = 0,
                          stop: int | None = None) -> Iterator[tuple[int, EvaluatedBatch]]:
        """(index, batch) for the batches start <= index < stop, with certified values: by
        default the exact forms through the fixed-point evaluator; a provider may override
        it with a faster enclosure."""
        for bi, b in enumerate(self.batches(extent)):
            if bi < start:
                continue
            if stop is not None and bi >= stop:
                return
            ev = FixedPointEvaluator(b.basis, b.dens, digits)
            col = RoundedColumn([""] * len(b.sites), [""] * len(b.sites), [], 0, {}, [])
            for k, e in enumerate(ev.evaluate_many(b.nums)):
                col.put(k, e)
            yield bi, EvaluatedBatch(b.sites, col,
                                     [b.form(k) for k in range(len(b.sites))] if with_exact
                                     else None)

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        """The sites of each batch, in order, without computing anything (for planning)."""
        for b in self.batches(extent):
            yield b.sites

    # a parallel work unit reruns the batches before its first one (the recurrence only):
    # their cost per row relative to a row computed in full, for balancing the units
    prefix_cost = 0.0

    def batch_costs(self, extent: int, digits: int, verify: str) -> list[float] | None:
        """Work per batch in units of one row's work, for balancing parallel work units
        (None: balance by row counts).  Only the speed depends on it, never the output."""
        return None

    def batch_sizes(self, extent: int) -> list[int]:
        """Rows of each batch, in order (for planning the work units)."""
        return [len(s) for s in self.batch_sites(extent)]

    def batch_count(self, extent: int) -> int:
        """Number of batches of a table to ``extent`` (for the sampling of ``fast`` checks)."""
        return sum(1 for _ in self.batch_sites(extent))

    def quad_sites(self, sites: list[Site], digits: int) -> list[mpmath.mpf]:
        """High-precision independent values for the sites of one batch."""
        raise NotImplementedError

    def quad_float_sites(self, sites: list[Site]) -> Sequence[float]:
        """float64 independent values (about 13+ digits) for the sites of one batch."""
        raise NotImplementedError

    def quad(self, site: Site, digits: int) -> mpmath.mpf:
        raise NotImplementedError

    def asymptotic(self, site: Site, digits: int) -> tuple[mpmath.mpf, mpmath.mpf] | None:
        """(value, error estimate), or None where the expansion is not used."""
        return None

    def memory_estimate(self, extent: int) -> int:
        """Peak bytes of a table build to ``extent`` (rows stream to disk)."""
        raise NotImplementedError

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        """Approximate bytes of values.csv + values.json."""
        raise NotImplementedError
