"""Loaders for the classic cutting-and-packing text files of the published benchmark folder.

The folder (``shared/benchmarks/published``: a ``MANIFEST.json`` and the original text files)
is read in place, never copied. Every manifest entry becomes an `Instance` of the classic
problem (PROBLEM.md section 5): no source, loading ``any``, support ``none``, integer
positions, and ``known`` set from the manifest with its source and whether the value was
recalled from memory.

Readings chosen here, each the physical one:

* ``strip2d``: one open-top container ``strip`` of the strip width; a box's first extent runs
  along the strip width, its second is its height. The field order differs by set and follows
  each entry's ``format_notes`` (ngcut / cgcut / gcut: width = 2nd number, height = 1st).
* ``bin2d``: ``count = n`` identical closed bins ``L x W`` (enough for any packing, so the
  bin optimum is unchanged); the item's ``l`` runs along ``L`` (x), ``w`` along ``W`` (y).
* ``bin1d``: 1D bin packing is 2D bin packing with unit-height items in unit-height bins (a box
  filling the bin's height cannot stack, so only the widths add up). Sizes are scaled by 10 to
  integers, as the format notes suggest (capacity 100.0 becomes 1000); the bin count is unchanged.
* orientations: tipping (``yx``) is allowed only when the literature of the variant allows
  rotation AND the stated optimum is known to hold with rotation; otherwise only ``xy``. A
  rotation flag of ``null`` (source silent) gives ``xy``: the fixed-orientation optimum is the
  one the data were published with, and it stays valid.

Integer positions lose nothing for integer data: a packing can always be pushed down and left
until every item touches an item or a wall, so every coordinate is a sum of item sizes
(Herz 1972; Christofides & Whitlock 1977, "normal patterns").
"""
from __future__ import annotations

import json
from dataclasses import dataclass
from decimal import Decimal, InvalidOperation
from pathlib import Path
from typing import Callable, Optional, Sequence

from instances.errors import InputError
from instances.model import Box, ContainerType, Instance, Known, Objective, Rules, Support
from instances.validate import validate_instance

MANIFEST = "MANIFEST.json"
PROBLEMS = ("strip2d", "bin2d", "bin1d")
ONE_D_SCALE = 10  # Falkenauer sizes have one decimal


@dataclass(frozen=True)
class PublishedEntry:
    """One manifest entry turned into an instance, with where it came from."""

    set: str
    name: str
    problem: str
    file: Path
    instance: Instance
    from_memory: bool


# ---------------------------------------------------------------- text parsing


class _Tokens:
    """Whitespace tokens of a text file with their line numbers, for errors that say where."""

    def __init__(self, path: Path):
        self.file = str(path)
        try:
            text = path.read_text(encoding="utf-8-sig")
        except FileNotFoundError:
            raise InputError.one(self.file, "$", "file not found") from None
        except (OSError, UnicodeDecodeError) as exc:
            raise InputError.one(self.file, "$", f"cannot read file: {exc}") from None
        self._items = [(tok, ln) for ln, line in enumerate(text.splitlines(), 1) for tok in line.split()]
        self._pos = 0

    def _take(self, what: str) -> tuple[str, int]:
        if self._pos >= len(self._items):
            last = self._items[-1][1] if self._items else 0
            raise InputError.one(self.file, f"line {last + 1}", f"file ends early: expected {what}")
        tok = self._items[self._pos]
        self._pos += 1
        return tok

    def word(self, what: str) -> str:
        return self._take(what)[0]

    def integer(self, what: str, positive: bool = True) -> int:
        tok, ln = self._take(what)
        try:
            value = int(tok)
        except ValueError:
            raise InputError.one(self.file, f"line {ln}", f"{what} must be an integer, got {tok!r}") from None
        if positive and value <= 0:
            raise InputError.one(self.file, f"line {ln}", f"{what} must be positive, got {value}")
        return value

    def scaled(self, what: str, scale: int) -> int:
        """A decimal number times `scale`, which must come out an integer (exact, no float rounding)."""
        tok, ln = self._take(what)
        try:
            value = Decimal(tok) * scale
        except InvalidOperation:
            raise InputError.one(self.file, f"line {ln}", f"{what} must be a number, got {tok!r}") from None
        if value != value.to_integral_value() or value <= 0:
            raise InputError.one(self.file, f"line {ln}", f"{what} times {scale} must be a positive integer, got {tok}")
        return int(value)

    def seek_word(self, word: str) -> None:
        """Move to just after the token `word` (multi-instance files)."""
        for k, (tok, _) in enumerate(self._items):
            if tok == word:
                self._pos = k + 1
                return
        raise InputError.one(self.file, "$", f"instance {word!r} not found in file")


@dataclass(frozen=True)
class _Parsed:
    """What a classic file says: the container extents and the item extents, in file order."""

    container: tuple[int, ...]
    items: list[tuple[int, int]]
    stated_optimum: Optional[int] = None  # optimum written in the file itself, if any


