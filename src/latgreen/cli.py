"""Command line: a thin layer over the public API.

Bad input gives one line on stderr and exit status 2; a disagreement between independent
methods gives exit status 1.  Data goes to stdout, progress and messages to stderr.
"""

from __future__ import annotations

import argparse
import json
import os
import re
import signal
import sys
import threading
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any, NoReturn

from tabulate import tabulate

from . import __version__
from .errors import InputError, LatgreenError, PrecisionError, VerificationError
from .lattices import LATTICES
from .quantities import MAX_DIGITS, QUANTITIES, dos, green, resistance, return_probability
from .tables.make import (
    TableRequest,
    check_region,
    make_dos_table,
    make_table,
)


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:
        self.exit(2, f"latgreen: error: {message} (see 'latgreen --help')\n")


def _whole(what: str, text: str) -> int:
    """A decimal integer in ASCII digits (int() would also take '٣', '1_0', ' 10 ')."""
    t = text.strip()
    if len(t) > 12 or not re.fullmatch(r"[+-]?[0-9]+", t, re.ASCII):
        shown = text if len(text) <= 40 else text[:37] + "..."
        raise argparse.ArgumentTypeError(f"{what} must be an integer (digits 0-9, at most 12), got "
                                         f"{shown!r}")
    return int(t)


def _digits(text: str) -> int:
    return _whole("digits", text)


def _extent(text: str) -> int:
    return _whole("extent", text)


def _workers(text: str) -> int:
    from .tables.make import check_workers

    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"workers must be an integer, got {text[:40]!r}"
                                         ) from None
    try:
        return check_workers(n)
    except InputError as e:
        raise argparse.ArgumentTypeError(str(e)) from None


def _positive(what: str) -> Callable[[str], int]:
    def parse(text: str) -> int:
        try:
            n = int(text)
        except ValueError:
            raise argparse.ArgumentTypeError(f"{what} must be an integer, got {text!r}") \
                from None
        if n < 1:
            raise argparse.ArgumentTypeError(f"{what} must be at least 1, got {n}")
        return n
    return parse


