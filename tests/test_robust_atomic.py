"""Outputs are written atomically and inputs are never modified.

* Every output file reaches its final name only by a rename: while a command
  runs, nothing opens a final output path for writing (an ``open``/``os.open``
  spy), and every final path is the target of ``os.replace``/``os.rename``.
* A failed write (the disk full half way) leaves the old file as it was and
  no temporary file behind.
* A killed run: ``python -m notchkit design --touchstone`` and ``plan`` are
  started as real processes and killed with SIGKILL at several points (random
  delays from a seeded generator, and the moment a temporary file appears in
  the output folder, i.e. mid-write). Every output name then holds either the
  old file, byte for byte, or a complete new one: a PDF ends with ``%%EOF`` and
  pypdf reads it; JSON parses; a ``.s2p`` loads in scikit-rf; a PNG ends with
  its IEND chunk (PNG specification, ISO/IEC 15948, sec. 11.2.5); HTML ends with
  ``</html>``; a CSV has the same number of fields on every row.
* The input is never modified: SHA-256 and modification time of every example
  site (and of trim's measurement and plan JSON) before and after every command.
"""

from __future__ import annotations

import builtins
import hashlib
import io
import json
import os
import random
import shutil
import signal
import subprocess
import sys
import time
from pathlib import Path

import numpy as np
import pytest
from fuzz_strategies import built, touchstone_text

from notchkit.cli import main
from notchkit.errors import EXIT_OK, EXIT_UNMET, InputError

ROOT = Path(__file__).resolve().parent.parent
EXAMPLE_SITES = sorted((ROOT / "sites").glob("*.yaml"))

needs_design = pytest.mark.skipif(not built("design"), reason="notchkit design is not built yet")
needs_plan = pytest.mark.skipif(not built("plan"), reason="notchkit plan is not built yet")

SMALL_SITE = """\
# a fictional two-radio site: one receive filter, quick to design
site: Fictional Flat
transmitters:
  - {name: TX2M, freq_mhz: 146.52, power_w: 50, antenna: {x_m: 0, y_m: 0, height_m: 10}}
receivers:
  - {name: RXWX, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}
"""

DESIGN_ARGS = ["--pass", "144-148", "--notch", "430-440:30", "--cable", "RG-213"]

PNG_END = b"IEND\xaeB`\x82"  # the IEND chunk with its CRC, last 8 bytes of every PNG


def sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


# ---------------------------------------------------------------------------
# What a complete output looks like
# ---------------------------------------------------------------------------


def complete(path: Path) -> bool:
    """Whether ``path`` is a whole, valid output file of its kind."""
    data = path.read_bytes()
    suffix = path.suffix.lower()
    if not data:
        return False
    if suffix == ".pdf":
        if not data.rstrip().endswith(b"%%EOF"):
            return False
        import pypdf

        return len(pypdf.PdfReader(io.BytesIO(data)).pages) >= 1
    if suffix == ".json":
        try:
            json.loads(data)
        except ValueError:
            return False
        return True
    if suffix in (".s1p", ".s2p"):
        import skrf

        try:
            net = skrf.Network(str(path))
        except Exception:  # noqa: BLE001 - any failure to parse means incomplete
            return False
        return net.f.size > 0 and bool(np.all(np.isfinite(net.s)))
    if suffix == ".png":
        return data.startswith(b"\x89PNG\r\n\x1a\n") and data.endswith(PNG_END)
    if suffix == ".html":
        return data.rstrip().lower().endswith(b"</html>")
    if suffix == ".csv":
        rows = [r for r in data.decode("utf-8").splitlines() if r and not r.startswith("#")]
        return data.endswith(b"\n") and len(rows) >= 2 and len({r.count(",") for r in rows}) == 1
    raise AssertionError(f"no completeness rule for {path.name}")


