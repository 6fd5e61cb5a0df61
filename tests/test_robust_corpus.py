"""Every command that reads a site file answers every malformed file the same way.

The corpus (tests/data/bad/, see tests/site_corpus.py) gives each broken site
file with the exact lines the loader reports; ``check`` is tested against it in
tests/test_site_corpus.py. Here ``survey``, ``design`` and ``plan`` must answer
each case with exactly those lines on stderr, exit code 2 (bad input, see
notchkit/errors.py and docs/errors.md), nothing on stdout that looks like a
result, no traceback, no output file (every output option the command has is
pointed into an empty folder that must stay empty), and the input file
byte-for-byte unchanged (SHA-256 before and after).
"""

from __future__ import annotations

import hashlib
import subprocess
import sys
from pathlib import Path

import pytest
from fuzz_strategies import built, has_option
from site_corpus import ROOT, bad_cases

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT

COMMANDS = ("survey", "design", "plan")

OUTPUT_OPTIONS = {
    # option -> file or folder name inside the test's empty output folder
    "-o": "x.pdf",
    "--output": "x.pdf",
    "--outdir": "out",
    "--html": "x.html",
    "--touchstone": "ts",
    "--csv": "x.csv",
    "--png": "x.png",
}


def output_args(command: str, folder: Path) -> list[str]:
    """Point every output option the command accepts (with a value) into ``folder``."""
    from notchkit.cli import build_parser

    parser = build_parser()
    sub = next(a for a in parser._actions if a.__class__.__name__ == "_SubParsersAction")
    actions = sub.choices[command]._option_string_actions
    args: list[str] = []
    seen = set()
    for opt, name in OUTPUT_OPTIONS.items():
        act = actions.get(opt)
        if act is None or act.nargs == 0 or id(act) in seen:
            continue
        seen.add(id(act))
        args += [opt, str(folder / name)]
    return args


def sha256(path: Path) -> str | None:
    return hashlib.sha256(path.read_bytes()).hexdigest() if path.is_file() else None


CASES = bad_cases()


def test_corpus_is_large_enough():
    """The issue asks for at least 40 malformed files."""
    assert len(CASES) >= 40


@pytest.mark.parametrize("command", COMMANDS)
@pytest.mark.parametrize("case", CASES, ids=lambda c: c.name)
def test_command_refuses_bad_site_with_the_expected_lines(case, command, monkeypatch, capsys, tmp_path):
    if not built(command):
        pytest.skip(f"notchkit {command} is not built yet")
    monkeypatch.chdir(ROOT)
    out_dir = tmp_path / "outputs"
    out_dir.mkdir()
    before = sha256(case.path)
    argv = [command, case.arg, *output_args(command, out_dir)]
    rc = main(argv)
    out, err = capsys.readouterr()
    assert rc == EXIT_BAD_INPUT, (argv, out, err)
    assert err.splitlines() == list(case.expected)
    assert "Traceback" not in err
    assert out == ""
    assert list(out_dir.iterdir()) == [], "an output was written for a bad site"
    assert sha256(case.path) == before, "the input file changed"


def test_plan_writes_nothing_for_a_bad_site(monkeypatch, capsys, tmp_path):
    """The brief's exact form: plan -o tmp/x.pdf --outdir tmp/out leaves neither behind."""
    if not built("plan"):
        pytest.skip("notchkit plan is not built yet")
    assert has_option("plan", "-o") and has_option("plan", "--outdir")
    monkeypatch.chdir(ROOT)
    pdf, outdir = tmp_path / "x.pdf", tmp_path / "out"
    for case in CASES:
        rc = main(["plan", case.arg, "-o", str(pdf), "--outdir", str(outdir)])
        err = capsys.readouterr().err
        assert rc == EXIT_BAD_INPUT, case.name
        assert err.splitlines() == list(case.expected), case.name
        assert not pdf.exists() and not outdir.exists(), case.name
    assert list(tmp_path.iterdir()) == []


PROCESS_CASES = ("python-tag", "not-utf8", "deep-nesting", "freq-nan")


@pytest.mark.parametrize("command", ("check", *COMMANDS))
def test_real_process_prints_the_lines_and_no_traceback(command, tmp_path):
    """The program itself (``python -m notchkit``): exit 2, the expected lines, no traceback.

    One process per command (start-up is slow on a shared machine), each on another case.
    """
    if not built(command):
        pytest.skip(f"notchkit {command} is not built yet")
    name = PROCESS_CASES[("check", *COMMANDS).index(command)]
    case = next(c for c in CASES if c.name == name)
    out_dir = tmp_path / command
    out_dir.mkdir()
    proc = subprocess.run(
        [sys.executable, "-m", "notchkit", command, case.arg, *output_args(command, out_dir)],
        cwd=ROOT, capture_output=True, text=True, timeout=120,
    )
    assert proc.returncode == EXIT_BAD_INPUT, (command, proc.stderr)
    assert "Traceback" not in proc.stderr
    assert proc.stderr.splitlines() == list(case.expected), command
    assert list(out_dir.iterdir()) == []
