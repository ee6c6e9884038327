"""Grading plans from elsewhere (a folder of plan files or a user's heuristic) against gold values.

Each plan is replayed by the checker. Its gap is measured against the best gold value there
is, and the row says which kind it is: `proven` (a proven optimum in a gold results file),
`known` (the instance's known optimum) or `bound` (the best lower bound: then the gap is an
upper estimate of the true one).
"""
from __future__ import annotations

import statistics
import sys
import time
from collections import Counter
from dataclasses import dataclass, field, replace
from pathlib import Path
from typing import Callable, Iterable, Optional, Sequence

from instances.checker import check_plan
from instances.errors import InputError
from instances.io import load_json, read_plan_or_result
from instances.model import Plan

from .results import is_proven
from .suites import SuiteEntry
from .text import percent, plural, violation_text
from .verify import close

GOLD_KINDS = ("proven", "known", "bound")


@dataclass(frozen=True)
class Graded:
    """One graded plan. `violations` are the checker's (or why there is no plan to check)."""

    key: str
    name: str
    feasible: bool
    violations: list[str]
    objective: Optional[float]
    gold: Optional[float]
    gold_kind: Optional[str]
    gap: Optional[float]
    seconds: Optional[float] = None
    notes: list[str] = field(default_factory=list)

    @property
    def optimal(self) -> bool:
        return self.feasible and self.gold is not None and self.objective is not None and close(self.objective, self.gold, 1e-6)

    def as_dict(self) -> dict:
        return {"name": self.name, "set": self.key.rsplit("/", 1)[0], "feasible": self.feasible, "violations": self.violations,
                "objective": self.objective, "gold": self.gold, "gold_kind": self.gold_kind, "gap": self.gap,
                "seconds": self.seconds, "notes": self.notes}


# ---------------------------------------------------------------- gold values


def _best_bound(entry: SuiteEntry) -> Optional[float]:
    try:
        import bounds
    except ImportError:
        return None
    best = getattr(bounds, "best", None)
    if best is None:
        return None
    value, _ = best(entry.instance)
    return value


def gold_value(entry: SuiteEntry, gold_records: Sequence[dict] = ()) -> tuple[Optional[float], Optional[str]]:
    """(value, kind): a proven optimum from the gold records, else the known optimum, else the best bound."""
    mine = [r for r in gold_records if r.get("key") == entry.key]
    proven = [r["objective"] for r in mine if is_proven(r)]
    if proven:
        return min(proven), "proven"
    known = entry.instance.known
    if known is not None and known.optimum is not None:
        return known.optimum, "known"
    candidates = [r["bound"] for r in mine if r.get("bound") is not None and not r.get("contradictions")]
    own = _best_bound(entry)
    if own is not None:
        candidates.append(own)
    if candidates:
        return max(candidates), "bound"
    return None, None


def gap_to(objective: float, gold: float) -> Optional[float]:
    """(objective - gold) / objective as in FORMATS.md; 0 when both are 0; negative if the plan beats gold."""
    if objective == 0:
        return 0.0 if gold == 0 else None
    return (objective - gold) / objective


# ---------------------------------------------------------------- where plans come from

PlanSource = Callable[[SuiteEntry], tuple[Optional[Plan], list[str], Optional[float]]]


PLAN_SUFFIXES = (".plan.json", ".result.json", ".json")


def plans_from_dir(folder: str | Path, entries: Sequence[SuiteEntry]) -> PlanSource:
    """Plans found by the plan-file naming rule: for an instance named NAME, the first of
    `NAME.plan.json`, `NAME.result.json`, `NAME.json`, looked for in `DIR/<set>/` and then in `DIR/`
    (and under the instance file's stem too when no other instance shares it). A file holding an
    instance document is never taken as a plan, so a folder written by `stackproof generate`
    (`X.json` beside `X.plan.json`) grades its planted plans."""
    folder = Path(folder)
    if not folder.is_dir():
        raise InputError.one(str(folder), "$", "plan folder not found")
    stems = Counter(e.file.stem for e in entries)

    def find(entry: SuiteEntry) -> Optional[Path]:
        names = [entry.name] + ([entry.file.stem] if stems[entry.file.stem] == 1 and entry.file.stem != entry.name else [])
        for base in (folder / entry.set, folder):
            for n in names:
                for suffix in PLAN_SUFFIXES:
                    path = base / (n + suffix)
                    if path.is_file() and not _holds_instance(path):
                        return path
        return None

    def source(entry: SuiteEntry):
        path = find(entry)
        if path is None:
            return None, [f"no plan file for {entry.name} in {folder} (looked for {entry.name}.plan.json, "
                          f"{entry.name}.result.json or a plan named {entry.name}.json)"], None
        try:
            plan, _ = read_plan_or_result(path)
        except InputError as exc:
            return None, [f"unreadable plan: {exc}"], None
        if plan.instance is not None and entry.instance.name is not None and plan.instance != entry.instance.name:
            return None, [f"{path} is a plan for another instance: it names \"{plan.instance}\", not \"{entry.instance.name}\""], None
        return plan, [], None

    return source


def _holds_instance(path: Path) -> bool:
    """True when the file is an instance document (then it is not a plan); unreadable files are not."""
    try:
        doc = load_json(path)
    except InputError:
        return False
    return isinstance(doc, dict) and doc.get("format") == "stackproof/instance"


