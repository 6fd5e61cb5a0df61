"""YAML safety: object tags, alias bombs, deep nesting and huge files are refused
quickly, with a clear one-line error, in bounded memory, and never execute anything.

The attacks are the well-known ones against YAML readers: PyYAML's
``!!python/...`` tags construct arbitrary objects under its unsafe loader
(PyYAML documentation, "Loading YAML": "yaml.load is as powerful as pickle");
the "billion laughs" entity expansion (first described for XML DTDs, CVE-2003-1564)
in its YAML form with anchors and aliases; unbounded nesting, which makes a
recursive parser overflow its stack; and a file far larger than any site file.
Time and memory bounds are loose on purpose (the machine is shared): they catch
an unbounded expansion, not a slow computer.
"""

from __future__ import annotations

import os
import resource
import subprocess
import sys
import tempfile
import time
import tracemalloc
from pathlib import Path

import pytest
import yaml
from fuzz_strategies import site_argv, site_commands

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT, SiteError
from notchkit.site.loader import load_site

TIME_LIMIT_S = 10.0
"""Loose bound on one refusal (the real ones take well under a second)."""
MEMORY_LIMIT_B = 100 * 1024 * 1024
"""Loose bound on Python allocations while refusing one file (tracemalloc peak)."""


def refuse(path: Path) -> tuple[list[str], float, int]:
    """Load ``path`` expecting a SiteError; return its lines, the seconds and the peak bytes."""
    tracemalloc.start()
    t0 = time.perf_counter()
    try:
        with pytest.raises(SiteError) as info:
            load_site(path)
    finally:
        elapsed = time.perf_counter() - t0
        _, peak = tracemalloc.get_traced_memory()
        tracemalloc.stop()
    return info.value.lines(), elapsed, peak


def assert_one_clear_line(lines: list[str], path: Path, *words: str) -> None:
    """Every line is ``FILE:LINE:COL: ...``; some line names what is wrong."""
    assert lines, "a refusal must say why"
    for line in lines:
        assert line.startswith(f"{path}:"), line
        assert "\n" not in line
        head = line[len(str(path)) + 1 :].split(":", 2)
        assert head[0].isdigit() and head[1].isdigit(), line
    text = " ".join(lines).lower()
    for w in words:
        assert w.lower() in text, (w, lines)


@pytest.fixture(scope="module", autouse=True)
def _warm(tmp_path_factory):
    """Import everything a load touches (scipy for the cable library) before any timing."""
    path = tmp_path_factory.mktemp("warm") / "ok.yaml"
    path.write_text("site: Fictional Ridge\ntransmitters:\n  - {name: TX1, freq_mhz: 146.52, power_w: 50}\n")
    load_site(path)


def cli_refuses(capsys, path: Path, pick: int | None = None) -> None:
    """Built site commands answer exit 2 with the loader's lines on stderr.

    The loader is shared, so a parametrized test passes ``pick`` (its index) and runs
    one command, round robin: across the parameters every built command is run.
    """
    cmds = site_commands()
    for cmd in cmds if pick is None else [cmds[pick % len(cmds)]]:
        with tempfile.TemporaryDirectory() as folder:
            argv = site_argv(cmd, path, folder)
            rc = main(argv)
            out, err = capsys.readouterr()
            assert rc == EXIT_BAD_INPUT, (argv, rc, out, err)
            assert "Traceback" not in err
            assert err.strip(), argv
            assert all(line.startswith(str(path)) for line in err.splitlines()), err
            assert os.listdir(folder) == [], "an output was written for a refused site"


# ---------------------------------------------------------------------------
# Object tags
# ---------------------------------------------------------------------------

