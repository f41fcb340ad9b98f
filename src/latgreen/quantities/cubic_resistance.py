"""sc, bcc, fcc x resistance: exact forms over (1, K, 1/(pi^2 K)), the reduced 2-D
quadrature, the far field.  Batches are the columns (l, m) of the canonical region (sites
(l, m, n), n = 0..m), which share denominators and quadrature nodes."""

from __future__ import annotations

from collections.abc import Iterator, Sequence

import mpmath

from ..exact import cubic as exact_cubic
from ..exact.forms import ExactForm
from ..lattices import Lattice, Site
from ..methods import cubic_asymptotic, cubic_quadrature
from .base import Batch, Provider


class CubicResistance(Provider):
    quantity = "resistance"
    primary_text = ("recurrence: exact forms r1 K + r2/(pi^2 K) + r3 from the lattice equation "
                    "and the derivative relations (proven) and three seeds, two of them "
                    "identified by integer-relation search (see exact_how), evaluated in "
                    "fixed point with a proven error term")
    check_text = "polar Gauss-Legendre quadrature of the reduced two-dimensional integral"
    parallel_min_sites = 100  # a 50-digit check costs about a second per column
    max_digits = 300  # 300 digits: 384^2 nodes per triangle, about 10 s per column
    full_auto_limit = 20_000  # e.g. sc to extent 11 at 50 digits: about a minute, 2 cores

    def __init__(self, lattice: Lattice, exact_limit: int) -> None:
        self.lattice = lattice
        self.exact_limit = exact_limit
        self.table_limit = exact_limit

    def batches(self, extent: int) -> Iterator[Batch]:
        basis = exact_cubic.BASES[self.lattice.name]
        for col in exact_cubic.columns(self.lattice.name, extent):
            yield Batch(sites=col.sites, nums=list(col.nums), dens=col.dens, basis=basis,
                        hows=col.hows, verified=col.verified)

    def batch_sites(self, extent: int) -> Iterator[list[Site]]:
        for l in range(extent + 1):
            for m in range(l + 1):
                sites = self.lattice.column(l, m)  # type: ignore[attr-defined]
                if sites:
                    yield sites

    def exact_form(self, site: Site) -> ExactForm | None:
        if site[0] > self.exact_limit:
            return None
        return exact_cubic.resistance_form(self.lattice.name, site)

    def quad_sites(self, sites: list[Site], digits: int) -> list[mpmath.mpf]:
        return cubic_quadrature.resistance_sites(self.lattice.name, sites, digits)  # type: ignore[arg-type]

    def quad_float_sites(self, sites: list[Site]) -> Sequence[float]:
        return cubic_quadrature.resistance_sites_float(self.lattice.name, sites)  # type: ignore[arg-type]

    def quad(self, site: Site, digits: int) -> mpmath.mpf:
        return cubic_quadrature.resistance_sites(self.lattice.name, [site], digits)[0]  # type: ignore[list-item]

    def asymptotic(self, site: Site, digits: int) -> tuple[mpmath.mpf, mpmath.mpf] | None:
        if sum(c * c for c in site) < cubic_asymptotic.MIN_R**2:
            return None
        return cubic_asymptotic.resistance_asymptotic(self.lattice.name, site, digits)  # type: ignore[arg-type]

    def memory_estimate(self, extent: int) -> int:
        # the exact tables: per site five rationals of up to ~2.5 extent digits each; at
        # most (extent + 1)^3 / 6 canonical sites (sc; bcc and fcc have fewer)
        sites = (extent + 1) ** 3 // 6 + extent + 1
        return int(sites * (5 * 2 * (2.5 * extent / 2.4 + 60) + 400)) + 100_000_000

    def output_estimate(self, extent: int, digits: int, with_exact: bool) -> int:
        sites = self.lattice.region_size(extent)
        per_row = 2 * (digits + 60)
        if with_exact:
            per_row += 2 * (240 + 6 * int(2.5 * extent))
        return sites * per_row


SC_RESISTANCE = CubicResistance(exact_cubic.SC, 40)
BCC_RESISTANCE = CubicResistance(exact_cubic.BCC, 40)
FCC_RESISTANCE = CubicResistance(exact_cubic.FCC, 30)
