"""How often the diagnosis engine names the fault a simulated visit was given.

For every sample profile, every fault that can show on it and the healthy machine, N visits are
simulated (each its own machine, fault draw, severity and gauge errors) and diagnosed. A fault
counts as found when the top hypothesis is that fault, in the circuit it was injected into when
the fault belongs to a circuit. The report gives top-1 and top-3 accuracy, the pairs most often
mistaken, healthy machines without a false alarm, and how well the top probability is
calibrated (Brier score and a reliability table). It also keeps, for each fault and rule, how
often the rule read low, in range and high on those visits, next to the likelihoods the rule
states, which is the evidence for re-tuning a rule.
"""

from __future__ import annotations

import hashlib
import os
import time
from collections import Counter, defaultdict
from collections.abc import Iterable, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from random import Random
from typing import Any

from fieldkit.diagnosis.engine import Knowledge, default_knowledge, diagnose
from fieldkit.diagnosis.results import Diagnosis, Verdict
from fieldkit.errors import FieldkitError
from fieldkit.model.loading import ProfileLibrary
from fieldkit.model.profile import MachineProfile
from fieldkit.resources import rules_dir, samples_dir
from fieldkit.simulate.simulator import NO_FAULT, DoubleSimulation, Simulation, Simulator

#: Severity range each simulated fault is drawn from: faults in the field vary, from barely past
#: the maker's range to far beyond it (severity 1 is a clear case; see fieldkit.simulate.faults).
DEFAULT_SEVERITY = (0.6, 1.4)
DEFAULT_CASES = 20
RELIABILITY_BINS = 10

#: Faults grouped by what breaks, for summaries and regression bars.
FAMILIES: dict[str, tuple[str, ...]] = {
    "healthy": (NO_FAULT,),
    "reliefs and settings": (
        "main_relief_low",
        "main_relief_high",
        "parallel_relief_governing",
        "hp_relief_low",
        "hp_relief_high",
        "charge_relief_low",
        "compensator_misset",
        "ls_setting_wrong",
    ),
    "internal leakage": (
        "pump_worn",
        "motor_worn",
        "cylinder_seal_bypass",
        "load_holding_valve_leak",
        "ls_signal_leak",
    ),
    "lines and charge supply": (
        "case_drain_restricted",
        "return_back_pressure",
        "suction_cavitation",
        "charge_suction_restricted",
        "charge_pump_worn",
        "flushing_valve_fault",
    ),
    "stored energy and brakes": ("accumulator_precharge_lost", "brake_not_releasing", "pilot_supply_low"),
    "conditions and instruments": ("relief_overheating", "invalid_test_conditions", "gauge_error"),
}


def family_of(fault: str) -> str:
    return next((name for name, members in FAMILIES.items() if fault in members), "other")


@dataclass(frozen=True, slots=True)
class Case:
    """One simulated visit and what the engine made of it."""

    profile: str
    fault: str
    circuit: str | None
    severity: float
    seed: int
    top: str
    top_probability: float
    top3: tuple[str, ...]
    found: bool
    in_top3: bool
    #: The engine holds a hypothesis for this fault in this circuit at all.
    named: bool
    #: Two faults at once were shown (a pair more likely than any single fault).
    pair_shown: bool = False


@dataclass(frozen=True, slots=True)
class Score:
    n: int
    top1: int
    top3: int

    @property
    def top1_rate(self) -> float:
        return self.top1 / self.n if self.n else 0.0

    @property
    def top3_rate(self) -> float:
        return self.top3 / self.n if self.n else 0.0


def score(cases: Iterable[Case]) -> Score:
    n = t1 = t3 = 0
    for c in cases:
        n += 1
        t1 += c.found
        t3 += c.in_top3
    return Score(n, t1, t3)


@dataclass(frozen=True, slots=True)
class ReliabilityBin:
    low: float
    high: float
    n: int
    mean_probability: float
    accuracy: float


