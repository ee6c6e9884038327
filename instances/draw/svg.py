"""Render a `Scene` as SVG text: one <polygon> per shape, groups with their data attributes."""
from __future__ import annotations

from xml.sax.saxutils import escape, quoteattr

from .shapes import Group, Item, Line, Poly, Scene, Text

FONT = "DejaVu Sans, Verdana, Arial, sans-serif"

_DEFS = """<defs>
<marker id="head-solid" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="7" markerHeight="7" orient="auto-start-reverse" markerUnits="userSpaceOnUse"><path d="M0,0 L10,5 L0,10 z" fill="#000000"/></marker>
<marker id="head-open" viewBox="0 0 10 10" refX="9" refY="5" markerWidth="8" markerHeight="8" orient="auto-start-reverse" markerUnits="userSpaceOnUse"><path d="M0,0 L10,5 L0,10" fill="none" stroke="#5A5A5A" stroke-width="1.6"/></marker>
</defs>"""


def to_svg(scene: Scene, standalone: bool = True) -> str:
    """SVG text for `scene`; `standalone` adds the XML declaration (off when inlined in HTML)."""
    head = '<?xml version="1.0" encoding="UTF-8"?>\n' if standalone else ""
    out = [head + f'<svg xmlns="http://www.w3.org/2000/svg" width="{scene.width:.0f}" height="{scene.height:.0f}" '
           f'viewBox="0 0 {scene.width:.2f} {scene.height:.2f}" font-family={quoteattr(FONT)} id="drawing">',
           f"<title>{escape(scene.title)}</title>", _DEFS,
           f'<rect x="0" y="0" width="{scene.width:.2f}" height="{scene.height:.2f}" fill="#FFFFFF"/>']
    for it in scene.items:
        _item(it, out)
    out.append("</svg>\n")
    return "\n".join(out)


def _f(v: float) -> str:
    return f"{v:.2f}".rstrip("0").rstrip(".")


def _item(it: Item, out: list[str]) -> None:
    if isinstance(it, Group):
        attrs = "".join(f" {k}={quoteattr(v)}" for k, v in it.attrs.items())
        out.append(f"<g{attrs}>")
        if it.title:
            out.append(f"<title>{escape(it.title)}</title>")
        for sub in it.items:
            _item(sub, out)
        out.append("</g>")
    elif isinstance(it, Poly):
        pts = " ".join(f"{_f(x)},{_f(y)}" for x, y in it.points)
        dash = f' stroke-dasharray="{it.dash}"' if it.dash else ""
        cls = f' class="{it.cls}"' if it.cls else ""
        op = f' fill-opacity="{it.opacity:g}"' if it.opacity != 1 else ""
        out.append(f'<polygon{cls} points="{pts}" fill="{it.fill}"{op} stroke="{it.stroke}" stroke-width="{it.width:g}"{dash} stroke-linejoin="round"/>')
    elif isinstance(it, Line):
        cls = f' class="{it.cls}"' if it.cls else ""
        coords = f'x1="{_f(it.a[0])}" y1="{_f(it.a[1])}" x2="{_f(it.b[0])}" y2="{_f(it.b[1])}"'
        if it.halo:
            out.append(f'<line class="halo" {coords} stroke="#FFFFFF" stroke-opacity="0.8" stroke-width="{it.width + 2.5:g}" stroke-linecap="round"/>')
        dash = f' stroke-dasharray="{it.dash}"' if it.dash else ""
        head = f' marker-end="url(#head-{it.arrow})"' if it.arrow else ""
        out.append(f'<line{cls} {coords} stroke="{it.stroke}" stroke-width="{it.width:g}"{dash}{head}/>')
    elif isinstance(it, Text):
        cls = f' class="{it.cls}"' if it.cls else ""
        weight = ' font-weight="bold"' if it.weight == "bold" else ""
        turn = f' transform="rotate({-it.rotate:g} {_f(it.x)} {_f(it.y)})"' if it.rotate else ""
        out.append(f'<text{cls} x="{_f(it.x)}" y="{_f(it.y)}" font-size="{it.size:.1f}" fill="{it.colour}" '
                   f'text-anchor="{it.anchor}" dominant-baseline="central"{weight}{turn}>{escape(it.text)}</text>')