def _parser() -> argparse.ArgumentParser:
    p = _Parser(prog="latgreen", description="Verified high-precision values and tables of "
                "lattice Green's functions and two-point resistances of infinite lattices.")
    p.add_argument("--version", action="version", version=f"latgreen {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    sub.required = True

    r = sub.add_parser("resistance", help="two-point resistance between the origin and a site")
    r.add_argument("lattice", help=f"one of: {', '.join(sorted(LATTICES))}")
    r.add_argument("coords", nargs="+", metavar="COORD", help="site coordinates (integers)")
    r.add_argument("--digits", type=_digits, default=50,
                   help=f"significant digits, 1..{MAX_DIGITS} (default 50)")
    g = r.add_mutually_exclusive_group()
    g.add_argument("--exact", action="store_true", help="print the exact form instead")
    g.add_argument("--json", action="store_true", help="print one JSON object")

    gr = sub.add_parser("green", help="Green's function G(E; site) = <0|(E - H)^-1|site>")
    gr.add_argument("lattice", help=f"one of: {', '.join(sorted(LATTICES))}")
    gr.add_argument("coords", nargs="+", metavar="COORD", help="site coordinates (integers)")
    gr.add_argument("--energy", required=True, metavar="E",
                    help="exact energy: '4.5', '9/2', '1.5+0.5j', '0.5j' (E + i0 on the band)")
    gr.add_argument("--digits", type=_digits, default=50,
                    help=f"significant digits of each component, 1..{MAX_DIGITS} (default 50)")
    g = gr.add_mutually_exclusive_group()
    g.add_argument("--exact", action="store_true",
                   help="print the exact form instead (--json's exact_basis says what its "
                        "names stand for)")
    g.add_argument("--json", action="store_true", help="print one JSON object")

    d = sub.add_parser("dos", help="density of states per site at a real energy")
    d.add_argument("lattice", help=f"one of: {', '.join(sorted(LATTICES))}")
    d.add_argument("--energy", required=True, metavar="E", help="real exact energy, e.g. 2.5")
    d.add_argument("--digits", type=_digits, default=50,
                   help=f"significant digits, 1..{MAX_DIGITS} (default 50)")
    d.add_argument("--json", action="store_true", help="print one JSON object")

    rp = sub.add_parser("return-probability",
                        help="Polya's return probability of the random walk (sc, bcc, fcc)")
    rp.add_argument("lattice", help="one of: sc, bcc, fcc")
    rp.add_argument("--digits", type=_digits, default=50,
                    help=f"significant digits, 1..{MAX_DIGITS} (default 50)")
    g = rp.add_mutually_exclusive_group()
    g.add_argument("--exact", action="store_true", help="print the exact form instead")
    g.add_argument("--json", action="store_true", help="print one JSON object")

    t = sub.add_parser("table", help="compute, cross-check and write one table")
    t.add_argument("lattice")
    t.add_argument("--quantity", default="resistance", help=f"one of: {', '.join(QUANTITIES)}")
    t.add_argument("--extent", type=_extent, default=None,
                   help="largest coordinate of the canonical region (not for dos)")
    t.add_argument("--energy", metavar="E", default=None,
                   help="the energy of a green table, e.g. 9/2 or 1.5+0.5j")
    t.add_argument("--energies", metavar="A:B:COUNT", default=None,
                   help="the energy grid of a dos table: COUNT points from A to B")
    t.add_argument("--digits", type=_digits, default=50)
    t.add_argument("--out", required=True, help="output directory (created)")
    t.add_argument("--force", action="store_true", help="replace a non-empty output directory")
    t.add_argument("--verify", choices=("auto", "full", "fast"), default="auto",
                   help="independent check: full digits for every row, or float64 for every "
                        "row plus full digits on a sample (auto: full unless large)")
    t.add_argument("--no-exact", action="store_true",
                   help="leave the exact forms out of the files (they grow with the extent)")
    t.add_argument("--quiet", action="store_true", help="no progress display")
    t.add_argument("--workers", type=_workers, default=None,
                   help="worker processes (default: the machine's cores)")
    t.add_argument("--resume", action="store_true",
                   help="continue an interrupted build from its completed work units")
    t.add_argument("--scheduler", metavar="ADDRESS", default=None,
                   help="run the work units on the Dask distributed cluster at ADDRESS "
                        "(e.g. tcp://10.0.0.5:8786)")

    c = sub.add_parser("check", help="run the methods against each other over a region")
    c.add_argument("lattice")
    c.add_argument("--quantity", default="resistance")
    c.add_argument("--extent", type=_extent, required=True)
    c.add_argument("--digits", type=_digits, default=50)
    c.add_argument("--json", action="store_true")
    c.add_argument("--quiet", action="store_true")

    b = sub.add_parser("build", help="build a catalogue of tables (default: ours, into "
                       "./tables/); only tables whose spec or software changed are computed")
    b.add_argument("--spec", type=Path, default=None, metavar="FILE",
                   help="a TOML spec of the tables (default: the catalogue shipped with "
                        "latgreen; format in the README)")
    b.add_argument("--out", type=Path, default=Path("tables"), help="catalogue directory")
    b.add_argument("--rebuild", action="store_true",
                   help="compute even the tables that are up to date (a new version is still "
                        "published only where the data changed)")
    b.add_argument("--quiet", action="store_true")

    pb = sub.add_parser("publish", help="add a table made with 'latgreen table' to a "
                        "catalogue as the next version of its table id")
    pb.add_argument("dir", type=Path, help="the table's directory (it is copied, never moved "
                    "or modified)")
    pb.add_argument("--into", type=Path, required=True, metavar="ROOT",
                    help="the catalogue directory (created if need be)")

    au = sub.add_parser("audit", help="compare another code's values with our references")
    au.add_argument("file", type=Path, help="CSV or JSON file of the other code's values")
    au.add_argument("--lattice", required=True)
    au.add_argument("--quantity", default="resistance")
    au.add_argument("--energy", default=None, help="energy, for energy-dependent quantities")
    au.add_argument("--site-columns", default=None, metavar="COLS",
                    help="comma list of the columns holding the site (default: the "
                         "lattice's coordinate names, e.g. m,n)")
    au.add_argument("--value-column", default="value", metavar="NAME")
    au.add_argument("--tolerance", type=float, default=1e-12, metavar="REL",
                    help="largest relative error counted as ok (default 1e-12)")
    au.add_argument("--scale", default="1",
                    help="their value = SCALE x ours (e.g. 2, 1/3, 0.5)")
    au.add_argument("--negate", action="store_true", help="their sign is the opposite of ours")
    au.add_argument("--hopping", type=int, choices=(1, -1), default=1,
                    help="the other code's hopping amplitude (green: -1 means G(-E) negated)")
    au.add_argument("--origin", default=None, metavar="COORDS",
                    help="their sites are measured from this site (comma list)")
    au.add_argument("--digits", type=_digits, default=20, help="digits of the references")
    au.add_argument("--json", action="store_true", help="the full report as JSON")
    au.add_argument("--plot", type=Path, default=None, metavar="FILE.png",
                    help="agreeing digits against distance from the origin")

    rg = sub.add_parser("regen", help="recompute the current version of a published table at "
                        "more digits as the next version, proving the old digits stand")
    rg.add_argument("dir", type=Path, nargs="?", default=None,
                    help="a table of a catalogue: ROOT/<table-id> or its current version "
                         "ROOT/<table-id>/vN")
    rg.add_argument("--all", type=Path, default=None, metavar="ROOT",
                    help="every table of the catalogue ROOT below --digits (for cron: lock, "
                         "log, idempotent)")
    rg.add_argument("--digits", type=_digits, required=True)
    rg.add_argument("--extent", type=_extent, default=None,
                    help="a larger extent (default: the old one; tables over sites)")
    rg.add_argument("--verify", choices=("auto", "full", "fast"), default="auto",
                    help="check of the new version (auto: at least the old one's; a weaker "
                         "check than the old one's is refused)")
    rg.add_argument("--log", type=Path, default=None, metavar="FILE",
                    help="with --all: the log (default ROOT/regenerate.log)")
    rg.add_argument("--quiet", action="store_true")
    rg.add_argument("--json", action="store_true", help="print the comparison report as JSON")

    v = sub.add_parser("verify", help="check a published table (or a whole catalogue): "
                       "hashes, package, every row recomputed")
    v.add_argument("dir", type=Path, help="a table's directory (with datapackage.json), or a "
                   "catalogue root (with catalogue.json): every table's current version")
    g = v.add_mutually_exclusive_group()
    g.add_argument("--all", action="store_true",
                   help="recompute every row (the default; kept for compatibility)")
    g.add_argument("--sample", type=_positive("sample"), metavar="N", default=None,
                   help="recompute only the batches holding about N rows spread over each "
                        "site table (for huge tables); the region is still checked row by row")
    v.add_argument("--workers", type=_workers, default=None,
                   help="worker processes for the recomputation (default: the machine's cores)")
    v.add_argument("--quiet", action="store_true", help="no progress display")
    v.add_argument("--json", action="store_true")

    sub.add_parser("lattices", help="list the lattices, their sites and conventions")
    return p


def _cmd_resistance(a: argparse.Namespace) -> int:
    res = resistance(a.lattice, a.coords, digits=a.digits)
    if a.json:
        print(json.dumps(res.to_json()))
    elif a.exact:
        if res.exact is None:
            raise InputError(f"no exact form is produced for site {res.canonical_site} "
                             "(beyond the exact range)")
        print(res.exact)
    else:
        print(res.value)
    return 0


def _cmd_green(a: argparse.Namespace) -> int:
    res = green(a.lattice, a.coords, energy=a.energy, digits=a.digits)
    if a.json:
        print(json.dumps(res.to_json()))
    elif a.exact:
        if res.exact is None:
            raise InputError(f"no exact form is known for {res.lattice} G at site "
                             f"{res.canonical_site}, E = {res.energy} (the value comes from "
                             "quadrature; see --json)")
        print(res.exact)
    else:
        print(res.value)
    return 0


def _cmd_return_probability(a: argparse.Namespace) -> int:
    res = return_probability(a.lattice, digits=a.digits)
    if a.json:
        d = res.to_json()
        del d["site"], d["canonical_site"]
        print(json.dumps(d))
    elif a.exact:
        print(res.exact)
    else:
        print(res.value)
    return 0


def _cmd_dos(a: argparse.Namespace) -> int:
    res = dos(a.lattice, energy=a.energy, digits=a.digits)
    print(json.dumps(res.to_json()) if a.json else res.value)
    return 0


def _cmd_table(a: argparse.Namespace) -> int:
    if not a.out:  # argparse's Path('') would be '.', the current directory
        raise InputError("--out is empty: name the directory to create")
    a.out = Path(a.out)
    if a.quantity == "dos":
        if a.energies is None or a.extent is not None or a.energy is not None:
            raise InputError("a dos table takes --energies A:B:COUNT (and no --extent or "
                             "--energy)")
        d = make_dos_table(a.lattice, a.energies, a.digits, a.out, a.force, not a.quiet)
    else:
        if a.extent is None:
            raise InputError(f"a {a.quantity} table needs --extent N")
        if a.energies is not None:
            raise InputError("--energies is for dos tables; a green table takes --energy E")
        d = make_table(TableRequest(a.lattice, a.quantity, a.extent, a.digits, a.out,
                                    a.force, a.verify, not a.no_exact, not a.quiet, a.workers,
                                    a.resume, a.scheduler, energy=a.energy))
    cc = d["latgreen"]["cross_check"]
    print(f"{a.out}: {cc['rows']} rows, {cc['rows_checked_at_full_digits']} checked at "
          f"{a.digits} digits, minimum agreement {cc['min_agreement_digits']} digits",
          file=sys.stderr)
    return 0


def _cmd_check(a: argparse.Namespace) -> int:
    rep = check_region(a.lattice, a.extent, a.digits, a.quantity, progress=not a.quiet)
    if a.json:
        print(json.dumps({"lattice": a.lattice, "quantity": a.quantity, "extent": a.extent,
                          "digits": a.digits, "sites": rep.sites,
                          "worst_agreement_digits": rep.worst_agreement,
                          "worst_site": rep.worst_site, "far_field_checks": rep.far_checks,
                          "failures": rep.failures, "ok": not rep.failures}))
    else:
        print(tabulate([["sites", rep.sites],
                        ["recurrence vs quadrature, worst agreement (digits)",
                         f"{rep.worst_agreement} at {rep.worst_site}" if rep.worst_site
                         else f"{rep.worst_agreement} (every site)"],
                        ["far-field expansion checks", rep.far_checks],
                        ["disagreements", len(rep.failures)]], tablefmt="simple"))
        for f in rep.failures[:20]:
            print(f"disagreement: {f}")
    return 1 if rep.failures else 0


BUSY = 3  # exit status: another run holds the catalogue's lock


def _outcome_row(o: Any) -> list[Any]:
    d = o.descriptor or {}
    lg = d.get("latgreen", {})
    cc = lg.get("cross_check", {})
    where = lg.get("extent") if lg.get("extent") is not None else lg.get("energies", "")
    return [o.table_id, o.version or "", lg.get("digits", ""), where, cc.get("rows", ""),
            cc.get("min_agreement_digits", ""), o.state]


def _cmd_build(a: argparse.Namespace) -> int:
    import time

    from .tables.catalogue import build_catalogue
    from .tables.regen import exit_status
    from .tables.spec import default_spec, load_spec
    from .tables.versions import CatalogueBusy

    specs = default_spec() if a.spec is None else load_spec(a.spec)
    t0 = time.monotonic()

    def said(o: Any) -> None:
        if o.failed:
            print(f"latgreen: {o.state}: {o.table_id}: {o.message}", file=sys.stderr)
        elif not a.quiet:
            print(f"latgreen: {o.table_id}: {o.state}", file=sys.stderr)

    try:
        outcomes = build_catalogue(Path(a.out), specs, a.rebuild, not a.quiet, said)
    except CatalogueBusy as e:
        print(f"latgreen: refused: {e}", file=sys.stderr)
        return BUSY
    print(tabulate([_outcome_row(o) for o in outcomes],
                   headers=["table", "version", "digits", "extent/energies", "rows",
                            "min agreement", "state"], disable_numparse=True))
    if not a.quiet:
        print(f"latgreen: {len(outcomes)} table(s) in {time.monotonic() - t0:.0f} s",
              file=sys.stderr)
    return exit_status(outcomes)


def _cmd_publish(a: argparse.Namespace) -> int:
    from .tables.versions import CatalogueBusy, publish_dir

    try:
        tid, state, d = publish_dir(a.dir, a.into)
    except CatalogueBusy as e:
        print(f"latgreen: refused: {e}", file=sys.stderr)
        return BUSY
    print(f"{tid}: {state} ({d['latgreen']['digits']} digits, "
          f"{d['latgreen']['cross_check']['rows']} rows) in {a.into}")
    return 0


def _cmd_audit(a: argparse.Namespace) -> int:
    from .lattices import get_lattice
    from .tables.audit import Conventions, audit, parse_decimal, plot

    lat = get_lattice(a.lattice)
    cols = (a.site_columns.split(",") if a.site_columns else list(lat.coordinate_names))
    cols = [c.strip() for c in cols]
    try:
        scale = parse_decimal(a.scale, "--scale")
    except ValueError as e:
        raise InputError(f"{e}; --scale must be a number such as 2, 0.5 or 1/3") from None
    origin = None
    if a.origin:
        parts = [x.strip() for x in a.origin.split(",")]
        if not all(x.lstrip("+-").isdigit() and x.isascii() and len(x) <= 100 for x in parts):
            raise InputError(f"--origin must be integers separated by commas, got "
                             f"{a.origin[:60]!r}")
        origin = tuple(int(x) for x in parts)
    if not a.file.is_file():
        raise InputError(f"no such file: {a.file}")
    rep = audit(a.file, a.lattice, a.quantity, cols, a.value_column, a.tolerance,
                Conventions(scale, a.negate, origin, a.hopping), a.digits, a.energy)
    if a.plot is not None:
        plot(rep, a.plot)
    summ = rep.summary()
    if a.json:
        print(json.dumps({"summary": summ, "rows": [r.to_json() for r in rep.rows]}))
    else:
        print(tabulate([[k, v] for k, v in summ.items()], tablefmt="simple",
                       disable_numparse=True))
        bad = [r for r in rep.rows if r.status != "ok"]
        if bad:
            print()
            print(tabulate([[r.line, ",".join(r.site), r.status, r.value, r.expected,
                             r.agreeing_digits, r.message] for r in bad[:50]],
                           headers=["line", "site", "status", "value", "expected",
                                    "digits", "note"], disable_numparse=True))
            if len(bad) > 50:
                print(f"... and {len(bad) - 50} more (see --json)")
    return rep.exit_status()


def _cmd_regen(a: argparse.Namespace) -> int:
    from .tables.regen import exit_status, regenerate, regenerate_all
    from .tables.versions import CatalogueBusy

    if (a.dir is None) == (a.all is None):
        raise InputError("regen takes either a table (ROOT/<table-id>[/vN]) or --all ROOT")
    if a.all is not None and a.extent is not None:
        raise InputError("--extent applies to one table, not to --all")
    if a.dir is not None and a.log is not None:
        raise InputError("--log goes with --all")
    try:
        if a.all is not None:
            outcomes = regenerate_all(a.all, a.digits, a.verify, a.log, progress=False)
            if a.json:
                print(json.dumps([{"table": o.table_id, "state": o.state,
                                   "version": o.version, "message": o.message}
                                  for o in outcomes]))
            return exit_status(outcomes)
        rep = regenerate(a.dir, a.digits, a.extent, a.verify, progress=not a.quiet)
    except CatalogueBusy as e:
        print(f"latgreen: refused: {e}", file=sys.stderr)
        return BUSY
    if a.json:
        print(json.dumps(rep))
    else:
        print(tabulate([[k, v] for k, v in rep.items() if k != "first_discrepancies"],
                       tablefmt="simple", disable_numparse=True))
    return 0


def _cmd_verify(a: argparse.Namespace) -> int:
    from .tables.verify import VerifyReport, report_json, verify_catalogue, verify_table

    def lines(rep: VerifyReport, name: str) -> None:
        state = "ok" if rep.ok else f"{len(rep.problems) + rep.more_problems} problem(s)"
        print(f"{name}: {state}; {rep.total_rows} rows, {rep.checked_rows} recomputed, "
              f"{rep.seconds:.1f} s", flush=True)
        for p in rep.problems:
            print(f"problem: {p}")
        if rep.more_problems:
            print(f"problem: ... and {rep.more_problems} more")
        for n in rep.notes:
            print(f"note: {n}")

    root = Path(a.dir)
    if root.is_dir() and (root / "catalogue.json").exists() and \
            not (root / "datapackage.json").exists():
        reps = verify_catalogue(root, a.sample, a.workers, not a.quiet, on_table=None if a.json
                                else lambda rep: lines(rep, f"{rep.table_id} {rep.version}"))
        bad = sum(not r.ok for r in reps)
        if a.json:
            print(json.dumps({"root": str(root), "ok": not bad,
                              "tables": [report_json(r) for r in reps]}))
        else:
            print(f"{len(reps)} table(s): " + ("all ok" if not bad else f"{bad} fail"))
        return 1 if bad else 0
    rep = verify_table(root, sample=a.sample, workers=a.workers, progress=not a.quiet)
    if a.json:
        print(json.dumps(report_json(rep)))
    else:
        lines(rep, str(rep.path))
    return 0 if rep.ok else 1


def _cmd_lattices(a: argparse.Namespace) -> int:
    rows = [[lat.name, ", ".join(lat.coordinate_names), lat.z,
             f"[{lat.band[0]}, {lat.band[1]}]", lat.description]
            for lat in LATTICES.values()]
    print(tabulate(rows, headers=["lattice", "site", "z", "band", "description"]))
    return 0


COMMANDS = {"resistance": _cmd_resistance, "green": _cmd_green, "dos": _cmd_dos,
            "return-probability": _cmd_return_probability,
            "table": _cmd_table, "check": _cmd_check, "build": _cmd_build,
            "audit": _cmd_audit, "verify": _cmd_verify, "regen": _cmd_regen,
            "publish": _cmd_publish,
            "lattices": _cmd_lattices}


def _notes(e: BaseException) -> None:
    for note in getattr(e, "__notes__", ()):
        print(f"latgreen: {note}", file=sys.stderr)


class Terminated(BaseException):
    """SIGTERM, turned into an exception so that clean-up runs as for Ctrl-C."""


def _on_sigterm(signum: int, frame: object) -> None:
    raise Terminated


def _glue_energies(argv: Sequence[str]) -> list[str]:
    """``--energy -1.5+0.5j`` -> ``--energy=-1.5+0.5j``: argparse takes a value starting with
    '-' that is not a plain number for an option.

    >>> _glue_energies(["green", "square", "1", "0", "--energy", "-1.5+0.5j"])[-1]
    '--energy=-1.5+0.5j'
    """
    out: list[str] = []
    it = iter(argv)
    for a in it:
        if a in ("--energy", "--energies"):
            nxt = next(it, None)
            if nxt is None:
                out.append(a)
            else:
                out.append(f"{a}={nxt}")
        else:
            out.append(a)
    return out


def main(argv: Sequence[str] | None = None) -> int:
    args = _parser().parse_args(_glue_energies(sys.argv[1:] if argv is None else argv))
    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGTERM, _on_sigterm)
    try:
        return COMMANDS[args.command](args)
    except VerificationError as e:
        print(f"latgreen: verification failed: {e}", file=sys.stderr)
        _notes(e)
        return 1
    except (InputError, PrecisionError) as e:
        print(f"latgreen: error: {e}", file=sys.stderr)
        return 2
    except LatgreenError as e:  # a worker process that died (tables.build.WorkerDied)
        print(f"latgreen: error: {e}", file=sys.stderr)
        _notes(e)
        return 2
    except BrokenPipeError:
        # the reader went away (| head): stop quietly, as other command-line tools do
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())
        return 141
    except OSError as e:
        print(f"latgreen: error: {e.strerror or e}: {e.filename or ''}".rstrip(": "),
              file=sys.stderr)
        return 2
    except KeyboardInterrupt as e:
        print("latgreen: interrupted; no partial output was left behind", file=sys.stderr)
        _notes(e)
        return 130
    except Terminated as e:
        print("latgreen: terminated; no partial output was left behind", file=sys.stderr)
        _notes(e)
        return 143


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
