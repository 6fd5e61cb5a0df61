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
import logging
import os
import sys
import warnings

from notchkit import __version__
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK, NotchkitError, SiteError
from notchkit.textsafe import clean

EXIT_BROKEN_PIPE = 141  # 128 + SIGPIPE, what a shell reports for a tool whose reader went away

COMMANDS = ("check", "cables", "survey", "design", "plan", "trim", "verify", "recheck")

EPILOG = """\
exit codes:
  0  done
  1  a design was computed but cannot meet its requirements
  2  bad input or usage (nothing was written)
  130  interrupted (Ctrl-C; nothing was written)

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
    """Run one command; every line it prints passes through :func:`notchkit.textsafe.clean`.

    Returns the exit code: the command's own, 2 for a :class:`NotchkitError`
    (its ``exit_code``), 130 after Ctrl-C at any moment (one line, no
    traceback; whatever the command had computed is not written).
    """
    from notchkit import interrupts
    from notchkit.cli import progress
    from notchkit.textsafe import SafeStream

    progress.configure()
    restore = interrupts.install()
    out, err = sys.stdout, sys.stderr
    sys.stdout, sys.stderr = SafeStream(out), SafeStream(err)
    mpl_log = _LogCatcher()
    try:
        mpl_log.attach()
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("default")
            try:
                code = _run(argv)
            except NotchkitError as exc:
                _print_warnings(caught, mpl_log)
                for line in exc.lines():
                    print(line if isinstance(exc, SiteError) else f"error: {line}", file=sys.stderr)
                return 130 if interrupts.interrupted() else exc.exit_code
            except KeyboardInterrupt:
                print("error: interrupted", file=sys.stderr)
                return 130
            except BrokenPipeError:
                # The reader of our output went away (`notchkit survey ... | head`): stop
                # quietly, as a shell tool would; what was left unprinted goes nowhere.
                _silence(out)
                return EXIT_BROKEN_PIPE
            except MemoryError:  # the caps (docs/robustness.md) should make this unreachable
                print("error: out of memory (the input is too large for this machine; the limits are "
                      "in docs/robustness.md)", file=sys.stderr)
                return EXIT_BAD_INPUT
            _print_warnings(caught, mpl_log)
            if interrupts.interrupted():  # Ctrl-C that some library caught and went on
                print("error: interrupted", file=sys.stderr)
                return 130
            return code
    except KeyboardInterrupt:  # between the command's end and here
        print("error: interrupted", file=sys.stderr)
        return 130
    finally:
        mpl_log.detach()
        for stream in (sys.stdout, sys.stderr):
            try:
                stream.flush()
            except (OSError, ValueError):
                pass
        sys.stdout, sys.stderr = out, err
        restore()


def _silence(stream) -> None:  # noqa: ANN001 - a text stream with a file descriptor
    """Point ``stream``'s descriptor at the null device, so the flush at exit cannot fail
    again on a closed pipe (the Python documentation's advice for SIGPIPE)."""
    try:
        devnull = os.open(os.devnull, os.O_WRONLY)
        os.dup2(devnull, stream.fileno())
        os.close(devnull)
    except (OSError, ValueError, AttributeError):
        pass


def _run(argv: list[str] | None) -> int:
    parser = build_parser()
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help(sys.stderr)
        return EXIT_BAD_INPUT
    if args.quiet and args.verbose:
        parser.error("--quiet and --verbose together")
    from notchkit.cli import progress

    progress.configure(quiet=args.quiet, verbose=args.verbose)
    return int(args.run(args))


class _LogCatcher(logging.Handler):
    """Library log records (matplotlib's note about an unwritable config folder) kept as
    warnings, instead of Python printing them raw on stderr."""

    LOGGERS = ("matplotlib", "fontTools", "PIL")

    def __init__(self) -> None:
        super().__init__(logging.WARNING)
        self.messages: list[str] = []
        self._saved: list[tuple[logging.Logger, bool]] = []

    def emit(self, record: logging.LogRecord) -> None:
        try:
            msg = record.getMessage()
        except Exception:  # noqa: BLE001 - a bad log call must not end the command
            msg = str(record.msg)
        if "MPLCONFIGDIR" in msg or "mkdir -p failed" in msg:
            msg = ("matplotlib's configuration folder is not writable, so it uses a temporary one "
                   "(set MPLCONFIGDIR to a writable folder to start faster)")
        self.messages.append(msg)

    def attach(self) -> None:
        for name in self.LOGGERS:
            lg = logging.getLogger(name)
            lg.addHandler(self)
            self._saved.append((lg, lg.propagate))
            lg.propagate = False

    def detach(self) -> None:
        for lg, prop in self._saved:
            lg.removeHandler(self)
            lg.propagate = prop
        self._saved.clear()


def _print_warnings(caught, logs: _LogCatcher | None = None, quiet: bool | None = None) -> None:
    """Each warning raised during a command as one ``warning: ...`` line on stderr
    (``--quiet``: one line with their count)."""
    from notchkit.cli import progress

    seen: dict[str, None] = {}
    texts = [str(w.message) for w in caught] + (logs.messages if logs is not None else [])
    for raw in texts:
        seen.setdefault(clean(" ".join(raw.split()), one_line=True), None)
    if (progress.is_quiet() if quiet is None else quiet) and seen:
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
    view: once here, after the imports (forked workers, where ``workers=N`` asks
    for them, then also leave those pages unwritten, as the :mod:`gc`
    documentation advises for ``fork``), and once before exit, so the passes at shutdown skip everything
    the command made. Objects made while the command runs are collected as
    usual. Together about 0.3 s of a 2.5 s plan (docs/performance.md). The
    library functions leave the caller's collector alone.
    """
    from notchkit.interrupts import hold_until_exit

    gc.freeze()
    code = main()
    hold_until_exit()  # the command is over: a Ctrl-C from here on changes nothing
    gc.freeze()
    if code == 130:
        # Interrupted: every finally has run; end now, before interpreter shutdown can
        # import or run anything half-initialised (a Ctrl-C inside an import).
        for stream in (sys.stdout, sys.stderr):
            try:
                stream.flush()
            except (OSError, ValueError):
                pass
        os._exit(130)
    sys.exit(code)


__all__ = ["main", "build_parser", "EXIT_OK"]
