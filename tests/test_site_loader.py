"""The site loader: good files load into value objects, every bad one is reported exactly.

Positions are 1-based line:column as PyYAML's marks give them (0-based, +1).
Outside facts used: YAML 1.1 (the version PyYAML implements) reads
yes/no/on/off as booleans and .nan/.inf as floats (YAML 1.1 spec, "bool" and
"float" type repository entries); the international foot is exactly 0.3048 m
and the inch exactly 25.4 mm (international yard and pound agreement, 1959;
NIST SP 811 appendix B).
"""

from __future__ import annotations

import dataclasses
import time
from pathlib import Path

import pytest

from notchkit.errors import SiteError
from notchkit.site import load_site
from notchkit.site import loader as L
from notchkit.site.model import (
    DEFAULT_ANTENNA_HEIGHT_M,
    DEFAULT_CHANNEL_BANDWIDTH_KHZ,
    DEFAULT_MAX_HARMONIC,
    Band,
    Site,
)

SITES = Path(__file__).resolve().parent.parent / "sites"

GOOD = """\
site: Test Knoll
cable: RG-213
transmitters:
  - name: vhf-net
    freq_mhz: 146.52
    power_w: 50
receivers:
  - name: uhf-rx
    freq_mhz: 446.0
"""


@pytest.fixture
def write(tmp_path, monkeypatch):
    """Write text (or bytes) to site.yaml in a temporary folder and return the relative path."""
    monkeypatch.chdir(tmp_path)

    def _write(content: str | bytes, name: str = "site.yaml") -> str:
        p = tmp_path / name
        if isinstance(content, bytes):
            p.write_bytes(content)
        else:
            p.write_text(content, encoding="utf-8")
        return name

    return _write


def problems(path: str) -> list[str]:
    with pytest.raises(SiteError) as info:
        load_site(path)
    return info.value.lines()


# ---------------------------------------------------------------- good files


def test_minimal_file_loads_with_model_defaults(write):
    site = load_site(write(GOOD))
    assert isinstance(site, Site)
    assert site.name == "Test Knoll"
    assert site.path == "site.yaml"
    tx, rx = site.radios
    assert tx.tx.band == Band(lo_mhz=146.52, hi_mhz=146.52) and tx.rx is None
    assert tx.tx.power_w == 50.0
    assert rx.rx.band == Band(lo_mhz=446.0, hi_mhz=446.0) and rx.tx is None
    assert tx.tx.bandwidth_khz == DEFAULT_CHANNEL_BANDWIDTH_KHZ
    assert tx.antenna.height_m == DEFAULT_ANTENNA_HEIGHT_M
    assert site.max_harmonic == DEFAULT_MAX_HARMONIC
    assert site.transmitters == (tx,) and site.receivers == (rx,)


def test_values_are_frozen(write):
    site = load_site(write(GOOD))
    with pytest.raises(dataclasses.FrozenInstanceError):
        site.name = "x"  # type: ignore[misc]
    with pytest.raises(dataclasses.FrozenInstanceError):
        site.radios[0].tx.power_w = 1.0  # type: ignore[misc]
    assert isinstance(site.radios, tuple)


def test_cable_names_are_found_ignoring_case_and_spelt_as_in_the_library(write):
    text = GOOD.replace("cable: RG-213", "cable: rg213").replace(
        "    power_w: 50\n",
        "    power_w: 50\n    feedline: {cable: Rg-58/U, length_m: 10}\n    stub_cable: rg 213\n",
    )
    site = load_site(write(text))
    assert site.cable == "RG-213"
    assert site.radios[0].feedline.cable == "RG-58"
    assert site.radios[0].stub_cable == "RG-213"


def test_feedline_cable_defaults_to_the_site_cable(write):
    text = GOOD.replace("    power_w: 50\n", "    power_w: 50\n    feedline: {length_m: 12}\n")
    assert load_site(write(text)).radios[0].feedline.cable == "RG-213"


