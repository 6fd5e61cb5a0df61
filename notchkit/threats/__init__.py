"""The site survey: threats between transmitters and receivers, and the filters they call for.

``survey(site)`` evaluates five mechanisms for every transmitter against every
receiver (fundamental overload, harmonics, intermodulation formed in a
transmitter's output stage or the receiver's front end, transmitter noise,
several carriers together against the blocking level) and returns a
:class:`SurveyResult`; docs/survey.md states the model.
"""

from __future__ import annotations

from notchkit.threats.core import survey
from notchkit.threats.isolation import (
    ISOLATION_FLOOR_DB,
    estimate_isolation_db,
    free_space_loss_db,
    horizontal_isolation_db,
    slant_isolation_db,
    vertical_isolation_db,
)
from notchkit.threats.limits import (
    DEFAULT_BLOCKING_DBM,
    DEFAULT_IM_CONVERSION_DB,
    KTB_DBM_PER_HZ,
    noise_floor_dbm,
    spurious_suppression_dbc,
)
from notchkit.threats.locations import TOO_CLOSE_FRACTION
from notchkit.threats.result import MECHANISMS, NotchFeed, SurveyMatrix, SurveyResult, Threat

__all__ = [
    "survey",
    "SurveyResult",
    "SurveyMatrix",
    "Threat",
    "NotchFeed",
    "MECHANISMS",
    "free_space_loss_db",
    "horizontal_isolation_db",
    "vertical_isolation_db",
    "slant_isolation_db",
    "estimate_isolation_db",
    "ISOLATION_FLOOR_DB",
    "spurious_suppression_dbc",
    "noise_floor_dbm",
    "KTB_DBM_PER_HZ",
    "DEFAULT_BLOCKING_DBM",
    "DEFAULT_IM_CONVERSION_DB",
    "TOO_CLOSE_FRACTION",
]
