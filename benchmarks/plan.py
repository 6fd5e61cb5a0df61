"""Plan speed: `notchkit plan` on the largest example site (by radio count).

Runs the command line as a user would (a fresh ``python -m notchkit`` process,
so imports count), a few times, and prints the median wall-clock time and its
ratio to the 2 s target, with the median CPU time of the child process (on a
shared machine the wall clock includes time other processes took). Also times
the same site with ``--html`` and ``--outdir``, and the wall time of each phase
of one run in process (design, PDF, images). Last, whether worker processes and
threads pay on this machine: the design phase with worker processes
(``fork_map``), in this process on the core's threads, and on one thread, and
the PNG images with and without worker processes, each in a fresh process
(forking needs one with no other thread), the variants taking turns, medians
of RUNS. Not a timed test: ``python benchmarks/plan.py [SITE.yaml] [RUNS]``.
"""

from __future__ import annotations

import os
import resource
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

TARGET_S = 2.0
ROOT = Path(__file__).resolve().parent.parent


def largest_site() -> Path:
    from notchkit.site import load_site

    sites = sorted((ROOT / "sites").glob("*.yaml"))
    return max(sites, key=lambda p: (len(load_site(p).radios), p.name))


def _child_cpu() -> float:
    r = resource.getrusage(resource.RUSAGE_CHILDREN)
    return r.ru_utime + r.ru_stime


def run_cli(site: Path, extra: list[str], runs: int) -> tuple[list[float], list[float], int]:
    walls, cpus = [], []
    code = 0
    with tempfile.TemporaryDirectory() as tmp:
        for k in range(runs):
            out = Path(tmp) / f"plan{k}.pdf"
            args = [a.replace("{tmp}", tmp).replace("{k}", str(k)) for a in extra]
            c0 = _child_cpu()
            t0 = time.perf_counter()
            cmd = [sys.executable, "-m", "notchkit", "plan", str(site), "-o", str(out), *args]
            proc = subprocess.run(cmd, capture_output=True, text=True,
                                  env={**os.environ, "PYTHONWARNINGS": "ignore"})
            walls.append(time.perf_counter() - t0)
            cpus.append(_child_cpu() - c0)
            code = proc.returncode
            if code not in (0, 1):
                raise SystemExit(f"notchkit plan failed ({code}): {proc.stderr.strip()}")
    return walls, cpus, code


def phases(site: Path) -> None:
    import importlib

    from notchkit.site import load_site

    plan_mod = importlib.import_module("notchkit.siteplan")
    import reportlab.pdfgen.canvas  # noqa: F401  (imported outside the timings)

    from notchkit.report.html import filter_images
    from notchkit.report.pdf import render_pdf
    from notchkit.report.text import plan_text

    s = load_site(site)
    t0 = time.perf_counter()
    report = plan_mod._run_design(s)
    t1 = time.perf_counter()
    pt = plan_text(site=s, sv=report.survey, designs=report.designs, date="-", version="-")
    parts = [plan_mod._part(d, s) for d in report.designs]
    t2 = time.perf_counter()
    _, layout = render_pdf(pt, parts)
    t3 = time.perf_counter()
    for ft, part in zip(pt.filters, parts, strict=True):
        filter_images(part, ft)
    t4 = time.perf_counter()
    print(f"  phases (wall s, in this process; the PDF is drawn once every filter is designed): "
          f"survey+design {t1 - t0:.2f}, rows+curves {t2 - t1:.2f}, "
          f"PDF ({layout.total} pages) {t3 - t2:.2f}, PNG images for --html/--outdir {t4 - t3:.2f}")