def test_lengths_in_feet_and_inches(write):
    # 1 ft = 0.3048 m and 1 in = 0.0254 m exactly (1959 international yard; NIST SP 811).
    text = GOOD.replace(
        "    power_w: 50\n",
        '    power_w: 50\n    antenna: {x_m: "-150 ft", y_m: "40 cm", height_m: "3 1/2 in"}\n'
        '    feedline: {length_m: "160 ft"}\n',
    ) + 'allowances: {tee_allowance_m: "1.25 in", cut_tolerance_mm: "1/16 in"}\n'
    site = load_site(write(text))
    ant = site.radios[0].antenna
    assert ant.x_m == pytest.approx(-150 * 0.3048, rel=1e-15)
    assert ant.y_m == pytest.approx(0.40, rel=1e-15)
    assert ant.height_m == pytest.approx(3.5 * 0.0254, rel=1e-15)
    assert site.radios[0].feedline.length_m == pytest.approx(48.768, rel=1e-15)
    assert site.allowances.tee_allowance_m == pytest.approx(0.03175, rel=1e-12)
    assert site.allowances.cut_tolerance_mm == pytest.approx(1.5875, rel=1e-12)


def test_transceiver_shares_frequency_and_bandwidth_unless_a_part_gives_its_own(write):
    text = GOOD + (
        "transceivers:\n"
        "  - name: simplex\n    freq_mhz: 146.55\n    bandwidth_khz: 11.25\n    tx: {power_w: 5}\n"
        "  - name: rpt\n    tx: {freq_mhz: 146.94, power_w: 100}\n"
        "    rx: {freq_mhz: 146.34, bandwidth_khz: 12}\n"
    )
    site = load_site(write(text))
    simplex, rpt = site.radio("simplex"), site.radio("rpt")
    assert simplex.tx.band == simplex.rx.band == Band(lo_mhz=146.55, hi_mhz=146.55)
    assert simplex.tx.bandwidth_khz == simplex.rx.bandwidth_khz == 11.25
    assert rpt.tx.band.lo_mhz == 146.94 and rpt.rx.band.lo_mhz == 146.34
    assert rpt.rx.bandwidth_khz == 12 and rpt.tx.bandwidth_khz == DEFAULT_CHANNEL_BANDWIDTH_KHZ
    assert rpt in site.transmitters and rpt in site.receivers


def test_plain_exponent_is_a_number(write):
    # YAML 1.1 needs a dot and a signed exponent for a float; 1e2 is plain text there,
    # and the loader reads such plain text as the number it spells.
    site = load_site(write(GOOD.replace("power_w: 50", "power_w: 1e2")))
    assert site.radios[0].tx.power_w == 100.0


def test_couplings_and_site_cables(write):
    text = GOOD.replace("cable: RG-213", "cable: Foam-Line") + (
        "cables:\n  - name: foam-line\n    z0_ohm: 50\n    velocity_factor: 0.85\n"
        "    loss_table: [[100, 4.0], [400, 8.5]]\n"
        "couplings:\n  - between: [vhf-net, UHF-RX]\n    isolation_db: 40\n    freq_mhz: 146.5\n"
    )
    site = load_site(write(text))
    assert site.cable == "foam-line"
    assert site.cables[0].loss_table == ((100.0, 4.0), (400.0, 8.5))
    assert site.coupling("uhf-rx", "vhf-net") == 40.0
    assert site.couplings[0].freq_mhz == 146.5


@pytest.mark.parametrize("path", sorted(SITES.glob("*.yaml")), ids=lambda p: p.name)
def test_every_example_site_loads(path):
    site = load_site(path)
    assert 2 <= len(site.radios) <= 12
    assert site.transmitters, "every example has at least one transmitter"
    names = [r.name for r in site.radios]
    assert len(set(names)) == len(names)


