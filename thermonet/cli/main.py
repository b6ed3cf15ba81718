"""Command line: ``thermonet demo | run | check`` (also ``python -m thermonet``).

Exit codes: 0 success, 1 unexpected failure, 2 bad usage, 3 invalid model file,
4 invalid weather, 5 simulation failed, 130 interrupted (Ctrl-C).
"""

from __future__ import annotations

import argparse
import sys

from thermonet import __version__
from thermonet.constants import CAUTION


def _demo_hours(text: str) -> int:
    """``--hours`` of ``thermonet demo``: a whole number of hours, 48 … 8760."""
    try:
        n = int(text)
    except ValueError:
        raise argparse.ArgumentTypeError(f"--hours must be a whole number of hours, got "
                                         f"{text!r}") from None
    if not 48 <= n <= 8760:
        raise argparse.ArgumentTypeError(f"--hours must lie between 48 (two days) and 8760 "
                                         f"(the whole sample year), got {n}")
    return n


def _demo(args) -> int:
    from thermonet.scenarios.sunny_room import run_demo

    try:
        run_demo(args.out, progress=not args.quiet, hours=args.hours)
    except NotADirectoryError as exc:
        print(f"thermonet demo: error: {exc}", file=sys.stderr)
        return 2
    return 0


def build_parser() -> argparse.ArgumentParser:
    p = argparse.ArgumentParser(
        prog="thermonet",
        description="Hourly lumped-RC thermal networks of buildings with a closed energy "
                    "balance by heat path. " + CAUTION,
        epilog="Start with `thermonet demo --out thermonet-report` (the invented sunny-room "
               "study); `thermonet COMMAND --help` lists the options of each command. "
               "Exit codes: 0 ok, 1 unexpected failure, 2 bad usage, 3 invalid model file, "
               "4 invalid weather, 5 simulation failed, 130 interrupted (Ctrl-C).")
    p.add_argument("--version", action="version", version=f"thermonet {__version__}")
    sub = p.add_subparsers(dest="command", metavar="COMMAND")
    d = sub.add_parser(
        "demo", help="run the invented sunny-room overheating study and write its report",
        description="Runs the demo study: a sunny top-floor living room in the invented town "
                    "of Fernhollow (invented weather), its design options (external blinds, "
                    "night ventilation, added thermal mass, lower-g glazing, smaller window), "
                    "and writes CSV tables, PNG figures and an HTML summary. " + CAUTION)
    d.add_argument("--out", default="thermonet-report", help="report folder "
                   "(default: thermonet-report)")
    d.add_argument("--quiet", action="store_true", help="no progress messages")
    d.add_argument("--hours", type=_demo_hours, default=None,
                   help="simulate only the first HOURS of the year, rounded up to whole "
                        "days, 48 … 8760 (for quick checks; the annual verdicts are then "
                        "left out)")
    d.set_defaults(func=_demo)
    try:
        from thermonet.cli.run import add_batch_commands
    except ImportError:  # pragma: no cover
        pass
    else:
        add_batch_commands(sub)
    return p


def main(argv=None) -> int:
    """Run the ``thermonet`` command line.

    Parameters
    ----------
    argv : list of str, optional
        Arguments without the program name; default ``sys.argv[1:]``.

    Returns
    -------
    int
        Exit code (0 on success; see :mod:`thermonet.cli.run` for the others).
    """
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "func", None):
        parser.print_help()
        return 2
    return int(args.func(args) or 0)


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
