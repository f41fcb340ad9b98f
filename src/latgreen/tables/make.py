"""The table-level operations behind the command line: table, check, build."""

from __future__ import annotations

import os
import shutil
from collections.abc import Iterator
from dataclasses import dataclass
from pathlib import Path
from typing import Any

from ..errors import InputError, VerificationError
from ..exact.evaluate import FixedPointEvaluator
from ..progress import Progress
from ..quantities import Provider, check_digits, get_provider, mpf_fraction
from ..rounding import agreement_digits
from .build import (
    choose_verify,
    default_workers,
    plan_units,
    run_units,
    unit_count,
)
from .checkpoint import Checkpoint, unit_shapes
from .export import (
    _fields,
    check_output_dir,
    table_id,
    write_energy_table,
    write_table,
)
from .render import Chunk

MAX_EXTENT = 1_000_000
MAX_WORKERS_PER_CORE = 8


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
    resume: bool = False
    scheduler: str | None = None  # address of a Dask distributed scheduler
    version: str = "1"  # the version recorded in the descriptor
    energy: str | None = None  # quantities taken at an energy (green)


def make_table(req: TableRequest) -> dict[str, Any]:
    """Validate everything, then compute, cross-check and write one table."""
    provider = get_provider(req.lattice, req.quantity, req.energy)
    digits = provider.check_digits(check_digits(req.digits))
    extent = check_extent(provider, req.extent)
    if req.verify not in ("auto", "full", "fast"):
        raise InputError(f"verify must be auto, full or fast, got {req.verify!r}")
    if provider.complex_valued and req.verify == "fast":
        raise InputError(f"--verify fast is not available for {req.quantity} tables (there is "
                         "no float64 quadrature of complex G yet): every row is checked at "
                         "full digits")
    out = check_output_dir(req.out, req.force)
    probe = out.parent
    while not probe.exists():
        probe = probe.parent
    need = provider.output_estimate(extent, digits, req.with_exact)
    free = shutil.disk_usage(probe).free
    if need > free:
        raise InputError(f"the table would take about {_gib(need)} on disk; {probe} has "
                         f"{_gib(free)} free (try --no-exact to leave out the exact forms)")
    lat = provider.lattice
    sites = lat.region_size(extent)
    verify = ("full" if provider.complex_valued else
              choose_verify(req.verify, sites, digits, provider.full_auto_limit))
    energy = provider.energy
    tid = table_id(lat.name, req.quantity, energy)
    bar = Progress(sites, f"{tid} extent {extent}", enabled=req.progress)
    meta = {
        "lattice": lat.name, "quantity": req.quantity, "extent": extent, "digits": digits,
        "verify": verify, "version": req.version,
        "region": f"canonical sites up to extent {extent} ({sites} sites)",
        "methods": {
            "primary": provider.primary_text,
            "check": provider.check_text
                     + (" at full digits for every row" if verify == "full" else
                        " in float64 for every row, at full digits for sampled batches"),
        },
    }
    if energy is not None:
        meta["energy"] = energy
        meta["complex"] = provider.complex_valued
        meta["methods"] = getattr(provider, "energy_methods", None) or {
            "primary": "recurrence: exact forms a*G00 + b*G11 + c (Gaussian-rational a, b, c) "
                       "derived from proven seeds, the lattice equation and the diagonal "
                       "recurrence; G00, G11 as python-flint balls of their elliptic-integral "
                       "closed forms; each component certified and correctly rounded",
            "check": "tanh-sinh quadrature of the reduced one-dimensional integral at full "
                     "digits (of each component) for every row",
        }
    workers = default_workers() if req.workers is None else check_workers(req.workers)
    if sites < provider.parallel_min_sites and req.scheduler is None:
        workers = 1
    params = {"lattice": lat.name, "quantity": req.quantity, "extent": extent,
              "digits": digits, "verify": verify, "with_exact": req.with_exact}
    if energy is not None:
        params["energy"] = str(energy)
    ckpt = Checkpoint(out)
    if ckpt.exists() and not req.resume:
        if not req.force:
            raise InputError(f"an interrupted build of this table is kept at {ckpt.dir}: "
                             "add --resume to continue it, or --force to start over")
        ckpt.remove()
    sizes = provider.batch_sizes(extent)
    coords, fields = len(lat.coordinate_names), len(_fields(lat, provider.complex_valued))

    def plan(parts: int, parallel: bool) -> list[tuple[int, int]]:
        costs = provider.batch_costs(extent, digits, verify) if parallel else None
        return plan_units(sizes, parts, costs, provider.prefix_cost)

    if req.resume and ckpt.exists():
        old, planning, units = ckpt.plan()
        if old != params:
            raise InputError(f"the interrupted build at {ckpt.dir} was made with other "
                             f"parameters ({_params_text(old)}); use --force to start over")
        if units != plan(planning["parts"], planning["parallel"]):
            raise InputError(f"the work plan in {ckpt.dir} is not the plan of this table "
                             "(edited, or made by another version of latgreen); use --force "
                             "to start over")
        shapes = unit_shapes(provider.batch_sites(extent), units, ckpt.kept(len(units)))
        rejected = ckpt.done(shapes, coords, fields - coords - 2)
        if rejected:
            i, why = rejected[0]
            bar.note(f"{len(rejected)} saved work unit(s) do not hold what this table puts "
                     f"there (unit {i}: {why}); computing them again")
        done = set(ckpt.valid)
    else:
        parts = unit_count(_cluster_size(req.scheduler) if req.scheduler else workers,
                           len(sizes), need, req.scheduler is not None)
        parallel = req.scheduler is not None or workers > 1
        units = plan(parts, parallel)
        ckpt.start(params, {"parts": parts, "parallel": parallel}, units)
        done = set()
    bar.advance(sum(sum(sizes[a:b]) for i, (a, b) in enumerate(units) if i in done))
    todo = [i for i in range(len(units)) if i not in done]
    try:
        run_units(provider, extent, digits, verify, req.with_exact, units, todo,
                  on_unit=ckpt.save, on_rows=bar.advance, workers=workers,
                  scheduler=req.scheduler, save_dir=ckpt.dir)
        descriptor = write_table(out, lat, req.quantity,
                                 _all_rows(ckpt, len(units), sites), meta, force=req.force)
    except BaseException as e:
        kept = len(ckpt.kept(len(units))) if ckpt.exists() else 0
        if kept:
            e.add_note(f"{kept} of {len(units)} work units are kept in {ckpt.dir}; the same "
                       "command with --resume continues from them")
        else:
            ckpt.remove()
        raise
    ckpt.remove()
    bar.finish(f"{sites:,} rows written to {req.out}")
    return descriptor


