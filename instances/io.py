"""Reading and writing the three JSON documents of FORMATS.md: instance, plan, result.

Reading is strict: JSON Schema first (shipped in `instances/schemas`), then meaning
(`instances.validate`). Every error names the file, the JSON path and what is wrong.
Writing is atomic: a temporary file in the target folder, fsynced, then renamed.
"""
from __future__ import annotations

import json
import math
import os
import stat
import tempfile
from functools import lru_cache
from pathlib import Path
from typing import Any, Optional, Union

import jsonschema
from referencing import Registry, Resource

from .errors import InputError, json_path
from .model import (
    Box,
    ContainerType,
    Instance,
    Known,
    Move,
    Objective,
    Plan,
    ProofStep,
    Provenance,
    Result,
    Rules,
    SolverInfo,
    Source,
    Support,
    TieBreak,
    all_orientations,
)

PathLike = Union[str, "os.PathLike[str]"]
_SCHEMA_DIR = Path(__file__).resolve().parent / "schemas"
KINDS = ("instance", "plan", "result")


# ---------------------------------------------------------------- schemas

@lru_cache(maxsize=None)
def _schema(kind: str) -> dict:
    return json.loads((_SCHEMA_DIR / f"{kind}.schema.json").read_text(encoding="utf-8"))


@lru_cache(maxsize=None)
def _validator(kind: str) -> jsonschema.Draft202012Validator:
    registry = Registry().with_resources(
        (_schema(k)["$id"], Resource.from_contents(_schema(k))) for k in KINDS
    )
    return jsonschema.Draft202012Validator(_schema(kind), registry=registry)


def _describe(error: jsonschema.ValidationError) -> tuple[str, str]:
    """A (path, message) pair for one schema error, in plain words."""
    path = list(error.absolute_path)
    v = error.validator
    if v == "additionalProperties":
        extra = sorted(set(error.instance) - set(error.schema.get("properties", {})))
        return json_path(path + [extra[0]]) if extra else json_path(path), (
            f"unknown key {', '.join(repr(k) for k in extra)}"
        )
    if v == "required":
        return json_path(path), error.message.replace("is a required property", "is missing (required)")
    if v == "const":
        return json_path(path), f"must be {json.dumps(error.validator_value)}, got {json.dumps(error.instance)}"
    if v == "enum":
        allowed = ", ".join(json.dumps(x) for x in error.validator_value)
        return json_path(path), f"must be one of {allowed}, got {json.dumps(error.instance)}"
    if v == "exclusiveMinimum":
        return json_path(path), f"must be greater than {error.validator_value}, got {error.instance}"
    if v == "minimum":
        return json_path(path), f"must be at least {error.validator_value}, got {error.instance}"
    if v == "oneOf" and path and path[-1] == "known":
        return json_path(path), "must give exactly one of 'optimum' or 'infeasible'"
    return json_path(path), error.message


def _check_schema(doc: Any, kind: str, file: Optional[str]) -> None:
    if not isinstance(doc, dict):
        raise InputError.one(file, "$", f"{'an' if kind == 'instance' else 'a'} {kind} document must be a JSON object")
    fmt = doc.get("format")
    if fmt != f"stackproof/{kind}":
        raise InputError.one(file, "format", f"must be \"stackproof/{kind}\", got {json.dumps(fmt)}")
    errors = sorted(_validator(kind).iter_errors(doc), key=lambda e: (list(map(str, e.absolute_path)), e.message))
    if errors:
        seen: list[tuple[str, str]] = []
        for e in errors:
            d = _describe(e)
            if d not in seen:
                seen.append(d)
        raise InputError(file, seen)


# ---------------------------------------------------------------- reading files

def _reject_constant(name: str) -> float:
    raise ValueError(f"{name} is not a JSON number")


def load_json(path: PathLike) -> Any:
    """Parse a JSON file; unreadable files and bad JSON become an InputError naming the file."""
    file = str(path)
    try:
        text = Path(path).read_text(encoding="utf-8")
    except FileNotFoundError:
        raise InputError.one(file, "$", "file not found") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise InputError.one(file, "$", f"cannot read file: {exc}") from None
    return parse_json(text, file)


