"""`stackproof generate {random,planted} ... -o DIR`: write generated instances and a manifest.

Each instance goes to DIR/<name>.json (planted plans to DIR/<name>.plan.json) and DIR/MANIFEST.json
lists every file with its seed, the parameters, the known optimum and plain difficulty measures
of its source (`instances.generate.features`). Instance k of --count K
uses seed S + k. The same arguments give byte-identical files (no clocks, no host names).
"""
from __future__ import annotations

import argparse
from typing import Any

from instances.errors import InputError
from instances.generate import planted_instance, random_instance
from instances.generate.arrangement import DROP_ORDERS
from instances.generate.features import source_features
from instances.io import check_output, instance_to_dict, plan_to_dict, write_json
from instances.model import ACCESS_RULES, LOADING_RULES, OBJECTIVES, SUPPORT_RULES, TIEBREAKS

from ..progress import StatusLine
from ..text import plural

NAME = "generate"
HELP = "Generate random or planted-optimum instances (reproducible from the seed)."
MANIFEST = "MANIFEST.json"
MANIFEST_FORMAT = "stackproof/generated"

# CLI option -> generator keyword, for the options both generators share.
COMMON = ("width", "depth", "height", "targets", "upright", "flush", "source_ratio", "support", "min_fraction",
          "loading", "access", "side_clearance", "integer_positions", "objective", "then")
ONLY = {
    "random": ("size_class", "shares", "count", "must_tip", "drop_order", "feasible"),
    "planted": ("count", "pinwheel", "tipped"),
}


def _share(text: str) -> float:
    return float(text)


def _shares(text: str) -> list[float]:
    try:
        return [float(x) for x in text.split(",")]
    except ValueError:
        raise argparse.ArgumentTypeError(f"expected numbers separated by commas, got {text!r}") from None


def add_arguments(parser: argparse.ArgumentParser) -> None:
    kinds = parser.add_subparsers(dest="kind", metavar="KIND", required=True)
    rnd = kinds.add_parser("random", help="boxes from a size class, dropped into a source so they rest")
    pln = kinds.add_parser("planted", help="containers cut into boxes: the optimum is known by construction")
    for p in (rnd, pln):
        p.add_argument("--dim", type=int, choices=(2, 3), required=True, help="2 or 3 dimensions")
        p.add_argument("--boxes", type=int, required=True, metavar="N", help="boxes per instance")
        p.add_argument("--count", dest="instances", type=int, default=1, metavar="K", help="number of instances (seeds S..S+K-1)")
        p.add_argument("--seed", type=int, default=0, metavar="S", help="seed of the first instance (default 0)")
        p.add_argument("-o", "--out", required=True, metavar="DIR", help="output folder (created if missing)")
        p.add_argument("--width", type=int, default=10, help="target width (x), default 10")
        p.add_argument("--depth", type=int, help="target depth (y, 3D), default the width")
        p.add_argument("--height", type=int, help="target height; random: open top unless given (bins: the width); planted: the planted height, default the width or taller for many boxes")
        p.add_argument("--targets", type=int, default=1, metavar="T", help="number of destination container types (default 1)")
        p.add_argument("--per-type", dest="count", type=int, metavar="C", help="containers of each type (default 1; random bins: enough for every box)")
        p.add_argument("--upright", type=_share, default=0.0, metavar="SHARE", help="share of 'this side up' boxes (turns about the vertical only)")
        p.add_argument("--flush", type=_share, default=0.5, metavar="P", help="chance a box is dropped against a wall or neighbour (blocks faces)")
        p.add_argument("--source-ratio", type=float, default=1.5, metavar="R", help="source floor = R x target floor (low R: tall stacks)")
        p.add_argument("--support", choices=SUPPORT_RULES, default="center",
                       help="support rule in the targets (PROBLEM.md section 4; default center)")
        p.add_argument("--min-fraction", type=float, metavar="F",
                       help="share of the base that supporters must cover, 0 < F <= 1 (only with --support base-fraction)")
        p.add_argument("--loading", choices=LOADING_RULES, default="from-above",
                       help="from-above: each box is lowered straight down into place; any: no such rule (default from-above)")
        p.add_argument("--access", choices=ACCESS_RULES, default="side-face",
                       help="side-face: a tip needs a free side face in the source; none: any lifted box may be tipped (default side-face)")
        p.add_argument("--side-clearance", type=int, default=0, metavar="D",
                       help="a face within D of a neighbour or a source wall is not free (default 0)")
        p.add_argument("--integer-positions", action="store_true", help="positions must be integers")
        p.add_argument("--objective", choices=OBJECTIVES, default="height",
                       help="what to minimise: the largest packed height, the sum of heights, or containers used (default height)")
        p.add_argument("--then", choices=TIEBREAKS, default="none",
                       help="tie-breaker optimised second: tips (fewest tipped boxes) or none (default none)")
        p.add_argument("--quiet", action="store_true", help="no progress line on stderr")
    rnd.add_argument("--class", dest="size_class", default="uniform", metavar="C",
                     help="size class: uniform, wide, tall, large, small, mixed, or a published label (bw1-bw6, mv1-mv4; 3D mpv1-mpv8)")
    rnd.add_argument("--shares", type=_shares, metavar="A,B,..", help="proportions of boxes per target type (default equal)")
    rnd.add_argument("--must-tip", type=_share, default=0.0, metavar="SHARE", help="share of boxes that fit the target only tipped")
    rnd.add_argument("--drop-order", choices=DROP_ORDERS, default="random", help="large-first: big boxes lowest in the source")
    rnd.add_argument("--allow-infeasible", dest="feasible", action="store_false",
                     help="keep the first draw even when the constructive plan finds no plan")
    pln.add_argument("--pinwheel", type=_share, default=0.2, metavar="P", help="chance a cut is a non-guillotine pinwheel")
    pln.add_argument("--tipped", type=_share, default=0.3, metavar="SHARE", help="share of boxes stored tipped in the source")


