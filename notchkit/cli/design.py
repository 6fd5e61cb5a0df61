"""`notchkit design` (being built)."""

from notchkit.errors import UsageError


def add_parser(sub) -> None:
    p = sub.add_parser("design", help="(being built)")
    p.set_defaults(run=run)


def run(args) -> int:
    raise UsageError("'design' is not built yet")
