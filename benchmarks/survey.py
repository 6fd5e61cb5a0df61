"""Survey speed and memory on large fictional sites, and how they grow.

Builds crowded fictional hill-top sites in Python (seeded): ``n`` transceivers
(mostly channelised VHF/UHF repeaters, a few HF stations tuning across a band),
surveys them with products to 5th order of two and three transmitters, and prints
for each size the wall and CPU time, the peak memory of the process, the number
of products evaluated and of threats kept; then the exponent of CPU time and of
the number of products between the two largest sizes, and the 200-transceiver
figures against the 30 s / 2 GB target. Not a timed test: run
``python benchmarks/survey.py`` (``--sizes 50 100 200``).
"""

from __future__ import annotations

import argparse
import math
import resource
import time

import numpy as np

from notchkit.site.model import Antenna, Band, Radio, Receive, Site, Transmit
from notchkit.threats import survey

TARGET_S = 30.0
TARGET_MB = 2048.0
SIZES = (50, 100, 200)


PLANS = (
    # (weight, tx band or channel range MHz, rx offset MHz or None for the same band,
    #  channel bandwidth kHz, power W, tunes across the band)
    (0.25, (150.0, 174.0), 4.5, 11.25, 100.0, False),   # VHF land-mobile repeaters
    (0.25, (450.0, 470.0), 5.0, 11.25, 100.0, False),   # UHF land-mobile repeaters
    (0.12, (145.1, 147.4), -0.6, 16.0, 50.0, False),    # 2 m amateur repeaters
    (0.12, (440.0, 450.0), 5.0, 16.0, 50.0, False),     # 70 cm amateur repeaters
    (0.10, (851.0, 869.0), -45.0, 12.5, 50.0, False),   # 800 MHz trunked
    (0.06, (152.0, 159.0), None, 11.25, 250.0, False),  # paging, transmit channel also monitored
    (0.04, (50.0, 54.0), None, 16.0, 50.0, False),      # 6 m channels
    (0.02, (7.0, 7.3), None, 2.7, 100.0, True),         # 40 m, tuning
    (0.02, (14.0, 14.35), None, 2.7, 100.0, True),      # 20 m, tuning
    (0.02, (3.5, 4.0), None, 2.7, 100.0, True),         # 80 m, tuning
)
"""A large shared hill top: mostly channelised VHF/UHF, a few HF stations tuning across a band."""


def build_site(n: int, seed: int = 7) -> Site:
    """n transceivers after :data:`PLANS`, spread over a 200 m hill top (fictional)."""
    rng = np.random.default_rng(seed)
    weights = np.array([p[0] for p in PLANS])
    radios = []
    for i in range(n):
        _, (lo, hi), offset, bw, power, tunes = PLANS[int(rng.choice(len(PLANS), p=weights / weights.sum()))]
        if tunes:
            tb = rb = Band(lo_mhz=lo, hi_mhz=hi)
        else:
            f = round(float(rng.uniform(lo, hi)), 4)
            tb = Band(lo_mhz=f, hi_mhz=f)
            rb = tb if offset is None else Band(lo_mhz=f + offset, hi_mhz=f + offset)
        ant = Antenna(
            x_m=float(rng.uniform(0, 200)),
            y_m=float(rng.uniform(0, 200)),
            height_m=float(rng.uniform(5, 60)),
            gain_dbi=float(rng.uniform(0, 8)),
        )
        t = Transmit(band=tb, power_w=power, bandwidth_khz=bw, noise_dbc_hz=-150.0)
        radios.append(Radio(name=f"TRX{i:03d}", tx=t, rx=Receive(band=rb, bandwidth_khz=bw), antenna=ant))
    return Site(name="Benchmark Ridge (fictional)", cable="RG-213", radios=tuple(radios))


def peak_mb() -> float:
    """Peak resident memory of this process so far, MB (Linux reports KiB)."""
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / 1024.0


def main(argv: list[str] | None = None) -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--sizes", type=int, nargs="+", default=list(SIZES),
                    help="transceiver counts, smallest first (default: 50 100 200)")  # fmt: skip
    args = ap.parse_args(argv)
    rows = []
    for n in sorted(args.sizes):
        s = build_site(n)
        t0, c0 = time.perf_counter(), time.process_time()
        result = survey(s)
        wall, cpu = time.perf_counter() - t0, time.process_time() - c0
        evaluated = len(result.threats) + sum(o + u for _, o, u in result.left_out)
        over = sum(1 for t in result.threats if t.excess_db > 0) + sum(o for _, o, _u in result.left_out)
        rows.append((n, wall, cpu, peak_mb(), evaluated, len(result.threats), over))
        print(f"{n:4d} transceivers: {wall:7.2f} s wall, {cpu:7.2f} s CPU, peak {rows[-1][3]:7.0f} MB; "
              f"{evaluated} threats evaluated ({over} over the limit), {len(result.threats)} kept as "
              f"objects, {len(result.filters)} filter locations")  # fmt: skip
    if len(rows) >= 2:
        (n1, _, c1, _, e1, *_), (n2, _, c2, _, e2, *_) = rows[-2], rows[-1]
        k = math.log(n2 / n1)
        print(f"exponent {n1} -> {n2}: CPU time ~ n^{math.log(c2 / c1) / k:.2f}, "
              f"threats evaluated ~ n^{math.log(max(e2, 1) / max(e1, 1)) / k:.2f}")
    n, wall, cpu, mb, *_ = rows[-1]
    print(f"{n} transceivers: wall {wall:.2f} s, ratio to the {TARGET_S:g} s target {wall / TARGET_S:.2f}; "
          f"CPU {cpu:.2f} s, ratio {cpu / TARGET_S:.2f}; peak {mb:.0f} MB, ratio to {TARGET_MB:g} MB "
          f"{mb / TARGET_MB:.2f}")  # fmt: skip


if __name__ == "__main__":
    main()
