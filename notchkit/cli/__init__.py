"""The command line: parse arguments, call one library function, format, exit.

Each sub-command lives in ``notchkit/cli/<name>.py`` and provides
``add_parser(subparsers)``; the parser it adds sets ``run`` to a function
``run(args) -> int`` that returns the exit code. Only :class:`NotchkitError`
is caught here; anything else is a bug and surfaces as one.
"""

from __future__ import annotations

import argparse
import gc
import importlib
import sys
import warnings

from notchkit import __version__
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK, NotchkitError, SiteError

COMMANDS = ("check", "cables", "survey", "design", "plan", "trim", "verify", "recheck")

EPILOG = """\
exit codes:
  0  done
  1  a design was computed but cannot meet its requirements
  2  bad input or usage (nothing was written)

Work on RF equipment can hurt: open stub ends carry high voltage at high power,
antennas expose people to RF, towers and lightning kill. Follow local codes and
licensed practice; see the README's safety section.
"""


class _Parser(argparse.ArgumentParser):
    """argparse, but a usage error is one line on stderr and exit code 2."""

    def error(self, message: str) -> None:  # type: ignore[override]
        self.exit(EXIT_BAD_INPUT, f"error: {self.prog}: {message}\n")


def build_parser() -> argparse.ArgumentParser:
    parser = _Parser(
        prog="notchkit",
        description="Design coaxial stub filters for multi-radio sites.",
        epilog=EPILOG,
        formatter_class=argparse.RawDescriptionHelpFormatter,
    )
    parser.add_argument("--version", action="version", version=f"notchkit {__version__}")
    _add_chatter_flags(parser, False)
    sub = parser.add_subparsers(dest="command", metavar="COMMAND", parser_class=_Parser)
    for name in COMMANDS:
        importlib.import_module(f"notchkit.cli.{name}").add_parser(sub)
    for p in sub.choices.values():  # also after the command: notchkit plan SITE -o P.pdf -q
        _add_chatter_flags(p, argparse.SUPPRESS)
    return parser


def _add_chatter_flags(p: argparse.ArgumentParser, default: object) -> None:
    g = p.add_mutually_exclusive_group()
    g.add_argument("-q", "--quiet", action="store_true", default=default,
                   help="no progress and no warning lines on stderr, only their count (errors still show)")
    g.add_argument("-v", "--verbose", action="store_true", default=default,
                   help="progress as plain lines on stderr, also when stderr is not a terminal")


def main(argv: list[str] | None = None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help(sys.stderr)
        return EXIT_BAD_INPUT
    if args.quiet and args.verbose:
        return parser.exit(EXIT_BAD_INPUT, "error: notchkit: --quiet and --verbose together\n")
    from notchkit.cli import progress

    progress.configure(quiet=args.quiet, verbose=args.verbose)
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("default")
        try:
            code = int(args.run(args))
        except NotchkitError as exc:
            _print_warnings(caught, args.quiet)
            for line in exc.lines():
                print(line if isinstance(exc, SiteError) else f"error: {line}", file=sys.stderr)
            return exc.exit_code
        except KeyboardInterrupt:
            print("error: interrupted", file=sys.stderr)
            return 130
    _print_warnings(caught, args.quiet)
    return code


def _print_warnings(caught, quiet: bool = False) -> None:
    """Each warning raised during a command as one ``warning: ...`` line on stderr
    (``quiet``: one line with their count)."""
    seen: dict[str, None] = {}
    for w in caught:
        seen.setdefault(" ".join(str(w.message).split()), None)
    if quiet and seen:
        print(f"warning: {len(seen)} warning(s) not shown (run without --quiet to see them)", file=sys.stderr)
        return
    for text in seen:
        print(f"warning: {text}", file=sys.stderr)


def entry() -> None:
    """The ``notchkit`` command: :func:`main` in a process of its own, exiting with its code.

    A command is a short-lived process, and what it has imported lives until it
    exits. Python's cycle collector walks every object it tracks on each full
    pass and several times at exit (about 25 ms a pass once numpy and the
    package are loaded). ``gc.freeze()`` moves what exists so far out of its
    view: once here, after the imports (the forked design workers then also
    leave those pages unwritten, as the :mod:`gc` documentation advises for
    ``fork``), and once before exit, so the passes at shutdown skip everything
    the command made. Objects made while the command runs are collected as
    usual. Together about 0.3 s of a 2.5 s plan (docs/performance.md). The
    library functions leave the caller's collector alone.
    """
    gc.freeze()
    code = main()
    gc.freeze()
    sys.exit(code)


__all__ = ["main", "build_parser", "EXIT_OK"]
