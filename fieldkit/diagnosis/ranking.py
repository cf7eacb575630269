"""Ranking faults: a naive-Bayes posterior over single-fault hypotheses.

Assumptions, stated once here and in the contributor guide:
- exactly one hypothesis is true: one catalogued fault in one circuit, or 'no fault';
- given the hypothesis, findings are independent of each other (naive Bayes), so their
  likelihoods multiply; two rules reading the same gauge therefore double-count it, which rule
  authors avoid by giving each physical question one rule;
- a rule's unnamed faults read like a healthy machine;
- soft findings enter as virtual evidence; findings from readings outside the test window are
  tempered (likelihood raised to a power below one) rather than dropped.
"""

from __future__ import annotations

import math

from fieldkit.diagnosis.catalogue import NO_FAULT, Fault
from fieldkit.diagnosis.findings import Hypothesis
from fieldkit.diagnosis.results import Evidence, Finding, RankedFault
from fieldkit.model.fitted import applies
from fieldkit.model.profile import MachineProfile

#: A finding counts as for (against) a fault when it makes it this many times more (less) likely.
EXPLAIN_RATIO = 1.5


def hypotheses_for(profile: MachineProfile, faults: dict[str, Fault]) -> list[Hypothesis]:
    """'No fault', each machine-wide fault once, and each circuit fault once per circuit it can
    occur in. Priors are the catalogue's, normalised."""
    out: list[Hypothesis] = []
    for fault in faults.values():
        if fault.machine_wide:
            if applies(fault.needs, None, profile):
                out.append(Hypothesis(fault.id, fault, None, fault.prior))
            continue
        for c in profile.circuits:
            if fault.applies_to(c.kind) and applies(fault.needs, c):
                out.append(Hypothesis(f"{fault.id}@{c.id}", fault, c, fault.prior))
    total = sum(h.prior for h in out)
    for h in out:
        h.prior /= total
    return out


def log_posterior(hypotheses: list[Hypothesis], findings: list[Finding]) -> list[float]:
    logs = [math.log(h.prior) for h in hypotheses]
    index = {h.key: i for i, h in enumerate(hypotheses)}
    for f in findings:
        for key, llr in f.evidence.items():
            i = index.get(key)
            if i is not None:
                logs[i] += llr
    return logs


def normalise(logs: list[float]) -> list[float]:
    top = max(logs)
    weights = [math.exp(x - top) for x in logs]
    total = sum(weights)
    return [w / total for w in weights]


def entropy_bits(probs: list[float]) -> float:
    return -sum(p * math.log2(p) for p in probs if p > 0)


def rank(hypotheses: list[Hypothesis], findings: list[Finding]) -> tuple[list[RankedFault], list[float]]:
    post = normalise(log_posterior(hypotheses, findings))
    ranked: list[RankedFault] = []
    cut = math.log(EXPLAIN_RATIO)
    for h, p in zip(hypotheses, post, strict=True):
        supporting: list[Evidence] = []
        against: list[Evidence] = []
        for f in findings:
            llr = f.evidence.get(h.key, 0.0)
            if llr > cut:
                supporting.append(Evidence(f.key, f.title, f.message, math.exp(llr)))
            elif llr < -cut:
                against.append(Evidence(f.key, f.title, f.message, math.exp(llr)))
        if h.fault.id == NO_FAULT:
            # For 'no fault' every finding that favours some fault speaks against it.
            for f in findings:
                if f.evidence and max(f.evidence.values()) > cut:
                    against.append(Evidence(f.key, f.title, f.message, math.exp(-max(f.evidence.values()))))
                elif f.evidence and max(f.evidence.values()) < -cut:
                    supporting.append(
                        Evidence(f.key, f.title, f.message, math.exp(-max(f.evidence.values())))
                    )
        supporting.sort(key=lambda e: -e.ratio)
        against.sort(key=lambda e: e.ratio)
        ranked.append(
            RankedFault(
                id=h.fault.id,
                circuit=h.circuit.id if h.circuit else None,
                title=h.fault.title,
                probability=p,
                prior=h.prior,
                description=h.fault.description,
                confirm=h.fault.confirm,
                fix=h.fault.fix,
                parts=list(h.fault.parts),
                supporting=supporting,
                against=against,
            )
        )
    order = sorted(range(len(ranked)), key=lambda i: -ranked[i].probability)
    return [ranked[i] for i in order], post