TAG_DOCS = {
    "apply_value": "site: !!python/object/apply:os.system [{cmd}]\ntransmitters: []\n",
    "apply_root": "!!python/object/apply:os.system [{cmd}]\n",
    "apply_in_list": (
        "site: Fictional Ridge\ntransmitters:\n  - name: TX1\n    freq_mhz: 146.52\n"
        "    power_w: !!python/object/apply:os.system [{cmd}]\n"
    ),
    "apply_as_key": "site: Fictional Ridge\n? !!python/object/apply:os.system [{cmd}]\n: 1\n",
    "new": "site: !!python/object/new:os.system [{cmd}]\n",
    "apply_subprocess": "site: !!python/object/apply:subprocess.check_output [[sh, -c, {cmd}]]\n",
    "name": "site: !!python/name:os.system\n",
    "module": "site: !!python/module:os\n",
    "local_tag": "site: !mytag {cmd}\n",
    "verbatim": "site: !<tag:yaml.org,2002:python/object/apply:os.system> [{cmd}]\n",
    "directive": "%TAG !p! tag:yaml.org,2002:python/\n---\nsite: !p!object/apply:os.system [{cmd}]\n",
}


def _payload(marker: Path) -> str:
    return repr(f"touch {marker}")  # a quoted YAML flow scalar


def test_object_tag_payload_is_live_under_an_unsafe_loader(tmp_path):
    """Control: the payload really runs under PyYAML's unsafe loader, so the next test can fail."""
    marker = tmp_path / "control-marker"
    yaml.unsafe_load(TAG_DOCS["apply_value"].format(cmd=_payload(marker)))
    assert marker.exists()


@pytest.mark.parametrize("kind", sorted(TAG_DOCS))
def test_object_tags_are_refused_and_never_run(tmp_path, capsys, kind):
    marker = tmp_path / "MARKER-must-not-exist"
    path = tmp_path / f"{kind}.yaml"
    path.write_text(TAG_DOCS[kind].format(cmd=_payload(marker)), encoding="utf-8")
    lines, elapsed, _ = refuse(path)
    assert_one_clear_line(lines, path)
    # the refusal names the tag (the custom-directive one shows the expanded tag)
    assert any("tag" in line and "allowed" in line for line in lines), lines
    assert elapsed < TIME_LIMIT_S
    cli_refuses(capsys, path, sorted(TAG_DOCS).index(kind))
    assert not marker.exists(), "a python tag was executed"


# ---------------------------------------------------------------------------
# Alias bombs
# ---------------------------------------------------------------------------


def billion_laughs(levels: int = 9, fan: int = 9) -> str:
    """The YAML form of the 'billion laughs' expansion: fan**levels leaves from a tiny file."""
    lines = ["site: Fictional Ridge", "a0: &a0 [" + ", ".join(['"lol"'] * fan) + "]"]
    for i in range(1, levels + 1):
        lines.append(f"a{i}: &a{i} [" + ", ".join([f"*a{i - 1}"] * fan) + "]")
    lines.append(f"transmitters: *a{levels}")
    return "\n".join(lines) + "\n"


BOMBS = {
    "billion_laughs": billion_laughs(),
    "wide_single_level": "site: x\nl: &l [" + ", ".join(["lol"] * 50) + "]\ntransmitters: ["
    + ", ".join(["*l"] * 5000) + "]\n",
    "self_reference": "site: Fictional Ridge\ntransmitters: &loop\n  - name: TX1\n    more: *loop\n",
    "mapping_bomb": "site: x\n"
    + "".join(f"m{i}: &m{i} {{" + ", ".join(f"k{j}: *m{i - 1}" for j in range(10)) + "}\n"
              if i else "m0: &m0 {k: lol}\n" for i in range(8))
    + "transmitters: [*m7]\n",
}


def _expanded_leaves(node, memo) -> int:
    """Scalars a naive reader would build, following every alias (memoised on the shared nodes)."""
    if id(node) in memo:
        return memo[id(node)]
    if isinstance(node, yaml.ScalarNode):
        n = 1
    elif isinstance(node, yaml.SequenceNode):
        n = sum(_expanded_leaves(v, memo) for v in node.value)
    else:
        n = sum(_expanded_leaves(k, memo) + _expanded_leaves(v, memo) for k, v in node.value)
    memo[id(node)] = n
    return n


