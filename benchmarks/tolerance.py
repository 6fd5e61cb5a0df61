"""Speed of the Monte Carlo tolerance run: 10,000 builds should take well under 1 s.

Prints the time of one 10,000-sample run (best of a few) for a one-stub and a
three-element filter (cut to plan, and with its stubs trimmed to resonance, the
build model of the design), and its ratio to the 1 s budget. Not a test: a ratio
measured in one run on this machine.

    python benchmarks/tolerance.py
"""

from __future__ import annotations

import time

from notchkit.buildyield import tolerance
from notchkit.cables import get_cable
from notchkit.cutlist import quarter_wave_m
from notchkit.filters import Filter, Line, Stub
from notchkit.requirements import NotchSpec
from notchkit.site.model import Band

BUDGET_S = 1.0
REPEATS = 5


def _best(fn) -> tuple[float, float]:
    """Best wall-clock and best CPU time of a few runs, seconds (CPU time is less
    disturbed when other work shares the machine)."""
    wall = cpu = float("inf")
    for _ in range(REPEATS):
        t0, c0 = time.perf_counter(), time.process_time()
        fn()
        wall = min(wall, time.perf_counter() - t0)
        cpu = min(cpu, time.process_time() - c0)
    return wall, cpu


def main() -> None:
    cable = get_cable("RG-213")
    q = quarter_wave_m(7.15, cable.velocity_factor)
    one = Filter(elements=(Stub(termination="open", length_m=q),), cable=cable, tee_allowance_m=0.03)
    three = Filter(
        elements=(Stub(termination="open", length_m=q), Line(length_m=q),
                  Stub(termination="short", length_m=2 * q)),
        cable=cable, tee_allowance_m=0.03,
    )
    notches = (NotchSpec(lo_mhz=7.0, hi_mhz=7.3, required_db=20.0),
               NotchSpec(lo_mhz=21.0, hi_mhz=21.45, required_db=20.0))
    passes = (Band(lo_mhz=14.0, hi_mhz=14.35), Band(lo_mhz=28.0, hi_mhz=29.7))
    tolerance(one, notches[:1], samples=100)  # warm up (imports, cable load)
    runs = (("1 stub", one, None), ("2 stubs + line", three, None),
            ("2 stubs + line, stubs trimmed", three, [True, False, True]))
    for name, filt, trimmed in runs:
        wall, cpu = _best(lambda filt=filt, trimmed=trimmed: tolerance(filt, notches, pass_bands=passes,
                                                                        samples=10_000, trimmed=trimmed))
        print(f"tolerance, {name}, 2 notches + 2 pass bands x 11 points, 10,000 samples: "
              f"{wall * 1000:.0f} ms wall = {wall / BUDGET_S:.2f} x the 1 s budget "
              f"(CPU {cpu * 1000:.0f} ms = {cpu / BUDGET_S:.2f} x)")


if __name__ == "__main__":
    main()
