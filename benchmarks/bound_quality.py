"""How strong are the lower bounds? Best bound over optimum, and instances closed by bounds alone.

Per published set (optima from ../shared/benchmarks/published) and per generated class, prints
a Markdown table:
- best/opt: the best bound divided by the known optimum (published, or planted by the
  generator), mean and min; for random classes with no known optimum, the best bound divided
  by the best checked plan found here ("best/plan", a lower estimate of best/opt);
- tight: instances where the best bound meets that reference;
- closed: instances where the best bound meets the objective of a checked heuristic plan
  (`instances.drop.drop_plan`, and with --solver-seconds also `milp.solve`'s plan), so the
  bounds alone prove that plan optimal;
- seconds: mean time of all bounds per instance.

Run:  python -m benchmarks.bound_quality [--seeds 5] [--boxes 12] [--quick] [--solver-seconds 0]
"""
from __future__ import annotations

import argparse
import math
import statistics
import sys
import time
from dataclasses import dataclass, field
from typing import Iterable, Optional

import bounds
from instances.checker import check_plan
from instances.drop import drop_plan
from instances.model import Instance

CLOSE_TOL = 1e-6


@dataclass
class Row:
    """One line of the table: a set of instances and what the bounds achieved on it."""

    label: str
    reference: str  # "opt" (known optimum) or "plan" (best checked plan)
    ratios: list[float] = field(default_factory=list)
    tight: int = 0
    closed: int = 0
    count: int = 0
    seconds: list[float] = field(default_factory=list)

    def cells(self) -> list[str]:
        mean = statistics.fmean(self.ratios) if self.ratios else math.nan
        low = min(self.ratios) if self.ratios else math.nan
        secs = statistics.fmean(self.seconds) if self.seconds else math.nan
        return [self.label, str(self.count), f"best/{self.reference}", f"{mean:.4f}", f"{low:.4f}",
                f"{self.tight}/{self.count}", f"{self.closed}/{self.count}", f"{secs:.3f}"]


def heuristic_objective(instance: Instance, solver_seconds: float = 0.0) -> Optional[float]:
    """Best objective of the checked heuristic plans (greedy drop; the MILP's plan if asked), else None."""
    plans = [drop_plan(instance)]
    if solver_seconds > 0:
        import milp

        plans.append(milp.solve(instance, time_limit=solver_seconds).plan)
    values = []
    for plan in plans:
        if plan is not None:
            report = check_plan(instance, plan)
            if report.feasible:
                values.append(report.objective)
    return min(values, default=None)


def meets(bound: float, value: Optional[float]) -> bool:
    return value is not None and bound >= value - CLOSE_TOL * max(1.0, value)


def measure(row: Row, instance: Instance, optimum: Optional[float], solver_seconds: float = 0.0) -> None:
    start = time.perf_counter()
    best, _ = bounds.best(instance)
    row.seconds.append(time.perf_counter() - start)
    row.count += 1
    plan = heuristic_objective(instance, solver_seconds)
    reference = optimum if optimum is not None else plan
    if reference:
        row.ratios.append(best / reference)
    row.tight += meets(best, reference)
    row.closed += meets(best, plan)


def published_rows(solver_seconds: float = 0.0) -> list[Row]:
    from benchmarks.published import load_published, published_folder

    folder = published_folder()
    if folder is None:
        print("published folder not found: skipping published sets", file=sys.stderr)
        return []
    rows: dict[str, Row] = {}
    for e in load_published(folder):
        label = f"{e.set} ({e.problem})"
        row = rows.setdefault(label, Row(label, "opt"))
        measure(row, e.instance, e.instance.known.optimum, solver_seconds)
    return list(rows.values())


def generated_cases(seeds: int, boxes: int, quick: bool) -> Iterable[tuple[str, str, Instance, Optional[float]]]:
    """(label, reference kind, instance, known optimum or None) for each generated class and seed."""
    from instances.generate import planted_instance, random_instance

    planted = [("planted 2D", dict(dim=2)), ("planted 2D, 2 types", dict(dim=2, targets=2)),
               ("planted 3D", dict(dim=3))]
    random_2d = ["uniform", "wide", "tall", "mixed"] if quick else ["uniform", "wide", "tall", "large", "small", "mixed"]
    random_3d = ["uniform", "mixed"] if quick else ["uniform", "large", "small", "mixed"]
    bins_2d = ["mv1", "mv2"] if quick else ["mv1", "mv2", "mv3", "mv4"]
    for label, params in planted:
        for s in range(seeds):
            inst, _ = planted_instance(params["dim"], boxes, s, **{k: v for k, v in params.items() if k != "dim"})
            yield label, "opt", inst, inst.known.optimum
    for cls in random_2d:
        for s in range(seeds):
            yield f"random 2D {cls}", "plan", random_instance(2, boxes, s, size_class=cls), None
    for cls in random_3d:
        for s in range(seeds):
            yield f"random 3D {cls}", "plan", random_instance(3, boxes, s, size_class=cls), None
    for cls in bins_2d:
        for s in range(seeds):
            yield f"random 2D bins {cls}", "plan", random_instance(2, boxes, s, size_class=cls, objective="bins"), None
    for s in range(seeds):
        yield "random 2D height-sum, 2 types", "plan", random_instance(2, boxes, s, targets=2, objective="height-sum"), None


def generated_rows(seeds: int, boxes: int, quick: bool, solver_seconds: float = 0.0) -> list[Row]:
    rows: dict[str, Row] = {}
    for label, ref, inst, optimum in generated_cases(seeds, boxes, quick):
        row = rows.setdefault(label, Row(label, ref))
        measure(row, inst, optimum, solver_seconds)
    return list(rows.values())


def table(rows: list[Row]) -> str:
    head = ["set / class", "n", "ratio", "mean", "min", "tight", "closed", "seconds"]
    lines = ["| " + " | ".join(head) + " |", "|" + "|".join("---" for _ in head) + "|"]
    lines += ["| " + " | ".join(r.cells()) + " |" for r in rows]
    return "\n".join(lines)


def main(argv: Optional[list[str]] = None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--seeds", type=int, default=5, help="instances per generated class (default 5)")
    parser.add_argument("--boxes", type=int, default=12, help="boxes per generated instance (default 12)")
    parser.add_argument("--quick", action="store_true", help="fewer generated classes")
    parser.add_argument("--no-published", action="store_true", help="skip the published sets")
    parser.add_argument("--solver-seconds", type=float, default=0.0,
                        help="also run milp.solve for this long per instance as a heuristic (default 0: greedy only)")
    args = parser.parse_args(argv)
    start = time.perf_counter()
    rows = ([] if args.no_published else published_rows(args.solver_seconds))
    rows += generated_rows(args.seeds, args.boxes, args.quick, args.solver_seconds)
    print(table(rows))
    print(f"\n{sum(r.count for r in rows)} instances in {time.perf_counter() - start:.1f} s")
    return 0


if __name__ == "__main__":
    sys.exit(main())
