"""The malformed site-file corpus in tests/data/bad/, for any command's tests to reuse.

Each case is ``NAME.yaml`` (a site file with one kind of defect, described in
its first comment line) and ``NAME.expected`` (the exact lines a command that
reads the site prints on stderr). Two cases are special: ``missing-file`` has
no ``.yaml`` at all, and ``directory.yaml`` is a directory.

The expected lines name the file as given on the command line relative to the
repository root, ``tests/data/bad/NAME.yaml``: run with the repository root as
the working directory (``monkeypatch.chdir(site_corpus.ROOT)``) and pass
``case.arg``. Every case must exit 2 with exactly those lines and no traceback::

    from site_corpus import ROOT, bad_cases

    @pytest.mark.parametrize("case", bad_cases(), ids=lambda c: c.name)
    def test_survey_refuses_bad_sites(case, monkeypatch, capsys):
        monkeypatch.chdir(ROOT)
        assert main(["survey", case.arg]) == 2
        assert capsys.readouterr().err.splitlines() == list(case.expected)
"""

from __future__ import annotations

from dataclasses import dataclass
from pathlib import Path

ROOT = Path(__file__).resolve().parent.parent
"""The repository root: the working directory the expected lines assume."""
BAD_DIR = ROOT / "tests" / "data" / "bad"


@dataclass(frozen=True, slots=True, kw_only=True)
class BadCase:
    """One malformed site file and what reading it must report."""

    name: str
    arg: str
    """The path to pass on the command line, relative to :data:`ROOT`."""
    expected: tuple[str, ...]
    """The exact stderr lines, in order."""

    @property
    def path(self) -> Path:
        """The absolute path of the site file (it may not exist: ``missing-file``)."""
        return ROOT / self.arg


def bad_cases() -> list[BadCase]:
    """Every case in tests/data/bad/, sorted by name."""
    cases = []
    for exp in sorted(BAD_DIR.glob("*.expected")):
        lines = tuple(exp.read_text(encoding="utf-8").splitlines())
        cases.append(
            BadCase(name=exp.stem, arg=f"tests/data/bad/{exp.stem}.yaml", expected=lines)
        )
    return cases
