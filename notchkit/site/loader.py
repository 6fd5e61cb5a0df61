"""Read a site file (YAML) into a :class:`~notchkit.site.model.Site`.

The file is parsed with PyYAML's safe loader only as far as the node tree
(``yaml.compose``); the site package then walks the nodes itself, so every problem
carries the line and column where it sits and nothing but plain scalars, lists
and mappings is ever built. Every problem found is reported in one run (up to
:data:`MAX_PROBLEMS`), each as one line::

    FILE:LINE:COL: field.path: what is wrong (what is allowed)

The work is split by concern, one module each:

* :mod:`notchkit.site.yamlread`: safe reading (size cap, UTF-8, nesting and
  value caps on both YAML paths, positions);
* :mod:`notchkit.site.fields`: the kinds of key, each reading its node and
  describing its JSON Schema; :mod:`notchkit.site.sections`: :data:`SECTIONS`,
  the declaration of every key;
* :mod:`notchkit.site.reader`: the walk of the node tree against the declaration;
* :mod:`notchkit.site.builder` and :mod:`notchkit.site.crossref`: the frozen Site
  and the checks across sections;
* :mod:`notchkit.site.schema`: :func:`site_schema`, published as ``docs/site-schema.json``.

This module keeps the way in (:func:`load_site`, :func:`check`) and re-exports the
names other modules and tests use.

Safety limits: a file over :data:`MAX_FILE_BYTES` is refused before it is
parsed; nesting deeper than :data:`MAX_DEPTH` and more than :data:`MAX_NODES`
values visited (counting every repeat through an alias) are refused, so an
alias bomb or a self-referring alias cannot use unbounded time or memory.
"""

from __future__ import annotations

import os

import yaml  # noqa: F401 - tests switch yaml.__with_libyaml__ through this module

from notchkit.errors import Problem, SiteError
from notchkit.site import model as m
from notchkit.site.builder import MAX_IM_TRIPLES, MAX_RADIOS, MAX_TRANSMITTERS, Builder
from notchkit.site.fields import LENGTH_PATTERN, MAX_NUMBER_CHARS, NAME_PATTERN, Field, Num
from notchkit.site.reader import Reader, Stop
from notchkit.site.schema import site_schema
from notchkit.site.sections import SECTIONS
from notchkit.site.yamlread import MAX_DEPTH, MAX_FILE_BYTES, MAX_NODES, read_tree

__all__ = [
    "load_site",
    "check",
    "site_schema",
    "SECTIONS",
    "Field",
    "Num",
    "LENGTH_PATTERN",
    "NAME_PATTERN",
    "MAX_FILE_BYTES",
    "MAX_PROBLEMS",
    "MAX_DEPTH",
    "MAX_NODES",
    "MAX_NUMBER_CHARS",
    "MAX_RADIOS",
    "MAX_TRANSMITTERS",
    "MAX_IM_TRIPLES",
]

MAX_PROBLEMS = 50
"""Problems listed in one run; the rest are counted in a last line."""


def _finish(path: str, problems: list[Problem]) -> SiteError:
    problems = sorted(problems, key=lambda p: (p.line, p.col, p.field))
    if len(problems) > MAX_PROBLEMS:
        more = len(problems) - MAX_PROBLEMS
        problems = problems[:MAX_PROBLEMS] + [
            Problem(path, 0, 0, "", f"{more} more problems not shown (fix these and run again)")
        ]
    return SiteError(problems)


def load_site(path: str | os.PathLike[str]) -> m.Site:
    """Read and validate a site file.

    Parameters
    ----------
    path : str or path-like
        The YAML site file; problems name it exactly as given.

    Returns
    -------
    Site
        Immutable value objects; cable names are spelt as in the library.

    Raises
    ------
    SiteError
        Every problem found (up to :data:`MAX_PROBLEMS`), each
        ``FILE:LINE:COL: field.path: what is wrong (what is allowed)``.
    """
    spath = os.fspath(path)
    root = read_tree(spath)
    if root is None:
        raise SiteError(
            [
                Problem(
                    spath,
                    0,
                    0,
                    "",
                    "the file is empty (allowed: a mapping with site:, cable: and "
                    "transmitters:/receivers:/transceivers: lists)",
                )
            ]
        )
    reader = Reader(spath)
    site = None
    try:
        reader.prepass(root)
        site = Builder(reader).build(root)
    except Stop:
        pass
    if reader.problems or site is None:
        raise _finish(spath, reader.problems)
    return site


def check(path: str | os.PathLike[str]) -> m.Site:
    """Check a site file: the library side of ``notchkit check`` (same as :func:`load_site`)."""
    return load_site(path)


# ---------------------------------------------------------------------------
# JSON Schema
# ---------------------------------------------------------------------------

