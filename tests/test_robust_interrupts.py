"""Ctrl-C at every phase: exit 130, one line, no traceback, nothing written.

Real processes get SIGINT (as a terminal sends it: to the whole process group)
at seeded random moments: while Python imports numpy and notchkit, while the
survey and design run, while the outputs are written. A run that finished
before the signal must have written everything; any other run nothing.
"""

from __future__ import annotations

import os
import random
import signal
import subprocess
import sys
import time
from pathlib import Path

from notchkit.cli import main

ROOT = Path(__file__).resolve().parent.parent
SITE = ROOT / "sites" / "ridge-eoc.yaml"
OUTPUTS = ["o", "p.html", "p.pdf"]


def _plan(folder: Path) -> subprocess.Popen:
    return subprocess.Popen([sys.executable, "-m", "notchkit", "plan", str(SITE), "-o", str(folder / "p.pdf"),
                             "--html", str(folder / "p.html"), "--outdir", str(folder / "o")],
                            stdout=subprocess.PIPE, stderr=subprocess.PIPE, cwd=ROOT, start_new_session=True)


def _interrupt(folder: Path, delay_s: float) -> tuple[int, str, list[str]]:
    folder.mkdir()
    p = _plan(folder)
    time.sleep(delay_s)
    try:
        os.killpg(p.pid, signal.SIGINT)
    except ProcessLookupError:
        pass
    _out, err = p.communicate(timeout=300)
    return p.returncode, err.decode(errors="replace"), sorted(os.listdir(folder))


def _check(rc: int, err: str, files: list[str]) -> None:
    assert "Traceback" not in err, err
    if rc == 0:  # finished before the signal: everything written
        assert files == OUTPUTS and err == ""
    else:
        assert rc == 130, (rc, err)
        assert err == "error: interrupted\n", err
        assert files == [], files


def test_ctrl_c_while_starting_up(tmp_path):
    """Tracebacks from inside numpy's import, and 'ImportError: initialization failed' after
    an interrupted import, came from this phase (the first second)."""
    rng = random.Random(18)
    for k in range(4):
        _check(*_interrupt(tmp_path / f"s{k}", rng.uniform(0.2, 0.7)))


def test_ctrl_c_during_the_design_and_the_writing(tmp_path):
    """Random moments over the whole run (measured first), the writing at its end included."""
    folder = tmp_path / "base"
    folder.mkdir()
    t0 = time.perf_counter()
    p = _plan(folder)
    p.communicate(timeout=300)
    wall = time.perf_counter() - t0
    assert p.returncode == 0
    rng = random.Random(130)
    for k in range(5):
        _check(*_interrupt(tmp_path / f"d{k}", rng.uniform(0.5, 1.1) * wall))


def test_a_swallowed_ctrl_c_still_writes_nothing(tmp_path, monkeypatch, capsys):
    """Once a Ctrl-C was ignored and the plan finished with exit 0: a library that catches
    KeyboardInterrupt and goes on must not make the command write its outputs."""
    import importlib

    plan_mod = importlib.import_module("notchkit.siteplan")
    real = plan_mod._run_design

    def swallowing(*a, **k):
        try:
            os.kill(os.getpid(), signal.SIGINT)
            time.sleep(0.5)
        except KeyboardInterrupt:
            pass  # what a careless library does
        return real(*a, **k)

    monkeypatch.setattr(plan_mod, "_run_design", swallowing)
    small = tmp_path / "flat.yaml"
    small.write_text("site: Fictional Flat\ntransmitters:\n"
                     "  - {name: TX2M, freq_mhz: 146.52, power_w: 50,"
                     " antenna: {x_m: 0, y_m: 0, height_m: 10}}\n"
                     "receivers:\n"
                     "  - {name: RXWX, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}\n",
                     encoding="utf-8")
    rc = main(["plan", str(small), "-o", str(tmp_path / "p.pdf"), "--outdir", str(tmp_path / "o")])
    err = capsys.readouterr().err
    assert rc == 130 and err.splitlines()[-1] == "error: interrupted"
    assert sorted(os.listdir(tmp_path)) == ["flat.yaml"]


FORK_MAP_STOPS = """
import time
from notchkit.parallel import fork_map

def boom(*_args):
    raise KeyboardInterrupt

t0 = time.perf_counter()
try:
    got = fork_map(time.sleep, [0.1, 5.0, 5.0, 5.0], processes=2, on_result=boom)
except KeyboardInterrupt:
    print("stopped", round(time.perf_counter() - t0, 2))
else:
    print("ran")
"""


def test_an_error_in_the_parent_ends_the_workers_at_once():
    """fork_map no longer waits for every queued job when the parent stops (Ctrl-C, an error):
    two workers, a short job then three 5 s jobs, stopped when the short one's result
    arrives instead of after 10 s. In a fresh process, where no other thread prevents forking."""
    r = subprocess.run([sys.executable, "-c", FORK_MAP_STOPS], capture_output=True, text=True, timeout=60,
                       cwd=ROOT)
    words = r.stdout.split()
    assert words[0] == "stopped" and float(words[1]) < 4.0, (r.stdout, r.stderr)


def test_a_reader_that_goes_away_ends_the_command_quietly():
    """`notchkit survey ... | head`: the pipe closes while the survey prints (common practice
    for shell tools: no traceback, exit status 128 + SIGPIPE = 141)."""
    site = Path(__file__).resolve().parent.parent / "sites" / "hilltop-repeaters.yaml"
    with subprocess.Popen([sys.executable, "-c", "from notchkit.cli import entry; entry()",
                           "survey", str(site), "--json"],
                          stdout=subprocess.PIPE, stderr=subprocess.PIPE) as proc:
        assert proc.stdout is not None and proc.stderr is not None
        proc.stdout.read(10)
        proc.stdout.close()  # the reader goes away long before the JSON is all written
        err = proc.stderr.read().decode()
        code = proc.wait(timeout=120)
    assert code == 141
    assert "Traceback" not in err and "BrokenPipe" not in err
