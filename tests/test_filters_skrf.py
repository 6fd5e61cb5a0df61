"""Every filter equals the same network built independently with scikit-rf's own media.

The reference is scikit-rf 2.x: ``skrf.media.DefinedGammaZ0`` with the cable's
propagation constant and characteristic impedance (``z0``, the line's own
impedance) and the port reference ``z0_port`` = the system impedance, then
``shunt_delay_open`` / ``shunt_delay_short`` / ``line`` cascaded with ``**``.
Nothing from notchkit.lines or notchkit.filters is used to build the reference:
only the medium's ``alpha_np_per_m``, ``velocity_factor`` and ``z0_ohm``.
"""

from __future__ import annotations

import numpy as np
import pytest
import skrf
from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from notchkit.cables import Cable, library
from notchkit.filters import Filter, Line, Stub, evaluate, evaluate_batch, to_network

C0 = 299_792_458.0  # m/s, SI definition
FREQ_HZ = np.linspace(1e6, 1.2e9, 61)
SETTINGS = settings(max_examples=200, derandomize=True, deadline=None,
                    suppress_health_check=[HealthCheck.too_slow])


def skrf_reference(kinds, lengths_m, cable, freq_hz, z_system):
    """The filter built from scikit-rf media only."""
    freq = skrf.Frequency.from_f(freq_hz, unit="hz")
    alpha = cable.alpha_np_per_m(freq_hz)
    gam = alpha + 1j * 2 * np.pi * freq_hz / (C0 * cable.velocity_factor)
    media = skrf.media.DefinedGammaZ0(frequency=freq, z0_port=z_system, z0=cable.z0_ohm,
                                      gamma=gam)
    parts = []
    for kind, length in zip(kinds, lengths_m, strict=True):
        if kind == "open":
            parts.append(media.shunt_delay_open(length, unit="m"))
        elif kind == "short":
            parts.append(media.shunt_delay_short(length, unit="m"))
        else:
            parts.append(media.line(length, unit="m"))
    net = parts[0]
    for p in parts[1:]:
        net = net**p
    return net.s


def build(kinds, lengths_m, cable):
    elements = tuple(
        Line(length_m=x) if k == "line" else Stub(termination=k, length_m=x)
        for k, x in zip(kinds, lengths_m, strict=True)
    )
    return Filter(elements=elements, cable=cable)


CABLES = list(library()) + [
    Cable(name="lossless 75", z0_ohm=75.0, velocity_factor=0.83),
    Cable.from_table(name="lossy 93", z0_ohm=93.0, velocity_factor=0.84,
                     loss_table=((10, 3.0), (100, 11.0), (1000, 40.0))),
]


@st.composite
def topologies(draw):
    n = draw(st.integers(min_value=1, max_value=5))
    kinds = draw(st.lists(st.sampled_from(["open", "short", "line"]), min_size=n, max_size=n))
    if "line" in kinds and all(k == "line" for k in kinds):
        kinds[0] = "open"
    if not any(k != "line" for k in kinds):
        kinds.append("short")
    lengths = draw(st.lists(st.floats(min_value=0.01, max_value=4.0), min_size=len(kinds),
                            max_size=len(kinds)))
    cable = draw(st.sampled_from(CABLES))
    z_system = draw(st.sampled_from([50.0, 75.0]))
    return tuple(kinds), tuple(lengths), cable, z_system


def assert_close(actual, expected):
    # 1e-9 relative to the size of S (|S| <= 1 for these passive networks).
    np.testing.assert_allclose(actual, expected, rtol=0, atol=1e-9)


@SETTINGS
@given(topologies())
def test_evaluate_equals_skrf(case):
    kinds, lengths, cable, z_system = case
    ref = skrf_reference(kinds, lengths, cable, FREQ_HZ, z_system)
    s = evaluate(build(kinds, lengths, cable), FREQ_HZ, z_system)
    assert_close(s, ref)


