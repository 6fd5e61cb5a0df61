"""`notchkit plan` (being built)."""

from notchkit.errors import UsageError


def add_parser(sub) -> None:
    p = sub.add_parser("plan", help="(being built)")
    p.set_defaults(run=run)


def run(args) -> int:
    raise UsageError("'plan' is not built yet")
