"""Speed benchmark of the MILP solver: time to a proved optimum against the number of boxes.

Families of generated instances (`instances.generate.random_instance`, integer data):
- `rules`: where the rules bite: a source 1.5x wider than the targets (tall stacks), boxes dropped
  large-first (unstacking hands over small boxes first, the reverse of big-first loading), 20 %
  of the boxes fit only tipped, half pushed flush against neighbours or walls, two destinations,
  support `center`, loading from above, integer positions;
- `strip`: the same boxes with the source and every rule removed (classic strip packing), for
  comparison with the literature.

Modes: `full` is `milp.solve` as shipped; `plain` is the same model optimised directly from a zero
lower bound with no bounds, incumbent or decision steps (the "afternoon model" the issue compares
against). Instances run one after the other (never in parallel: timings on a shared machine).

    python -m benchmarks.speed --dim 2 --sizes 8,10,12,14,16 --seeds 10 --time-limit 60
"""
from __future__ import annotations

import argparse
import dataclasses
import json
import statistics
import sys
import time
from typing import Optional

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


def table(rows: list[dict], time_limit: float) -> str:
    """Markdown: per n, how many proved (optimal or infeasible), median and max seconds, worst gap."""
    out = ["| n | instances | proved | median s | max s | worst gap of the rest |",
           "|---|---|---|---|---|---|"]
    for n in sorted({r["n"] for r in rows}):
        rs = [r for r in rows if r["n"] == n]
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
    ap.add_argument("--sizes", default="8,10,12,14,16", help="numbers of boxes, comma-separated")
    ap.add_argument("--seeds", type=int, default=10, help="instances per size (seeds 0..N-1)")
    ap.add_argument("--time-limit", type=float, default=60.0)
    ap.add_argument("--family", choices=("rules", "strip"), default="rules")
    ap.add_argument("--mode", choices=("full", "plain"), default="full")
    ap.add_argument("--jsonl", help="also append one JSON line per instance to this file")
    args = ap.parse_args(argv)
    rows = []
    for n in (int(s) for s in args.sizes.split(",")):
        for seed in range(args.seeds):
            inst = make_instance(args.family, args.dim, n, seed)
            run = solve_full if args.mode == "full" else solve_plain
            row = {"family": args.family, "mode": args.mode, "dim": args.dim, "n": n, "seed": seed,
                   **run(inst, args.time_limit)}
            rows.append(row)
            print(f"n={n} seed={seed} {row['status']} obj={row['objective']} bound={row['bound']} "
                  f"{row['seconds']:.2f}s", file=sys.stderr, flush=True)
            if args.jsonl:
                with open(args.jsonl, "a", encoding="utf-8") as fh:
                    fh.write(json.dumps(row) + "\n")
    print(f"{args.family}, {args.dim}D, mode {args.mode}, {args.time_limit:g} s limit, 1 thread")
    print(table(rows, args.time_limit))
    return 0


if __name__ == "__main__":
    sys.exit(main())
