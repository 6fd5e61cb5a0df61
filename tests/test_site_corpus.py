"""Every malformed site file in tests/data/bad/ is refused with exactly its expected lines.

Besides comparing with the stored lines, each line is checked against the file
itself: the LINE:COL it gives must point at the key it names (unknown and
duplicate keys) or at the value it quotes (bad numbers), so a stored line with
a wrong position cannot pass.
"""

from __future__ import annotations

import re

import pytest
from site_corpus import BAD_DIR, ROOT, bad_cases

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT

CASES = bad_cases()
LINE = re.compile(r"^(?P<file>[^:]+):(?P<line>\d+):(?P<col>\d+): (?:(?P<field>[\w.\[\]]+): )?(?P<msg>.*)$")


def test_the_corpus_is_large_and_every_file_has_its_expected_lines():
    assert len(CASES) >= 40
    yamls = {p.stem for p in BAD_DIR.glob("*.yaml")}
    assert yamls | {"missing-file"} == {c.name for c in CASES}
    assert not (BAD_DIR / "missing-file.yaml").exists()
    assert (BAD_DIR / "directory.yaml").is_dir()
    for case in CASES:
        assert case.expected, case.name
        assert all(line.startswith(case.arg + ":") for line in case.expected), case.name


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_check_refuses_each_bad_site_with_its_exact_lines(case, monkeypatch, capsys):
    monkeypatch.chdir(ROOT)
    before = case.path.read_bytes() if case.path.is_file() else None
    assert main(["check", case.arg]) == EXIT_BAD_INPUT
    out, err = capsys.readouterr()
    assert out == ""
    assert "Traceback" not in err
    assert err.splitlines() == list(case.expected)
    if before is not None:
        assert case.path.read_bytes() == before


def _text_at(case, line: int, col: int) -> str:
    rows = case.path.read_bytes().decode("utf-8", errors="replace").split("\n")
    return rows[line - 1][col - 1 :]


def _check_positions(case) -> int:
    """Assert each line's position points at what it names; return how many lines were checked."""
    checked = 0
    for text in case.expected:
        m = LINE.match(text)
        assert m, text
        line, col, field, msg = int(m["line"]), int(m["col"]), m["field"], m["msg"]
        if line == 0:
            assert col == 0
            continue
        at = _text_at(case, line, col)
        if field and msg.startswith(("unknown key", "duplicate key")):
            key = re.split(r"[.\[]", field)[-1]
            assert at.startswith(key), (text, at)
            checked += 1
        value = re.match(r"^('[^']*'|\S+) (is |must )", msg)
        if field and value and not msg.startswith("missing"):
            shown = value.group(1)
            inner = shown[1:-1] if shown.startswith("'") else shown
            inner = inner.removesuffix("...")  # a long value is shown cut short
            assert at.lstrip("\"'").startswith(inner), (text, at)
            checked += 1
    return checked


@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_positions_point_at_what_the_line_names(case):
    _check_positions(case)


def test_most_positions_are_checked_against_the_file():
    assert sum(_check_positions(c) for c in CASES) >= 40