def test_billion_laughs_text_is_tiny_but_expands_hugely():
    """Control: the bomb's file is a few hundred bytes and stands for billions of strings."""
    text = billion_laughs()
    assert len(text) < 1000
    root = yaml.compose(text)  # PyYAML's node graph shares the aliased nodes, so this is cheap
    transmitters = dict((k.value, v) for k, v in root.value)["transmitters"]
    # 9 strings at level 0, times 9 at each of the 9 levels above: 9**10
    assert _expanded_leaves(transmitters, {}) == 9**10


@pytest.mark.parametrize("kind", sorted(BOMBS))
def test_alias_bombs_are_refused_quickly_in_bounded_memory(tmp_path, capsys, kind):
    path = tmp_path / f"{kind}.yaml"
    path.write_text(BOMBS[kind], encoding="utf-8")
    lines, elapsed, peak = refuse(path)
    assert_one_clear_line(lines, path)
    if kind != "wide_single_level":  # that one may be refused for its unknown key first
        assert any("alias" in line for line in lines), lines
    assert elapsed < TIME_LIMIT_S, elapsed
    assert peak < MEMORY_LIMIT_B, peak
    cli_refuses(capsys, path, sorted(BOMBS).index(kind))


# ---------------------------------------------------------------------------
# Deep nesting
# ---------------------------------------------------------------------------

DEPTH = 10_000

