"""Two faults at once: pairs of leading faults, ranked beside the single faults when no single
fault explains the findings well.

The single-fault ranking (:mod:`ranking`) assumes exactly one fault. A worn pump and a relief set
low together leave a finding each that one of them alone cannot account for. Pairs are weighed in
one model with the singles:

- prior of a pair = the product of its members' priors (faults arrive independently), so a pair
  must explain a great deal more than any single before it leads;
- per finding, a pair explains an out-of-range reading at least as well as the better of its two
  members (the finding is explained by either), and a reading the members both leave unexplained
  counts against the pair once for each member (a noisy-OR on the 'reads as healthy' outcome:
  each fault present has its own chance to upset the reading; Pearl, *Probabilistic Reasoning in
  Intelligent Systems*, 1988, §4.3.2);
- only pairs among the :data:`PAIR_POOL` leading singles are formed, and only when the leading
  single leaves a clear finding unexplained: the ranking stays cheap and one-fault visits keep
  their single answer.
"""

from __future__ import annotations

import itertools
import math
from dataclasses import dataclass

from fieldkit.diagnosis.catalogue import NO_FAULT
from fieldkit.diagnosis.findings import Hypothesis
from fieldkit.diagnosis.results import Finding, RankedFault, RankedPair, Verdict

#: Pairs are formed among this many leading single faults (15 pairs at most).
PAIR_POOL = 6
#: Pairs kept for the screen and the job card.
PAIRS_KEPT = 3
#: A finding is a clear one to explain when it makes some fault this many times more likely than
#: a healthy machine (the same cut the explanations use, ranking.EXPLAIN_RATIO).
CLEAR_RATIO = 1.5


def pair_llr(first: float, second: float) -> float:
    """One finding's log-likelihood ratio (against a healthy machine) for two faults present at
    once, from each member's own: the better explanation when either explains it, else the sum
    of both members' penalties."""
    best = max(first, second)
    if best > 0.0:
        return best
    return first + second


def unexplained(findings: list[Finding], leader: str) -> list[Finding]:
    """Out-of-range findings that clearly speak for some fault but not for the leader."""
    cut = math.log(CLEAR_RATIO)
    out: list[Finding] = []
    for f in findings:
        if f.verdict in (Verdict.IN_RANGE, Verdict.NOT_MEASURED) or not f.evidence:
            continue
        if max(f.evidence.values()) > cut and f.evidence.get(leader, 0.0) <= 0.0:
            out.append(f)
    return out


@dataclass(frozen=True, slots=True)
class PairRanking:
    """Pairs, best first, with probabilities in the model of singles and pairs together, and the
    leading single's probability in that same model (what a pair must beat to be shown)."""

    pairs: list[RankedPair]
    best_single: float

    @property
    def wins(self) -> bool:
        return bool(self.pairs) and self.pairs[0].probability > self.best_single


def rank_pairs(
    hypotheses: list[Hypothesis], findings: list[Finding], logs: list[float], ranked: list[RankedFault]
) -> PairRanking:
    """Pairs among the leading singles; ``logs`` are the singles' log posteriors (unnormalised,
    ranking.log_posterior) in the order of ``hypotheses``; ``ranked`` is the single ranking."""
    if not ranked or not unexplained(findings, ranked[0].key):
        return PairRanking([], 1.0)
    index = {h.key: i for i, h in enumerate(hypotheses)}
    pool = [f for f in ranked if f.id != NO_FAULT][:PAIR_POOL]
    pair_logs: list[tuple[float, RankedFault, RankedFault]] = []
    for a, b in itertools.combinations(pool, 2):
        ha, hb = hypotheses[index[a.key]], hypotheses[index[b.key]]
        lp = math.log(ha.prior) + math.log(hb.prior)
        for f in findings:
            lp += pair_llr(f.evidence.get(a.key, 0.0), f.evidence.get(b.key, 0.0))
        pair_logs.append((lp, a, b))
    if not pair_logs:
        return PairRanking([], 1.0)
    top = max([*logs, *(lp for lp, _, _ in pair_logs)])
    total = sum(math.exp(x - top) for x in logs) + sum(math.exp(lp - top) for lp, _, _ in pair_logs)
    best_single = math.exp(max(logs) - top) / total
    pair_logs.sort(key=lambda t: -t[0])
    pairs = [
        RankedPair(first=a, second=b, probability=math.exp(lp - top) / total)
        for lp, a, b in pair_logs[:PAIRS_KEPT]
    ]
    return PairRanking(pairs, best_single)


__all__ = ["PAIR_POOL", "PairRanking", "pair_llr", "rank_pairs", "unexplained"]
