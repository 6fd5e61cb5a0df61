"""notchkit: coaxial stub filters for sites where several radios work side by side.

Every command of the ``notchkit`` program is one function here, so a user can
script the same job from Python::

    import notchkit
    site = notchkit.load_site("sites/ridge-eoc.yaml")
    survey = notchkit.survey(site)

Nothing happens at import time beyond importing numpy; matplotlib, ReportLab and
scikit-rf are imported inside the functions that need them.
"""

from __future__ import annotations

__version__ = "0.1.0"

from notchkit import interrupts as _interrupts  # noqa: E402 - before numpy: Ctrl-C while starting

if _interrupts.running_as_command():
    _interrupts.guard_startup()

from notchkit.asbuilt import RecheckResult, recheck  # noqa: E402
from notchkit.buildyield import Tolerance, tolerance
from notchkit.cables import Cable, cable_table, get_cable, library
from notchkit.cutlist import StubCut, cut_list, format_length
from notchkit.errors import (
    EXIT_BAD_INPUT,
    EXIT_OK,
    EXIT_UNMET,
    CableError,
    DesignError,
    InputError,
    MeasurementError,
    NotchkitError,
    SiteError,
    UsageError,
)
from notchkit.filters import Filter, Line, Stub, evaluate, evaluate_batch, to_network, write_touchstone
from notchkit.power import PowerCheck, power_check
from notchkit.requirements import FilterRequirement, NotchSpec
from notchkit.site import Site, check, load_site
from notchkit.site.checked import SiteCheck, check_site
from notchkit.siteplan import PlanResult, plan
from notchkit.solver import Solution, solve
from notchkit.synthesis import Design, DesignReport, design, design_request
from notchkit.threats import SurveyResult, Threat, survey
from notchkit.trimming import Resonance, TrimResult, find_resonance, trim
from notchkit.verification import VerifyResult, verify

__all__ = [
    "__version__",
    "EXIT_OK",
    "EXIT_UNMET",
    "EXIT_BAD_INPUT",
    "NotchkitError",
    "UsageError",
    "InputError",
    "SiteError",
    "CableError",
    "MeasurementError",
    "DesignError",
    "trim",
    "find_resonance",
    "TrimResult",
    "Resonance",
    "verify",
    "VerifyResult",
    "recheck",
    "RecheckResult",
    "Cable",
    "cable_table",
    "get_cable",
    "library",
    "survey",
    "SurveyResult",
    "Threat",
    "design",
    "design_request",
    "Design",
    "DesignReport",
    "plan",
    "PlanResult",
    "load_site",
    "check",
    "check_site",
    "SiteCheck",
    "Site",
    "FilterRequirement",
    "NotchSpec",
    "Filter",
    "Stub",
    "Line",
    "evaluate",
    "evaluate_batch",
    "to_network",
    "write_touchstone",
    "solve",
    "Solution",
    "cut_list",
    "StubCut",
    "format_length",
    "tolerance",
    "Tolerance",
    "power_check",
    "PowerCheck",
]