NESTS = {
    "flow_sequences": "site: x\ntransmitters: " + "[" * DEPTH + "]" * DEPTH + "\n",
    "flow_sequences_unclosed": "site: x\ntransmitters: " + "[" * DEPTH + "\n",
    "flow_mappings": "site: x\ntransmitters: " + "{a: " * DEPTH + "1" + "}" * DEPTH + "\n",
    "block_sequences": "site: x\ntransmitters:\n" + "- " * DEPTH + "1\n",
    "mixed": "site: x\ntransmitters: " + "[{a: " * (DEPTH // 2) + "1" + "}]" * (DEPTH // 2) + "\n",
}


@pytest.mark.parametrize("kind", sorted(NESTS))
def test_deep_nesting_is_refused_without_recursion_error(tmp_path, capsys, kind):
    path = tmp_path / f"{kind}.yaml"
    path.write_text(NESTS[kind], encoding="utf-8")
    lines, elapsed, peak = refuse(path)  # a RecursionError would escape pytest.raises(SiteError)
    assert_one_clear_line(lines, path)
    if kind != "flow_sequences_unclosed":  # that one may be refused as a syntax error first
        assert any("nested deeper" in line for line in lines), lines
    assert elapsed < TIME_LIMIT_S, elapsed
    assert peak < MEMORY_LIMIT_B, peak
    cli_refuses(capsys, path, sorted(NESTS).index(kind))


# ---------------------------------------------------------------------------
# Huge files and files that never end
# ---------------------------------------------------------------------------

FIFTY_MB = 50 * 1024 * 1024


def _write_big(path: Path, *, newlines: bool) -> None:
    block = (b"# " + b"x" * 97 + b"\n") if newlines else (b"x" * 100)
    with open(path, "wb") as fh:
        fh.write(b"site: Fictional Ridge\nnote: ")
        for _ in range(FIFTY_MB // (len(block) * 1000) + 1):
            fh.write(block * 1000)


@pytest.mark.parametrize("newlines", [True, False], ids=["comment_lines", "one_line"])
def test_a_50_mb_file_is_refused_quickly_without_reading_it(tmp_path, capsys, newlines):
    path = tmp_path / "huge.yaml"
    _write_big(path, newlines=newlines)
    assert path.stat().st_size > FIFTY_MB
    lines, elapsed, peak = refuse(path)
    assert_one_clear_line(lines, path, "bytes", "limit")
    assert str(path.stat().st_size) in " ".join(lines)  # the message shows the size
    assert elapsed < TIME_LIMIT_S, elapsed
    assert peak < 10 * 1024 * 1024, peak  # far less than the file: it was not read whole
    cli_refuses(capsys, path)


@pytest.mark.skipif(not os.path.exists("/dev/zero"), reason="needs /dev/zero")
def test_an_endless_stream_is_refused_in_bounded_memory(capsys):
    """/dev/zero reports size 0 and never ends: it is refused as what it is (a device, not a
    regular file) before a byte is read."""
    path = Path("/dev/zero")
    lines, elapsed, peak = refuse(path)
    assert_one_clear_line(lines, path, "character device", "not a regular file")
    assert elapsed < TIME_LIMIT_S
    assert peak < MEMORY_LIMIT_B


def test_subprocess_refuses_bomb_and_huge_file_without_traceback(tmp_path):
    """The real program, in its own process: exit 2, no traceback, bounded resident memory."""
    bomb = tmp_path / "bomb.yaml"
    bomb.write_text(billion_laughs(), encoding="utf-8")
    deep = tmp_path / "deep.yaml"
    deep.write_text(NESTS["flow_sequences"], encoding="utf-8")
    huge = tmp_path / "huge.yaml"
    _write_big(huge, newlines=True)
    marker = tmp_path / "MARKER"
    tag = tmp_path / "tag.yaml"
    tag.write_text(TAG_DOCS["apply_value"].format(cmd=_payload(marker)), encoding="utf-8")
    for path in (bomb, deep, huge, tag):
        t0 = time.perf_counter()
        proc = subprocess.run(
            [sys.executable, "-m", "notchkit", "check", str(path)],
            capture_output=True, text=True, timeout=60, cwd=tmp_path,
        )
        assert time.perf_counter() - t0 < 30  # interpreter start-up included; loose
        assert proc.returncode == EXIT_BAD_INPUT, proc.stderr
        assert "Traceback" not in proc.stderr
        assert proc.stderr.startswith(str(path)), proc.stderr
        assert proc.stdout == ""
    # ru_maxrss is in kilobytes on Linux (getrusage(2)); the largest child stays far below
    # the 50 MB file and the billion strings. Loose: numpy, scipy and yaml alone take ~100 MB.
    maxrss_kb = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
    assert maxrss_kb < 600 * 1024, maxrss_kb
    assert not marker.exists()


# ---------------------------------------------------------------------------
# Files under the size cap that are still far too big for a site
# ---------------------------------------------------------------------------


class _Timeout(Exception):
    pass


def _load_with_alarm(path: Path, seconds: float) -> list[str]:
    """load_site with a wall-clock alarm; a refusal's lines, or _Timeout when too slow."""
    import signal

    def ring(signum, frame):  # noqa: ARG001 - signal handler signature
        raise _Timeout

    old = signal.signal(signal.SIGALRM, ring)
    signal.setitimer(signal.ITIMER_REAL, seconds)
    try:
        with pytest.raises(SiteError) as info:
            load_site(path)
    finally:
        signal.setitimer(signal.ITIMER_REAL, 0)
        signal.signal(signal.SIGALRM, old)
    return info.value.lines()


def test_a_flat_list_just_under_the_size_cap_is_refused_quickly(tmp_path):
    from notchkit.site.loader import MAX_FILE_BYTES

    path = tmp_path / "flat.yaml"
    head = "site: Fictional Ridge\ntransmitters: ["
    path.write_text(head + "1," * ((MAX_FILE_BYTES - len(head) - 10) // 2) + "]\n", encoding="utf-8")
    assert path.stat().st_size <= MAX_FILE_BYTES
    lines = _load_with_alarm(path, TIME_LIMIT_S)  # _Timeout (a failure) when too slow
    assert_one_clear_line(lines, path, "values")
