"""Checks of what crosses sections of a site file, and the lookups they need.

:class:`CrossRefs` is the part of the builder (:class:`notchkit.site.builder.Builder`)
that looks up names given in one place and defined in another: cable names (the
library, a cable library beside the site file, ``cables:``), radio names in
``couplings:`` and ``scenarios:``, and values each in range that do not go together
(a velocity-factor spread more than half the velocity factor).
"""

from __future__ import annotations

import dataclasses
import difflib
import re
from typing import Any

import yaml

from notchkit.site import model as m
from notchkit.site.reader import Reader, _join


def _val(d: dict[str, tuple[Any, yaml.Node]], key: str, default: Any = None) -> Any:
    got = d.get(key)
    return default if got is None else got[0]


def _opt(d: dict[str, tuple[Any, yaml.Node]], keys: tuple[str, ...]) -> dict[str, Any]:
    return {k: d[k][0] for k in keys if k in d}


def _fold(name: str) -> str:
    """A cable name for lookup, folded as the cable library does (case, spaces, '-', '_', '/U')."""
    return re.sub(r"/U$", "", re.sub(r"[\s\-_]", "", name.upper()))


class CrossRefs:
    """Cable and radio-name lookups of the builder; problems go to the reader ``r``."""

    r: Reader
    names: dict[str, yaml.Node]
    known: dict[str, str]
    cable_nodes: dict[str, tuple[dict, str]]

    def cables(self, top: dict) -> tuple[m.CableDef, ...]:
        """The site's own cable types; they take precedence over library types of the same name."""
        from notchkit.cables import library, site_library
        from notchkit.errors import CableError

        out: list[m.CableDef] = []
        seen: dict[str, yaml.Node] = {}
        self.cable_nodes: dict[str, tuple[dict, str]] = {}
        self.known = {_fold(c.name): c.name for c in library()}
        for c in library():
            self.known.update({_fold(a): c.name for a in c.aliases})
        try:  # a cable library kept next to the site file (notchkit-cables.yaml)
            beside: tuple[Any, ...] = site_library(self.r.path) if self.r.path else ()
        except CableError as exc:
            self.r.add(None, "cables", str(exc))
            beside = ()
        self.known.update({_fold(c.name): c.name for c in beside})
        for d, _node, path in _val(top, "cables", []):
            if not all(k in d for k in ("name", "z0_ohm", "velocity_factor")):
                continue
            name, nnode = d["name"]
            key = _fold(name)
            if key in seen:
                self.r.add(
                    nnode,
                    _join(path, "name"),
                    f"cable {name!r} is already defined at line {seen[key].start_mark.line + 1} "
                    "(allowed: each cable name once)",
                )
                continue
            seen[key] = nnode
            self.cable_nodes[key] = (d, path)
            extra = _opt(d, ("max_voltage_v", "outer_diameter_mm", "dielectric", "loss_table"))
            out.append(
                m.CableDef(
                    name=name, z0_ohm=d["z0_ohm"][0], velocity_factor=d["velocity_factor"][0], **extra
                )
            )
        for d in out:
            self.known[_fold(d.name)] = d.name
        own = {_fold(d.name) for d in out}
        return tuple(c for c in beside if _fold(c.name) not in own) + tuple(out)

    def derived(self, top: dict, radios: list[m.Radio], site_cable: str) -> None:
        """Checks of values that are each in range but do not go together.

        Every value the design derives from the file is checked here, with the
        position of the value the user wrote, so ``check`` and ``design`` agree:
        the tolerance run draws each stub cable's velocity factor within
        ``+-vf_spread`` (``allowances.vf_spread``, else the cable's published
        tolerance, else :data:`notchkit.buildyield.DEFAULT_VF_SPREAD`), which
        must stay at most half the velocity factor
        (:func:`notchkit.buildyield.tolerance` refuses more).
        """
        from notchkit.buildyield import DEFAULT_VF_SPREAD
        from notchkit.cables import library

        allow = top.get("allowances", ({}, None))[0]
        explicit = allow.get("vf_spread")
        lib = {_fold(c.name): c for c in library()}
        used = {_fold(site_cable)} | {_fold(x.stub_cable) for x in radios if x.stub_cable}
        for key in sorted(used):
            if key in self.cable_nodes:
                d, cpath = self.cable_nodes[key]
                vf, vf_node = d["velocity_factor"]
                tol = _val(d, "vf_tolerance")
                name = d["name"][0]
            elif key in lib:
                c = lib[key]
                vf, vf_node, cpath, tol, name = c.velocity_factor, None, "", c.vf_tolerance, c.name
            else:
                continue
            if explicit is not None:
                spread, snode = explicit
                if spread > 0.5 * vf:
                    self.r.add(snode, "allowances.vf_spread",
                               f"{spread:g} is more than half the velocity factor {vf:g} of stub cable "
                               f"{name!r} (allowed: at most {0.5 * vf:g} for that cable)")
                continue
            spread = DEFAULT_VF_SPREAD if tol is None else float(tol)
            if spread > 0.5 * vf:
                src = "its vf_tolerance" if tol is not None else "the default velocity-factor spread"
                self.r.add(vf_node, _join(cpath, "velocity_factor"),
                           f"{vf:g} is less than twice {src} {spread:g} that the tolerance run uses "
                           f"(allowed: at least {2 * spread:g}, or set allowances.vf_spread)")

    def resolve_cables(self) -> None:
        """Report every cable name that is neither in the library nor defined in the file."""
        for name, node, path in self.r.cable_refs:
            if _fold(name) in self.known:
                continue
            from notchkit.cables import generic_hint

            generic = generic_hint(name)
            # the closest name; a tie goes to the one listed first (the library's order)
            close = difflib.get_close_matches(_fold(name), list(self.known), n=3, cutoff=0.6)
            if close:
                score = {k: difflib.SequenceMatcher(None, _fold(name), k).ratio() for k in close}
                best = max(score.values())
                close = [next(k for k in self.known if k in score and score[k] == best)]
            hint = (f"trade names are not used: the generic type of that size is {generic!r}; "
                    if generic else f"did you mean {self.known[close[0]]!r}?; " if close else "")
            self.r.add(
                node,
                path,
                f"unknown cable {name!r} ({hint}allowed: a cable from 'notchkit cables' "
                "or one defined under cables:)",
            )

    def canon(self, name: str) -> str:
        return self.known.get(_fold(name), name)

    def canon_radio(self, radio: m.Radio) -> m.Radio:
        changes: dict[str, Any] = {}
        if radio.stub_cable is not None:
            changes["stub_cable"] = self.canon(radio.stub_cable)
        if radio.feedline is not None:
            changes["feedline"] = dataclasses.replace(
                radio.feedline, cable=self.canon(radio.feedline.cable)
            )
        return dataclasses.replace(radio, **changes) if changes else radio

    # -- couplings --------------------------------------------------------

    def couplings(self, top: dict) -> tuple[m.Coupling, ...]:
        out: list[m.Coupling] = []
        pairs: dict[frozenset[str], tuple[yaml.Node, list]] = {}
        names = {k: n.value.strip() for k, n in self.names.items()}
        for d, _node, path in _val(top, "couplings", []):
            if "between" not in d or "isolation_db" not in d:
                continue
            ((a, anode), (b, bnode)), pnode = d["between"]
            ok = True
            for i, (x, xnode) in enumerate(((a, anode), (b, bnode))):
                if x.lower() not in names:
                    close = difflib.get_close_matches(x.lower(), list(names), n=1, cutoff=0.6)
                    hint = f"did you mean {names[close[0]]!r}?; " if close else ""
                    self.r.add(
                        xnode,
                        f"{path}.between[{i}]",
                        f"no radio named {x!r} ({hint}allowed: a name given under "
                        "transmitters, receivers or transceivers)",
                    )
                    ok = False
            if not ok:
                continue
            a, b = names[a.lower()], names[b.lower()]
            if a == b:
                self.r.add(
                    pnode,
                    _join(path, "between"),
                    f"a coupling needs two different radios, got {a!r} twice",
                )
                continue
            freq = _val(d, "freq_mhz")
            key = frozenset((a, b))
            if key in pairs:
                first, first_f = pairs[key]
                if freq is None or None in first_f or freq in first_f:
                    self.r.add(
                        pnode,
                        _join(path, "between"),
                        f"coupling between {a!r} and {b!r} given twice "
                        + ("at the same frequency " if freq is not None and freq in first_f else "")
                        + f"(first at line {first.start_mark.line + 1}; several measurements of "
                        "a pair each need their own freq_mhz)",
                    )  # fmt: skip
                    continue
                first_f.append(freq)
            else:
                pairs[key] = (pnode, [freq])
            out.append(
                m.Coupling(a=a, b=b, isolation_db=d["isolation_db"][0], freq_mhz=_val(d, "freq_mhz"))
            )
        return tuple(out)

    # -- scenarios ------------------------------------------------------

    def scenarios(self, top: dict) -> tuple[m.Scenario, ...]:
        out: list[m.Scenario] = []
        names = {k: n.value.strip() for k, n in self.names.items()}
        seen: dict[str, yaml.Node] = {}
        for d, _node, path in _val(top, "scenarios", []):
            if "name" not in d or "radios" not in d:
                continue
            sname, snode = d["name"]
            if sname.lower() in seen:
                line = seen[sname.lower()].start_mark.line + 1
                self.r.add(snode, _join(path, "name"), f"scenario {sname!r} is already defined at "
                           f"line {line} (allowed: each name once)")  # fmt: skip
                continue
            seen[sname.lower()] = snode
            got: list[str] = []
            for i, (x, xnode) in enumerate(d["radios"][0]):
                if x.lower() not in names:
                    close = difflib.get_close_matches(x.lower(), list(names), n=1, cutoff=0.6)
                    hint = f"did you mean {names[close[0]]!r}?; " if close else ""
                    self.r.add(xnode, f"{path}.radios[{i}]", f"no radio named {x!r} ({hint}allowed: "
                               "a name given under transmitters, receivers or transceivers)")  # fmt: skip
                    continue
                if names[x.lower()] in got:
                    self.r.add(xnode, f"{path}.radios[{i}]",
                               f"{x!r} is listed twice (allowed: each radio once)")  # fmt: skip
                    continue
                got.append(names[x.lower()])
            out.append(m.Scenario(name=sname, radios=tuple(got)))
        return tuple(out)