def parameters(args: argparse.Namespace) -> dict[str, Any]:
    """The generator keywords these arguments stand for (every one, defaults included)."""
    return {k: getattr(args, k) for k in COMMON + ONLY[args.kind]}


def run(args: argparse.Namespace) -> int:
    if args.instances < 1:
        raise InputError.one("command line", "--count", f"must be at least 1, got {args.instances}")
    params = parameters(args)
    out = check_output(args.out, "-o", folder=True)
    entries, documents = [], []  # written only once every instance is drawn: a failed draw leaves nothing half-done
    line = StatusLine(enabled=not args.quiet)
    for k in range(args.instances):
        seed = args.seed + k
        line.show(f"generate {args.kind}: instance {k + 1} of {args.instances} (seed {seed})")
        try:
            if args.kind == "random":
                inst, plan = random_instance(args.dim, args.boxes, seed, **params), None
            else:
                inst, plan = planted_instance(args.dim, args.boxes, seed, **params)
        except ValueError as exc:
            line.close()
            raise InputError.one("command line", _option_of(str(exc)), str(exc)) from None
        entry: dict[str, Any] = {"file": f"{inst.name}.json", "seed": seed}
        documents.append((entry["file"], instance_to_dict(inst)))
        if plan is not None:
            entry["plan"] = f"{inst.name}.plan.json"
            documents.append((entry["plan"], plan_to_dict(plan)))
        entry["known"] = None if inst.known is None else inst.known.optimum
        entry["features"] = {k: round(v, 6) for k, v in source_features(inst).items()}
        entries.append(entry)
    manifest = {
        "format": MANIFEST_FORMAT,
        "version": 1,
        "generator": args.kind,
        "dim": args.dim,
        "boxes": args.boxes,
        "parameters": params,
        "instances": entries,
    }
    line.close()
    for name, doc in documents + [(MANIFEST, manifest)]:
        write_json(out / name, doc)
    print(f"wrote {plural(len(entries), args.kind + ' instance')} to {out}/ ({MANIFEST} lists them)")
    return 0


def _option_of(message: str) -> str:
    """The command-line option a generator error message is about (the first parameter it names)."""
    if "size class" in message:
        return "--class"
    names = set(COMMON) | set(ONLY["random"]) | set(ONLY["planted"]) | {"dim", "boxes"}
    for word in message.replace("(", " ").replace(")", " ").replace(":", " ").split():
        if word in names:
            return {"count": "--per-type", "feasible": "--allow-infeasible"}.get(word, "--" + word.replace("_", "-"))
    return "arguments"
