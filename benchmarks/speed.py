"""Speed benchmark of the MILP solver: time to a proved optimum against the number of boxes.

Families of generated instances (`instances.generate.random_instance`, integer data):
- `rules`: where the rules bite: a source 1.5x wider than the targets (tall stacks), boxes dropped
  large-first (unstacking hands over small boxes first, the reverse of big-first loading), 20 %
  of the boxes fit only tipped, half pushed flush against neighbours or walls, two destinations,
  support `center`, loading from above, integer positions;
- `strip`: the same boxes with the source and every rule removed (classic strip packing), for
  comparison with the literature.

- `published`: the classic instances of the published folder (`--published DIR`, default
  `../shared/benchmarks/published`), `--sizes` read as the numbers of items kept.

Solvers (`--solver`, one or several, comma-separated, each instance run by each in turn, one
after the other, never in parallel: timings on a shared machine):
- `stackproof`: mode `full` is `milp.solve` as shipped; mode `plain` is the same model optimised
  directly from a zero lower bound with no bounds, incumbent or decision steps;
- `cpsat`: OR-Tools CP-SAT with one worker at the same limit, the project's test oracle
  (`tests/oracles/cpsat_rules.py` for the whole problem; `tests/oracles/cpsat.py` on classic strip
  packing). It is imported only here, never by the solve.
With two solvers a side-by-side table follows, and every contradiction (different proved
optima, a bound above the other's checked plan or above a published optimum, "infeasible"
against a plan) is listed and, with `--disagree DIR`, the instance is written there.

    python -m benchmarks.speed --dim 2 --sizes 8,10,12,14,16 --seeds 10 --time-limit 60
    python -m benchmarks.speed --dim 2 --sizes 10,20 --seeds 5 --time-limit 20 --solver stackproof,cpsat
"""
from __future__ import annotations

import argparse
import dataclasses
import json
import statistics
import sys
import time
from itertools import combinations
from pathlib import Path
from typing import Iterator, Optional

from instances.generate import random_instance
from instances.model import Instance, Rules, Support


def make_instance(family: str, dim: int, n: int, seed: int) -> Instance:
    width = 10 if dim == 2 else 6
    inst = random_instance(dim, n, seed, size_class="uniform", width=width, source_ratio=1.5, targets=2,
                           must_tip=0.2, flush=0.5, drop_order="large-first", support="center",
                           integer_positions=True, name=f"{family}-{dim}d-n{n}-s{seed}")
    if family == "strip":
        one = (dataclasses.replace(inst.containers[0], count=1),)
        inst = dataclasses.replace(
            inst, source=None, containers=one,
            boxes=tuple(dataclasses.replace(b, at=None, target=None) for b in inst.boxes),
            rules=Rules(support=Support("none"), loading="any", integer_positions=True))
    return inst


def solve_plain(inst: Instance, time_limit: float) -> dict:
    """The same model optimised directly: no bounds module, no incumbent, no decision steps."""
    from milp import backends
    from milp.extract import extract_plan
    from milp.pipeline import _safe_cap
    from milp.problem import prepare
    from milp.model import build
    from instances.checker import check_plan

    t0 = time.perf_counter()
    p = prepare(inst)
    cap = _safe_cap(p)
    m = build(p, vcap=cap, lower=0.0, upper=cap)
    out = backends.run(m.lp, time_limit=time_limit, integral=True)
    obj = None
    if out.objective is not None:
        rep = check_plan(inst, extract_plan(m))
        obj = rep.objective if rep.feasible else None
    return {"status": out.status if obj is not None or out.status == "infeasible" else "unknown",
            "objective": obj, "bound": out.bound, "seconds": time.perf_counter() - t0}


def solve_full(inst: Instance, time_limit: float) -> dict:
    from milp import solve

    t0 = time.perf_counter()
    r = solve(inst, time_limit=time_limit)
    return {"status": r.status, "objective": r.objective, "bound": r.bound, "seconds": time.perf_counter() - t0}