def parse_json(text: str, file: Optional[str] = None) -> Any:
    try:
        return json.loads(text, parse_constant=_reject_constant)
    except json.JSONDecodeError as exc:
        raise InputError.one(file, "$", f"invalid JSON at line {exc.lineno}, column {exc.colno}: {exc.msg}") from None
    except ValueError as exc:
        raise InputError.one(file, "$", f"invalid JSON: {exc}") from None


def read_instance(path: PathLike) -> Instance:
    return instance_from_dict(load_json(path), file=str(path))


def read_plan(path: PathLike) -> Plan:
    return plan_from_dict(load_json(path), file=str(path))


def read_result(path: PathLike) -> Result:
    return result_from_dict(load_json(path), file=str(path))


def read_plan_or_result(path: PathLike) -> tuple[Plan, Optional[Result]]:
    """A plan document, or a result document and the plan inside it."""
    file = str(path)
    doc = load_json(path)
    if isinstance(doc, dict) and doc.get("format") == "stackproof/result":
        result = result_from_dict(doc, file=file)
        if result.plan is None:
            raise InputError.one(file, "plan", f"this result (status {result.status}) carries no plan to check")
        return result.plan, result
    if isinstance(doc, dict) and doc.get("format") not in ("stackproof/plan", "stackproof/result"):
        raise InputError.one(file, "format", f"must be \"stackproof/plan\" or \"stackproof/result\", got {json.dumps(doc.get('format'))}")
    return plan_from_dict(doc, file=file), None


# ---------------------------------------------------------------- dict -> model

def _vec(values: Optional[list]) -> Optional[tuple]:
    return None if values is None else tuple(values)


def instance_from_dict(doc: Any, file: Optional[str] = None, validate: bool = True) -> Instance:
    """Build an Instance from a parsed document; schema errors and meaning errors raise InputError."""
    from .validate import validate_instance

    _check_schema(doc, "instance", file)
    dim = doc["dim"]
    rules_doc = doc.get("rules", {})
    support_doc = rules_doc.get("support", {"rule": "center"})
    rules = Rules(
        support=Support(rule=support_doc["rule"], min_fraction=support_doc.get("min_fraction")),
        loading=rules_doc.get("loading", "from-above"),
        access=rules_doc.get("access", "side-face"),
        side_clearance=rules_doc.get("side_clearance", 0),
        integer_positions=rules_doc.get("integer_positions", False),
        tolerance=rules_doc.get("tolerance", 1e-6),
    )
    obj_doc = doc.get("objective", {"minimise": "height"})
    known_doc = doc.get("known")
    instance = Instance(
        name=doc.get("name"),
        dim=dim,
        source=Source(size=tuple(doc["source"]["size"])) if "source" in doc else None,
        boxes=tuple(
            Box(
                id=b["id"],
                size=tuple(b["size"]),
                at=_vec(b.get("at")),
                orientations=tuple(b.get("orientations", all_orientations(dim))),
                target=b.get("target"),
            )
            for b in doc["boxes"]
        ),
        containers=tuple(
            ContainerType(id=c["id"], size=tuple(c["size"]), count=c.get("count", 1)) for c in doc["containers"]
        ),
        rules=rules,
        objective=Objective(minimise=obj_doc["minimise"], then=obj_doc.get("then", "none")),
        known=None
        if known_doc is None
        else Known(source=known_doc["source"], optimum=known_doc.get("optimum"), infeasible=bool(known_doc.get("infeasible", False))),
    )
    if validate:
        validate_instance(instance, file=file)
    return instance


def plan_from_dict(doc: Any, file: Optional[str] = None) -> Plan:
    _check_schema(doc, "plan", file)
    return Plan(
        instance=doc.get("instance"),
        moves=tuple(
            Move(
                box=m["box"],
                container=(m["container"][0], m["container"][1]),
                orientation=m["orientation"],
                at=tuple(m["at"]),
                grip=m.get("grip"),
            )
            for m in doc["moves"]
        ),
    )


def result_from_dict(doc: Any, file: Optional[str] = None) -> Result:
    _check_schema(doc, "result", file)
    tb = doc.get("tiebreak")
    sv = doc.get("solver")
    return Result(
        instance=doc.get("instance"),
        status=doc["status"],
        objective=doc.get("objective"),
        bound=doc.get("bound"),
        gap=doc.get("gap"),
        tiebreak=None if tb is None else TieBreak(name=tb["name"], value=tb["value"], proved=tb["proved"]),
        bounds=dict(doc.get("bounds", {})),
        plan=None if doc.get("plan") is None else plan_from_dict(doc["plan"], file=file),
        checked=bool(doc.get("checked", False)),
        solver=None if sv is None else SolverInfo(**sv),
        notes=tuple(doc.get("notes", ())),
        seconds=doc.get("seconds"),
        provenance=_provenance_from_dict(doc.get("provenance")),
    )


