"""Robustness: whatever bytes a site file holds, the loader returns a Site or raises SiteError.

Property tests (hypothesis, derandomized so every run is the same): random
edits of a valid example and random YAML-ish text never raise anything else,
and every problem line keeps the documented FILE:LINE:COL form.
"""

from __future__ import annotations

import re
from pathlib import Path

from hypothesis import HealthCheck, given, settings
from hypothesis import strategies as st

from notchkit.errors import SiteError
from notchkit.site import load_site
from notchkit.site.model import Site

SITE = (Path(__file__).resolve().parent.parent / "sites" / "ridge-eoc.yaml").read_bytes()
LINE = re.compile(r"^site\.yaml:\d+:\d+: \S.*$")
SETTINGS = settings(
    max_examples=150,
    derandomize=True,
    deadline=None,
    suppress_health_check=[HealthCheck.function_scoped_fixture, HealthCheck.too_slow],
)


def _load(tmp_path, monkeypatch, data: bytes) -> None:
    monkeypatch.chdir(tmp_path)
    (tmp_path / "site.yaml").write_bytes(data)
    try:
        site = load_site("site.yaml")
    except SiteError as exc:
        lines = exc.lines()
        assert 1 <= len(lines) <= 51
        for line in lines:
            assert LINE.match(line), line
            assert "\n" not in line
    else:
        assert isinstance(site, Site)


edits = st.lists(
    st.tuples(
        st.integers(min_value=0, max_value=len(SITE)),
        st.integers(min_value=0, max_value=8),
        st.sampled_from([b"", b" ", b"\n", b"-", b":", b"[", b"]", b"{", b"'", b'"', b"&a", b"*a",
                         b"!!", b"yes", b".nan", b"-1", b"\t", b"\xff", b"#", b"1e9", b"~"]),
    ),
    min_size=1,
    max_size=4,
)


@SETTINGS
@given(edits=edits)
def test_random_edits_of_a_good_file(tmp_path, monkeypatch, edits):
    data = bytearray(SITE)
    for at, cut, insert in edits:
        at = min(at, len(data))
        data[at : at + cut] = insert
    _load(tmp_path, monkeypatch, bytes(data))


@SETTINGS
@given(text=st.text(alphabet=st.sampled_from(list("ab1.-: []{}\n'\"&*!#,?|>%@`")), max_size=200))
def test_random_yaml_like_text(tmp_path, monkeypatch, text):
    _load(tmp_path, monkeypatch, text.encode("utf-8"))