def _strip_plain(tokens: _Tokens, entry: dict) -> _Parsed:
    """Hopper-Turton C and Hopper N/T: `n`, `W Hopt`, then n lines `w h`."""
    n = tokens.integer("number of items n (line 1)")
    width = tokens.integer("strip width W (line 2)")
    hopt = tokens.integer("optimal height (line 2)")
    items = [(tokens.integer(f"width of item {k + 1}"), tokens.integer(f"height of item {k + 1}")) for k in range(n)]
    return _Parsed((width,), items, stated_optimum=hopt)


def _orlib_pieces(tokens: _Tokens, entry: dict, with_copies: bool) -> tuple[int, int, list[tuple[int, int]]]:
    """OR-Library ngcut/cgcut (`l w d v`) and gcut (`l w v`): stock L W and the expanded (l, w) list."""
    m = tokens.integer("number of pieces m (line 1)")
    length = tokens.integer("stock length L (line 2)")
    width = tokens.integer("stock width W (line 2)")
    pieces: list[tuple[int, int]] = []
    for k in range(m):
        l = tokens.integer(f"length l of piece {k + 1}")
        w = tokens.integer(f"width w of piece {k + 1}")
        copies = tokens.integer(f"copies d of piece {k + 1}") if with_copies else 1
        tokens.integer(f"value v of piece {k + 1}", positive=False)
        pieces += [(l, w)] * copies
    return length, width, pieces


def _orlib(with_copies: bool) -> Callable[[_Tokens, dict], _Parsed]:
    def parse(tokens: _Tokens, entry: dict) -> _Parsed:
        length, width, pieces = _orlib_pieces(tokens, entry, with_copies)
        if entry["problem"] == "strip2d":
            # format_notes: strip width = W; item width = w (2nd number), height = l (1st).
            return _Parsed((width,), [(w, l) for l, w in pieces])
        # bin version: bins L x W, item l along L, w along W.
        return _Parsed((length, width), pieces)

    return parse


def _beng(tokens: _Tokens, entry: dict) -> _Parsed:
    """Bengtsson: `n`, `A B`, then n lines `id a b`; strip width A, item width a, height b."""
    n = tokens.integer("number of items n (line 1)")
    width = tokens.integer("strip width A (line 2)")
    tokens.integer("original bin height B (line 2)")
    items = []
    for k in range(n):
        tokens.integer(f"id of item {k + 1}", positive=False)
        items.append((tokens.integer(f"width a of item {k + 1}"), tokens.integer(f"height b of item {k + 1}")))
    return _Parsed((width,), items)


def _falkenauer(tokens: _Tokens, entry: dict) -> _Parsed:
    """OR-Library binpack: per problem an id line, `C n b`, then n sizes (scaled to integers)."""
    tokens.seek_word(entry["instance_in_file"])
    capacity = tokens.scaled("bin capacity C", ONE_D_SCALE)
    n = tokens.integer("number of items n")
    best = tokens.integer("best known number of bins b")
    items = [(tokens.scaled(f"size of item {k + 1}", ONE_D_SCALE), 1) for k in range(n)]
    return _Parsed((capacity, 1), items, stated_optimum=best)


# format name prefix (manifest `format`) -> parser
_PARSERS: dict[str, Callable[[_Tokens, dict], _Parsed]] = {
    "HT2001 plain text": _strip_plain,
    "Hopper N/T plain text": _strip_plain,
    "OR-Library ngcut": _orlib(with_copies=True),
    "OR-Library cgcut": _orlib(with_copies=True),
    "OR-Library gcut": _orlib(with_copies=False),
    "BENG": _beng,
    "OR-Library binpack": _falkenauer,
}


def _parser_for(entry: dict, where: str) -> Callable[[_Tokens, dict], _Parsed]:
    fmt = entry.get("format", "")
    for prefix, parser in _PARSERS.items():
        if fmt.startswith(prefix):
            return parser
    raise InputError.one(where, "format", f"unknown classic format {fmt!r}; known: {', '.join(_PARSERS)}")


# ---------------------------------------------------------------- entry -> instance


def orientations_for(entry: dict) -> tuple[str, ...]:
    """`("xy", "yx")` only when rotation is allowed and the optimum holds with it; else `("xy",)`."""
    if entry["problem"] == "bin1d":
        return ("xy",)
    if entry.get("rotation_allowed") is True and entry.get("optimum_valid_with_rotation") is True:
        return ("xy", "yx")
    return ("xy",)


def known_for(entry: dict) -> Known:
    """The manifest's optimum with its provenance; a from-memory value says so in the source text."""
    memory = bool(entry.get("optimum_from_memory"))
    flag = "value recalled from memory by the data curator, not read in a file" if memory else "value read in a file"
    source = f"{entry['optimum_source']} [published benchmark manifest, {entry['set']}/{entry['name']}; {flag}]"
    return Known(source=source, optimum=entry["optimum"])