def check_workers(workers: object) -> int:
    """At least 1, and at most MAX_WORKERS_PER_CORE per core of this machine (each worker
    is a process running its own recurrence: a thousand would exhaust the memory)."""
    if isinstance(workers, bool) or not isinstance(workers, int):
        raise InputError(f"workers must be an integer, got {workers!r}")
    if workers < 1:
        raise InputError(f"workers must be at least 1, got {workers}")
    cores = default_workers()
    if workers > MAX_WORKERS_PER_CORE * cores:
        raise InputError(f"workers {workers} is more than {MAX_WORKERS_PER_CORE} per core of "
                         f"this machine ({cores} cores)")
    return workers


def _all_rows(ckpt: Checkpoint, count: int, sites: int) -> Iterator[Chunk]:
    """The units of the checkpoint in order, refusing (before the table is moved into
    place) a total that is not the region's row count."""
    total = 0
    for i in range(count):
        ch = ckpt.chunk(i)
        total += ch.rows
        yield ch
    if total != sites:
        raise InputError(f"the work units in {ckpt.dir} hold {total:,} rows where the region "
                         f"has {sites:,}; use --force to start over")


def _params_text(p: dict[str, Any]) -> str:
    """The parameters of a checkpoint on one short line (they come from a file).

    >>> _params_text({"lattice": "square", "extent": 8, "x": "a\\nb"})
    'lattice square, extent 8, x a b'
    """
    text = " ".join(", ".join(f"{k} {v}" for k, v in p.items()).split())
    return text if len(text) <= 300 else text[:300] + "..."


