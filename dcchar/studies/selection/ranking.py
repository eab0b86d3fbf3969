"""Ranking the candidates of a selection matrix, with the reasons in words.

The rule, in order:

1. a candidate that fails no requirement ranks above any that fails one;
2. then fewer failing requirements first;
3. then fewer marginal cells first;
4. then the higher efficiency at the settled point on the load (a candidate with no point last);
5. then the order the candidates were given in.

The leader is the first candidate if it fails nothing; otherwise there is no leader, and the
ranking says which candidate comes closest and what it fails.
"""

from __future__ import annotations

import math
from dataclasses import dataclass

__all__ = ["RankEntry", "Ranking", "rank", "RANKING_RULE"]

#: The rule in one sentence, for reports.
RANKING_RULE = ("Candidates that fail any requirement are ranked after those that fail none; then fewer fails, "
                "then fewer marginal cells, then higher efficiency at the duty point, then the order given.")


@dataclass(frozen=True)
class RankEntry:
    """One candidate's place: ``position`` (1 = first), counts, efficiency [-] and the reason in words."""

    key: str
    label: str
    position: int
    fails: tuple
    marginals: tuple
    efficiency: float
    reason: str


@dataclass(frozen=True)
class Ranking:
    """Candidates in ranked order and the leader (None when every candidate fails something)."""

    entries: tuple
    leader: str | None
    summary: str
    rule: str = RANKING_RULE

    @property
    def order(self) -> tuple:
        return tuple(e.key for e in self.entries)

    def __getitem__(self, key) -> RankEntry:
        for e in self.entries:
            if e.key == key:
                return e
        raise KeyError(key)


def _names(titles):
    return ", ".join(titles)


def rank(keys, labels, verdicts, titles, efficiencies) -> Ranking:
    """Rank candidates by the rule of this module.

    Parameters
    ----------
    keys : sequence of str
        Candidate keys, in the order given.
    labels : dict
        key -> plain name of the connection.
    verdicts : dict
        key -> {figure: "pass" | "marginal" | "fail"}.
    titles : dict
        figure -> title of the requirement in words.
    efficiencies : dict
        key -> efficiency at the settled point [-] (nan: no point).

    Returns
    -------
    Ranking
    """
    rows = []
    for n, k in enumerate(keys):
        fails = tuple(f for f, v in verdicts[k].items() if v == "fail")
        marg = tuple(f for f, v in verdicts[k].items() if v == "marginal")
        eff = efficiencies.get(k, math.nan)
        eff_key = -eff if math.isfinite(eff) else math.inf
        rows.append(((len(fails) > 0, len(fails), len(marg), eff_key, n), k, fails, marg, eff))
    rows.sort(key=lambda r: r[0])
    entries = []
    for pos, (_, k, fails, marg, eff) in enumerate(rows, start=1):
        parts = []
        if fails:
            parts.append("fails " + _names(titles[f] for f in fails))
        else:
            parts.append("meets every requirement")
        if marg:
            parts.append("marginal on " + _names(titles[f] for f in marg))
        parts.append(f"efficiency {100 * eff:.1f} %" if math.isfinite(eff) else "no running point on the load")
        entries.append(RankEntry(k, labels[k], pos, fails, marg, eff, "; ".join(parts)))
    first = entries[0] if entries else None
    if first is None:
        return Ranking((), None, "no candidates")
    if not first.fails:
        tied = [e for e in entries[1:] if not e.fails and len(e.marginals) == len(first.marginals)]
        why = (f"{first.label} leads: it meets every requirement with {len(first.marginals)} marginal cell(s)"
               + (f" and the highest efficiency of those alike ({100 * first.efficiency:.1f} %)" if tied else ""))
        return Ranking(tuple(entries), first.key, why)
    why = (f"no candidate meets every requirement; closest is {first.label}, which fails "
           f"{_names(titles[f] for f in first.fails)}")
    return Ranking(tuple(entries), None, why)
