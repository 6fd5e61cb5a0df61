"""`notchkit check`: summary and exit 0 for a good file, bare problem lines and exit 2 for a bad one."""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK
from notchkit.site import Site, check, load_site

SITES = Path(__file__).resolve().parent.parent / "sites"


@pytest.mark.parametrize("path", sorted(SITES.glob("*.yaml")), ids=lambda p: p.name)
def test_check_prints_a_summary_of_every_example(path, capsys):
    assert main(["check", str(path)]) == EXIT_OK
    out, err = capsys.readouterr()
    site = load_site(path)
    assert err == ""
    assert out.splitlines()[0] == f"Site: {site.name}"
    assert f"Default cable: {site.cable}" in out
    for radio in site.radios:
        row = next(line for line in out.splitlines() if line.startswith(f"  {radio.name} "))
        role = "both" if radio.tx and radio.rx else ("tx" if radio.tx else "rx")
        assert row.split()[1] == role
    for c in site.couplings:
        assert f"{c.a} - {c.b}" in out
    assert out.rstrip().endswith(f"OK: {len(site.radios)} radios, no problems found")


def test_summary_shows_frequencies_bands_and_powers(capsys):
    assert main(["check", str(SITES / "hilltop-repeaters.yaml")]) == EXIT_OK
    out = capsys.readouterr().out
    assert "tx 146.94 / rx 146.34" in out
    assert "118.0-137.0" in out
    row = next(line for line in out.splitlines() if line.startswith("  wx-broadcast "))
    assert row.split()[3] == "300"


def test_check_is_load_site():
    path = SITES / "ridge-eoc.yaml"
    assert check(path) == load_site(path) == Site.from_yaml(str(path))


def test_summary_carries_the_safety_caution_with_the_highest_power(capsys):
    path = SITES / "field-day-hf.yaml"
    top = max(r.tx.power_w for r in load_site(path).transmitters)
    assert main(["check", str(path)]) == EXIT_OK
    out = capsys.readouterr().out
    assert f"Caution: transmitters up to {top:g} W." in out
    assert "follow local codes and licensed practice" in out


def test_bad_file_prints_bare_lines_on_stderr_and_exits_2(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    text = "site: x\ntransmitters:\n  - name: a\n    freq_mhz: -1\n    power_w: yes\n"
    Path("bad.yaml").write_text(text, encoding="utf-8")
    before = sorted(os.listdir(tmp_path))
    assert main(["check", "bad.yaml"]) == EXIT_BAD_INPUT
    out, err = capsys.readouterr()
    assert out == ""
    assert err.splitlines() == [
        "bad.yaml:4:15: transmitters[0].freq_mhz: -1 must be greater than 0 (allowed: a number "
        "from 0.1 to 6000 MHz)",
        "bad.yaml:5:14: transmitters[0].power_w: yes is a boolean, not a number (allowed: a number "
        "greater than 0 and at most 100000 W; YAML reads yes/no/on/off/true/false as booleans)",
    ]
    assert "Traceback" not in err
    assert sorted(os.listdir(tmp_path)) == before
    assert Path("bad.yaml").read_text(encoding="utf-8") == text


def test_missing_file_exits_2(tmp_path, monkeypatch, capsys):
    monkeypatch.chdir(tmp_path)
    assert main(["check", "gone.yaml"]) == EXIT_BAD_INPUT
    assert capsys.readouterr().err == (
        "gone.yaml:0:0: no such file (give the path of an existing .yaml site file)\n"
    )


def test_check_without_a_file_is_a_usage_error(capsys):
    with pytest.raises(SystemExit) as info:
        main(["check"])
    assert info.value.code == EXIT_BAD_INPUT
    assert "Traceback" not in capsys.readouterr().err


@pytest.mark.parametrize("path", sorted(SITES.glob("*.yaml")), ids=lambda p: p.name)
def test_check_json_carries_what_the_site_file_says(path, capsys):
    import json

    from notchkit import check_site

    assert main(["check", "--json", str(path)]) == EXIT_OK
    out, err = capsys.readouterr()
    assert err == ""
    doc = json.loads(out)
    site = load_site(path)
    assert doc == check_site(path).to_json()
    assert doc["site"] == site.name and doc["ok"] is True and doc["problems"] == []
    assert [r["name"] for r in doc["radios"]] == [r.name for r in site.radios]
    for row, radio in zip(doc["radios"], site.radios, strict=True):
        assert row["tx_mhz"] == ([radio.tx.band.lo_mhz, radio.tx.band.hi_mhz] if radio.tx else None)
        assert row["power_w"] == (radio.tx.power_w if radio.tx else None)
        assert row["antenna"]["height_m"] == radio.antenna.height_m
    assert doc["limits"]["max_swr"] == site.limits.max_swr
    assert bool(doc["cautions"]) == bool(site.transmitters)


def test_check_json_on_a_bad_file_is_lines_on_stderr_and_exit_2(tmp_path, capsys):
    bad = tmp_path / "bad.yaml"
    bad.write_text("site: x\ntransmitters:\n  - name: a\n    freq_mhz: -1\n", encoding="utf-8")
    assert main(["check", "--json", str(bad)]) == EXIT_BAD_INPUT
    out, err = capsys.readouterr()
    assert out == ""
    assert err.startswith(f"{bad}:") or "bad.yaml:" in err


def test_a_radio_working_several_bands_shows_them_all(capsys):
    import json

    path = SITES / "contest-two-position.yaml"
    site = load_site(path)
    multi = [r for r in site.radios if r.tx is not None and len(r.tx.choices) > 1]
    assert multi, "the contest example has band-switched radios"
    assert main(["check", "--json", str(path)]) == EXIT_OK
    doc = {r["name"]: r for r in json.loads(capsys.readouterr().out)["radios"]}
    assert main(["check", str(path)]) == EXIT_OK
    out = capsys.readouterr().out
    for r in multi:
        assert doc[r.name]["tx_bands_mhz"] == [[b.lo_mhz, b.hi_mhz] for b in r.tx.choices]
        row = next(line for line in out.splitlines() if line.startswith(f"  {r.name} "))
        for b in r.tx.choices:
            assert f"{b.lo_mhz:.1f}" in row
