"""The ranking: search the arrangements of movable conductors for the lowest stray field.

- :mod:`~trayadvisor.ranking.rank` — ``rank_layout``: the whole run, with every option as a
  keyword argument (distance, objective, slots, bundles, budget, sharing, constraints).
- :mod:`~trayadvisor.ranking.result` — ``RankResult`` / ``RankOption`` and ``apply_option``.
- :mod:`~trayadvisor.ranking.objective` — what is minimised: the curve at d, a line, a point.
- :mod:`~trayadvisor.ranking.space` and :mod:`~trayadvisor.ranking.build` — the search space
  (candidate positions, interchangeable kinds, cells, bundles) and its construction;
  :mod:`~trayadvisor.ranking.slots` — slot grids by laying rule.
- :mod:`~trayadvisor.ranking.symmetry` — mirror, phase and twin-circuit symmetries (twins
  merged), the mirror- and half-turn-invariant sub-problems.
- :mod:`~trayadvisor.ranking.tables` — per-position field tables, batch scoring, the pool.
- :mod:`~trayadvisor.ranking.solved` — exact scores with each arrangement's own solved
  currents (one impedance inverse, a small system over the parallel groups per
  arrangement); :mod:`~trayadvisor.ranking.moves` — rank updates per move;
  :mod:`~trayadvisor.ranking.blocks` — whole enumeration blocks;
  :mod:`~trayadvisor.ranking.smallsolve` — the batched small solves.
- :mod:`~trayadvisor.ranking.enumeration` and :mod:`~trayadvisor.ranking.exhaustive` — exact
  enumeration of the distinct arrangements in blocks, with an exact filter.
- :mod:`~trayadvisor.ranking.local_search`, :mod:`~trayadvisor.ranking.heuristic` and
  :mod:`~trayadvisor.ranking.sets` — iterated local search with incremental evaluation,
  seeded by restricted sub-problems (sets kept together, mirrored, paired as point images).
- :mod:`~trayadvisor.ranking.sketch` — a text drawing of an arrangement.
- :mod:`~trayadvisor.ranking.errors` — ``RankError``, naming the parameter at fault.

The method is written up in ``docs/ranking.md``.
"""

from trayadvisor.ranking.errors import RankError
from trayadvisor.ranking.rank import (
    DEFAULT_MAX_EXHAUSTIVE,
    check_rank_options,
    rank_layout,
)
from trayadvisor.ranking.result import Constraint, RankOption, RankResult, apply_option
from trayadvisor.ranking.sketch import sketch_text
from trayadvisor.ranking.slots import SLOT_RULES

__all__ = [
    "DEFAULT_MAX_EXHAUSTIVE",
    "SLOT_RULES",
    "Constraint",
    "RankError",
    "RankOption",
    "RankResult",
    "apply_option",
    "check_rank_options",
    "rank_layout",
    "sketch_text",
]
