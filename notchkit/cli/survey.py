"""`notchkit survey` (being built)."""

from notchkit.errors import UsageError


def add_parser(sub) -> None:
    p = sub.add_parser("survey", help="(being built)")
    p.set_defaults(run=run)


def run(args) -> int:
    raise UsageError("'survey' is not built yet")
