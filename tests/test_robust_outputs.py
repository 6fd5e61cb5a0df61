"""Every output planned and checked together before any work, and written all or none.

Each case reproduces a failure of an attack run on the command line: a device
replaced by the PDF (as root), an input overwritten by an output, two outputs
on one name, files left behind by a refusal. Each must now answer exit 2 with
one ``error:`` line, write nothing (not even a folder) and leave every input
byte for byte as it was. The checks that must come before the design are
proven by making the design itself fail the test if it is reached.
"""

from __future__ import annotations

import errno
import hashlib
import os
import stat
from pathlib import Path

import pytest

from notchkit.cli import main
from notchkit.errors import EXIT_BAD_INPUT, EXIT_OK, EXIT_UNMET, InputError

SMALL_SITE = """\
# a fictional two-radio site: one receive filter, quick to design
site: Fictional Flat
transmitters:
  - {name: TX2M, freq_mhz: 146.52, power_w: 50, antenna: {x_m: 0, y_m: 0, height_m: 10}}
receivers:
  - {name: RXWX, freq_mhz: 155.34, antenna: {x_m: 5, y_m: 0, height_m: 10}}
"""


def sha(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def tree(folder: Path) -> list[str]:
    """Every entry under ``folder`` (hidden temporaries included), relative, sorted."""
    return sorted(str(p.relative_to(folder)) for p in folder.rglob("*"))


@pytest.fixture()
def site(tmp_path) -> Path:
    p = tmp_path / "flat.yaml"
    p.write_text(SMALL_SITE, encoding="utf-8")
    return p


@pytest.fixture(scope="module")
def stems(tmp_path_factory) -> list[str]:
    """The file stems a real ``plan --outdir`` writes for SMALL_SITE (``F1-RXWX-rx``)."""
    folder = tmp_path_factory.mktemp("stems")
    (folder / "flat.yaml").write_text(SMALL_SITE, encoding="utf-8")
    rc = main(["plan", str(folder / "flat.yaml"), "-o", str(folder / "p.pdf"), "--outdir", str(folder / "o")])
    assert rc in (EXIT_OK, EXIT_UNMET)
    return sorted({p.stem for p in (folder / "o").iterdir() if p.suffix == ".s2p"})


@pytest.fixture()
def no_design(monkeypatch):
    """Fail the test if the plan gets as far as designing."""
    import importlib

    plan_mod = importlib.import_module("notchkit.siteplan")  # the module behind the function

    def reached(*_a, **_k):
        raise AssertionError("the design ran before the outputs were refused")

    monkeypatch.setattr(plan_mod, "_run_design", reached)


def refused(capsys, argv: list[str], *words: str) -> str:
    rc = main(argv)
    out, err = capsys.readouterr()
    assert rc == EXIT_BAD_INPUT, (out, err)
    lines = err.splitlines()
    assert len(lines) == 1 and lines[0].startswith("error: "), err
    assert "Traceback" not in err and out == ""
    for w in words:
        assert w in lines[0], (w, lines[0])
    return lines[0]


# ---------------------------------------------------------------------------
# 1. devices and other special files are never outputs
# ---------------------------------------------------------------------------


def test_a_character_device_as_the_pdf_is_refused_and_stays_a_device(tmp_path, site, capsys, no_design):
    """As root, ``plan -o /dev/null`` replaced the device node with the PDF (rename over it).
    The test makes its own null device (major 1, minor 3 on Linux) in a temporary folder."""
    dev = tmp_path / "null"
    try:
        os.mknod(dev, stat.S_IFCHR | 0o666, os.makedev(1, 3))
    except (PermissionError, AttributeError, OSError) as exc:
        pytest.skip(f"cannot make a device node here ({exc})")
    before = tree(tmp_path)
    refused(capsys, ["plan", str(site), "-o", str(dev)], "character device", "not a regular file")
    assert stat.S_ISCHR(os.stat(dev).st_mode)
    assert tree(tmp_path) == before


@pytest.mark.parametrize("option", ["-o", "--html"])
def test_a_fifo_as_an_output_is_refused(tmp_path, site, capsys, no_design, option):
    fifo = tmp_path / "pipe"
    os.mkfifo(fifo)
    argv = ["plan", str(site), "-o", str(tmp_path / "p.pdf")]
    argv = argv[:2] + ["-o", str(fifo)] if option == "-o" else [*argv, "--html", str(fifo)]
    before = tree(tmp_path)
    refused(capsys, argv, "FIFO")
    assert stat.S_ISFIFO(os.stat(fifo).st_mode) and tree(tmp_path) == before


def test_png_of_trim_cannot_be_a_device(tmp_path, capsys, stub_s2p):
    dev = tmp_path / "zero.png"
    try:
        os.mknod(dev, stat.S_IFCHR | 0o666, os.makedev(1, 5))
    except (PermissionError, AttributeError, OSError) as exc:
        pytest.skip(f"cannot make a device node here ({exc})")
    refused(capsys, ["trim", str(stub_s2p), "--cable", "RG-213", "--termination", "open",
                     "--target-mhz", "146", "--png", str(dev)], "character device")
    assert stat.S_ISCHR(os.stat(dev).st_mode)


# ---------------------------------------------------------------------------
# 2. an output is never one of the inputs
# ---------------------------------------------------------------------------


def test_a_site_file_named_plan_json_inside_outdir_is_not_replaced(tmp_path, capsys, no_design):
    out = tmp_path / "out"
    out.mkdir()
    site = out / "plan.json"
    site.write_text(SMALL_SITE, encoding="utf-8")
    digest = sha(site)
    before = tree(tmp_path)
    refused(capsys, ["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--outdir", str(out)],
            "site file itself")
    assert sha(site) == digest and tree(tmp_path) == before


def test_a_site_file_with_a_touchstone_name_is_not_replaced(tmp_path, capsys, stems):
    """``design DIR/F1-...s2p --touchstone DIR`` replaced the site file with its Touchstone file."""
    folder = tmp_path / "ts"
    folder.mkdir()
    site = folder / f"{stems[0]}.s2p"
    site.write_text(SMALL_SITE, encoding="utf-8")
    digest = sha(site)
    refused(capsys, ["design", str(site), "--touchstone", str(folder)], "site file itself")
    assert sha(site) == digest and tree(tmp_path) == ["ts", f"ts/{stems[0]}.s2p"]


def test_trim_png_onto_its_measurement_is_refused(tmp_path, capsys, stub_s2p):
    digest = sha(stub_s2p)
    refused(capsys, ["trim", str(stub_s2p), "--cable", "RG-213", "--termination", "open",
                     "--target-mhz", "146", "--png", str(stub_s2p)], "measurement itself")
    assert sha(stub_s2p) == digest


@pytest.mark.parametrize("link", ["hard", "symbolic"])
def test_an_output_linked_to_the_site_file_is_refused(tmp_path, site, capsys, no_design, link):
    other = tmp_path / "plan.pdf"
    (os.link if link == "hard" else os.symlink)(site, other)
    digest = sha(site)
    refused(capsys, ["plan", str(site), "-o", str(other)], "site file")
    assert sha(site) == digest


def test_trim_png_onto_its_plan_json_is_refused(tmp_path, capsys, stub_s2p):
    plan = tmp_path / "plan.json"
    plan.write_text('{"filters": []}\n', encoding="utf-8")
    refused(capsys, ["trim", str(stub_s2p), "--cable", "RG-213", "--plan", str(plan), "--stub", "F1-S1",
                     "--png", str(plan)], "plan JSON itself")
    assert plan.read_text(encoding="utf-8") == '{"filters": []}\n'


# ---------------------------------------------------------------------------
# 3. two outputs never share a path
# ---------------------------------------------------------------------------


def test_pdf_and_plan_json_on_one_path_are_refused(tmp_path, site, capsys, no_design):
    out = tmp_path / "out"
    refused(capsys, ["plan", str(site), "-o", str(out / "plan.json"), "--outdir", str(out)],
            "same file")
    assert tree(tmp_path) == ["flat.yaml"]


def test_html_on_a_curve_png_of_outdir_is_refused(tmp_path, site, capsys, stems):
    out = tmp_path / "out"
    refused(capsys, ["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--html", str(out / f"{stems[0]}.png"),
                     "--outdir", str(out)], "same file")
    assert tree(tmp_path) == ["flat.yaml"]


def test_the_planner_sees_one_folder_under_two_spellings(tmp_path):
    from notchkit.report.files import plan_outputs

    (tmp_path / "a").mkdir()
    (tmp_path / "b").symlink_to(tmp_path / "a")
    with pytest.raises(InputError, match="same file"):
        plan_outputs([(tmp_path / "a" / "x.pdf", "PDF"), (tmp_path / "b" / ".." / "a" / "x.pdf", "HTML")])
    with pytest.raises(InputError, match="same file"):
        plan_outputs([(tmp_path / "a" / "x.pdf", "PDF"), (tmp_path / "b" / "x.pdf", "HTML")])


# ---------------------------------------------------------------------------
# 6. a refusal or a failure leaves nothing behind
# ---------------------------------------------------------------------------


def test_disk_full_while_writing_the_html_leaves_nothing(tmp_path, site, capsys, monkeypatch):
    """ENOSPC on the HTML (after the PDF's temporary is complete): no PDF, no folder, no temporary."""
    real_open, real_write = os.open, os.write
    html_fds: set[int] = set()

    def open_(path, flags, *a, **k):
        fd = real_open(path, flags, *a, **k)
        if ".html." in os.fspath(path):
            html_fds.add(fd)
        return fd

    def write_(fd, data):
        if fd in html_fds:
            raise OSError(errno.ENOSPC, "No space left on device")
        return real_write(fd, data)

    monkeypatch.setattr(os, "open", open_)
    monkeypatch.setattr(os, "write", write_)
    rc = main(["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--html", str(tmp_path / "p.html"),
               "--outdir", str(tmp_path / "out")])
    monkeypatch.undo()
    err = capsys.readouterr().err
    assert rc == EXIT_BAD_INPUT and "No space left on device" in err, err
    assert len(err.splitlines()) == 1
    assert tree(tmp_path) == ["flat.yaml"]


def test_an_over_long_html_name_is_refused_before_the_design(tmp_path, site, capsys, no_design):
    name = "h" * 300 + ".html"
    refused(capsys, ["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--html", str(tmp_path / name)],
            "file name is", "at most 255 bytes")
    assert tree(tmp_path) == ["flat.yaml"]


def test_a_legal_250_character_pdf_name_is_written(tmp_path, site, capsys):
    """A 250-byte name fits NAME_MAX (255, POSIX); its temporary is shortened to fit too."""
    name = "p" * 246 + ".pdf"
    assert len(name.encode()) == 250
    rc = main(["plan", str(site), "-o", str(tmp_path / name)])
    assert rc in (EXIT_OK, EXIT_UNMET), capsys.readouterr().err
    assert tree(tmp_path) == sorted(["flat.yaml", name])
    assert (tmp_path / name).read_bytes().rstrip().endswith(b"%%EOF")


def test_temporary_names_always_fit():
    from notchkit.fileio import temp_name

    for name in ["a", "é" * 120, "x" * 255, "日本" * 42]:
        t = temp_name(name, 255)
        assert len(t.encode()) <= 255 and t.startswith(".") and t.endswith(".part")


def test_outdir_is_not_left_behind_by_a_failed_write(tmp_path, site, capsys, monkeypatch):
    import notchkit.fileio as fileio

    real = os.replace
    calls = []

    def replace_(src, dst):
        calls.append(dst)
        raise OSError(errno.EIO, "Input/output error")

    monkeypatch.setattr(os, "replace", replace_)
    rc = main(["plan", str(site), "-o", str(tmp_path / "p.pdf"), "--outdir", str(tmp_path / "new")])
    monkeypatch.setattr(os, "replace", real)
    assert rc == EXIT_BAD_INPUT and calls
    assert tree(tmp_path) == ["flat.yaml"], fileio


# ---------------------------------------------------------------------------
# fixtures
# ---------------------------------------------------------------------------


@pytest.fixture()
def stub_s2p(tmp_path) -> Path:
    """A quarter-wave open RG-213 stub at 146 MHz through a tee (computed, as an analyser would show it)."""
    import numpy as np
    from fuzz_strategies import touchstone_text

    from notchkit.cables import get_cable
    from notchkit.filters import Filter, Stub, evaluate
    from notchkit.lines import C0

    cable = get_cable("RG-213")
    length = C0 * cable.velocity_factor / (4 * 146e6)  # quarter wave: Pozar sec. 6.3
    f = np.linspace(120e6, 170e6, 201)
    s = evaluate(Filter(elements=(Stub(termination="open", length_m=length),), cable=cable), f)
    path = tmp_path / "stub.s2p"
    path.write_text(touchstone_text(f, s), encoding="utf-8")
    return path


# ---------------------------------------------------------------------------
# property: the planner refuses exactly the unsafe plans; what it accepts is written whole
# ---------------------------------------------------------------------------

from hypothesis import HealthCheck, given, settings  # noqa: E402
from hypothesis import strategies as st  # noqa: E402

CHOICES = ["a", "b", "new1", "new2", "dir", "fifo", "link_a", "hard_a", "sub/new1", "sub/a", "link_sub/new1",
           "link_sub/a", "sub/../a", "missing/x"]


def _world(root: Path) -> None:
    (root / "a").write_text("input a\n", encoding="utf-8")
    (root / "b").write_text("input b\n", encoding="utf-8")
    (root / "dir").mkdir()
    os.mkfifo(root / "fifo")
    (root / "link_a").symlink_to(root / "a")
    os.link(root / "a", root / "hard_a")
    (root / "sub").mkdir()
    (root / "sub" / "a").write_text("another a\n", encoding="utf-8")
    (root / "link_sub").symlink_to(root / "sub")


def _oracle(root: Path, outputs: list[str], inputs: list[str]) -> bool:
    """Whether the plan is safe, decided independently of notchkit: by each path's real folder
    and name, and by device and inode for files that exist (POSIX stat)."""
    def ident(rel: str):
        full = os.path.abspath(root / rel)
        folder, name = os.path.split(full)
        if not os.path.isdir(folder):
            return None
        key = (os.path.realpath(folder), name)
        try:
            st_ = os.stat(full)
        except FileNotFoundError:
            return key, None
        return key, (st_.st_dev, st_.st_ino, stat.S_ISREG(st_.st_mode))

    seen_keys, seen_inodes = set(), set()
    for rel in outputs:
        got = ident(rel)
        if got is None:  # its folder is missing
            return False
        key, node = got
        if node is not None and not node[2]:  # exists and is not a regular file
            return False
        if key in seen_keys or (node is not None and node[:2] in seen_inodes):
            return False
        seen_keys.add(key)
        if node is not None:
            seen_inodes.add(node[:2])
    for rel in inputs:
        key, node = ident(rel)
        if key in seen_keys or (node is not None and node[:2] in seen_inodes):
            return False
    return True


@settings(derandomize=True, deadline=None, database=None, max_examples=120,
          suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(st.lists(st.sampled_from(CHOICES), min_size=1, max_size=4),
       st.lists(st.sampled_from(["a", "b"]), max_size=2, unique=True))
def test_the_planner_refuses_exactly_the_unsafe_plans(tmp_path_factory, outputs, inputs):
    from notchkit.fileio import write_all
    from notchkit.report.files import plan_outputs

    root = tmp_path_factory.mktemp("world")
    _world(root)
    before = {rel: (root / rel).read_bytes() for rel in ("a", "b", "sub/a")}
    safe = _oracle(root, outputs, inputs)
    try:
        paths = plan_outputs([(root / rel, f"out{k}") for k, rel in enumerate(outputs)],
                             inputs=[root / rel for rel in inputs])
    except InputError as exc:
        assert not safe, (outputs, inputs, str(exc))
        assert "\n" not in str(exc)
        assert {rel: (root / rel).read_bytes() for rel in before} == before
        return
    assert safe, (outputs, inputs)
    data = [f"output {k}\n".encode() for k in range(len(paths))]
    write_all([(p, d, "out") for p, d in zip(paths, data, strict=True)])
    for p, d in zip(paths, data, strict=True):
        assert p.read_bytes() == d
    for rel in inputs:
        assert (root / rel).read_bytes() == before[rel]
    assert not [p for p in root.rglob(".*.part")]


# ---------------------------------------------------------------------------
# trim and verify --calibration: the spool file is planned with the other outputs
# ---------------------------------------------------------------------------


def _trim_cal(stub: Path, *extra: str) -> list[str]:
    from notchkit.cables import get_cable
    from notchkit.lines import C0

    length = C0 * get_cable("RG-213").velocity_factor / (4 * 146e6)  # the stub measured (Pozar 6.3)
    return ["trim", str(stub), "--cable", "RG-213", "--termination", "open", "--target-mhz", "146",
            "--length-m", repr(length), *extra]


def test_calibration_onto_the_png_or_an_input_is_refused(tmp_path, capsys, stub_s2p):
    digest = sha(stub_s2p)
    refused(capsys, _trim_cal(stub_s2p, "--spool", "reel-1", "--calibration", str(stub_s2p)),
            "measurement itself")
    same = tmp_path / "x.json"
    refused(capsys, _trim_cal(stub_s2p, "--spool", "reel-1", "--calibration", str(same), "--png", str(same)),
            "same file")
    assert sha(stub_s2p) == digest and tree(tmp_path) == ["stub.s2p"]


def test_a_refused_calibration_leaves_no_png(tmp_path, capsys, stub_s2p):
    """The spool file belongs to another spool: exit 2, and the plot asked for with it is not
    written either (both, or neither)."""
    cal = tmp_path / "reel.json"
    assert main(_trim_cal(stub_s2p, "--spool", "reel-1", "--calibration", str(cal))) == EXIT_OK
    capsys.readouterr()
    before = sha(cal)
    png = tmp_path / "plot.png"
    refused(capsys, _trim_cal(stub_s2p, "--spool", "reel-2", "--calibration", str(cal), "--png", str(png)),
            "reel-1")
    assert not png.exists() and sha(cal) == before
    assert main(_trim_cal(stub_s2p, "--spool", "reel-1", "--calibration", str(cal), "--png", str(png))) == 0
    assert png.read_bytes().startswith(b"\x89PNG") and sha(cal) != before