def solve_cpsat(inst: Instance, time_limit: float) -> dict:
    """CP-SAT (one worker): the strip oracle on classic strip packing, else the whole-problem one.

    Imported lazily: CP-SAT is a test oracle, never part of the solve. Its plans pass the checker
    inside the oracle (an AssertionError otherwise).
    """
    from tests.oracles.cpsat import is_strip_case, strip_height_cpsat
    from tests.oracles.cpsat_rules import solve_cpsat_rules

    t0 = time.perf_counter()
    if is_strip_case(inst):
        r = strip_height_cpsat(inst, time_limit=time_limit, workers=1)
        objective = r.height
    else:
        r = solve_cpsat_rules(inst, time_limit=time_limit, workers=1)
        objective = r.objective
    return {"status": r.status, "objective": objective, "bound": r.bound, "seconds": time.perf_counter() - t0}


def instances(args: argparse.Namespace) -> Iterator[tuple[int, int, Instance]]:
    """(group, seed, instance): the group is n, or the set name for published entries (seed -1)."""
    sizes = [int(x) for x in args.sizes.split(",")] if args.sizes else None
    if args.family != "published":
        for n in sizes or [8, 10, 12, 14, 16]:
            for seed in range(args.seeds):
                yield n, seed, make_instance(args.family, args.dim, n, seed)
        return
    from benchmarks.published import load_published, published_folder

    folder = Path(args.published) if args.published else published_folder()
    if folder is None:
        raise SystemExit("speed: no published folder found; pass --published DIR")
    for e in load_published(folder):
        if sizes is None or len(e.instance.boxes) in sizes:
            yield f"{e.set} ({e.problem})", -1, e.instance


def contradictions(inst: Instance, runs: dict[str, dict]) -> list[str]:
    """Every pair of claims that cannot both be true (one solver, or a published optimum, is wrong)."""
    eps = 1e-6
    claims = list(runs.items())
    if inst.known is not None and inst.known.optimum is not None:
        k = inst.known.optimum
        claims.append(("published", {"status": "optimal", "objective": k, "bound": k}))
    out = []
    for (a, ra), (b, rb) in combinations(claims, 2):
        if ra["status"] == "optimal" and rb["status"] == "optimal" and abs(ra["objective"] - rb["objective"]) > eps:
            out.append(f"{a} proves {ra['objective']}, {b} proves {rb['objective']}")
        for x, rx, y, ry in ((a, ra, b, rb), (b, rb, a, ra)):
            if rx["status"] == "infeasible" and ry["objective"] is not None:
                out.append(f"{x} proves infeasible, {y} has a plan of {ry['objective']}")
            if rx["bound"] is not None and ry["objective"] is not None and rx["status"] != "infeasible" \
                    and rx["bound"] > ry["objective"] + eps:
                out.append(f"{x}'s bound {rx['bound']} exceeds {y}'s plan {ry['objective']}")
    return sorted(set(out))


def _groups(rows: list[dict]) -> list:
    return sorted({r["group"] for r in rows}, key=lambda g: (isinstance(g, str), g))


def _column(rows: list[dict]) -> str:
    return "set" if rows and isinstance(rows[0]["group"], str) else "n"


def compare_table(rows: list[dict], solvers: list[str]) -> str:
    """Markdown side by side per group: proved by each, median seconds on instances both proved, ratio."""
    a, b = solvers[:2]
    out = [f"| {_column(rows)} | instances | proved {a} | proved {b} | both | median s {a} | median s {b} | ratio {a}/{b} |",
           "|--:|--:|--:|--:|--:|--:|--:|--:|"]
    proved = ("optimal", "infeasible")
    for n in _groups(rows):
        by = {}
        for r in rows:
            if r["group"] == n:
                by.setdefault(r["name"], {})[r["solver"]] = r
        pa = [k for k, v in by.items() if a in v and v[a]["status"] in proved]
        pb = [k for k, v in by.items() if b in v and v[b]["status"] in proved]
        both = [k for k in pa if k in pb]
        if both:
            ma = statistics.median(by[k][a]["seconds"] for k in both)
            mb = statistics.median(by[k][b]["seconds"] for k in both)
            tail = f"{ma:.2f} | {mb:.2f} | {ma / mb:.2f}" if mb > 0 else f"{ma:.2f} | {mb:.2f} | -"
        else:
            tail = "- | - | -"
        out.append(f"| {n} | {len(by)} | {len(pa)} | {len(pb)} | {len(both)} | {tail} |")
    return "\n".join(out)