# The batched core has two ways to tanh(gl) and e^{-gl} (notchkit.filters._Sweep):
# a factored phase on grids made of long evenly spaced runs, a tan/expm1 form on
# others. Each grid below takes one of them; both must equal scikit-rf.
GRIDS = {
    "even, 61 points (direct form)": FREQ_HZ,
    "even, 401 points (factored phase)": np.linspace(1e6, 1.2e9, 401),
    "two bands, 100 + 257 points (factored, two runs)": np.concatenate(
        [np.linspace(1.8e6, 30e6, 100), np.linspace(140e6, 450e6, 257)]),
    "log-spaced, 200 points (direct form)": np.geomspace(1e6, 1.2e9, 200),
}


@SETTINGS
@given(topologies(), st.sampled_from(sorted(GRIDS)))
def test_evaluate_batch_equals_skrf(case, grid):
    kinds, lengths, cable, z_system = case
    f = GRIDS[grid]
    ref = skrf_reference(kinds, lengths, cable, f, z_system)
    s21, s11 = evaluate_batch(kinds, np.array([lengths]), cable, f, z_system)
    assert_close(s21[0], ref[:, 1, 0])
    assert_close(s11[0], ref[:, 0, 0])


def test_each_grid_takes_the_path_its_name_says():
    from notchkit.filters import _even_runs  # white-box: which path each grid takes

    for name, f in GRIDS.items():
        runs = _even_runs(2 * np.pi * f / (C0 * 0.66))
        if "factored" in name:
            assert runs is not None and len(runs) == (2 if "two runs" in name else 1), name
        else:
            assert runs is None, name


def test_threads_give_the_same_numbers_as_one_thread():
    from notchkit import filters

    rng = np.random.default_rng(7)
    cable = library()[0]
    kinds = ("open", "line", "short")
    lengths = rng.uniform(0.05, 3.0, size=(400, 3))
    f = np.linspace(1e6, 1e9, 2000)  # 800,000 points: above the threading threshold
    assert lengths.shape[0] * f.size >= filters._THREAD_POINTS
    old = filters.set_threads(1)
    try:
        one = evaluate_batch(kinds, lengths, cable, f)
        filters.set_threads(2)
        two = evaluate_batch(kinds, lengths, cable, f)
    finally:
        filters.set_threads(old)
    np.testing.assert_array_equal(one[0], two[0])
    np.testing.assert_array_equal(one[1], two[1])
    for i in (0, 199, 200, 399):  # rows either side of the split between threads
        ref = skrf_reference(kinds, lengths[i], cable, f, 50.0)
        assert_close(two[0][i], ref[:, 1, 0])


@pytest.mark.parametrize("grid", sorted(GRIDS))
def test_candidates_sharing_lengths_equal_skrf_row_by_row(grid, monkeypatch):
    # A search's candidates share most lengths (one element moves at a time): the
    # batch then computes each element once per distinct length and copies it to
    # the rows that share it (notchkit.filters._per_length). Every row must still be
    # its own filter, as scikit-rf builds it, and equal to that row evaluated alone.
    rng = np.random.default_rng(11)
    cable = library()[0]
    kinds = ("open", "line", "short", "open", "line", "short")
    centre = rng.uniform(0.05, 2.5, size=len(kinds))
    rows = np.repeat(centre[None, :], 2 * len(kinds) + 1, axis=0)
    for j in range(len(kinds)):  # one element up, one down, the centre last
        rows[2 * j, j] *= 1.07
        rows[2 * j + 1, j] *= 0.93
    f = GRIDS[grid]
    from notchkit import filters

    monkeypatch.setattr(filters, "_DISTINCT_POINTS", 1)  # white-box: small batches share too
    s21, s11 = evaluate_batch(kinds, rows, cable, f)
    for i, row in enumerate(rows):
        ref = skrf_reference(kinds, row, cable, f, 50.0)
        assert_close(s21[i], ref[:, 1, 0])
        assert_close(s11[i], ref[:, 0, 0])
        alone = evaluate_batch(kinds, row[None, :], cable, f)
        np.testing.assert_allclose(s21[i], alone[0][0], rtol=1e-12, atol=1e-15)
        np.testing.assert_allclose(s11[i], alone[1][0], rtol=1e-12, atol=1e-15)


