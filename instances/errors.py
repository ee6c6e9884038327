"""The one error type for bad input: it names the file, the JSON path and what is wrong."""
from __future__ import annotations

from typing import Iterable, Optional, Sequence, Union

PathPart = Union[str, int]


def json_path(parts: Iterable[PathPart]) -> str:
    """Render a path like ('boxes', 3, 'size', 1) as `boxes[3].size[1]` (`$` for the root)."""
    out = ""
    for part in parts:
        if isinstance(part, int):
            out += f"[{part}]"
        else:
            out += f".{part}" if out else str(part)
    return out or "$"


class InputError(Exception):
    """Unreadable or invalid input. `problems` holds (json path, message) pairs, all of them."""

    def __init__(self, file: Optional[str], problems: Sequence[tuple[str, str]]):
        self.file = file or "<input>"
        self.problems = list(problems)
        super().__init__(str(self))

    def __str__(self) -> str:
        return "\n".join(f"{self.file}: {path}: {msg}" for path, msg in self.problems)

    @classmethod
    def one(cls, file: Optional[str], path: Sequence[PathPart] | str, message: str) -> "InputError":
        p = path if isinstance(path, str) else json_path(path)
        return cls(file, [(p, message)])