def test_the_three_required_examples_exist():
    names = {p.name for p in SITES.glob("*.yaml")}
    assert {"ridge-eoc.yaml", "field-day-hf.yaml", "hilltop-repeaters.yaml"} <= names
    sizes = {p.name: len(load_site(p).radios) for p in SITES.glob("*.yaml")}
    assert sizes["hilltop-repeaters.yaml"] == max(sizes.values())
    hf = load_site(SITES / "field-day-hf.yaml")
    # common practice: 40/20/15/10 m amateur bands (ITU Region 2 allocations)
    assert {(r.tx.band.lo_mhz, r.tx.band.hi_mhz) for r in hf.transmitters} >= {
        (7.0, 7.3),
        (14.0, 14.35),
        (21.0, 21.45),
        (28.0, 29.7),
    }
    hf_tx = [r.tx for r in hf.transmitters if r.tx.band.hi_mhz < 30.0]
    assert len(hf_tx) >= 2 and all(100 <= t.power_w <= 1000 for t in hf_tx)
    hill = load_site(SITES / "hilltop-repeaters.yaml")
    split = [r for r in hill.radios if r.tx and r.rx and r.tx.band != r.rx.band]
    assert len(split) >= 4


# ---------------------------------------------------------------- file-level problems


def test_missing_file(write):
    assert problems("nope.yaml") == [
        "nope.yaml:0:0: no such file (give the path of an existing .yaml site file)"
    ]


def test_directory(write, tmp_path):
    (tmp_path / "sites").mkdir()
    assert problems("sites") == [
        "sites:0:0: is a directory, not a site file (give the path of a .yaml file)"
    ]


def test_empty_file_and_comment_only_file(write):
    msg = (
        "site.yaml:0:0: the file is empty (allowed: a mapping with site:, cable: and "
        "transmitters:/receivers:/transceivers: lists)"
    )
    assert problems(write("")) == [msg]
    assert problems(write("# nothing yet\n")) == [msg]


def test_not_a_mapping(write):
    assert problems(write("- a\n- b\n")) == [
        "site.yaml:1:1: the file must be a mapping of keys, got a list (allowed keys: site, cable, "
        "transmitters, receivers, transceivers, couplings, limits, allowances, cables, max_harmonic, "
            "max_im_order, scenarios, near_field_isolation_db, hardware, depth_ceiling_db)"
    ]


def test_not_utf8_gives_the_position_of_the_bad_byte(write):
    # 0xE9 is Latin-1 e-acute; in UTF-8 it starts a 3-byte sequence that "\n" cannot continue.
    path = write(b"site: x\nreceivers:\n  - name: caf\xe9\n")
    assert problems(path) == [
        "site.yaml:3:14: byte 0xe9 at offset 32 is not UTF-8 text (save the file as UTF-8)"
    ]


def test_utf8_bom_is_accepted(write):
    assert load_site(write(b"\xef\xbb\xbf" + GOOD.encode())).name == "Test Knoll"


def test_file_over_the_size_cap_is_refused_before_parsing(write):
    path = write("site: x\n" + "#" * L.MAX_FILE_BYTES)
    t0 = time.perf_counter()
    lines = problems(path)
    assert time.perf_counter() - t0 < 1.0
    assert lines == [
        f"site.yaml:0:0: file is {L.MAX_FILE_BYTES + 8} bytes, larger than the 2097152 byte "
        "limit (a site file is a few kB; is this the right file?)"
    ]


# ---------------------------------------------------------------- YAML problems


def test_yaml_syntax_error_position_from_pyyaml(write):
    assert problems(write("site: x\ntransmitters: [1, 2\n")) == [
        "site.yaml:3:1: YAML syntax: expected ',' or ']', but got '<stream end>' (while parsing a "
        "flow sequence from line 2; check the indentation, quotes and brackets)"
    ]


