"""Survey speed: 40 transmitters x 40 receivers with 2- and 3-transmitter IM products.

Builds a fictional crowded hill-top site in Python (seeded), surveys it, and
prints the time of the best of three runs and its ratio to the 2 s target.
Not a timed test: run ``python benchmarks/survey.py``.
"""

from __future__ import annotations

import time

import numpy as np

from notchkit.site.model import Antenna, Band, Radio, Receive, Site, Transmit
from notchkit.survey import survey

TARGET_S = 2.0
N = 40


def build_site(n: int = N, seed: int = 7) -> Site:
    """n transmitters and n receivers on HF, 6 m, 2 m and 70 cm, spread over a hill top."""
    rng = np.random.default_rng(seed)
    plans = [
        ((3.5, 4.0), 2.7, 100.0),
        ((7.0, 7.3), 2.7, 100.0),
        ((14.0, 14.35), 2.7, 100.0),
        ((50.0, 54.0), 16.0, 50.0),
        (None, 16.0, 50.0),  # 2 m channels
        (None, 16.0, 40.0),  # 70 cm channels
    ]
    radios = []
    for i in range(n):
        for role in ("tx", "rx"):
            plan_band, bw, power = plans[int(rng.integers(len(plans)))]
            if plan_band is None:
                edges = (144.0, 148.0) if power == 50.0 else (420.0, 450.0)
                lo = round(float(rng.uniform(*edges)), 3)
                b = Band(lo_mhz=lo, hi_mhz=lo)
            else:
                b = Band(lo_mhz=plan_band[0], hi_mhz=plan_band[1])
            ant = Antenna(
                x_m=float(rng.uniform(0, 200)),
                y_m=float(rng.uniform(0, 200)),
                height_m=float(rng.uniform(5, 40)),
                gain_dbi=float(rng.uniform(0, 6)),
            )
            if role == "tx":
                t = Transmit(band=b, power_w=power, bandwidth_khz=bw, noise_dbc_hz=-150.0)
                radios.append(Radio(name=f"TX{i:02d}", tx=t, antenna=ant))
            else:
                radios.append(Radio(name=f"RX{i:02d}", rx=Receive(band=b, bandwidth_khz=bw), antenna=ant))
    return Site(name="Benchmark Ridge (fictional)", cable="RG-213", radios=tuple(radios))


def main() -> None:
    s = build_site()
    times, cpu = [], []
    for _ in range(3):
        t0, c0 = time.perf_counter(), time.process_time()
        result = survey(s)
        times.append(time.perf_counter() - t0)
        cpu.append(time.process_time() - c0)
    best = min(times)
    by_mech: dict[str, int] = {}
    for t in result.threats:
        by_mech[t.mechanism] = by_mech.get(t.mechanism, 0) + 1
    print(f"survey: {N} transmitters x {N} receivers, {len(result.threats)} threats {by_mech}, "
          f"{len(result.filters)} filter locations")  # fmt: skip
    print(f"best of 3: {best:.3f} s wall; ratio to the {TARGET_S:g} s target: {best / TARGET_S:.2f}")
    # CPU time of this process: less sensitive to other jobs sharing the machine.
    print(f"best of 3: {min(cpu):.3f} s CPU; ratio to the target: {min(cpu) / TARGET_S:.2f}")


if __name__ == "__main__":
    main()