def table(rows: list[dict], time_limit: float) -> str:
    """Markdown: per group, how many proved (optimal or infeasible), median and max seconds, worst gap."""
    out = [f"| {_column(rows)} | instances | proved | median s | max s | worst gap of the rest |",
           "|---|---|---|---|---|---|"]
    for n in _groups(rows):
        rs = [r for r in rows if r["group"] == n]
        proved = [r for r in rs if r["status"] in ("optimal", "infeasible")]
        secs = [r["seconds"] if r in proved else time_limit for r in rs]
        gaps = [(r["objective"] - r["bound"]) / r["objective"] for r in rs
                if r not in proved and r["objective"] and r["bound"] is not None]
        worst = f"{100 * max(gaps):.1f} %" if gaps else ("no plan" if len(proved) < len(rs) else "-")
        out.append(f"| {n} | {len(rs)} | {len(proved)} | {statistics.median(secs):.1f} | {max(secs):.1f} | {worst} |")
    return "\n".join(out)


def main(argv: Optional[list[str]] = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--dim", type=int, default=2, choices=(2, 3))
    ap.add_argument("--sizes", help="numbers of boxes, comma-separated (default 8,10,12,14,16; published: all)")
    ap.add_argument("--seeds", type=int, default=10, help="instances per size (seeds 0..N-1)")
    ap.add_argument("--time-limit", type=float, default=60.0)
    ap.add_argument("--family", choices=("rules", "strip", "published"), default="rules")
    ap.add_argument("--published", help="the published benchmark folder (family `published`)")
    ap.add_argument("--mode", choices=("full", "plain"), default="full", help="stackproof's mode")
    ap.add_argument("--solver", default="stackproof", help="stackproof, cpsat, or both comma-separated")
    ap.add_argument("--jsonl", help="also append one JSON line per instance and solver to this file")
    ap.add_argument("--disagree", help="write every instance with a contradiction into this folder")
    args = ap.parse_args(argv)
    solvers = [x.strip() for x in args.solver.split(",") if x.strip()]
    runners = {"stackproof": solve_full if args.mode == "full" else solve_plain, "cpsat": solve_cpsat}
    unknown = [x for x in solvers if x not in runners]
    if unknown or not solvers or len(set(solvers)) != len(solvers):
        ap.error(f"--solver: expected stackproof and/or cpsat, got {args.solver!r}")
    rows, bad = [], []
    for group, seed, inst in instances(args):
        runs = {}
        for solver in solvers:
            row = {"family": args.family, "solver": solver, "mode": args.mode if solver == "stackproof" else None,
                   "dim": inst.dim, "group": group, "n": len(inst.boxes), "seed": seed, "name": inst.name, **runners[solver](inst, args.time_limit)}
            runs[solver] = row
            rows.append(row)
            print(f"{inst.name} {solver}: {row['status']} obj={row['objective']} bound={row['bound']} "
                  f"{row['seconds']:.2f}s", file=sys.stderr, flush=True)
            if args.jsonl:
                with open(args.jsonl, "a", encoding="utf-8") as fh:
                    fh.write(json.dumps(row) + "\n")
        found = contradictions(inst, runs)
        if found:
            bad.append((inst.name, found))
            print(f"CONTRADICTION {inst.name}: {'; '.join(found)}", file=sys.stderr, flush=True)
            if args.disagree:
                from instances.io import instance_to_dict, write_json

                Path(args.disagree).mkdir(parents=True, exist_ok=True)
                write_json(Path(args.disagree) / f"{inst.name}.json", instance_to_dict(inst))
    for solver in solvers:
        mine = [r for r in rows if r["solver"] == solver]
        label = f"{solver} (mode {args.mode})" if solver == "stackproof" else f"{solver} (1 worker)"
        print(f"{args.family}, {args.dim}D, {label}, {args.time_limit:g} s limit, 1 thread")
        print(table(mine, args.time_limit))
    if len(solvers) > 1:
        print(f"side by side, {args.time_limit:g} s limit")
        print(compare_table(rows, solvers))
    print(f"contradictions: {len(bad)}" + "".join(f"\n  {name}: {'; '.join(f)}" for name, f in bad))
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