def test_tab_indentation(write):
    assert problems(write("site: x\ntransmitters:\n  - name: a\n\tfreq_mhz: 1\n")) == [
        "site.yaml:4:1: YAML syntax: found character '\\t' that cannot start any token (while "
        "scanning for the next token; indent with spaces, never tabs)"
    ]


def test_two_documents(write):
    assert problems(write("site: a\n---\nsite: b\n")) == [
        "site.yaml:2:1: YAML syntax: a second document starts here (one site per file; split "
        "the file at the '---')"
    ]


def test_control_character(write):
    assert problems(write("site: a\x01b\n")) == [
        "site.yaml:1:8: control character U+0001 is not allowed in YAML (remove it; only "
        "printable text, tabs and newlines)"
    ]


def test_python_tag_is_refused_with_its_position_and_nothing_is_built(write, tmp_path):
    marker = tmp_path / "touched"
    text = GOOD.replace(
        "freq_mhz: 146.52", f"freq_mhz: !!python/object/apply:os.system ['touch {marker}']"
    )
    assert problems(write(text)) == [
        "site.yaml:5:15: transmitters[0].freq_mhz: tag !!python/object/apply:os.system is not "
        "allowed (plain YAML only: text, numbers, lists and mappings)"
    ]
    assert not marker.exists()


def test_merge_key_is_refused(write):
    text = "base: &b {power_w: 5}\n" + GOOD.replace("    power_w: 50\n", "    <<: *b\n")
    lines = problems(write(text))
    assert (
        "site.yaml:7:5: transmitters[0]: merge keys '<<' are not supported (write the keys out in full)"
        in lines
    )


def test_alias_bomb_is_refused_quickly(write):
    # The classic "billion laughs" shape: 9 levels of 9 aliases = 9**9 values when expanded.
    lines = ["site: bomb", 'a: &a ["lol","lol","lol","lol","lol","lol","lol","lol","lol"]']
    prev = "a"
    for name in "bcdefghi":
        lines.append(f"{name}: &{name} [" + ",".join(["*" + prev] * 9) + "]")
        prev = name
    lines.append("transmitters: *i")
    t0 = time.perf_counter()
    got = problems(write("\n".join(lines) + "\n"))
    assert time.perf_counter() - t0 < 5.0
    assert got == [
        "site.yaml:2:26: more than 20000 values, counting each repeat through an alias (a site "
        "file has a few hundred; use fewer or no aliases)"
    ]


def test_self_referring_alias_is_refused(write):
    assert problems(write("site: x\ntransmitters: &t [*t]\n")) == [
        "site.yaml:2:15: nested deeper than 32 levels counting through aliases (an alias may "
        "refer to itself; a site file nests at most 6)"
    ]


def test_deep_nesting_is_refused_without_recursion_error(write):
    depth = 5000
    got = problems(write("a: " + "[" * depth + "]" * depth + "\n"))
    # the 32nd node is the root mapping, the value of a:, and 30 opening brackets: column 4 + 30
    assert got == ["site.yaml:1:35: nested deeper than 32 levels (a site file nests at most 6)"]


# ---------------------------------------------------------------- field problems


def one(write, old: str, new: str) -> list[str]:
    text = GOOD.replace(old, new)
    assert text != GOOD
    return problems(write(text))


def test_unknown_key_with_did_you_mean(write):
    assert one(write, "power_w: 50", "power_w: 50\n    powr_w: 5") == [
        "site.yaml:7:5: transmitters[0].powr_w: unknown key (did you mean 'power_w'?)"
    ]


def test_unknown_key_without_a_close_match_lists_the_allowed_keys(write):
    assert one(write, "freq_mhz: 446.0", "freq_mhz: 446.0\n    colour: red") == [
        "site.yaml:10:5: receivers[0].colour: unknown key (allowed: name, freq_mhz, band_mhz, "
        "bandwidth_khz, sensitivity_dbm, blocking_dbm, noise_figure_db, iip2_dbm, iip3_dbm, receiver_class, "
        "selectivity, band_noise_dbm, antenna, feedline, stub_cable, installed, load)"
    ]


