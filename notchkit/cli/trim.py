"""`notchkit trim` (being built)."""

from notchkit.errors import UsageError


def add_parser(sub) -> None:
    p = sub.add_parser("trim", help="(being built)")
    p.set_defaults(run=run)


def run(args) -> int:
    raise UsageError("'trim' is not built yet")