def _check_against_manifest(parsed: _Parsed, entry: dict, file: str) -> None:
    """The file must agree with the manifest (item count, container, stated optimum): a wrong
    field order would otherwise load silently as a different instance."""
    problems = []
    if len(parsed.items) != entry["items"]:
        problems.append(("items", f"file has {len(parsed.items)} items, manifest says {entry['items']}"))
    c = entry.get("container", {})
    expected = {
        "strip2d": (c.get("width"),),
        "bin2d": (c.get("L"), c.get("W")),
        "bin1d": (None if c.get("capacity") is None else int(Decimal(str(c["capacity"])) * ONE_D_SCALE), 1),
    }[entry["problem"]]
    if tuple(parsed.container) != expected:
        problems.append(("container", f"file gives {parsed.container}, manifest gives {expected}"))
    if parsed.stated_optimum is not None and parsed.stated_optimum != entry["optimum"]:
        problems.append(("optimum", f"file states {parsed.stated_optimum}, manifest says {entry['optimum']}"))
    if problems:
        raise InputError(file, [(f"manifest entry {entry['set']}/{entry['name']}: {p}", m) for p, m in problems])


def instance_from_entry(entry: dict, folder: Path) -> Instance:
    """Read the text file of one manifest entry and build its classic Instance."""
    where = f"{folder / MANIFEST} ({entry.get('set')}/{entry.get('name')})"
    missing = [k for k in ("set", "name", "problem", "file", "format", "optimum", "optimum_kind", "optimum_source", "items") if k not in entry]
    if missing:
        raise InputError.one(where, "$", f"manifest entry lacks {', '.join(missing)}")
    problem = entry["problem"]
    if problem not in PROBLEMS:
        raise InputError.one(where, "problem", f"must be one of {', '.join(PROBLEMS)}, got {problem!r}")
    kind = "height" if problem == "strip2d" else "bins"
    if entry["optimum_kind"] != kind:
        raise InputError.one(where, "optimum_kind", f"a {problem} entry must have optimum_kind {kind!r}, got {entry['optimum_kind']!r}")
    path = folder / entry["file"]
    parsed = _parser_for(entry, where)(_Tokens(path), entry)
    _check_against_manifest(parsed, entry, str(path))

    orientations = orientations_for(entry)
    digits = len(str(len(parsed.items)))
    boxes = tuple(
        Box(id=f"p{k + 1:0{digits}d}", size=(float(w), float(h)), orientations=orientations)
        for k, (w, h) in enumerate(parsed.items)
    )
    if problem == "strip2d":
        containers = (ContainerType(id="strip", size=(float(parsed.container[0]), None), count=1),)
    else:
        size = tuple(float(x) for x in parsed.container)
        containers = (ContainerType(id="bin", size=size, count=len(boxes)),)
    instance = Instance(
        dim=2,
        boxes=boxes,
        containers=containers,
        source=None,
        rules=Rules(support=Support(rule="none"), loading="any", access="none", integer_positions=True),
        objective=Objective(minimise=kind),
        name=entry["name"],
        known=known_for(entry),
    )
    validate_instance(instance, file=str(path))
    return instance


def read_manifest(folder: Path | str) -> list[dict]:
    """The manifest's entries (a JSON list of objects)."""
    folder = Path(folder)
    file = folder / MANIFEST
    try:
        doc = json.loads(file.read_text(encoding="utf-8"))
    except FileNotFoundError:
        raise InputError.one(str(file), "$", "file not found") from None
    except (OSError, ValueError) as exc:
        raise InputError.one(str(file), "$", f"cannot read manifest: {exc}") from None
    if not isinstance(doc, list) or not all(isinstance(e, dict) for e in doc):
        raise InputError.one(str(file), "$", "a published manifest must be a JSON list of objects")
    return doc


def is_published_manifest(doc: object) -> bool:
    """True for a manifest in the published folder's layout (entries with a classic `problem`)."""
    return isinstance(doc, list) and bool(doc) and all(isinstance(e, dict) and e.get("problem") in PROBLEMS for e in doc)


def load_published(folder: Path | str, names: Optional[Sequence[str]] = None) -> list[PublishedEntry]:
    """Every entry of the published folder (or only those whose name is in `names`), in manifest order."""
    folder = Path(folder)
    out = []
    for entry in read_manifest(folder):
        if names is not None and entry.get("name") not in names:
            continue
        out.append(
            PublishedEntry(
                set=entry["set"],
                name=entry["name"],
                problem=entry["problem"],
                file=folder / entry["file"],
                instance=instance_from_entry(entry, folder),
                from_memory=bool(entry.get("optimum_from_memory")),
            )
        )
    return out


def shared_folder() -> Optional[Path]:
    """The shared folder: $STACKPROOF_SHARED, else `../shared` next to the repository; None if absent."""
    import os

    env = os.environ.get("STACKPROOF_SHARED")
    path = Path(env) if env else Path(__file__).resolve().parents[1].parent / "shared"
    return path if path.is_dir() else None


def published_folder() -> Optional[Path]:
    """`<shared>/benchmarks/published` when it exists (tests skip without it)."""
    shared = shared_folder()
    if shared is None:
        return None
    path = shared / "benchmarks" / "published"
    return path if (path / MANIFEST).is_file() else None
