"""Design speed: every filter of the example sites, and the ad-hoc examples.

For each filter: the solver alone (with its build-yield ranking) and the whole
design (solver, cut list, tolerance run, power check), wall-clock and CPU time of one run, and the ratio
of the wall-clock time to the 1 s target. On a shared machine the wall clock
includes time other processes took; the CPU column is this process's own.
Not a timed test: run ``python benchmarks/design.py [SITE.yaml ...]``.

``python benchmarks/design.py --hardware-ratio [--repeat N] [SITE.yaml ...]``
instead designs every filter of each site twice, taking turns, ``N`` times
(default 3): on the classic model (the bare cable and the depth ceiling: the
fast core) and on the connection-hardware model (the site's ``hardware:``
block, line model and loads; a site without a block gets the default
hardware, UHF), and prints per site the sum over its filters of each
filter's least CPU time (the machine is shared: turns filter by filter, and
the least of ``N``, keep other jobs' bursts out) and the ratio, hardware /
classic, measured in this one run.
"""

from __future__ import annotations

import dataclasses
import sys
import time
from pathlib import Path

from notchkit.cables import get_cable
from notchkit.hardware import DEFAULT_FAMILY, Hardware, model_for
from notchkit.requirements import FilterRequirement, NotchSpec
from notchkit.site import load_site
from notchkit.site.model import Allowances, Band, Limits
from notchkit.solver import solve
from notchkit.synthesis import design_filter
from notchkit.threats import survey

TARGET_S = 1.0
ROOT = Path(__file__).resolve().parent.parent

AD_HOC = (
    ("40/15 m pass, 20 m notch 20 dB", [(7.0, 7.3), (21.0, 21.45)], [(14.0, 14.35, 20.0)], "RG-213"),
    ("20/10 m pass, 40/15 m notch 30 dB", [(14.0, 14.35), (28.0, 29.7)],
     [(7.0, 7.3, 30.0), (21.0, 21.45, 30.0)], "RG-213"),
    ("2 m pass, 3rd harmonic notch", [(144.0, 148.0)], [(432.0, 444.0, 30.0)], "RG-213"),
    ("2 m receiver, 70 cm notch", [(144.0, 148.0)], [(420.0, 450.0, 20.0)], "RG-213"),
)


def _time(fn):
    t0, c0 = time.perf_counter(), time.process_time()
    out = fn()
    return out, time.perf_counter() - t0, time.process_time() - c0


def _row(label, req, cable, limits, allowances, fid):
    sol, wall_s, cpu_s = _time(lambda: solve(req, cable=cable, limits=limits,
                                             tee_allowance_m=allowances.tee_allowance_m,
                                             allowances=allowances))
    d, wall_d, cpu_d = _time(lambda: design_filter(req, cable=cable, limits=limits, allowances=allowances,
                                                filter_id=fid))
    y = "-" if d.build_yield is None else f"{100 * d.build_yield:.0f}%"
    print(f"{label[:40]:40s} {len(sol.filter.stubs):5d} {'yes' if d.meets_as_designed else 'no':>5s} "
          f"{y:>5s} {'yes' if d.meets else 'no':>5s} "
          f"{wall_s:8.3f} {cpu_s:8.3f} {wall_d:8.3f} {cpu_d:8.3f} {wall_d / TARGET_S:7.2f}")
    return wall_d


def _models(site, req):
    """The classic model and the hardware model of one filter (the cable as notchkit.design gives it)."""
    radio = next((r for r in site.radios if r.name == req.radio), None)
    hw = getattr(site, "hardware", None)
    model = model_for(get_cable(req.cable, site.cables), settings=hw, load=getattr(radio, "load", None),
                      depth_ceiling_db=getattr(site, "depth_ceiling_db", None))
    classic = dataclasses.replace(model, hardware=None, load=None, source=None, rlgc=False)
    if model.hardware is None and not getattr(model.cable, "balanced", False):
        model = dataclasses.replace(model, hardware=Hardware.of(DEFAULT_FAMILY))
    return classic, model