def test_batch_of_many_candidates_equals_skrf_one_by_one():
    # Many candidates in one call (crosses the internal chunking) against skrf per row.
    rng = np.random.default_rng(2024)
    cable = library()[0]
    kinds = ("open", "line", "short", "open")
    lengths = rng.uniform(0.02, 3.0, size=(40, len(kinds)))
    f = np.linspace(2e6, 900e6, 1800)  # 40 x 1800 points > one chunk
    s21, s11 = evaluate_batch(kinds, lengths, cable, f)
    for i in range(0, 40, 7):
        ref = skrf_reference(kinds, lengths[i], cable, f, 50.0)
        assert_close(s21[i], ref[:, 1, 0])
        assert_close(s11[i], ref[:, 0, 0])


def test_to_network_is_an_skrf_network_with_the_same_s():
    cable = library()[1]
    kinds, lengths = ("short", "line", "open"), (0.7, 0.25, 1.1)
    net = to_network(build(kinds, lengths, cable), FREQ_HZ)
    assert isinstance(net, skrf.Network)
    np.testing.assert_allclose(net.f, FREQ_HZ)
    np.testing.assert_allclose(net.z0, 50.0)
    assert_close(net.s, skrf_reference(kinds, lengths, cable, FREQ_HZ, 50.0))


@pytest.mark.parametrize("kind", ["open", "short"])
def test_single_stub_equals_skrf_at_resonance(kind):
    # The hardest points numerically: the stub's own resonances (tanh near 0 or pole).
    cable = library()[0]
    f0 = 146e6
    q = C0 * cable.velocity_factor / (4 * f0)
    f = np.array([f0, 2 * f0, 3 * f0, 4 * f0])
    ref = skrf_reference((kind,), (q,), cable, f, 50.0)
    s21, s11 = evaluate_batch((kind,), [[q]], cable, f)
    assert_close(s21[0], ref[:, 1, 0])
    assert_close(s11[0], ref[:, 0, 0])


def test_touchstone_file_reads_back_in_skrf(tmp_path):
    # scikit-rf's own Touchstone reader is the reference for the file format.
    from notchkit.filters import write_touchstone

    cable = library()[0]
    kinds, lengths = ("short", "line", "open"), (0.5, 0.2, 0.33)
    path = write_touchstone(build(kinds, lengths, cable), FREQ_HZ, tmp_path / "stub.s2p",
                            comment="fictional test filter")
    net = skrf.Network(str(path))
    np.testing.assert_allclose(net.f, FREQ_HZ)
    np.testing.assert_allclose(net.z0, 50.0)
    assert_close(net.s, skrf_reference(kinds, lengths, cable, FREQ_HZ, 50.0))
    assert path.read_text().startswith("! fictional test filter\n")


def test_abcd_to_s_equals_skrf_a2s_for_complex_references():
    # scikit-rf's skrf.network.a2s (power waves, complex port impedances) is the
    # reference for notchkit.lines.abcd_to_s (Frickey's table I).
    from skrf.network import a2s

    from notchkit import lines

    rng = np.random.default_rng(5)
    n = 50
    abcd = rng.normal(size=(n, 2, 2)) + 1j * rng.normal(size=(n, 2, 2))
    zs = rng.uniform(10, 100, n) + 1j * rng.uniform(-40, 40, n)
    zl = rng.uniform(10, 100, n) + 1j * rng.uniform(-40, 40, n)
    ours = lines.abcd_to_s(abcd, zs, zl)
    ref = a2s(abcd, np.stack([zs, zl], axis=-1))
    np.testing.assert_allclose(ours, ref, rtol=1e-12, atol=1e-12)