def _provenance_from_dict(doc: Optional[dict]) -> Optional[Provenance]:
    if doc is None:
        return None
    return Provenance(
        instance_sha256=doc["instance_sha256"], tool_version=doc["tool_version"],
        solvers=dict(doc.get("solvers", {})), date=doc.get("date", ""),
        proof=tuple(ProofStep(**step) for step in doc.get("proof", ())),
    )


def _provenance_to_dict(p: Optional[Provenance]) -> Optional[dict]:
    if p is None:
        return None
    steps = [{k: v for k, v in vars(step).items() if v is not None} for step in p.proof]
    return {"instance_sha256": p.instance_sha256, "tool_version": p.tool_version, "solvers": dict(p.solvers),
            "date": p.date, "proof": steps}


def instance_digest(instance: Instance) -> str:
    """SHA-256 of the instance's canonical JSON (keys sorted, no spaces): the same data, the same hash."""
    import hashlib

    text = json.dumps(instance_to_dict(instance), sort_keys=True, separators=(",", ":"), allow_nan=False)
    return hashlib.sha256(text.encode("utf-8")).hexdigest()


# ---------------------------------------------------------------- model -> dict

def _num(x: Optional[float]) -> Optional[float]:
    """Integral floats written as ints, so integer data stay integer on disk; no JSON for infinity.

    An infinite value (a bound proving infeasibility) is written as null: JSON has no infinity,
    and the reason for an `infeasible` status is in the result's notes.
    """
    if isinstance(x, float) and not math.isfinite(x):
        return None
    if isinstance(x, float) and x.is_integer() and abs(x) < 2**53:
        return int(x)
    return x


def _nums(v: Optional[tuple]) -> Optional[list]:
    return None if v is None else [_num(x) for x in v]


def instance_to_dict(instance: Instance) -> dict:
    """The full document of an instance (every rule written out explicitly)."""
    doc: dict[str, Any] = {"format": "stackproof/instance", "version": 1}
    if instance.name is not None:
        doc["name"] = instance.name
    doc["dim"] = instance.dim
    if instance.source is not None:
        doc["source"] = {"size": _nums(instance.source.size)}
    boxes = []
    for b in instance.boxes:
        bd: dict[str, Any] = {"id": b.id, "size": _nums(b.size)}
        if b.at is not None:
            bd["at"] = _nums(b.at)
        bd["orientations"] = list(b.orientations)
        if b.target is not None:
            bd["target"] = b.target
        boxes.append(bd)
    doc["boxes"] = boxes
    doc["containers"] = [{"id": c.id, "size": _nums(c.size), "count": c.count} for c in instance.containers]
    r = instance.rules
    support: dict[str, Any] = {"rule": r.support.rule}
    if r.support.min_fraction is not None:
        support["min_fraction"] = r.support.min_fraction
    doc["rules"] = {
        "support": support,
        "loading": r.loading,
        "access": r.access,
        "side_clearance": _num(r.side_clearance),
        "integer_positions": r.integer_positions,
        "tolerance": r.tolerance,
    }
    doc["objective"] = {"minimise": instance.objective.minimise, "then": instance.objective.then}
    if instance.known is not None:
        k = instance.known
        doc["known"] = {"infeasible": True, "source": k.source} if k.infeasible else {"optimum": _num(k.optimum), "source": k.source}
    return doc


def move_to_dict(m: Move) -> dict:
    d: dict[str, Any] = {"box": m.box, "container": [m.container[0], m.container[1]], "orientation": m.orientation, "at": _nums(m.at)}
    if m.grip is not None:
        d["grip"] = m.grip
    return d


def plan_to_dict(plan: Plan) -> dict:
    return {"format": "stackproof/plan", "version": 1, "instance": plan.instance, "moves": [move_to_dict(m) for m in plan.moves]}