def test_duplicate_key(write):
    assert one(write, "power_w: 50", "power_w: 50\n    power_w: 60") == [
        "site.yaml:7:5: transmitters[0].power_w: duplicate key (first given at line 6; give each "
        "key once)"
    ]


def test_missing_required_keys(write):
    assert problems(write("cable: RG-213\ntransmitters:\n  - name: a\n")) == [
        "site.yaml:1:1: site: missing (required: name of the site)",
        "site.yaml:3:5: transmitters[0].freq_mhz: missing (required: freq_mhz in MHz, or "
        "band_mhz: [lo, hi] for a radio that tunes across a band)",
        "site.yaml:3:5: transmitters[0].power_w: missing (required: carrier power in watts)",
    ]


def test_no_radios(write):
    assert problems(write("site: x\n")) == [
        "site.yaml:1:1: no radios (allowed: at least one entry under transmitters, receivers or "
        "transceivers)"
    ]


def test_quoted_number_is_text(write):
    assert one(write, "freq_mhz: 146.52", 'freq_mhz: "146.52"') == [
        "site.yaml:5:15: transmitters[0].freq_mhz: '146.52' is text, not a number (allowed: a "
        "number from 0.1 to 6000 MHz)"
    ]


def test_list_where_a_number_belongs(write):
    assert one(write, "power_w: 50", "power_w: [50]") == [
        "site.yaml:6:14: transmitters[0].power_w: expected a number, got a list (allowed: a "
        "number greater than 0 and at most 100000 W)"
    ]


@pytest.mark.parametrize("word", ["yes", "no", "on", "off", "true", "False"])
def test_yaml_booleans_are_not_numbers(write, word):
    # YAML 1.1 bool type: y|Y|yes|Yes|YES|n|N|no|...|true|...|false|...|on|...|off|...
    assert one(write, "power_w: 50", f"power_w: {word}") == [
        f"site.yaml:6:14: transmitters[0].power_w: {word} is a boolean, not a number (allowed: a "
        "number greater than 0 and at most 100000 W; YAML reads yes/no/on/off/true/false as booleans)"
    ]


@pytest.mark.parametrize("word", [".nan", ".NaN", ".inf", "-.inf", "nan", "inf"])
def test_non_finite_numbers(write, word):
    assert one(write, "freq_mhz: 146.52", f"freq_mhz: {word}") == [
        f"site.yaml:5:15: transmitters[0].freq_mhz: {word} is not a finite number (allowed: a "
        "number from 0.1 to 6000 MHz)"
    ]


@pytest.mark.parametrize("value", ["-146.52", "0", "0.0"])
def test_zero_and_negative_frequency(write, value):
    assert one(write, "freq_mhz: 146.52", f"freq_mhz: {value}") == [
        f"site.yaml:5:15: transmitters[0].freq_mhz: {value} must be greater than 0 (allowed: a "
        "number from 0.1 to 6000 MHz)"
    ]


@pytest.mark.parametrize("value", ["0", "-5"])
def test_zero_and_negative_power(write, value):
    assert one(write, "power_w: 50", f"power_w: {value}") == [
        f"site.yaml:6:14: transmitters[0].power_w: {value} must be greater than 0 (allowed: a "
        "number greater than 0 and at most 100000 W)"
    ]


def test_absurd_frequency(write):
    assert one(write, "freq_mhz: 446.0", "freq_mhz: 1e12") == [
        "site.yaml:9:15: receivers[0].freq_mhz: 1e12 is too high (allowed: a number from 0.1 to "
        "6000 MHz)"
    ]
    assert one(write, "freq_mhz: 446.0", "freq_mhz: 0.05") == [
        "site.yaml:9:15: receivers[0].freq_mhz: 0.05 is too low (allowed: a number from 0.1 to "
        "6000 MHz)"
    ]