@dataclass(slots=True)
class RuleTally:
    """Soft outcomes of one rule on the visits of one injected fault, against what the rule states."""

    n: int = 0
    low: float = 0.0
    in_range: float = 0.0
    high: float = 0.0
    stated: tuple[float, float, float] = (0.0, 0.0, 0.0)

    @property
    def measured(self) -> tuple[float, float, float]:
        if not self.n:
            return 0.0, 0.0, 0.0
        return self.low / self.n, self.in_range / self.n, self.high / self.n


@dataclass
class EvaluationReport:
    seed: int
    cases_per_fault: int
    severity: tuple[float, float]
    cases: list[Case] = field(default_factory=list)
    #: Profile id → fault id → why it cannot show there.
    skipped: dict[str, dict[str, str]] = field(default_factory=dict)
    #: (fault, rule id) → outcomes on that fault's visits.
    rules: dict[tuple[str, str], RuleTally] = field(default_factory=dict)
    seconds: float = 0.0

    # --- figures ---------------------------------------------------------------------------
    def overall(self) -> Score:
        return score(self.cases)

    def faulty(self) -> Score:
        return score(c for c in self.cases if c.fault != NO_FAULT)

    def healthy(self) -> Score:
        """Healthy machines with 'no fault' ranked first: no false alarm."""
        return score(c for c in self.cases if c.fault == NO_FAULT)

    def by_fault(self) -> dict[str, Score]:
        groups: dict[str, list[Case]] = defaultdict(list)
        for c in self.cases:
            groups[c.fault].append(c)
        return {f: score(cs) for f, cs in groups.items()}

    def by_profile(self) -> dict[str, Score]:
        groups: dict[str, list[Case]] = defaultdict(list)
        for c in self.cases:
            groups[c.profile].append(c)
        return {p: score(cs) for p, cs in groups.items()}

    def by_profile_fault(self) -> dict[tuple[str, str], Score]:
        groups: dict[tuple[str, str], list[Case]] = defaultdict(list)
        for c in self.cases:
            groups[(c.profile, c.fault)].append(c)
        return {k: score(cs) for k, cs in groups.items()}

    def by_family(self) -> dict[str, Score]:
        groups: dict[str, list[Case]] = defaultdict(list)
        for c in self.cases:
            groups[family_of(c.fault)].append(c)
        return {f: score(groups[f]) for f in FAMILIES if f in groups}

    def mistaken_for(self, profile: str, fault: str) -> list[tuple[str, int]]:
        """What the engine ranked first instead, most often first."""
        counts = Counter(
            c.top for c in self.cases if c.profile == profile and c.fault == fault and not c.found
        )
        return counts.most_common()

    def confusions(self, limit: int = 10) -> list[tuple[str, str, int]]:
        """Fault pairs most often mistaken for each other, either way round: (a, b, count)."""
        counts: Counter[tuple[str, str]] = Counter()
        for c in self.cases:
            if c.found:
                continue
            other = c.top.split("@", 1)[0]
            if other == c.fault:  # the right fault in the wrong circuit
                other = c.top
            pair = tuple(sorted((c.fault, other)))
            counts[(pair[0], pair[1])] += 1
        return [(a, b, n) for (a, b), n in counts.most_common(limit)]

    def unnamed(self) -> dict[tuple[str, str], int]:
        """Injected faults the engine holds no hypothesis for: (profile, fault) → cases."""
        counts: Counter[tuple[str, str]] = Counter((c.profile, c.fault) for c in self.cases if not c.named)
        return dict(counts)

    def pairs_shown(self) -> float:
        """Share of the one-fault visits on which two faults at once were shown instead."""
        return sum(c.pair_shown for c in self.cases) / len(self.cases) if self.cases else 0.0

    def brier(self) -> float:
        """Mean squared gap between the top hypothesis's probability and whether it was right."""
        if not self.cases:
            return 0.0
        return sum((c.top_probability - float(c.found)) ** 2 for c in self.cases) / len(self.cases)

    def reliability(self, bins: int = RELIABILITY_BINS) -> list[ReliabilityBin]:
        """Cases binned by the top probability: how often the top hypothesis was right in each bin."""
        out: list[ReliabilityBin] = []
        for i in range(bins):
            low, high = i / bins, (i + 1) / bins
            inside = [
                c
                for c in self.cases
                if low <= c.top_probability < high or (i == bins - 1 and c.top_probability == 1.0)
            ]
            n = len(inside)
            mean = sum(c.top_probability for c in inside) / n if n else 0.0
            acc = sum(c.found for c in inside) / n if n else 0.0
            out.append(ReliabilityBin(low, high, n, mean, acc))
        return out

    def rule_mismatches(self, limit: int = 12, min_cases: int = 5) -> list[tuple[str, str, RuleTally, float]]:
        """Rules whose stated P(low) or P(high) for a fault differ most from what the simulated
        visits of that fault showed: (fault, rule, tally, largest gap)."""
        rows = []
        for (fault, rule), tally in self.rules.items():
            if tally.n < min_cases:
                continue
            m, s = tally.measured, tally.stated
            gap = max(abs(m[0] - s[0]), abs(m[2] - s[2]))
            rows.append((fault, rule, tally, gap))
        rows.sort(key=lambda r: -r[3])
        return rows[:limit]

    def to_json(self) -> dict[str, Any]:
        """Figures for a baseline file; plain numbers, rounded so diffs stay readable."""

        def s(x: Score) -> dict[str, Any]:
            return {"n": x.n, "top1": round(x.top1_rate, 4), "top3": round(x.top3_rate, 4)}

        return {
            "format": "fieldkit.evaluation",
            "version": 1,
            "seed": self.seed,
            "cases_per_fault": self.cases_per_fault,
            "severity": list(self.severity),
            "overall": s(self.overall()),
            "faulty": s(self.faulty()),
            "healthy_no_false_alarm": s(self.healthy()),
            "brier": round(self.brier(), 4),
            "pairs_shown": round(self.pairs_shown(), 4),
            "reliability": [
                {
                    "bin": [b.low, b.high],
                    "n": b.n,
                    "mean_probability": round(b.mean_probability, 4),
                    "accuracy": round(b.accuracy, 4),
                }
                for b in self.reliability()
            ],
            "by_family": {f: s(x) for f, x in self.by_family().items()},
            "by_profile": {p: s(x) for p, x in sorted(self.by_profile().items())},
            "by_profile_fault": {
                f"{p}/{f}": s(x) | {"mistaken_for": dict(self.mistaken_for(p, f)[:3])}
                for (p, f), x in sorted(self.by_profile_fault().items())
            },
            "confusions": [{"faults": [a, b], "count": n} for a, b, n in self.confusions()],
            "unnamed_by_engine": {f"{p}/{f}": n for (p, f), n in sorted(self.unnamed().items())},
            "skipped": self.skipped,
        }