def result_to_dict(result: Result) -> dict:
    s = result.solver
    solver = None
    if s is not None:
        solver = {k: v for k, v in vars(s).items() if v is not None or k in ("time_limit_s",)}
    return {
        "format": "stackproof/result",
        "version": 1,
        "instance": result.instance,
        "status": result.status,
        "objective": _num(result.objective),
        "bound": _num(result.bound),
        "gap": result.gap,
        "tiebreak": None if result.tiebreak is None else {"name": result.tiebreak.name, "value": _num(result.tiebreak.value), "proved": result.tiebreak.proved},
        "bounds": {k: _num(v) for k, v in result.bounds.items() if math.isfinite(v)},
        "plan": None if result.plan is None else plan_to_dict(result.plan),
        "checked": result.checked,
        "solver": solver,
        "notes": list(result.notes),
        "seconds": result.seconds,
        **({} if result.provenance is None else {"provenance": _provenance_to_dict(result.provenance)}),
    }


# ---------------------------------------------------------------- writing

def dumps(doc: Any) -> str:
    """Deterministic JSON text (same document, same bytes)."""
    return json.dumps(doc, indent=2, ensure_ascii=False, allow_nan=False) + "\n"


def _umask() -> int:
    """The process umask, read without changing it (Linux /proc); else set-and-restore."""
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError, IndexError):
        pass
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def file_mode(target: Path) -> int:
    """The one permission rule for every file the tool writes, as for a plain `open(path, "w")`:
    a new file gets 0666 minus the umask; a file that is replaced keeps its mode."""
    try:
        return stat.S_IMODE(target.stat().st_mode)
    except OSError:
        return 0o666 & ~_umask()


def write_bytes_atomic(path: PathLike, data: bytes) -> None:
    """Write `data` so that `path` is either untouched or complete: temp file, fsync, rename.

    Permissions follow `file_mode` (the user's umask), not the temporary file's private 0600.
    """
    target = Path(path)
    directory = target.parent if str(target.parent) else Path(".")
    directory.mkdir(parents=True, exist_ok=True)
    mode = file_mode(target)
    fd, tmp = tempfile.mkstemp(prefix=f".{target.name}.", suffix=".tmp", dir=directory)
    try:
        with os.fdopen(fd, "wb") as fh:
            os.fchmod(fh.fileno(), mode)
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.replace(tmp, target)
    except BaseException:
        try:
            os.unlink(tmp)
        except FileNotFoundError:
            pass
        raise


def write_text_atomic(path: PathLike, text: str) -> None:
    """Write UTF-8 `text` atomically (see write_bytes_atomic)."""
    write_bytes_atomic(path, text.encode("utf-8"))


def write_json(path: PathLike, doc: Any) -> None:
    """Write a JSON document atomically."""
    write_text_atomic(path, dumps(doc))


def check_output(path: PathLike, option: str, *, folder: bool = False, append: bool = False) -> Path:
    """Fail fast, before any long work, when `path` cannot be written: an InputError naming the
    option and the path (exit 2 in the CLI). Nothing is created or changed.

    A file output must not be an existing folder (nor a folder output an existing file); a file
    opened for `append` must be writable; otherwise the nearest existing folder on the way must take
    a new file, which is probed by creating and removing an empty temporary file (this catches
    read-only file systems and missing permissions, also for root).
    """
    target = Path(path)
    file = str(path)

    def fail(message: str):
        raise InputError(file, [(option, message)])

    if not file:
        fail("is empty; give a path")
    if folder and target.exists() and not target.is_dir():
        fail("is a file, not a folder")
    if not folder and target.is_dir():
        fail("is a folder; give a file name")
    if append and target.is_file():
        try:
            with open(target, "ab"):
                pass
        except OSError as exc:
            fail(f"cannot be appended to ({os_error_text(exc)})")
        return target
    place = target if folder else target.parent
    nearest = place
    while not nearest.exists() and nearest != nearest.parent:
        nearest = nearest.parent
    if not nearest.is_dir():
        fail(f"cannot create folder {place}: {nearest} is a file")
    try:
        fd, probe = tempfile.mkstemp(prefix=".stackproof-probe-", dir=nearest)
        os.close(fd)
        os.unlink(probe)
    except OSError as exc:
        if nearest == place:
            fail(f"cannot write in folder {place} ({os_error_text(exc)})")
        fail(f"folder {place} is missing and cannot be created in {nearest} ({os_error_text(exc)})")
    return target


def os_error_text(exc: OSError) -> str:
    """An OS error in plain lower-case words (`read-only file system`), without the Python repr."""
    return (exc.strerror or type(exc).__name__).lower()