def test_completeness_rules_catch_truncated_files(tmp_path):
    """Control: a file cut short is not 'complete', so the kill tests can fail."""
    old = old_files(tmp_path, ["a.pdf", "b.json", "c.s2p", "d.html"])
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    fig = plt.figure()
    buf = io.BytesIO()
    fig.savefig(buf, format="png")
    plt.close(fig)
    old["e.png"] = buf.getvalue()
    old["f.csv"] = b"freq_mhz,s21_db\n100,-0.1\n101,-0.2\n"
    for name, data in old.items():
        p = tmp_path / name
        p.write_bytes(data)
        assert complete(p), name
        for cut in (len(data) // 3, len(data) - 5):
            p.write_bytes(data[:cut])
            assert not complete(p), (name, cut)


def old_files(folder: Path, names: list[str]) -> dict[str, bytes]:
    """Write a small but valid 'previous run' file under each name; return their bytes."""
    out = {}
    for name in names:
        p = folder / name
        p.parent.mkdir(parents=True, exist_ok=True)
        suffix = p.suffix.lower()
        if suffix in (".s2p", ".s1p"):
            f = np.linspace(100e6, 200e6, 11)
            s = np.zeros((11, 2, 2), complex)
            s[:, 1, 0] = s[:, 0, 1] = 1.0
            p.write_text(touchstone_text(f, s), encoding="utf-8")
        elif suffix == ".pdf":
            import matplotlib

            matplotlib.use("Agg")
            import matplotlib.pyplot as plt

            fig = plt.figure()
            fig.text(0.5, 0.5, "old plan")
            buf = io.BytesIO()
            fig.savefig(buf, format="pdf")
            plt.close(fig)
            p.write_bytes(buf.getvalue())
        elif suffix == ".json":
            p.write_text('{"old": true}\n', encoding="utf-8")
        elif suffix == ".html":
            p.write_text("<!doctype html><html><body>old</body></html>\n", encoding="utf-8")
        else:
            raise AssertionError(name)
        assert complete(p), name
        out[name] = p.read_bytes()
    return out


def assert_old_or_complete(folder: Path, old: dict[str, bytes], expected_names: set[str]) -> None:
    """Each output name holds its old bytes or a complete file; nothing else carries an output name."""
    for name, before in old.items():
        p = folder / name
        assert p.exists(), f"{name}: the old file disappeared"
        if p.read_bytes() != before:
            assert complete(p), f"{name}: a partial file was left under the output name"
    for p in folder.rglob("*"):
        rel = p.relative_to(folder)
        if any(part.startswith(".") for part in rel.parts):
            continue  # a temporary left by SIGKILL: hidden, never an output name
        if p.is_dir():
            continue
        assert rel.as_posix() in expected_names, f"unexpected file {rel}"
        assert complete(p), f"{rel}: a partial file was left under an output name"


# ---------------------------------------------------------------------------
# Spy: no final output path is ever opened for writing
# ---------------------------------------------------------------------------

_WRITE_FLAGS = os.O_WRONLY | os.O_RDWR | os.O_APPEND | os.O_CREAT | os.O_TRUNC


class WriteSpy:
    """Record every path opened for writing and every rename target."""

    def __init__(self, monkeypatch):
        self.opened: list[Path] = []
        self.renamed: list[Path] = []
        real_open, real_os_open = builtins.open, os.open
        real_replace, real_rename = os.replace, os.rename
        spy = self

        def fake_open(file, mode="r", *args, **kwargs):
            if isinstance(file, str | bytes | os.PathLike) and any(c in mode for c in "wax+"):
                spy.opened.append(Path(os.fsdecode(file)).resolve())
            return real_open(file, mode, *args, **kwargs)

        def fake_os_open(path, flags, *args, **kwargs):
            if flags & _WRITE_FLAGS:
                spy.opened.append(Path(os.fsdecode(path)).resolve())
            return real_os_open(path, flags, *args, **kwargs)

        def fake_replace(src, dst, *args, **kwargs):
            spy.renamed.append(Path(os.fsdecode(dst)).resolve())
            return real_replace(src, dst, *args, **kwargs)

        def fake_rename(src, dst, *args, **kwargs):
            spy.renamed.append(Path(os.fsdecode(dst)).resolve())
            return real_rename(src, dst, *args, **kwargs)

        monkeypatch.setattr(builtins, "open", fake_open)
        monkeypatch.setattr(io, "open", fake_open)
        monkeypatch.setattr(os, "open", fake_os_open)
        monkeypatch.setattr(os, "replace", fake_replace)
        monkeypatch.setattr(os, "rename", fake_rename)

    def assert_atomic(self, outputs: list[Path]) -> None:
        outputs = [p.resolve() for p in outputs]
        assert outputs, "the command wrote nothing"
        direct = sorted(set(self.opened) & set(outputs))
        assert not direct, f"opened for writing under the final name: {direct}"
        missing = sorted(set(outputs) - set(self.renamed))
        assert not missing, f"not renamed into place: {missing}"


def files_in(folder: Path) -> list[Path]:
    return sorted(p for p in folder.rglob("*") if p.is_file()
                  and not any(part.startswith(".") for part in p.relative_to(folder).parts))


class Run:
    """One in-process run of a command under the write spy."""

    def __init__(self, argv: list[str], folder: Path):
        self.folder = folder
        with pytest.MonkeyPatch.context() as mp:
            self.spy = WriteSpy(mp)
            out, err = io.StringIO(), io.StringIO()
            from contextlib import redirect_stderr, redirect_stdout

            with redirect_stdout(out), redirect_stderr(err):
                self.rc = main(argv)
        self.err = err.getvalue()
        self.files = files_in(folder)
        self.names = sorted(p.relative_to(folder).as_posix() for p in self.files)
        self.data = {n: (folder / n).read_bytes() for n in self.names}


@pytest.fixture(scope="module")
def design_run(tmp_path_factory):
    if not built("design"):
        pytest.skip("notchkit design is not built yet")
    ts = tmp_path_factory.mktemp("design") / "ts"
    return Run(["design", *DESIGN_ARGS, "--touchstone", str(ts)], ts)


@pytest.fixture(scope="module")
def plan_run(tmp_path_factory):
    if not built("plan"):
        pytest.skip("notchkit plan is not built yet")
    base = tmp_path_factory.mktemp("plan")
    site = base / "site.yaml"
    site.write_text(SMALL_SITE, encoding="utf-8")
    out = base / "out"
    out.mkdir()
    run = Run(["plan", str(site), "-o", str(out / "x.pdf"), "--html", str(out / "x.html"),
               "--outdir", str(out / "dir")], out)
    run.site = site
    return run


def test_design_touchstone_files_arrive_by_rename(design_run):
    assert design_run.rc in (EXIT_OK, EXIT_UNMET), design_run.err
    design_run.spy.assert_atomic(design_run.files)
    assert design_run.names and all(n.endswith(".s2p") for n in design_run.names)
    assert all(complete(p) for p in design_run.files)


def test_plan_outputs_arrive_by_rename(plan_run):
    assert plan_run.rc in (EXIT_OK, EXIT_UNMET), plan_run.err
    assert {p.suffix for p in plan_run.files} >= {".pdf", ".html", ".json", ".s2p", ".png", ".csv"}
    assert {"x.pdf", "x.html", "dir/plan.json"} <= set(plan_run.names)
    plan_run.spy.assert_atomic(plan_run.files)
    assert all(complete(p) for p in plan_run.files), [p.name for p in plan_run.files if not complete(p)]


def test_trim_png_arrives_by_rename(tmp_path, monkeypatch, capsys):
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0

    cable = get_cable("RG-213")
    length = C0 * cable.velocity_factor / (4 * 146e6)  # an open quarter wave at 146 MHz
    f = np.linspace(120e6, 170e6, 201)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    meas = tmp_path / "stub.s2p"
    meas.write_text(touchstone_text(f, s), encoding="utf-8")
    png = tmp_path / "plot.png"
    spy = WriteSpy(monkeypatch)
    rc = main(["trim", str(meas), "--cable", "RG-213", "--termination", "open",
               "--target-mhz", "146", "--length-m", repr(length), "--png", str(png)])
    assert rc == EXIT_OK, capsys.readouterr().err
    monkeypatch.undo()
    spy.assert_atomic([png])
    assert complete(png)


# ---------------------------------------------------------------------------
# A write that fails half way keeps the old file
# ---------------------------------------------------------------------------


def test_failed_atomic_write_keeps_the_old_file_and_leaves_no_temporary(tmp_path, monkeypatch):
    from notchkit.report import files

    target = tmp_path / "plan.json"
    target.write_text('{"old": true}\n', encoding="utf-8")
    before = target.read_bytes()

    def disk_full(src, dst, *a, **k):
        raise OSError(28, "No space left on device")

    monkeypatch.setattr(os, "replace", disk_full)
    with pytest.raises(InputError, match="No space left on device"):
        files.write_text_atomic(target, '{"new": true, "much": "' + "x" * 100_000 + '"}\n')
    monkeypatch.undo()
    assert target.read_bytes() == before
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.json"]


def test_failed_touchstone_write_keeps_the_old_file(tmp_path, monkeypatch):
    """The disk fills half way through writing the new .s2p: the old file stays, no temporary."""

    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, write_touchstone

    target = tmp_path / "F1.s2p"
    old = old_files(tmp_path, ["F1.s2p"])["F1.s2p"]
    real = os.write
    calls = []

    def write_(fd, data):  # the disk fills half way through the temporary
        calls.append(len(data))
        if len(calls) == 1:
            return real(fd, bytes(data[: len(data) // 2]))
        raise OSError(28, "No space left on device")

    filt = Filter(elements=(Stub(termination="open", length_m=0.34),), cable=get_cable("RG-213"))
    monkeypatch.setattr(os, "write", write_)
    with pytest.raises(InputError, match="No space left on device"):
        write_touchstone(filt, np.linspace(100e6, 200e6, 101), target)
    monkeypatch.undo()
    assert target.read_bytes() == old
    assert sorted(p.name for p in tmp_path.iterdir()) == ["F1.s2p"]


# ---------------------------------------------------------------------------
# Killed runs
# ---------------------------------------------------------------------------


def _start(argv: list[str], cwd: Path) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", "notchkit", *argv], cwd=cwd,
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)


def _kill_when(proc: subprocess.Popen, folder: Path, *, delay_s: float | None) -> str:
    """SIGKILL after ``delay_s`` seconds, or (``None``) as soon as a temporary file shows in
    ``folder`` (a hidden entry: mid-write). Returns what happened."""
    t0 = time.monotonic()
    while proc.poll() is None:
        now = time.monotonic() - t0
        if delay_s is not None and now >= delay_s:
            break
        if delay_s is None and folder.is_dir() and any(
            p.name.startswith(".") for p in folder.rglob("*")
        ):
            break
        if now > 300:
            break
        time.sleep(0.0005)
    if proc.poll() is not None:
        return "finished"
    proc.send_signal(signal.SIGKILL)
    proc.wait(timeout=60)
    return "killed mid-write" if delay_s is None else "killed"


def _kill_plan(rng: random.Random, baseline_s: float) -> list[float | None]:
    """Kill points: the moment a temporary file appears (mid-write), and two random delays
    late in the run (start-up and design come first, the writes last)."""
    return [None] + [rng.uniform(0.6, 1.0) * baseline_s for _ in range(2)]


MID_WRITE_TRIES = 4
"""A temporary may come and go between two polls; try this many runs to catch one mid-write."""


def _kill_runs(argv: list[str], cwd: Path, folder: Path, prepare, delays: list[float | None],
               names: set[str]) -> list[str]:
    """Run and kill once per delay (``None``: mid-write, retried until caught), checking the
    folder after each; ``prepare()`` lays out the old files and returns their bytes."""
    outcomes = []
    for delay in delays:
        for _ in range(MID_WRITE_TRIES if delay is None else 1):
            if folder.exists():
                shutil.rmtree(folder)
            folder.mkdir()
            old = prepare()
            outcome = _kill_when(_start(argv, cwd), folder, delay_s=delay)
            assert_old_or_complete(folder, old, names)
            outcomes.append(outcome)
            if outcome != "finished":
                break
    return outcomes


def _wall_s(argv: list[str], cwd: Path) -> float:
    """Wall time of one uninterrupted ``python -m notchkit`` run, start-up included: the
    random kill delays are drawn inside it (a guessed start-up overshot fast runs, so
    every "random" kill could come after the run had finished)."""
    t0 = time.monotonic()
    _start(argv, cwd).wait(timeout=300)
    return time.monotonic() - t0


def test_killed_design_leaves_old_or_complete_touchstone(design_run, tmp_path):
    rng = random.Random(20261202)
    ts = tmp_path / "ts"
    argv = ["design", *DESIGN_ARGS, "--touchstone", str(ts)]
    names = design_run.names
    outcomes = _kill_runs(argv, tmp_path, ts, lambda: old_files(ts, names),
                          _kill_plan(rng, _wall_s(argv, tmp_path)), set(names))
    # The .s2p text is built in memory and written in one call, so the window in which a
    # temporary exists is tiny and a poll may miss it; the deterministic mid-write cases are
    # test_ctrl_c_during_an_atomic_write_* and test_failed_touchstone_write_keeps_the_old_file.
    assert any(o.startswith("killed") for o in outcomes), outcomes


def test_killed_plan_leaves_old_or_complete_outputs(plan_run, tmp_path):
    rng = random.Random(4151)
    site = plan_run.site
    site_sha = sha256(site)
    out = tmp_path / "out"
    argv = ["plan", str(site), "-o", str(out / "x.pdf"), "--html", str(out / "x.html"),
            "--outdir", str(out / "dir")]
    names = plan_run.names
    # old versions of the files a previous run left: small valid ones, and for PNG/CSV
    # the uninterrupted run's own
    keep = {n: plan_run.data[n] for n in names if n.endswith((".png", ".csv"))}

    def prepare():
        old = old_files(out, [n for n in names if not n.endswith((".png", ".csv"))])
        for n, data in keep.items():
            (out / n).write_bytes(data)
            old[n] = data
        return old

    outcomes = _kill_runs(argv, tmp_path, out, prepare, _kill_plan(rng, _wall_s(argv, tmp_path)),
                          set(names))
    assert "killed mid-write" in outcomes, outcomes
    assert sha256(site) == site_sha


def _interrupt_after_create(monkeypatch):
    """Ctrl-C the instant a new output file exists: an exclusive create (``O_EXCL``) makes
    the file, then KeyboardInterrupt is raised before a byte is written."""
    real = os.open

    def open_(path, flags, *args, **kwargs):
        fd = real(path, flags, *args, **kwargs)
        if flags & os.O_EXCL:
            os.close(fd)
            raise KeyboardInterrupt
        return fd

    monkeypatch.setattr(os, "open", open_)


def _interrupt_before_rename(monkeypatch):
    """Ctrl-C after the temporary is complete, just before it is renamed into place."""

    def replace(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(os, "replace", replace)


INTERRUPTIONS = {"after-create": _interrupt_after_create, "before-rename": _interrupt_before_rename}


@pytest.mark.parametrize("where", sorted(INTERRUPTIONS))
def test_ctrl_c_during_an_atomic_write_keeps_the_old_file_and_no_temporary(tmp_path, monkeypatch, where):
    from notchkit.fileio import write_text_atomic

    target = tmp_path / "x.html"
    old = old_files(tmp_path, ["x.html"])["x.html"]
    INTERRUPTIONS[where](monkeypatch)
    with pytest.raises(KeyboardInterrupt):
        write_text_atomic(target, "<html>new</html>\n")
    monkeypatch.undo()
    assert target.read_bytes() == old
    assert sorted(p.name for p in tmp_path.iterdir()) == ["x.html"]


@pytest.mark.parametrize("where", sorted(INTERRUPTIONS))
def test_ctrl_c_while_trim_writes_its_png_leaves_no_temporary(tmp_path, monkeypatch, capsys, where):
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0

    cable = get_cable("RG-213")
    length = C0 * cable.velocity_factor / (4 * 146e6)
    f = np.linspace(120e6, 170e6, 201)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    meas = tmp_path / "stub.s2p"
    meas.write_text(touchstone_text(f, s), encoding="utf-8")
    INTERRUPTIONS[where](monkeypatch)
    rc = main(["trim", str(meas), "--cable", "RG-213", "--termination", "open",
               "--target-mhz", "146", "--length-m", repr(length), "--png", str(tmp_path / "plot.png")])
    monkeypatch.undo()
    assert rc == 130
    assert sorted(p.name for p in tmp_path.iterdir()) == ["stub.s2p"]


def test_ctrl_c_during_design_exits_130_and_writes_nothing(tmp_path, monkeypatch, capsys):
    """Ctrl-C while the solver runs (before any write): exit 130, one line, no output."""
    if not built("design"):
        pytest.skip("notchkit design is not built yet")
    import importlib

    design_mod = importlib.import_module("notchkit.synthesis")  # the module behind the function

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(design_mod, "solve", interrupted)  # the solver, as design.py calls it
    rc = main(["design", *DESIGN_ARGS, "--touchstone", str(tmp_path / "ts")])
    out, err = capsys.readouterr()
    assert rc == 130
    assert err.splitlines()[-1] == "error: interrupted"
    assert list(tmp_path.iterdir()) == []


# ---------------------------------------------------------------------------
# Inputs are never modified
# ---------------------------------------------------------------------------


def _stamp(path: Path) -> tuple[str, int]:
    return sha256(path), path.stat().st_mtime_ns


@pytest.mark.parametrize("site", EXAMPLE_SITES, ids=lambda p: p.stem)
def test_every_command_leaves_the_example_site_untouched(site, tmp_path, capsys):
    """check, survey (text and JSON), design (with Touchstone files) and plan on every example
    site: same bytes, same modification time; every JSON finite."""
    before = _stamp(site)
    runs = [["check", str(site)], ["survey", str(site)], ["survey", str(site), "--json"]]
    if built("design"):
        runs.append(["design", str(site), "--json", "--touchstone", str(tmp_path / "ts")])
    if built("plan"):
        runs.append(["plan", str(site), "-o", str(tmp_path / "x.pdf"), "--html", str(tmp_path / "x.html"),
                     "--outdir", str(tmp_path / "dir")])
    for argv in runs:
        rc = main(argv)
        out, err = capsys.readouterr()
        assert rc in (EXIT_OK, EXIT_UNMET), (argv, err)
        assert _stamp(site) == before, f"{argv[0]} changed the input"
        if "--json" in argv:
            json.dumps(json.loads(out), allow_nan=False)  # finite numbers only
    if built("plan"):
        json.dumps(json.loads((tmp_path / "dir" / "plan.json").read_text(encoding="utf-8")),
                   allow_nan=False)
        assert complete(tmp_path / "x.pdf") and complete(tmp_path / "x.html")


def test_trim_leaves_its_measurement_and_plan_untouched(tmp_path, capsys):
    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0

    cable = get_cable("RG-58")
    length = C0 * cable.velocity_factor / (4 * 50e6)  # open quarter wave at 50 MHz
    f = np.linspace(40e6, 60e6, 201)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    meas = tmp_path / "stub.s2p"
    meas.write_text(touchstone_text(f, s), encoding="utf-8")
    plan = tmp_path / "plan.json"
    plan.write_text(json.dumps({"filters": [{"id": "F1", "elements": [
        {"kind": "stub", "id": "F1-S1", "termination": "open", "length_m": length,
         "cut_length_m": length, "first_cut_m": length}]}]}), encoding="utf-8")
    stamps = {p: _stamp(p) for p in (meas, plan)}
    for argv in (
        ["trim", str(meas), "--cable", "RG-58", "--termination", "open", "--target-mhz", "50",
         "--length-m", repr(length)],
        ["trim", str(meas), "--cable", "RG-58", "--target-mhz", "50", "--plan", str(plan),
         "--stub", "F1-S1", "--json"],
    ):
        rc = main(argv)
        err = capsys.readouterr().err
        assert rc in (EXIT_OK, 2), err  # the hand-made plan may lack a field: still nothing is written
        assert {p: _stamp(p) for p in stamps} == stamps
    assert sorted(p.name for p in tmp_path.iterdir()) == ["plan.json", "stub.s2p"]


# ---------------------------------------------------------------------------
# An output that cannot be written: exit 2, one line, nothing written anywhere
# ---------------------------------------------------------------------------

UNWRITABLE = {
    "outdir-is-a-file": (["-o", "{d}/ok.pdf", "--outdir", "{d}/afile"], "--outdir"),
    "pdf-folder-missing": (["-o", "{d}/nodir/x.pdf"], "does not exist"),
    "html-folder-missing": (["-o", "{d}/ok.pdf", "--html", "{d}/nodir/x.html"], "does not exist"),
    "html-is-a-folder": (["-o", "{d}/ok.pdf", "--html", "{d}"], "is a directory"),
    "pdf-is-a-folder": (["-o", "{d}"], "is a directory"),
}


@needs_plan
@pytest.mark.parametrize("name", sorted(UNWRITABLE))
def test_plan_with_an_unwritable_output_writes_nothing(tmp_path, capsys, name):
    site = tmp_path / "site.yaml"
    site.write_text(SMALL_SITE, encoding="utf-8")
    work = tmp_path / "w"
    work.mkdir()
    (work / "afile").write_bytes(b"")
    args, words = UNWRITABLE[name]
    rc = main(["plan", str(site), *(a.format(d=work) for a in args)])
    out, err = capsys.readouterr()
    assert rc == 2
    (line,) = err.splitlines()
    assert line.startswith("error: ") and words in line
    assert sorted(p.name for p in work.iterdir()) == ["afile"]


@needs_design
def test_design_with_a_file_as_touchstone_folder_writes_nothing(tmp_path, capsys):
    (tmp_path / "afile").write_bytes(b"")
    rc = main(["design", *DESIGN_ARGS, "--touchstone", str(tmp_path / "afile")])
    out, err = capsys.readouterr()
    assert rc == 2
    (line,) = err.splitlines()
    assert line.startswith("error: --touchstone")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["afile"]
    assert (tmp_path / "afile").read_bytes() == b""


def test_killing_the_designer_kills_its_worker_processes(tmp_path):
    # A SIGKILLed parent must not leave its design workers waiting forever
    # (Linux PR_SET_PDEATHSIG, notchkit.parallel); design(site, workers=2) uses them.
    import signal
    import subprocess
    import sys
    import time

    if not sys.platform.startswith("linux"):
        pytest.skip("worker processes are used on Linux only")
    # Each filter's design first sleeps a minute (patched before the command runs, so
    # the forked workers inherit it): the workers are certainly running when the
    # parent is killed, however fast the machine.
    script = ("import importlib, sys, time\n"
              "d = importlib.import_module('notchkit.synthesis')\n"
              "real = d.design_filter\n"
              "d.design_filter = lambda *a, **k: (time.sleep(60), real(*a, **k))[1]\n"
              "from notchkit.site import load_site\n"
              "d.design(load_site(sys.argv[1]), workers=2)\n")
    site = Path(__file__).resolve().parent.parent / "sites" / "hilltop-repeaters.yaml"  # ten filters
    proc = subprocess.Popen([sys.executable, "-c", script, str(site)],
                            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
    children: set[int] = set()
    deadline = time.monotonic() + 60
    while time.monotonic() < deadline and proc.poll() is None and len(children) < 2:
        children = _children_of(proc.pid)
        time.sleep(0.02)
    assert proc.poll() is None, "the design ended before its workers were seen"
    assert children, "no worker process was started"
    proc.send_signal(signal.SIGKILL)
    proc.wait()
    deadline = time.monotonic() + 10
    while time.monotonic() < deadline and any(_alive(pid) for pid in children):
        time.sleep(0.05)
    assert not [pid for pid in children if _alive(pid)]


def _children_of(pid: int) -> set[int]:
    out = set()
    for stat in Path("/proc").glob("[0-9]*/stat"):
        try:
            fields = stat.read_text().rsplit(")", 1)[1].split()
        except OSError:
            continue
        if int(fields[1]) == pid:  # field 4 of /proc/PID/stat, the parent's pid
            out.add(int(stat.parent.name))
    return out


def _alive(pid: int) -> bool:
    try:
        state = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()[0]
    except OSError:
        return False
    return state != "Z"