def case_seed(seed: int, profile: str, fault: str, index: int) -> int:
    """A seed per case that depends on nothing but its inputs (stable across runs and machines)."""
    digest = hashlib.sha256(f"{seed}|{profile}|{fault}|{index}".encode()).hexdigest()
    return int(digest[:8], 16)


def _judge(sim: Simulation, profile: MachineProfile, d: Diagnosis) -> Case:
    def right(key_fault: str, key_circuit: str | None) -> bool:
        return key_fault == sim.fault and (sim.circuit is None or key_circuit == sim.circuit)

    top = d.faults[0]
    top3 = d.faults[:3]
    return Case(
        profile=profile.id,
        fault=sim.fault,
        circuit=sim.circuit,
        severity=sim.severity,
        seed=sim.seed,
        top=top.key,
        top_probability=top.probability,
        top3=tuple(f.key for f in top3),
        found=right(top.id, top.circuit),
        in_top3=any(right(f.id, f.circuit) for f in top3),
        named=any(right(f.id, f.circuit) for f in d.faults),
        pair_shown=d.pair_wins,
    )


def _tally(report: EvaluationReport, sim: Simulation, d: Diagnosis, knowledge: Knowledge) -> None:
    """Add the findings that speak about the injected fault's own circuit (or the whole
    machine) to the rule tallies; a finding elsewhere reads a healthy circuit."""
    specs = {r.id: r.spec for r in knowledge.rules}
    for f in d.findings:
        spec = specs.get(f.rule_id)
        if spec is None or f.verdict is Verdict.NOT_MEASURED or not f.readings:
            continue
        if sim.circuit is not None and f.circuit is not None and f.circuit != sim.circuit:
            continue
        tally = report.rules.setdefault((sim.fault, f.rule_id), RuleTally(stated=spec.likelihood(sim.fault)))
        tally.n += 1
        tally.low += f.p_low
        tally.in_range += f.p_in_range
        tally.high += f.p_high


