"""The table-level operations behind the command line: table, check, build."""

from __future__ import annotations

import os
import shutil
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..errors import InputError, VerificationError
from ..exact.evaluate import FixedPointEvaluator
from ..progress import Progress
from ..quantities import Provider, check_digits, get_provider, mpf_fraction
from ..rounding import agreement_digits
from .build import choose_verify, chunks, default_workers
from .export import Keys, check_output_dir, table_id, write_table

MAX_EXTENT = 1_000_000


def available_memory() -> int:
    """Bytes of memory available to a new computation (MemAvailable, else physical)."""
    try:
        with open("/proc/meminfo", encoding="ascii") as f:
            for line in f:
                if line.startswith("MemAvailable:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    try:
        return os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES")
    except (ValueError, OSError, AttributeError):  # pragma: no cover
        return 1 << 40


def _gib(n: float) -> str:
    """Human-readable size.

    >>> _gib(3 * 2**30), _gib(5 * 2**20), _gib(2000)
    ('3.0 GiB', '5.0 MiB', '2.0 KiB')
    """
    for unit, k in (("TiB", 40), ("GiB", 30), ("MiB", 20), ("KiB", 10)):
        if n >= 2**k:
            return f"{n / 2**k:,.1f} {unit}"
    return f"{n:.0f} bytes"


def check_extent(provider: Provider, extent: object) -> int:
    if isinstance(extent, bool) or not isinstance(extent, int):
        raise InputError(f"extent must be an integer, got {extent!r}")
    if extent < 0:
        raise InputError(f"extent must be >= 0, got {extent}")
    if extent > MAX_EXTENT:
        raise InputError(f"extent {extent} is beyond the ceiling of {MAX_EXTENT}")
    limit = provider.table_limit
    if limit is not None and extent > limit:
        raise InputError(f"extent {extent} is beyond the largest {provider.lattice.name} "
                         f"{provider.quantity} table of extent {limit} (exact forms are "
                         "produced up to there)")
    need = provider.memory_estimate(extent)
    have = available_memory()
    if need > have:
        raise InputError(f"extent {extent} would need about {_gib(need)} of memory; this "
                         f"machine has {_gib(have)} available")
    return extent


@dataclass
class TableRequest:
    lattice: str
    quantity: str
    extent: int
    digits: int
    out: Path
    force: bool = False
    verify: str = "auto"
    with_exact: bool = True
    progress: bool = True
    workers: int | None = None  # None: the machine's cores


def make_table(req: TableRequest) -> dict[str, Any]:
    """Validate everything, then compute, cross-check and write one table."""
    provider = get_provider(req.lattice, req.quantity)
    digits = provider.check_digits(check_digits(req.digits))
    extent = check_extent(provider, req.extent)
    if req.verify not in ("auto", "full", "fast"):
        raise InputError(f"verify must be auto, full or fast, got {req.verify!r}")
    out = Path(req.out)
    check_output_dir(out, req.force)
    probe = out.resolve().parent
    while not probe.exists():
        probe = probe.parent
    need = provider.output_estimate(extent, digits, req.with_exact)
    free = shutil.disk_usage(probe).free
    if need > free:
        raise InputError(f"the table would take about {_gib(need)} on disk; {probe} has "
                         f"{_gib(free)} free (try --no-exact to leave out the exact forms)")
    lat = provider.lattice
    sites = lat.region_size(extent)
    verify = choose_verify(req.verify, sites, digits, provider.full_auto_limit)
    bar = Progress(sites, f"{table_id(lat.name, req.quantity)} extent {extent}",
                   enabled=req.progress)
    meta = {
        "lattice": lat.name, "quantity": req.quantity, "extent": extent, "digits": digits,
        "verify": verify,
        "region": f"canonical sites up to extent {extent} ({sites} sites)",
        "methods": {
            "primary": provider.primary_text,
            "check": provider.check_text
                     + (" at full digits for every row" if verify == "full" else
                        " in float64 for every row, at full digits for sampled batches"),
        },
    }
    workers = default_workers() if req.workers is None else req.workers
    if workers < 1:
        raise InputError(f"workers must be at least 1, got {workers}")
    descriptor = write_table(
        out, lat, req.quantity,
        chunks(provider, extent, digits, verify, req.with_exact, on_rows=bar.advance,
               workers=workers, text_estimate=need),
        meta, force=req.force)
    bar.finish(f"{sites:,} rows written to {out}")
    return descriptor


@dataclass
class CheckReport:
    sites: int
    worst_agreement: int
    worst_site: tuple[int, ...] | None
    failures: list[str]
    far_checks: int


def check_region(lattice: str, extent: int, digits: int, quantity: str = "resistance",
                 progress: bool = True) -> CheckReport:
    """Run the methods against each other over the region up to ``extent``: the exact form
    against the quadrature for every site, and against the far-field expansion (within its
    error estimate) for every site where the expansion applies."""
    provider = get_provider(lattice, quantity)
    digits = provider.check_digits(check_digits(digits))
    extent = check_extent(provider, extent)
    lat = provider.lattice
    total = lat.region_size(extent)
    bar = Progress(total, f"check {lat.name} {quantity}", enabled=progress)
    failures: list[str] = []
    worst, worst_site, far = digits, None, 0
    for batch in provider.batches(extent):
        ev = FixedPointEvaluator(batch.basis, batch.dens, digits)
        quads = provider.quad_sites(batch.sites, digits)
        for k, site in enumerate(batch.sites):
            if not any(site):
                continue
            e = ev.evaluate(batch.nums[k])
            a = agreement_digits(e.center, mpf_fraction(quads[k]), digits)
            if a < worst:
                worst, worst_site = a, site
            if a < digits:
                failures.append(f"{site}: recurrence vs quadrature agree to {a} of {digits} "
                                "digits")
            asy = provider.asymptotic(site, digits)
            if asy is not None:
                far += 1
                val, err = asy
                if abs(e.center - mpf_fraction(val)) > mpf_fraction(err):
                    failures.append(f"{site}: far-field expansion off by more than its error "
                                    "estimate")
        bar.advance(len(batch.sites))
    bar.finish(f"{total:,} sites checked, {len(failures)} disagreement(s)")
    return CheckReport(total, worst, worst_site, failures, far)


CATALOGUE: tuple[tuple[Any, ...], ...] = (
    # (lattice, quantity, extent, digits[, verify]); verify defaults to "full".  The cubic
    # tables say it explicitly: a 50-digit quadrature costs about a second per column (l, m)
    # there, yet on two worker processes the three tables check every row at 50 digits in a
    # few minutes (their exact forms rest on identified seeds, so every row's independent
    # check is worth its time); "fast" would take seconds.
    ("square", "resistance", 100, 50),
    ("sc", "resistance", 20, 50, "full"),
    ("bcc", "resistance", 20, 50, "full"),
    ("fcc", "resistance", 20, 50, "full"),
)


# tables with one row per lattice: (quantity, lattices, digits)
SCALAR_TABLES: tuple[tuple[str, tuple[str, ...], int], ...] = (
    ("return-probability", ("sc", "bcc", "fcc"), 50),
)


def make_return_probability_table(out: Path, lattices: tuple[str, ...], digits: int,
                                  force: bool = False) -> dict[str, Any]:
    """Polya's return probabilities, one row per lattice (sorted by name), written through
    the same export as the site tables: each value by the closed form, confirmed by the
    quadrature of G(z; 0) to all its digits."""
    from ..quantities import return_probability
    from .render import Chunk

    digits = check_digits(digits)
    check_output_dir(Path(out), force)
    csv, js, agrees = [], [], []
    for lat in sorted(lattices):
        r = return_probability(lat, digits)
        row = (lat, r.value, str(r.exact), r.exact.how if r.exact else "", r.error_bound,
               ";".join(r.methods), r.agreement_digits)
        csv.append(",".join(map(str, row)) + "\n")
        js.append(',\n["{}","{}","{}","{}","{}","{}",{}]'.format(*row))
        agrees.append(r.agreement_digits)
    keys = sorted(lattices)
    chunk = Chunk(csv="".join(csv), json="".join(js), rows=len(keys), first=(keys[0],),
                  last=(keys[-1],), min_agreement=min(agrees), full_rows=len(keys))
    meta = {"lattice": "cubic", "quantity": "return-probability", "extent": None,
            "digits": digits, "verify": "full",
            "region": f"one row per lattice: {', '.join(keys)}",
            "methods": {"primary": "closed form P = 1 - 1/(z G(z; 0)) with G(z; 0) from "
                                   "Watson's integral in Gamma values, evaluated in fixed "
                                   "point with a proven error term",
                        "check": "polar Gauss-Legendre quadrature of G(z; 0) at full digits"}}
    keys_t = Keys("cubic", ("lattice",), "lattice name (conventions in the README)",
                  f"Polya's return probability of the random walk on the {', '.join(keys)} "
                  f"lattices, {digits} digits")
    return write_table(Path(out), keys_t, "return-probability", [chunk], meta, force=force)


def build_catalogue(root: Path, progress: bool = True) -> list[dict[str, Any]]:
    """Build every table of the default catalogue into ``root/<table-id>/``."""
    out = []
    for lattice, quantity, extent, digits, *rest in CATALOGUE:
        verify = rest[0] if rest else "full"
        req = TableRequest(lattice, quantity, extent, digits, root / table_id(lattice, quantity),
                           force=True, verify=verify, progress=progress)
        out.append(make_table(req))
    for quantity, lattices, digits in SCALAR_TABLES:
        out.append(make_return_probability_table(root / table_id("cubic", quantity), lattices,
                                                 digits, force=True))
    return out


__all__ = ["CATALOGUE", "SCALAR_TABLES", "CheckReport", "TableRequest", "VerificationError",
           "build_catalogue", "check_region", "make_return_probability_table", "make_table"]