def test_frequency_given_in_hz_gets_a_hint(write):
    assert one(write, "freq_mhz: 146.52", "freq_mhz: 146520000") == [
        "site.yaml:5:15: transmitters[0].freq_mhz: 146520000 is too high (allowed: a number from "
        "0.1 to 6000 MHz; 146520000 looks like Hz: give MHz, e.g. 146.52)"
    ]


def test_band_low_edge_not_below_high_edge(write):
    for band in ("[148.0, 144.0]", "[146.0, 146.0]"):
        lo, hi = band.strip("[]").split(", ")
        assert one(write, "freq_mhz: 146.52", f"band_mhz: {band}") == [
            f"site.yaml:5:15: transmitters[0].band_mhz: [{float(lo):g}, {float(hi):g}]: the low "
            "edge must be below the high edge (allowed: [lo, hi] with lo < hi; one channel: use "
            "freq_mhz)"
        ]


def test_band_with_three_values_and_frequency_and_band_both(write):
    assert one(write, "freq_mhz: 146.52", "band_mhz: [144, 146, 148]") == [
        "site.yaml:5:15: transmitters[0].band_mhz: expected [lo, hi] in MHz, got 3 values "
        "(allowed: two frequencies, e.g. [144.0, 148.0])"
    ]
    assert one(write, "freq_mhz: 146.52", "freq_mhz: 146.52\n    band_mhz: [144, 148]") == [
        "site.yaml:6:15: transmitters[0].band_mhz: give freq_mhz or band_mhz, not both"
    ]


def test_duplicate_radio_names_across_lists(write):
    assert one(write, "name: uhf-rx", "name: VHF-Net") == [
        "site.yaml:8:11: receivers[0].name: duplicate radio name 'VHF-Net' (first at line 4; names "
        "must differ, ignoring case, across transmitters, receivers and transceivers)"
    ]


def test_bad_radio_name(write):
    assert one(write, "name: uhf-rx", "name: uhf rx/1") == [
        "site.yaml:8:11: receivers[0].name: 'uhf rx/1' is not a valid name (allowed: 1-40 letters, "
        "digits, '-', '_' or '.', starting with a letter or digit)"
    ]


def test_number_where_text_belongs(write):
    assert one(write, "site: Test Knoll", "site: 12") == [
        "site.yaml:1:7: site: 12 is a number, not text (put it in quotes: '12')"
    ]


def test_unknown_cable_with_did_you_mean(write):
    assert one(write, "cable: RG-213", "cable: RG-2l3") == [
        "site.yaml:2:8: cable: unknown cable 'RG-2l3' (did you mean 'RG-213'?; allowed: a cable "
        "from 'notchkit cables' or one defined under cables:)"
    ]


def test_unknown_radio_in_a_coupling(write):
    text = GOOD + "couplings:\n  - between: [vhf-nett, uhf-rx]\n    isolation_db: 40\n"
    assert problems(write(text)) == [
        "site.yaml:11:15: couplings[0].between[0]: no radio named 'vhf-nett' (did you mean "
        "'vhf-net'?; allowed: a name given under transmitters, receivers or transceivers)"
    ]


def test_transceiver_without_any_frequency(write):
    text = GOOD + "transceivers:\n  - name: rig\n    tx: {power_w: 5}\n"
    assert problems(write(text)) == [
        "site.yaml:11:5: transceivers[0].rx: missing (required: an rx part with freq_mhz or "
        "band_mhz, or freq_mhz on the transceiver shared by tx and rx)",
        "site.yaml:12:9: transceivers[0].tx.freq_mhz: missing (required: freq_mhz in MHz, or "
        "band_mhz: [lo, hi] for a radio that tunes across a band here or on the transceiver)",
    ]


