"""Command line: a thin layer over the public API.

Bad input gives one line on stderr and exit status 2; a disagreement between independent
methods gives exit status 1.  Data goes to stdout, progress and messages to stderr.
"""

from __future__ import annotations

import argparse
import contextlib
import json
import signal
import sys
import threading
from collections.abc import Sequence
from pathlib import Path
from typing import NoReturn

from tabulate import tabulate

from . import __version__
from .errors import InputError, LatgreenError, PrecisionError, VerificationError
from .lattices import LATTICES
from .quantities import MAX_DIGITS, QUANTITIES, resistance, return_probability
from .tables.make import (
    CATALOGUE,
    SCALAR_TABLES,
    TableRequest,
    build_catalogue,
    check_region,
    make_table,
)


class _Parser(argparse.ArgumentParser):
    def error(self, message: str) -> NoReturn:
        self.exit(2, f"latgreen: error: {message} (see 'latgreen --help')\n")


def _digits(text: str) -> int:
    try:
        return int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"digits must be an integer, got {text!r}") from None


def _extent(text: str) -> int:
    try:
        return int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"extent must be an integer, got {text!r}") from None


def _workers(text: str) -> int:
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"workers must be an integer, got {text!r}") from None
    if n < 1:
        raise argparse.ArgumentTypeError(f"workers must be at least 1, got {n}")
    return n


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
    t.add_argument("--extent", type=_extent, required=True,
                   help="largest coordinate of the canonical region")
    t.add_argument("--digits", type=_digits, default=50)
    t.add_argument("--out", type=Path, required=True, help="output directory (created)")
    t.add_argument("--force", action="store_true", help="replace a non-empty output directory")
    t.add_argument("--verify", choices=("auto", "full", "fast"), default="auto",
                   help="independent check: full digits for every row, or float64 for every "
                        "row plus full digits on a sample (auto: full unless large)")
    t.add_argument("--no-exact", action="store_true",
                   help="leave the exact forms out of the files (they grow with the extent)")
    t.add_argument("--quiet", action="store_true", help="no progress display")
    t.add_argument("--workers", type=_workers, default=None,
                   help="processes for the independent checks (default: the machine's cores)")

    c = sub.add_parser("check", help="run the methods against each other over a region")
    c.add_argument("lattice")
    c.add_argument("--quantity", default="resistance")
    c.add_argument("--extent", type=_extent, required=True)
    c.add_argument("--digits", type=_digits, default=50)
    c.add_argument("--json", action="store_true")
    c.add_argument("--quiet", action="store_true")

    b = sub.add_parser("build", help="build the default catalogue of tables into ./tables/")
    b.add_argument("--out", type=Path, default=Path("tables"), help="catalogue directory")
    b.add_argument("--quiet", action="store_true")

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


def _cmd_table(a: argparse.Namespace) -> int:
    d = make_table(TableRequest(a.lattice, a.quantity, a.extent, a.digits, a.out, a.force,
                                a.verify, not a.no_exact, not a.quiet, a.workers))
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


def _cmd_build(a: argparse.Namespace) -> int:
    out = Path(a.out)
    before = {}
    names = [(lattice, quantity) for lattice, quantity, *_ in CATALOGUE]
    names += [("cubic", quantity) for quantity, *_ in SCALAR_TABLES]
    for lattice, quantity in names:
        pkg = out / f"{lattice}-{quantity}" / "datapackage.json"
        if pkg.is_file():
            with contextlib.suppress(ValueError, KeyError, TypeError):
                before[pkg.parent.name] = {r["path"]: r.get("hash") for r in
                                           json.loads(pkg.read_text())["resources"]}
    descriptors = build_catalogue(out, progress=not a.quiet)
    rows = []
    for d in descriptors:
        name = d["name"]
        after = {r["path"]: r["hash"] for r in d["resources"]}
        state = ("new" if name not in before else
                 "data unchanged" if before[name] == after else "data changed")
        cc = d["latgreen"]["cross_check"]
        rows.append([name, d["latgreen"]["extent"], d["latgreen"]["digits"], cc["rows"],
                     cc["min_agreement_digits"], state])
    print(tabulate(rows, headers=["table", "extent", "digits", "rows", "min agreement",
                                  "state"]))
    return 0


def _cmd_lattices(a: argparse.Namespace) -> int:
    rows = [[lat.name, ", ".join(lat.coordinate_names), lat.z,
             f"[{lat.band[0]}, {lat.band[1]}]", lat.description]
            for lat in LATTICES.values()]
    print(tabulate(rows, headers=["lattice", "site", "z", "band", "description"]))
    return 0


COMMANDS = {"resistance": _cmd_resistance, "return-probability": _cmd_return_probability,
            "table": _cmd_table, "check": _cmd_check,
            "build": _cmd_build, "lattices": _cmd_lattices}


class Terminated(BaseException):
    """SIGTERM, turned into an exception so that clean-up runs as for Ctrl-C."""


def _on_sigterm(signum: int, frame: object) -> None:
    raise Terminated


def main(argv: Sequence[str] | None = None) -> int:
    args = _parser().parse_args(argv)
    if threading.current_thread() is threading.main_thread():
        signal.signal(signal.SIGTERM, _on_sigterm)
    try:
        return COMMANDS[args.command](args)
    except VerificationError as e:
        print(f"latgreen: verification failed: {e}", file=sys.stderr)
        return 1
    except (InputError, PrecisionError) as e:
        print(f"latgreen: error: {e}", file=sys.stderr)
        return 2
    except LatgreenError as e:  # pragma: no cover - every subclass is handled above
        print(f"latgreen: error: {e}", file=sys.stderr)
        return 2
    except OSError as e:
        print(f"latgreen: error: {e.strerror or e}: {e.filename or ''}".rstrip(": "),
              file=sys.stderr)
        return 2
    except KeyboardInterrupt:
        print("latgreen: interrupted; no partial output was left behind", file=sys.stderr)
        return 130
    except Terminated:
        print("latgreen: terminated; no partial output was left behind", file=sys.stderr)
        return 143


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