def plans_from_heuristic(spec: str) -> PlanSource:
    """Plans from a user's function `plan(instance) -> Plan` named `module:function` (importable
    from the current directory too). The heuristic never sees the instance's known value."""
    from .worker import load_function

    if "" not in sys.path and str(Path.cwd()) not in sys.path:
        sys.path.insert(0, str(Path.cwd()))
    try:
        fn = load_function(spec)
    except (ImportError, ValueError) as exc:
        raise InputError.one("command line", "--heuristic", f"cannot load {spec}: {exc}") from None

    def source(entry: SuiteEntry):
        start = time.perf_counter()
        try:
            plan = fn(replace(entry.instance, known=None))
        except Exception as exc:  # the user's code: grade it, do not crash the grading
            return None, [f"heuristic raised {type(exc).__name__}: {exc}"], time.perf_counter() - start
        seconds = time.perf_counter() - start
        if plan is None:
            return None, ["heuristic returned no plan"], seconds
        if not isinstance(plan, Plan):
            return None, [f"heuristic returned a {type(plan).__name__}, not a Plan"], seconds
        return plan, [], seconds

    return source


# ---------------------------------------------------------------- grading


def grade_one(entry: SuiteEntry, plan: Optional[Plan], reasons: list[str], seconds: Optional[float],
              gold_records: Sequence[dict] = ()) -> Graded:
    gold, kind = gold_value(entry, gold_records)
    if plan is None:
        return Graded(entry.key, entry.name, False, reasons, None, gold, kind, None, seconds)
    try:
        report = check_plan(entry.instance, plan)
    except Exception as exc:  # a plan too broken to replay (e.g. wrong dimension)
        return Graded(entry.key, entry.name, False, [f"plan cannot be replayed: {type(exc).__name__}: {exc}"], None, gold, kind, None, seconds)
    if not report.feasible:
        return Graded(entry.key, entry.name, False, [violation_text(v) for v in report.violations], None, gold, kind, None, seconds)
    obj = report.objective
    notes = []
    gap = None if gold is None else gap_to(obj, gold)
    if gap is not None and gap < 0 and not close(obj, gold, 1e-6):
        notes.append(f"checked objective {obj:g} beats the {kind} gold value {gold:g}: that value is wrong")
    return Graded(entry.key, entry.name, True, [], obj, gold, kind, gap, seconds, notes)


def grade(entries: Iterable[SuiteEntry], source: PlanSource, gold_records: Sequence[dict] = ()) -> list[Graded]:
    out = []
    for e in entries:
        plan, reasons, seconds = source(e)
        out.append(grade_one(e, plan, reasons, seconds, gold_records))
    return out


def summary(rows: Sequence[Graded]) -> dict:
    """Feasible share, optimal share, gap statistics and the reasons (checker rules) for infeasible plans."""
    n = len(rows)
    feasible = [r for r in rows if r.feasible]
    gaps = [r.gap for r in feasible if r.gap is not None]
    reasons: Counter = Counter()
    for r in rows:
        if not r.feasible:
            for v in r.violations:
                reasons[_reason(v)] += 1
    return {
        "instances": n,
        "feasible": len(feasible),
        "feasible_share": len(feasible) / n if n else None,
        "optimal": sum(r.optimal for r in rows),
        "optimal_share": sum(r.optimal for r in rows) / n if n else None,
        "mean_gap": statistics.fmean(gaps) if gaps else None,
        "median_gap": statistics.median(gaps) if gaps else None,
        "max_gap": max(gaps) if gaps else None,
        "gold_kinds": dict(Counter(r.gold_kind or "none" for r in rows)),
        "infeasible_reasons": dict(reasons.most_common()),
    }


def _reason(violation: str) -> str:
    """The rule name of a checker violation line (`move 3 (box b1): overlap: ...` -> `overlap`)."""
    parts = violation.split(": ")
    return parts[1] if len(parts) >= 3 and parts[0].startswith(("move", "plan")) else parts[0][:60]


def table(rows: Sequence[Graded]) -> str:
    """A plain-text table and summary for a terminal (gaps in percent)."""
    lines = [f"{'instance':<36} {'feasible':>8} {'objective':>10} {'gold':>10} {'kind':>6} {'gap':>8}"]
    for r in rows:
        obj = "-" if r.objective is None else f"{r.objective:g}"
        gold = "-" if r.gold is None else f"{r.gold:g}"
        lines.append(f"{r.key:<36} {'yes' if r.feasible else 'NO':>8} {obj:>10} {gold:>10} {r.gold_kind or '-':>6} {percent(r.gap):>8}")
        for v in (r.violations[:3] if not r.feasible else []) + r.notes:
            lines.append(f"    {v}")
    s = summary(rows)
    share = lambda x: "-" if x is None else f"{100 * x:.1f}%"
    lines += ["", f"feasible {s['feasible']}/{s['instances']} ({share(s['feasible_share'])}), optimal {s['optimal']}/{s['instances']} "
              f"({share(s['optimal_share'])}); gap mean {percent(s['mean_gap'])}, median {percent(s['median_gap'])}, max {percent(s['max_gap'])}"]
    if s["infeasible_reasons"]:
        lines.append("reasons for infeasible plans: " + ", ".join(f"{k} ({plural(v, 'plan')})" for k, v in s["infeasible_reasons"].items()))
    return "\n".join(lines)