def _run_cases(
    profile: MachineProfile,
    fault: str,
    seed: int,
    cases: int,
    severity: tuple[float, float],
    knowledge: Knowledge,
) -> tuple[list[Case], dict[tuple[str, str], RuleTally]]:
    """Simulate and diagnose the cases of one fault on one machine."""
    part = EvaluationReport(seed, cases, severity)
    sim = Simulator(profile)
    for i in range(cases):
        cs = case_seed(seed, profile.id, fault, i)
        level = Random(cs).uniform(*severity)
        result = sim.simulate(fault, level, cs)
        d = diagnose(result.visit, profile, knowledge)
        part.cases.append(_judge(result, profile, d))
        _tally(part, result, d, knowledge)
    return part.cases, part.rules


def _worker(
    task: tuple[str, str, int, int, tuple[float, float], str],
) -> tuple[list[Case], dict[tuple[str, str], RuleTally]]:
    """One (machine, fault) batch in a worker process. The profile travels as JSON and is
    validated again here: quantities belong to the registry of the process that made them."""
    profile_json, fault, seed, cases, severity, rules = task

    profile = MachineProfile.model_validate_json(profile_json)
    return _run_cases(profile, fault, seed, cases, severity, default_knowledge(Path(rules)))


def default_workers() -> int:
    """Two worker processes where there are two cores or more: the evaluation is CPU-bound."""
    return max(1, min(2, os.cpu_count() or 1))


def evaluate(
    profiles: Sequence[MachineProfile] | None = None,
    cases_per_fault: int = DEFAULT_CASES,
    seed: int = 1,
    knowledge: Knowledge | None = None,
    severity: tuple[float, float] = DEFAULT_SEVERITY,
    workers: int | None = None,
) -> EvaluationReport:
    """Simulate ``cases_per_fault`` visits per fault (and as many healthy ones) on each profile,
    diagnose each, and gather the figures. The same arguments give the same report, whatever
    the number of worker processes (each case has its own seed)."""
    if cases_per_fault < 1:
        raise FieldkitError(f"cases per fault must be at least 1; got {cases_per_fault}")
    started = time.perf_counter()
    profiles = list(profiles) if profiles is not None else sample_profiles()
    knowledge = knowledge or default_knowledge()
    report = EvaluationReport(seed, cases_per_fault, severity)
    batches: list[tuple[MachineProfile, str]] = []
    for profile in profiles:
        sim = Simulator(profile)
        report.skipped[profile.id] = sim.skipped()
        batches.extend((profile, fault) for fault in [NO_FAULT, *sim.injectable()])
    workers = default_workers() if workers is None else max(1, workers)
    if workers == 1 or len(batches) == 1:
        results = [_run_cases(p, f, seed, cases_per_fault, severity, knowledge) for p, f in batches]
    else:
        from concurrent.futures import ProcessPoolExecutor

        as_json = {p.id: p.model_dump_json() for p in profiles}
        tasks = [
            (as_json[p.id], f, seed, cases_per_fault, severity, str(knowledge.folder)) for p, f in batches
        ]
        with ProcessPoolExecutor(max_workers=workers) as pool:
            results = list(pool.map(_worker, tasks))
    for cases, tallies in results:
        report.cases.extend(cases)
        for key, t in tallies.items():
            total = report.rules.setdefault(key, RuleTally(stated=t.stated))
            total.n += t.n
            total.low += t.low
            total.in_range += t.in_range
            total.high += t.high
    report.seconds = time.perf_counter() - started
    return report