def hardware_ratio(sites: list[Path], repeat: int) -> None:
    """Per site: the filters' design CPU time on the classic and the hardware model, and the ratio."""
    print(f"design CPU time, classic model vs connection hardware: each filter designed on both in turn "
          f"{repeat} times, the least of each, summed over the site")
    print(f"{'site':32s} {'filters':>7s} {'hardware':>16s} {'classic s':>10s} {'hardware s':>11s} "
          f"{'hw/classic':>10s}")
    total = [0.0, 0.0]
    for path in sites:
        site = load_site(path)
        sv = survey(site)
        jobs = []
        for i, req in enumerate(sv.filters, start=1):
            classic, model = _models(site, req)
            hw_allow = dataclasses.replace(site.allowances, tee_allowance_m=0.0)
            jobs.append((req, f"F{i}", (classic, site.allowances), (model, hw_allow)))
        best = [0.0, 0.0]
        for req, fid, *variants in jobs:  # each filter on both models in turn, the least of each
            least = [float("inf"), float("inf")]
            for _ in range(repeat):
                for k in (0, 1):
                    cable, allowances = variants[k]
                    t0 = time.process_time()
                    design_filter(req, cable=cable, limits=site.limits, allowances=allowances, filter_id=fid)
                    least[k] = min(least[k], time.process_time() - t0)
            best[0] += least[0]
            best[1] += least[1]
        kind = jobs[0][3][0] if jobs else None
        label = "-" if kind is None or kind.hardware is None else (
            kind.hardware.family.name.upper() + (", RLGC" if kind.rlgc else ""))
        print(f"{path.name:32s} {len(jobs):7d} {label:>16s} {best[0]:10.3f} {best[1]:11.3f} "
              f"{best[1] / max(best[0], 1e-9):10.2f}")
        total[0] += best[0]
        total[1] += best[1]
    print(f"{'all':32s} {'':7s} {'':>16s} {total[0]:10.3f} {total[1]:11.3f} "
          f"{total[1] / max(total[0], 1e-9):10.2f}")
    print("target: hardware / classic within about 1.2")


def main(argv: list[str]) -> None:
    import scipy.optimize  # noqa: F401  (import once, outside the timings)

    if argv and argv[0] == "--hardware-ratio":
        argv = argv[1:]
        repeat = 3
        if len(argv) >= 2 and argv[0] == "--repeat":
            repeat, argv = int(argv[1]), argv[2:]
        hardware_ratio([Path(a) for a in argv] or sorted((ROOT / "sites").glob("*.yaml")), repeat)
        return

    sites = [Path(a) for a in argv] or sorted((ROOT / "sites").glob("*.yaml"))
    print("nominal: meets as designed; yield: build yield; meets: both, at the yield target")
    print(f"{'filter':40s} {'stubs':>5s} {'nom.':>5s} {'yield':>5s} {'meets':>5s} {'solve s':>8s} "
          f"{'cpu s':>8s} {'design s':>8s} {'cpu s':>8s} {'ratio':>7s}")
    worst = 0.0
    for path in sites:
        site = load_site(path)
        sv = survey(site)
        print(f"-- {path.name}: {len(sv.filters)} filters")
        hw = getattr(site, "hardware", None)
        allowances = (site.allowances if hw is None
                      else dataclasses.replace(site.allowances, tee_allowance_m=0.0))
        for i, req in enumerate(sv.filters, start=1):
            # the cable as notchkit.design gives it: with the site's hardware, load and ceiling
            radio = next((r for r in site.radios if r.name == req.radio), None)
            cable = model_for(get_cable(req.cable, site.cables), settings=hw,
                              load=getattr(radio, "load", None),
                              depth_ceiling_db=getattr(site, "depth_ceiling_db", None))
            label = f"F{i} {req.side} {req.radio} ({len(req.notches)} notches)"
            worst = max(worst, _row(label, req, cable, site.limits, allowances, f"F{i}"))
    print("-- ad-hoc examples")
    for label, passes, notches, cable_name in AD_HOC:
        req = FilterRequirement(
            radio=None, side=None, pass_bands=tuple(Band(lo_mhz=a, hi_mhz=b) for a, b in passes),
            notches=tuple(NotchSpec(lo_mhz=a, hi_mhz=b, required_db=r) for a, b, r in notches),
            cable=cable_name)
        worst = max(worst, _row(label, req, model_for(get_cable(cable_name)), Limits(), Allowances(), "F1"))
    print(f"worst filter: {worst:.3f} s wall = {worst / TARGET_S:.2f} x the {TARGET_S:g} s target")


if __name__ == "__main__":
    main(sys.argv[1:])
