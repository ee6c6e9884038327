"""Pictures of instances, plans and precedence graphs, and the step-through page.

    draw(instance, plan=None, path="plan.svg", color_by="destination")   # .svg or .png
    write_page(instance, plan, "plan.html")                              # self-contained HTML

A dim-2 instance is drawn as an elevation (source and targets side by side at one scale);
a dim-3 instance as isometric views. Without a plan: the instance and its precedence graph.
Every file is written atomically (temp file in the same folder, then rename).
"""
from __future__ import annotations

import os
from pathlib import Path
from typing import Optional, Union

from ..io import write_bytes_atomic
from ..model import Instance, Plan, Result
from .timeline import Replay, replay
from .shapes import Scene
from .views import COLOR_BY, check_color_by

FORMATS = ("svg", "png", "html")
PathLike = Union[str, os.PathLike]

__all__ = ["COLOR_BY", "FORMATS", "draw", "write_page", "render", "scene", "replay"]


def scene(instance: Instance, plan: Optional[Plan] = None, color_by: str = "destination",
          result: Optional[Result] = None) -> Scene:
    """The picture of `instance` (and `plan`) as drawing primitives: elevation in 2D, isometric in 3D;
    `result` adds the solver's status, bound and gap to the title."""
    return scene_of(replay(instance, plan), color_by, result)


def scene_of(rp: Replay, color_by: str = "destination", result: Optional[Result] = None) -> Scene:
    check_color_by(color_by)
    if rp.instance.dim == 2:
        from .elevation import scene as build
    else:
        from .iso3d import scene as build
    return build(rp, color_by, result)


def render(instance: Instance, plan: Optional[Plan] = None, fmt: str = "svg", color_by: str = "destination",
           result: Optional[Result] = None) -> bytes:
    """The picture or page as bytes in format `fmt` ("svg", "png" or "html"); `result` adds the
    solver's claims (status, bound, gap) to the title and the page."""
    if fmt not in FORMATS:
        raise ValueError(f"format must be one of {FORMATS}, not {fmt!r}")
    if fmt == "html":
        from .page import page_html

        return page_html(instance, plan, color_by, result).encode("utf-8")
    s = scene(instance, plan, color_by, result)
    if fmt == "svg":
        from .svg import to_svg

        return to_svg(s).encode("utf-8")
    from .raster import to_png

    return to_png(s)


def draw(instance: Instance, plan: Optional[Plan] = None, path: PathLike = "drawing.svg",
         color_by: str = "destination", result: Optional[Result] = None) -> Path:
    """Write the picture (or, for a .html path, the page) of `instance` and `plan` to `path`.

    The format follows the file's extension (.svg, .png, .html).
    """
    target = Path(path)
    fmt = target.suffix.lower().lstrip(".")
    if fmt not in FORMATS:
        raise ValueError(f"{target}: extension must be one of .svg, .png, .html")
    write_bytes_atomic(target, render(instance, plan, fmt, color_by, result))
    return target


def write_page(instance: Instance, plan: Optional[Plan], path: PathLike, color_by: str = "destination",
               result: Optional[Result] = None) -> Path:
    """Write the self-contained step-through page of `plan` on `instance` to `path`."""
    target = Path(path)
    write_bytes_atomic(target, render(instance, plan, "html", color_by, result))
    return target