def _cluster_size(scheduler: str) -> int:
    """Workers of the Dask cluster at ``scheduler`` (to plan the units), checked before any
    work starts."""
    try:
        from distributed import Client
    except ImportError:
        raise InputError("--scheduler needs the 'distributed' package (pip install "
                         "'latgreen[distributed]')") from None
    _, _, rest = scheduler.rpartition("://")
    port = rest.rpartition(":")[2]
    if port.isdigit() and not 0 < int(port) < 65536:
        raise InputError(f"cannot reach the Dask scheduler at {scheduler[:80]}: port {port} is "
                         "not a TCP port (1 to 65535)")
    try:
        with Client(scheduler, timeout="5s") as c:
            return max(1, len(c.scheduler_info().get("workers", {})))
    except (OSError, TimeoutError, ValueError) as e:
        raise InputError(f"cannot reach the Dask scheduler at {scheduler}: {e}") from None


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
    if quantity != "resistance":
        raise InputError(f"check covers the resistance quantity; a {quantity} table checks "
                         "every row against the quadrature while it is built")
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


DOS_METHODS = {
    "square": {"primary": "closed form K(1 - E^2/16)/(2 pi^2) as a python-flint ball, "
                          "correctly rounded",
               "check": "-Im of the quadrature of the reduced integral for G(E+i0;0,0)/pi, at "
                        "full digits for every row"},
    **{lat: {"primary": f"-Im G(E+i0;0)/pi from the closed form of G(E;0) ({how}) as a "
                        "python-flint ball, correctly rounded",
             "check": "-Im of the 1-D integral over k3 of the square lattice's closed form, "
                      "/pi, at full digits for every row"}
       for lat, how in (("sc", "Joyce 1973"), ("bcc", "(1/E)(2K(u)/pi)^2"))},
    **{lat: {"primary": "closed form (complete elliptic integral K, printed in the exact column) "
                        "as a python-flint ball, correctly rounded; 0 outside the band" + extra,
             "check": "-Im of the quadrature of the reduced integral for G(E+i0;0,0)/pi, at "
                      "full digits for every row"}
       for lat, extra in (("triangular", ""), ("honeycomb", " and at the Dirac point E = 0"))},
    "fcc": {"primary": "-Im G(E+i0;0)/pi from the closed form of G(E;0) (prefactor identified) "
                       "as a python-flint ball, correctly rounded",
            "check": "-Im of the 1-D integral of Carlson's R_F (methods/fcc_green_nested.py), "
                     "/pi, at full digits for every row"},
}


def make_dos_table(lattice: str, energies: str, digits: int, out: Path, force: bool = False,
                   progress: bool = True, version: str = "1") -> dict[str, Any]:
    """The density of states on an energy grid ``A:B:COUNT`` (exact points), every value
    certified from its closed form and confirmed by the quadrature."""
    from ..energy import parse_energy_grid
    from ..lattices import get_lattice
    from ..quantities import dos

    lat = get_lattice(lattice)
    digits = check_digits(digits)
    if lat.name not in DOS_METHODS:
        raise InputError(f"a dos table is not available for the {lat.name} lattice; available "
                         f"for: {', '.join(sorted(DOS_METHODS))}")
    grid = parse_energy_grid(energies, lat.name)
    out = Path(out)
    check_output_dir(out, force)
    bar = Progress(len(grid), f"{lat.name}-dos {len(grid)} energies", enabled=progress)

    def rows() -> Iterator[tuple[str, str, str, str, str, int]]:
        for E in grid:
            r = dos(lat.name, E, digits)
            yield (str(E), r.value, "" if r.exact is None else str(r.exact), r.error_bound,
                   ";".join(r.methods),
                   r.agreement_digits)
            bar.advance(1)

    meta = {"digits": digits, "energies": energies, "grid": [str(E) for E in grid],
            "methods": DOS_METHODS[lat.name], "version": version}
    d = write_energy_table(out, lat, "dos", rows(), meta, force=force)
    bar.finish(f"{len(grid):,} rows written to {out}")
    return d


__all__ = ["CheckReport", "TableRequest", "VerificationError", "check_region",
           "make_dos_table", "make_table"]
