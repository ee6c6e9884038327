"""Render a `Scene` to PNG with matplotlib's Agg backend (pixels map 1:1 at 100 dpi)."""
from __future__ import annotations

import io

from .shapes import Line, Poly, Scene, Text, walk

DPI = 100


def to_png(scene: Scene) -> bytes:
    """PNG bytes of `scene`, `scene.width` x `scene.height` pixels (artists added without
    autoscaling: the limits are the canvas)."""
    from matplotlib.backends.backend_agg import FigureCanvasAgg
    from matplotlib.figure import Figure
    from matplotlib.lines import Line2D
    from matplotlib.patches import FancyArrowPatch, Polygon

    fig = Figure(figsize=(scene.width / DPI, scene.height / DPI), dpi=DPI)
    FigureCanvasAgg(fig)
    ax = fig.add_axes((0, 0, 1, 1))
    ax.set_xlim(0, scene.width)
    ax.set_ylim(scene.height, 0)
    ax.set_axis_off()
    pt = 72.0 / DPI  # points per pixel
    for z, it in enumerate(walk(scene.items)):
        if isinstance(it, Poly):
            ax.add_artist(Polygon(it.points, closed=True, facecolor=it.fill, edgecolor=it.stroke,
                                 linewidth=it.width * pt, linestyle=_dash(it.dash, it.width), zorder=z,
                                 alpha=None if it.opacity == 1 else it.opacity))
        elif isinstance(it, Line):
            if it.halo:
                ax.add_artist(Line2D([it.a[0], it.b[0]], [it.a[1], it.b[1]], color="white", alpha=0.8,
                                     linewidth=(it.width + 2.5) * pt, solid_capstyle="round", zorder=z))
            if it.arrow:
                style = "-|>" if it.arrow == "solid" else "->"
                ax.add_artist(FancyArrowPatch(it.a, it.b, arrowstyle=style, mutation_scale=9, color=it.stroke,
                                             linewidth=it.width * pt, linestyle=_dash(it.dash, it.width),
                                             shrinkA=0, shrinkB=0, zorder=z))
            else:
                ax.add_artist(Line2D([it.a[0], it.b[0]], [it.a[1], it.b[1]], color=it.stroke, linewidth=it.width * pt,
                                     linestyle=_dash(it.dash, it.width), zorder=z))
        elif isinstance(it, Text):
            ha = {"start": "left", "middle": "center", "end": "right"}[it.anchor]
            ax.text(it.x, it.y, it.text, fontsize=it.size * pt, color=it.colour, ha=ha, va="center_baseline",
                    fontweight=it.weight, zorder=z, family="DejaVu Sans", rotation=it.rotate, rotation_mode="anchor")
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=DPI, facecolor="white")
    return buf.getvalue()


def _dash(dash, width: float):
    """An SVG dash array in pixels as a matplotlib line style (its dashes scale with line width)."""
    if not dash or dash == "none":
        return "solid"
    return (0, tuple(float(v) / max(width, 0.1) for v in dash.split()))
