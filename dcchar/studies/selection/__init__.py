"""Requirements in, a reasoned choice out: the selection matrix of candidate connections.

- :mod:`.requirements`: what the drive must do, one frozen dataclass per figure;
- :mod:`.defaults`: editable requirement sets per load kind (:func:`default_requirements`);
- :mod:`.case`: the studies of one candidate, each run once (:class:`SelectionSettings`);
- :mod:`.matrix`: :func:`selection_matrix` and its tables;
- :mod:`.ranking`: the ranking rule and its reasons;
- :mod:`.sampled`: the same figures for many sampled machines (used by
  :mod:`dcchar.studies.tolerance`).
"""

from .case import Case, SelectionSettings
from .defaults import LOAD_KINDS, Requirements, default_requirements
from .matrix import VERDICTS, Cell, SelectionMatrix, selection_matrix
from .ranking import RANKING_RULE, RankEntry, Ranking, rank
from .requirements import (COMPARISONS, REQUIREMENT_TYPES, AccelerationTime, ConstantPowerRange, Efficiency, Figure,
                           LostField, LostLoad, Lowering, LowSpeed, Requirement, SpeedHold, SpeedRegulation,
                           StartingCurrent, StartingTorque, TopSpeed, judge)

__all__ = [
    "Case", "SelectionSettings", "LOAD_KINDS", "Requirements", "default_requirements", "VERDICTS", "Cell",
    "SelectionMatrix", "selection_matrix", "RANKING_RULE", "RankEntry", "Ranking", "rank", "COMPARISONS",
    "REQUIREMENT_TYPES", "Requirement", "Figure", "judge", "SpeedRegulation", "TopSpeed", "LowSpeed",
    "StartingTorque", "StartingCurrent", "AccelerationTime", "SpeedHold", "Lowering", "Efficiency",
    "ConstantPowerRange", "LostLoad", "LostField",
]