def test_every_problem_in_one_run_in_file_order(write):
    text = (
        "site: x\ncable: nosuch\ntransmitters:\n  - name: a\n    freq_mhz: -1\n    power_w: yes\n"
        "  - name: b\n    freq_mhz: .nan\n    power_w: 1\n    colour: red\n"
    )
    got = problems(write(text))
    assert [line.split(": ")[0] for line in got] == [
        "site.yaml:2:8",
        "site.yaml:5:15",
        "site.yaml:6:14",
        "site.yaml:8:15",
        "site.yaml:10:5",
    ]


def test_problem_cap(write):
    rows = "".join(f"  - name: r{i}\n    freq_mhz: -1\n" for i in range(L.MAX_PROBLEMS + 7))
    got = problems(write("site: x\nreceivers:\n" + rows))
    assert len(got) == L.MAX_PROBLEMS + 1
    assert got[-1] == "site.yaml:0:0: 7 more problems not shown (fix these and run again)"
    assert got[0].startswith("site.yaml:4:15: receivers[0].freq_mhz: -1 must be greater than 0")


@pytest.mark.parametrize("name", ["hilltop-repeaters.yaml", "field-day-hf.yaml"])
def test_libyaml_and_pure_python_paths_give_the_same_site(name, monkeypatch):
    fast = load_site(SITES / name)
    monkeypatch.setattr(L.yaml, "__with_libyaml__", False)
    assert load_site(SITES / name) == fast


def test_libyaml_and_pure_python_paths_give_the_same_problems(write, monkeypatch):
    text = GOOD.replace("power_w: 50", 'power_w: "50"').replace("freq_mhz: 446.0", "freq_mhz: 1e12")
    path = write(text)
    fast = problems(path)
    monkeypatch.setattr(L.yaml, "__with_libyaml__", False)
    assert problems(path) == fast
    assert len(fast) == 2


def test_a_key_in_the_wrong_place_says_where_it_belongs(write):
    text = GOOD + "transceivers:\n  - name: rig\n    freq_mhz: 146.55\n    power_w: 5\n    tx: {}\n"
    text += "max_swr: 1.3\n"
    assert problems(write(text)) == [
        "site.yaml:13:5: transceivers[0].power_w: unknown key (put it under tx:)",
        "site.yaml:14:9: transceivers[0].tx.power_w: missing (required: carrier power in watts)",
        "site.yaml:15:1: max_swr: unknown key (put it inside limits:)",
    ]
    assert one(write, "freq_mhz: 446.0", "freq_mhz: 446.0\n    power_w: 5") == [
        "site.yaml:10:5: receivers[0].power_w: unknown key (a receiver does not transmit; list a radio "
        "that does both under transceivers:)"
    ]


@pytest.mark.parametrize("libyaml", [True, False], ids=["libyaml", "pure-python"])
def test_a_file_of_too_many_values_is_refused_quickly(write, monkeypatch, libyaml):
    monkeypatch.setattr(L.yaml, "__with_libyaml__", libyaml and L.yaml.__with_libyaml__)
    path = write("site: x\ntransmitters: [" + "1," * (L.MAX_NODES + 5000) + "]\n")
    t0 = time.perf_counter()
    got = problems(path)
    assert time.perf_counter() - t0 < 10.0
    # nodes 1-5 are the root mapping, 'site', 'x', 'transmitters' and the list; list item k
    # (from 0) is node 6 + k and starts at column 16 + 2k of line 2
    k = L.MAX_NODES + 1 - 6
    assert got == [
        f"site.yaml:2:{16 + 2 * k}: more than 20000 values in the file (a site file has a few hundred)"
    ]


def test_cable_lookup_folds_names_as_the_cable_library_does(write):
    from notchkit.cables import get_cable, library

    for cable in library():
        for variant in (cable.name.lower(), cable.name.replace("-", " "), cable.name + "/U"):
            assert get_cable(variant).name == cable.name
            site = load_site(write(GOOD.replace("cable: RG-213", f"cable: {variant}")))
            assert site.cable == cable.name, variant