VARIANT = """
import importlib, sys, time
from notchkit import filters
from notchkit.synthesis import design
from notchkit.parallel import fork_map
from notchkit.site import load_site
import matplotlib.figure, reportlab.pdfgen.canvas  # imports outside the timings
plan = importlib.import_module("notchkit.siteplan")  # the module, not the function
what, n = sys.argv[1], int(sys.argv[2])  # n: processes (0: one process, one thread)
site = load_site(sys.argv[3])
if what == "design":
    if n == 0:
        filters.set_threads(1)
    t0 = time.perf_counter()
    design(site, workers=max(1, n))
else:
    filters.set_threads(1)
    report = design(site, workers=1)
    from notchkit.report.text import plan_text
    pt = plan_text(site=site, sv=report.survey, designs=report.designs, date="-", version="-")
    parts = [plan._part(d, site) for d in report.designs]
    jobs = [(part, ft, None) for part, ft in zip(parts, pt.filters)]
    t0 = time.perf_counter()
    fork_map(plan._filter_files, jobs, processes=n)
print(time.perf_counter() - t0)
"""


def variants(site: Path, runs: int) -> None:
    """Wall time of the design and of the images with and without processes/threads."""
    from notchkit.parallel import cores

    n = max(2, cores())
    cases = (("design: worker processes, 1 thread each", "design", n),
             ("design: this process, core's threads", "design", 1),
             ("design: this process, 1 thread", "design", 0),
             ("images: worker processes", "images", n),
             ("images: this process", "images", 1))
    walls: dict[str, list[float]] = {label: [] for label, _w, _n in cases}
    for k in range(runs):
        for label, what, n in cases if k % 2 == 0 else cases[::-1]:
            proc = subprocess.run([sys.executable, "-c", VARIANT, what, str(n), str(site)],
                                  capture_output=True, text=True,
                                  env={**os.environ, "PYTHONWARNINGS": "ignore"})
            if proc.returncode != 0:
                raise SystemExit(f"variant {label} failed: {proc.stderr.strip()}")
            walls[label].append(float(proc.stdout.split()[-1]))
    print(f"  processes and threads ({cores()} cores for this process; wall s, medians of {runs}, "
          f"variants taking turns):")
    for label, ws in walls.items():
        print(f"    {label:42s} {statistics.median(ws):6.2f}  runs {', '.join(f'{w:.2f}' for w in ws)}")
    d = [statistics.median(walls[c[0]]) for c in cases]
    print(f"    gain from worker processes: design {d[1] / d[0]:.2f}x (vs core's threads), "
          f"{d[2] / d[0]:.2f}x (vs 1 thread); images {d[4] / d[3]:.2f}x; "
          f"gain from the core's threads: {d[2] / d[1]:.2f}x")


def compile_bytecode() -> None:
    """Compile notchkit's bytecode first, as ``pip install`` does for a user.

    An editable checkout run with ``PYTHONDONTWRITEBYTECODE`` set (as on the
    development machine) would otherwise compile every module on every run,
    about 0.25 s that no installed copy pays.
    """
    import compileall

    import notchkit

    compileall.compile_dir(str(Path(notchkit.__file__).parent), quiet=1)


def main(argv: list[str]) -> None:
    if argv and argv[0] in ("-h", "--help"):
        print(__doc__)
        return
    site = Path(argv[0]) if argv else largest_site()
    runs = int(argv[1]) if len(argv) > 1 else 3
    from notchkit.site import load_site

    compile_bytecode()

    print(f"site: {site.relative_to(ROOT) if site.is_relative_to(ROOT) else site} "
          f"({len(load_site(site).radios)} radios), {runs} runs each, target {TARGET_S:g} s")
    for label, extra in (("plan -o PLAN.pdf", []),
                         ("plan -o PLAN.pdf --html --outdir", ["--html", "{tmp}/p{k}.html",
                                                               "--outdir", "{tmp}/d{k}"])):
        walls, cpus, code = run_cli(site, extra, runs)
        med = statistics.median(walls)
        print(f"{label:36s} median wall {med:6.2f} s  (ratio to target {med / TARGET_S:5.2f})  "
              f"median CPU {statistics.median(cpus):6.2f} s  runs {', '.join(f'{w:.2f}' for w in walls)}"
              f"  exit {code}")
    phases(site)
    variants(site, runs)


if __name__ == "__main__":
    main(sys.argv[1:])