# --- two faults at once ----------------------------------------------------------------------

#: Faults left out of the two-fault visits: they spoil the readings rather than the machine (a
#: gauge reading wrong, readings taken cold or at the wrong throttle), so a second fault under them
#: is a question of the visit, not of the machine.
NOT_PAIRED = frozenset({"gauge_error", "invalid_test_conditions"})
#: Pairs that cannot happen: one part set both low and high.
EXCLUSIVE = frozenset(
    {
        frozenset({"main_relief_low", "main_relief_high"}),
        frozenset({"hp_relief_low", "hp_relief_high"}),
    }
)


def fault_pairs(faults: Sequence[str]) -> list[tuple[str, str]]:
    """Every pair of two different faults that can be injected together, in table order."""
    usable = [f for f in faults if f not in NOT_PAIRED and f != NO_FAULT]
    return [
        (a, b) for i, a in enumerate(usable) for b in usable[i + 1 :] if frozenset({a, b}) not in EXCLUSIVE
    ]


@dataclass(frozen=True, slots=True)
class DoubleCase:
    """One visit with two faults injected and what the engine made of it."""

    profile: str
    #: The injected faults as hypothesis keys (fault@circuit, or the fault for a machine-wide one).
    injected: tuple[str, str]
    severity: float
    seed: int
    #: The top pair is the injected one / it is among the top three pairs.
    pair_top: bool
    pair_top3: bool
    #: The best pair was more likely than the best single fault (shown on the screen and card).
    pair_shown: bool
    #: The top single fault is one of the two injected.
    single_names_one: bool
    #: The top three single faults hold both injected faults.
    singles_hold_both: bool


@dataclass
class DoubleReport:
    seed: int
    cases_per_pair: int
    severity: tuple[float, float]
    cases: list[DoubleCase] = field(default_factory=list)
    seconds: float = 0.0

    def rate(self, what: str) -> float:
        if not self.cases:
            return 0.0
        return sum(bool(getattr(c, what)) for c in self.cases) / len(self.cases)

    def by_profile(self) -> dict[str, list[DoubleCase]]:
        groups: dict[str, list[DoubleCase]] = defaultdict(list)
        for c in self.cases:
            groups[c.profile].append(c)
        return dict(sorted(groups.items()))

    def to_json(self) -> dict[str, Any]:
        figures = ("pair_top", "pair_top3", "pair_shown", "single_names_one", "singles_hold_both")
        return {
            "format": "fieldkit.evaluation.double",
            "version": 1,
            "seed": self.seed,
            "cases_per_pair": self.cases_per_pair,
            "severity": list(self.severity),
            "visits": len(self.cases),
            **{f: round(self.rate(f), 4) for f in figures},
        }


def _key(fault: str, circuit: str | None) -> str:
    return f"{fault}@{circuit}" if circuit else fault


