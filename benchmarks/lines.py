"""Speed of the physics core against scikit-rf and against one bare complex tanh.

Run: ``python benchmarks/lines.py [--candidates N] [--freqs M] [--skrf-sample K]``

Prints, measured in this one run:

* the core's time for ``filters.evaluate_batch`` on N random single-stub and
  N random two-stub candidates (open stub, line, shorted stub) over M points,
  as it runs by default (a large batch is shared among the machine's cores,
  ``filters.set_threads``) and on one thread;
* scikit-rf's time to build and evaluate the same networks as ``Network``
  objects (``DefinedGammaZ0`` media, ``shunt_delay_open``/``_short``, ``line``,
  cascaded with ``**``) on a sample of K candidates, scaled up to N;
* the time of one bare numpy complex ``tanh`` over the same number of
  stub-points (candidates x frequencies x stubs), in the same chunk size;

and the two ratios: scikit-rf / core (target >= 50) and core / bare tanh
(target <= 3). Figures are recorded in docs/performance.md.
"""

from __future__ import annotations

import argparse
import time

import numpy as np

from notchkit import filters
from notchkit.cables import get_cable
from notchkit.filters import evaluate_batch

C0 = 299_792_458.0
CHUNK = 1 << 16  # points per bare-tanh chunk, the same order as the core's chunks


def best_of(fn, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return min(times)


def skrf_networks(kinds, lengths, cable, freq_hz):
    import skrf

    freq = skrf.Frequency.from_f(freq_hz, unit="hz")
    gam = cable.alpha_np_per_m(freq_hz) + 1j * 2 * np.pi * freq_hz / (C0 * cable.velocity_factor)
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=50.0, z0=cable.z0_ohm, gamma=gam)
    out = []
    for row in lengths:
        net = None
        for kind, x in zip(kinds, row, strict=True):
            if kind == "open":
                part = media.shunt_delay_open(x, unit="m")
            elif kind == "short":
                part = media.shunt_delay_short(x, unit="m")
            else:
                part = media.line(x, unit="m")
            net = part if net is None else net**part
        out.append((net.s[:, 1, 0], net.s[:, 0, 0]))
    return out


def bare_tanh(n_points: int, rng) -> None:
    z = rng.uniform(0, 0.05, CHUNK) + 1j * rng.uniform(0, 20, CHUNK)
    done = 0
    while done < n_points:
        n = min(CHUNK, n_points - done)
        np.tanh(z[:n])
        done += n


def main() -> None:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--candidates", type=int, default=10_000)
    ap.add_argument("--freqs", type=int, default=2_000)
    ap.add_argument("--skrf-sample", type=int, default=50)
    ap.add_argument("--repeat", type=int, default=3)
    ap.add_argument("--hardware", action="store_true",
                    help="also time the hardware model (UHF tees and plugs, notchkit.hardware.Model) "
                         "and the RLGC line on one thread, against the core")
    args = ap.parse_args()

    rng = np.random.default_rng(1)
    cable = get_cable("RG-213")
    f = np.linspace(1e6, 1e9, args.freqs)
    n, m, k = args.candidates, args.freqs, args.skrf_sample
    print(f"notchkit physics core benchmark: {n} candidates x {m} frequencies, cable {cable.name}")
    print(f"scikit-rf sample {k} candidates scaled to {n}; best of {args.repeat} runs of each\n")

    rows = []
    from notchkit.parallel import cores

    filters.set_threads(cores())  # the core's threads column: every core this process may use
    threads = filters.set_threads(cores())
    for label, kinds in (("single stub", ("open",)), ("two stubs", ("open", "line", "short"))):
        lengths = rng.uniform(0.05, 3.0, size=(n, len(kinds)))
        n_stubs = sum(kind != "line" for kind in kinds)
        core = best_of(lambda kinds=kinds, lengths=lengths: evaluate_batch(kinds, lengths, cable, f),
                       args.repeat)
        old = filters.set_threads(1)
        try:
            core1 = best_of(lambda kinds=kinds, lengths=lengths: evaluate_batch(kinds, lengths, cable, f),
                            args.repeat)
        finally:
            filters.set_threads(old)
        skrf = best_of(lambda kinds=kinds, lengths=lengths: skrf_networks(kinds, lengths[:k],
                                                                           cable, f),
                       args.repeat) * n / k
        tanh = best_of(lambda n_stubs=n_stubs: bare_tanh(n * m * n_stubs, rng), args.repeat)
        rows.append((label, kinds, n_stubs, core, skrf, tanh, core1))

    print(f"threads for a large batch: {threads}\n")
    print(f"{'topology':<12} {'core s':>9} {'skrf s (scaled)':>16} {'bare tanh s':>12} "
          f"{'skrf/core':>10} {'core/tanh':>10} {'1-thread s':>11} {'skrf/1-thr':>11} {'1-thr/tanh':>11}")
    for label, _kinds, _n_stubs, core, skrf, tanh, core1 in rows:
        print(f"{label:<12} {core:9.3f} {skrf:16.1f} {tanh:12.3f} {skrf / core:10.0f} "
              f"{core / tanh:10.2f} {core1:11.3f} {skrf / core1:11.0f} {core1 / tanh:11.2f}")
    print("\nbare tanh: one complex tanh per stub-point (candidates x frequencies x stubs), "
          "in chunks of 65536 points;\nit counts stubs only: the two-stub topology's line "
          "section is extra work for the core.")
    print("scikit-rf and the bare tanh run on one thread; so does the core in the 1-thread columns.")
    print("targets: skrf/core >= 50, core/tanh <= 3")
    for label, _kinds, _n, core, skrf, tanh, _core1 in rows:
        ok = skrf / core >= 50 and core / tanh <= 3
        print(f"  {label}: {'meets' if ok else 'MISSES'} the targets")
    if args.hardware:
        from notchkit.hardware import Hardware, Model

        print("\nhardware model, one thread (no target: it runs only where a site asks for hardware, "
              "a load or the RLGC line)")
        print(f"{'topology':<12} {'model':<14} {'s':>8} {'/ core 1-thr':>13} {'skrf/model':>11}")
        old = filters.set_threads(1)
        try:
            for label, kinds, _n, _core, skrf, _tanh, core1 in rows:
                lengths = rng.uniform(0.05, 3.0, size=(n, len(kinds)))
                for name, model in (("UHF hardware", Model(cable=cable, hardware=Hardware.of("uhf"))),
                                    ("RLGC line", Model(cable=cable, rlgc=True))):
                    t = best_of(lambda kinds=kinds, lengths=lengths, model=model:
                                evaluate_batch(kinds, lengths, model, f), args.repeat)
                    print(f"{label:<12} {name:<14} {t:8.3f} {t / core1:13.1f} {skrf / t:11.0f}")
        finally:
            filters.set_threads(old)


if __name__ == "__main__":
    main()