def _judge_double(sim: DoubleSimulation, profile: MachineProfile, d: Diagnosis) -> DoubleCase:
    injected = tuple(_key(i.fault, i.circuit) for i in sim.injected)
    want = set(injected)
    pair_sets = [{p.first.key, p.second.key} for p in d.pairs]
    singles = [f.key for f in d.faults]
    return DoubleCase(
        profile=profile.id,
        injected=(injected[0], injected[1]),
        severity=sim.injected[0].severity,
        seed=sim.seed,
        pair_top=bool(pair_sets) and pair_sets[0] == want,
        pair_top3=want in pair_sets[:3],
        pair_shown=d.pair_wins and bool(pair_sets) and pair_sets[0] == want,
        single_names_one=bool(singles) and singles[0] in want,
        singles_hold_both=want <= set(singles[:3]),
    )


def _run_double(
    profile: MachineProfile,
    pair: tuple[str, str],
    seed: int,
    cases: int,
    severity: tuple[float, float],
    knowledge: Knowledge,
) -> list[DoubleCase]:
    sim = Simulator(profile)
    out: list[DoubleCase] = []
    for i in range(cases):
        cs = case_seed(seed, profile.id, "+".join(pair), i)
        level = Random(cs).uniform(*severity)
        result = sim.simulate_two(pair[0], pair[1], level, cs)
        out.append(_judge_double(result, profile, diagnose(result.visit, profile, knowledge)))
    return out


def _double_worker(task: tuple[str, tuple[str, str], int, int, tuple[float, float], str]) -> list[DoubleCase]:
    profile_json, pair, seed, cases, severity, rules = task
    profile = MachineProfile.model_validate_json(profile_json)
    return _run_double(profile, pair, seed, cases, severity, default_knowledge(Path(rules)))


def evaluate_double(
    profiles: Sequence[MachineProfile] | None = None,
    cases_per_pair: int = 2,
    seed: int = 1,
    knowledge: Knowledge | None = None,
    severity: tuple[float, float] = DEFAULT_SEVERITY,
    workers: int | None = None,
) -> DoubleReport:
    """Two faults at once: ``cases_per_pair`` visits for every pair of faults that can show on
    each profile (:func:`fault_pairs`), each diagnosed; how often the injected pair is named."""
    if cases_per_pair < 1:
        raise FieldkitError(f"cases per pair must be at least 1; got {cases_per_pair}")
    started = time.perf_counter()
    profiles = list(profiles) if profiles is not None else sample_profiles()
    knowledge = knowledge or default_knowledge()
    report = DoubleReport(seed, cases_per_pair, severity)
    batches = [(p, pair) for p in profiles for pair in fault_pairs(Simulator(p).injectable())]
    workers = default_workers() if workers is None else max(1, workers)
    if workers == 1 or len(batches) <= 1:
        results = [_run_double(p, pair, seed, cases_per_pair, severity, knowledge) for p, pair in batches]
    else:
        from concurrent.futures import ProcessPoolExecutor

        as_json = {p.id: p.model_dump_json() for p in profiles}
        tasks = [
            (as_json[p.id], pair, seed, cases_per_pair, severity, str(knowledge.folder))
            for p, pair in batches
        ]
        with ProcessPoolExecutor(max_workers=workers) as pool:
            results = list(pool.map(_double_worker, tasks, chunksize=8))
    for cases in results:
        report.cases.extend(cases)
    report.seconds = time.perf_counter() - started
    return report


def sample_profiles() -> list[MachineProfile]:
    """The bundled demo profiles (not the user's own): what the evaluation is measured on."""

    return ProfileLibrary([samples_dir() / "profiles"], rules_dir() / "templates").profiles()


__all__ = [
    "DEFAULT_CASES",
    "DEFAULT_SEVERITY",
    "FAMILIES",
    "Case",
    "DoubleCase",
    "DoubleReport",
    "EvaluationReport",
    "ReliabilityBin",
    "RuleTally",
    "Score",
    "case_seed",
    "default_workers",
    "evaluate",
    "evaluate_double",
    "family_of",
    "fault_pairs",
    "sample_profiles",
    "score",
]
