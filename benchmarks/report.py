"""Reports of a benchmark run: `summary.md`, `results.csv` and a self-contained `report.html`.

The HTML page embeds its matplotlib plots (time against number of boxes, gap distribution,
and Dolan-More performance profiles when the records hold several configurations) and links
each instance to a drawing of its checked plan when `instances.draw` is available.
"""
from __future__ import annotations

import base64
import hashlib
import csv
import html
import io
import re
import statistics
import sys
from collections import defaultdict
from pathlib import Path
from typing import Iterable, Mapping, Optional, Sequence

from instances.io import write_text_atomic
from instances.model import Instance

from .profiles import performance_profile
from .results import is_failure, is_proven

CSV_COLUMNS = (
    "key", "set", "name", "n", "minimise", "status", "objective", "bound", "gap", "checked", "known_optimum",
    "contradictions", "problems", "seconds", "solve_seconds", "config", "version", "solver_version", "time_limit", "seed", "date", "hash",
)


# ---------------------------------------------------------------- numbers


def _median(values: Sequence[float]) -> Optional[float]:
    return statistics.median(values) if values else None


def _mean(values: Sequence[float]) -> Optional[float]:
    return statistics.fmean(values) if values else None


def set_summary(records: Sequence[dict]) -> dict:
    """Counts and times of one group of records (one set under one configuration)."""
    gaps = [r["gap"] for r in records if r.get("gap") is not None]
    return {
        "instances": len(records),
        "proven": sum(is_proven(r) for r in records),
        "with_plan": sum(bool(r.get("checked")) for r in records),
        "contradictions": sum(bool(r.get("contradictions")) for r in records),
        "unchecked": sum(bool(r.get("problems")) for r in records),
        "errors": sum(r.get("status") == "error" for r in records),
        "median_seconds": _median([r["seconds"] for r in records if r.get("seconds") is not None]),
        "mean_gap": _mean(gaps),
    }


def grouped(records: Iterable[dict]) -> dict[str, dict[str, list[dict]]]:
    """config label -> set -> records."""
    out: dict[str, dict[str, list[dict]]] = defaultdict(lambda: defaultdict(list))
    for r in records:
        out[config_of(r)][r["set"]].append(r)
    return out


def config_of(r: dict) -> str:
    """What a comparison tells apart: the run configuration and the code version."""
    return f"{r.get('config')} @ {r.get('version')}"


def _fmt(x: Optional[float], spec: str = ".3g") -> str:
    return "-" if x is None else format(x, spec)


def _pct(gap: Optional[float]) -> str:
    """A gap (a fraction in the records and CSV files) as people read it: percent, two decimals."""
    return "-" if gap is None else f"{100 * gap:.2f}%"


# ---------------------------------------------------------------- summary.md and results.csv


def summary_markdown(records: Sequence[dict]) -> str:
    """Per configuration, a table per set: instances, proven, contradictions, median time, mean gap."""
    lines = ["# Benchmark summary", ""]
    for config, sets in sorted(grouped(records).items()):
        lines += [f"## {config}", "", "| set | instances | proven | with plan | contradictions | unchecked | errors | median time (s) | mean gap |",
                  "| --- | ---: | ---: | ---: | ---: | ---: | ---: | ---: | ---: |"]
        everything: list[dict] = []
        for set_name in sorted(sets):
            s = set_summary(sets[set_name])
            everything += sets[set_name]
            lines.append(_row(set_name, s))
        if len(sets) > 1:
            lines.append(_row("**all**", set_summary(everything)))
        lines.append("")
    bad = [r for r in records if is_failure(r)]
    if bad:
        lines += ["## Contradictions and unchecked results", ""]
        for r in sorted(bad, key=lambda r: r["key"]):
            for text in list(r.get("contradictions") or []) + list(r.get("problems") or []):
                lines.append(f"- `{r['key']}` ({config_of(r)}): {text}")
        lines.append("")
    return "\n".join(lines)


def _row(name: str, s: dict) -> str:
    return (f"| {name} | {s['instances']} | {s['proven']} | {s['with_plan']} | {s['contradictions']} | {s['unchecked']} | "
            f"{s['errors']} | {_fmt(s['median_seconds'], '.2f')} | {_pct(s['mean_gap'])} |")


def results_csv(records: Sequence[dict]) -> str:
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(CSV_COLUMNS)
    for r in sorted(records, key=lambda r: (r["key"], config_of(r))):
        known = r.get("known") or {}
        row = dict(r, known_optimum=known.get("optimum"), contradictions="; ".join(r.get("contradictions") or []),
                   problems="; ".join(r.get("problems") or []))
        w.writerow(["" if row.get(c) is None else row.get(c) for c in CSV_COLUMNS])
    return buf.getvalue()


# ---------------------------------------------------------------- plots


def _png(fig) -> str:
    buf = io.BytesIO()
    fig.savefig(buf, format="png", dpi=90, bbox_inches="tight")
    import matplotlib.pyplot as plt

    plt.close(fig)
    return base64.b64encode(buf.getvalue()).decode("ascii")


def _figure():
    import matplotlib

    matplotlib.use("Agg")
    import matplotlib.pyplot as plt

    return plt.subplots(figsize=(6.4, 4))


def _plain(value: float, _pos=None) -> str:
    """A tick label as people write numbers: 0.5, 6, 200, 1e+06 only when very large or small."""
    return f"{value:g}"


def plain_log_axis(axis) -> None:
    """Label a log axis with plain numbers (1, 2, 5, 10, 20, ...) instead of powers of ten."""
    from matplotlib.ticker import FuncFormatter, LogLocator

    def minor(value: float, _pos=None) -> str:  # 2, 3, 5 between powers of ten, when they fit
        lo, hi = sorted(axis.get_view_interval())
        return _plain(value) if lo > 0 and hi / lo <= 100 else ""

    axis.set_major_locator(LogLocator(base=10))
    axis.set_major_formatter(FuncFormatter(_plain))
    axis.set_minor_locator(LogLocator(base=10, subs=(2.0, 3.0, 5.0)))
    axis.set_minor_formatter(FuncFormatter(minor))


def plain_linear_axis(axis, integer: bool = False) -> None:
    """Plain tick labels on a linear axis: no offset, no scientific factor; whole numbers for counts."""
    from matplotlib.ticker import MaxNLocator, ScalarFormatter

    fmt = ScalarFormatter(useOffset=False)
    fmt.set_scientific(False)
    axis.set_major_formatter(fmt)
    if integer:
        axis.set_major_locator(MaxNLocator(integer=True))


def time_figure(records: Sequence[dict]):
    """Seconds against the number of boxes, proven and not proven marked apart (log time axis)."""
    fig, ax = _figure()
    for config, sets in sorted(grouped(records).items()):
        rs = [r for per in sets.values() for r in per if r.get("seconds") is not None]
        proven = [r for r in rs if is_proven(r)]
        other = [r for r in rs if not is_proven(r)]
        line = ax.scatter([r["n"] for r in proven], [max(r["seconds"], 1e-3) for r in proven], marker="o", label=f"{config} (proven)")
        ax.scatter([r["n"] for r in other], [max(r["seconds"], 1e-3) for r in other], marker="x",
                   color=line.get_facecolor()[0] if proven else None, label=f"{config} (not proven)")
    ax.set_xlabel("number of boxes n")
    ax.set_ylabel("wall-clock seconds (own process)")
    ax.set_yscale("log")
    plain_log_axis(ax.yaxis)
    plain_linear_axis(ax.xaxis, integer=True)
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=7)
    return fig


def plot_time_vs_n(records: Sequence[dict]) -> str:
    return _png(time_figure(records))


def gap_histogram(samples: Sequence[tuple[str, list[float]]], xlabel: str, bins: int = 20):
    """Histogram of gaps (fractions, drawn in percent) per label; whole-number count ticks only."""
    fig, ax = _figure()
    samples = [(label, [100 * x for x in g]) for label, g in samples if g]
    if samples:
        low = min(0.0, min(min(g) for _, g in samples))
        top = max(low + 5.0, max(max(g) for _, g in samples))
        ax.hist([g for _, g in samples], bins=bins, range=(low, top), label=[label for label, _ in samples])
        ax.legend(fontsize=7)
    ax.set_xlabel(xlabel)
    ax.set_ylabel("instances")
    plain_linear_axis(ax.xaxis)
    plain_linear_axis(ax.yaxis, integer=True)
    ax.grid(True, alpha=0.3)
    return fig


def plot_gaps(records: Sequence[dict]) -> str:
    samples = [(config, [r["gap"] for per in sets.values() for r in per if r.get("gap") is not None])
               for config, sets in sorted(grouped(records).items())]
    return _png(gap_histogram(samples, "relative gap (objective - bound) / objective, %"))


def profile_costs(records: Sequence[dict]) -> dict[str, dict[str, Optional[float]]]:
    """config -> instance -> seconds to a proven optimum (None when not proven)."""
    costs: dict[str, dict[str, Optional[float]]] = defaultdict(dict)
    for r in records:
        costs[config_of(r)][r["key"]] = max(r["seconds"], 1e-3) if is_proven(r) else None
    return costs


def profile_figure(costs: Mapping[str, Mapping[str, Optional[float]]], xlabel: str):
    """Dolan-More performance profiles as step lines, tau on a log axis with plain labels."""
    prof = performance_profile(costs)
    top = max([p.ratios[-1] for p in prof.values() if p.ratios] + [1.0]) * 1.2
    fig, ax = _figure()
    for name, p in sorted(prof.items()):
        xs = [1.0] + [x for r in p.ratios for x in (r, r)] + [top]
        ys = [0.0] + [y for k, s in enumerate(p.share) for y in ((p.share[k - 1] if k else 0.0), s)] + [p.share[-1] if p.share else 0.0]
        ax.plot(xs, ys, label=name)
    ax.set_xscale("log")
    ax.set_xlim(1.0, top)
    plain_log_axis(ax.xaxis)
    ax.set_ylim(0.0, 1.02)
    plain_linear_axis(ax.yaxis)
    ax.set_xlabel(xlabel)
    ax.set_ylabel("share of instances within factor tau of the best")
    ax.set_title("Performance profile (Dolan & More 2002)")
    ax.grid(True, alpha=0.3)
    ax.legend(fontsize=7)
    return fig


def plot_profiles(costs: Mapping[str, Mapping[str, Optional[float]]], xlabel: str) -> str:
    return _png(profile_figure(costs, xlabel))


# ---------------------------------------------------------------- report.html


def _slug(key: str) -> str:
    return re.sub(r"[^A-Za-z0-9._-]+", "_", key)


def _write_drawings(out: Path, records: Sequence[dict], instances: Mapping[str, Instance]) -> dict[str, str]:
    """Plan pages under out/plans when `instances.draw` exists; record key + config -> relative link."""
    try:
        from instances.draw import write_page
    except ImportError:
        return {}
    from instances.io import plan_from_dict

    links = {}
    for r in records:
        inst = instances.get(r["key"])
        if inst is None or not r.get("checked") or r.get("plan") is None:
            continue
        tag = hashlib.sha256(config_of(r).encode("utf-8")).hexdigest()[:8]
        name = f"plans/{_slug(r['key'])}-{tag}.html"
        try:
            write_page(inst, plan_from_dict(r["plan"]), out / name)
        except Exception as exc:  # a drawing problem must not lose the report
            links[r["key"] + config_of(r)] = ""
            print(f"stackproof bench: no drawing for {r['key']}: {exc}", file=sys.stderr)
            continue
        links[r["key"] + config_of(r)] = name
    return links


def report_html(records: Sequence[dict], links: Mapping[str, str], title: str = "stackproof benchmark report") -> str:
    e = html.escape
    parts = [f"<!DOCTYPE html><html><head><meta charset='utf-8'><title>{e(title)}</title>",
             "<style>body{font-family:sans-serif;margin:2em}table{border-collapse:collapse}td,th{border:1px solid #ccc;"
             "padding:2px 6px;text-align:right}td.l,th.l{text-align:left}.bad{background:#fdd}img{max-width:100%}</style>",
             f"</head><body><h1>{e(title)}</h1>"]
    for config, sets in sorted(grouped(records).items()):
        parts.append(f"<h2>{e(config)}</h2><table><tr><th class=l>set</th><th>instances</th><th>proven</th><th>contradictions</th>"
                     "<th>unchecked</th><th>errors</th><th>median s</th><th>mean gap</th></tr>")
        for set_name in sorted(sets):
            s = set_summary(sets[set_name])
            parts.append(f"<tr><td class=l>{e(set_name)}</td><td>{s['instances']}</td><td>{s['proven']}</td><td>{s['contradictions']}</td>"
                         f"<td>{s['unchecked']}</td><td>{s['errors']}</td><td>{_fmt(s['median_seconds'], '.2f')}</td><td>{_pct(s['mean_gap'])}</td></tr>")
        parts.append("</table>")
    parts.append("<h2>Time against size</h2>")
    parts.append(f"<img alt='time against number of boxes' src='data:image/png;base64,{plot_time_vs_n(records)}'>")
    parts.append("<h2>Gap distribution</h2>")
    parts.append(f"<img alt='gap distribution' src='data:image/png;base64,{plot_gaps(records)}'>")
    costs = profile_costs(records)
    if len(costs) > 1:
        parts.append("<h2>Performance profile: time to a proven optimum</h2>")
        parts.append(f"<img alt='performance profile' src='data:image/png;base64,{plot_profiles(costs, 'tau (time ratio to the fastest)')}'>")
    parts.append("<h2>Instances</h2><table><tr><th class=l>instance</th><th class=l>configuration</th><th>n</th><th class=l>status</th>"
                 "<th>objective</th><th>bound</th><th>known</th><th>gap</th><th>seconds</th><th class=l>plan</th><th class=l>remarks</th></tr>")
    for r in sorted(records, key=lambda r: (r["key"], config_of(r))):
        known = (r.get("known") or {}).get("optimum")
        link = links.get(r["key"] + config_of(r))
        plan = f"<a href='{e(link)}'>drawing</a>" if link else ("checked" if r.get("checked") else "-")
        remarks = "; ".join(list(r.get("contradictions") or []) + list(r.get("problems") or []) + ([] if r.get("checked") else list(r.get("notes") or [])[:1]))
        cls = " class=bad" if is_failure(r) else ""
        parts.append(f"<tr{cls}><td class=l>{e(r['key'])}</td><td class=l>{e(config_of(r))}</td><td>{r['n']}</td><td class=l>{e(r['status'])}</td>"
                     f"<td>{_fmt(r.get('objective'), 'g')}</td><td>{_fmt(r.get('bound'), 'g')}</td><td>{_fmt(known, 'g')}</td>"
                     f"<td>{_pct(r.get('gap'))}</td><td>{_fmt(r.get('seconds'), '.2f')}</td><td class=l>{plan}</td><td class=l>{e(remarks)}</td></tr>")
    parts.append("</table><p>Every objective shown is the plan checker's value of a checked plan. "
                 "Plans are geometric models, not load-securing advice.</p></body></html>\n")
    return "".join(parts)


def write_report(out: str | Path, records: Sequence[dict], instances: Optional[Mapping[str, Instance]] = None) -> list[Path]:
    """Write summary.md, results.csv and report.html (and plan pages) into `out`; return the files."""
    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    links = _write_drawings(out, records, instances or {})
    files = [out / "summary.md", out / "results.csv", out / "report.html"]
    write_text_atomic(files[0], summary_markdown(records))
    write_text_atomic(files[1], results_csv(records))
    write_text_atomic(files[2], report_html(records, links))
    return files


# ---------------------------------------------------------------- grading reports


def write_grade_report(out: str | Path, graded: Mapping[str, Sequence]) -> list[Path]:
    """`grade.csv` and a self-contained `grade.html` for one or several graded plan sources
    (label -> rows of `benchmarks.grade.Graded`), with a quality profile when several are compared."""
    from .grade import summary

    out = Path(out)
    out.mkdir(parents=True, exist_ok=True)
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(("source", "key", "feasible", "objective", "gold", "gold_kind", "gap", "seconds", "violations"))
    for label, rows in graded.items():
        for r in rows:
            w.writerow([label, r.key, r.feasible, _blank(r.objective), _blank(r.gold), r.gold_kind or "", _blank(r.gap),
                        _blank(r.seconds), "; ".join(r.violations[:5])])
    e = html.escape
    parts = ["<!DOCTYPE html><html><head><meta charset='utf-8'><title>stackproof grading report</title>",
             "<style>body{font-family:sans-serif;margin:2em}table{border-collapse:collapse}td,th{border:1px solid #ccc;padding:2px 6px}</style>",
             "</head><body><h1>Grading report</h1><table><tr><th>source</th><th>instances</th><th>feasible</th><th>optimal</th>"
             "<th>mean gap</th><th>median gap</th><th>max gap</th><th>reasons for infeasible plans</th></tr>"]
    for label, rows in graded.items():
        s = summary(rows)
        reasons = ", ".join(f"{k} x{v}" for k, v in s["infeasible_reasons"].items())
        parts.append(f"<tr><td>{e(label)}</td><td>{s['instances']}</td><td>{s['feasible']}</td><td>{s['optimal']}</td>"
                     f"<td>{_pct(s['mean_gap'])}</td><td>{_pct(s['median_gap'])}</td><td>{_pct(s['max_gap'])}</td>"
                     f"<td>{e(reasons)}</td></tr>")
    parts.append("</table>")
    fig = gap_histogram([(label, [r.gap for r in rows if r.gap is not None]) for label, rows in graded.items()],
                        "gap to the gold value (objective - gold) / objective, %")
    parts.append(f"<h2>Gap distribution</h2><img alt='gaps' src='data:image/png;base64,{_png(fig)}'>")
    if len(graded) > 1:
        costs = {label: {r.key: (r.objective if r.feasible else None) for r in rows} for label, rows in graded.items()}
        parts.append("<h2>Performance profile: objective value</h2>")
        parts.append(f"<img alt='performance profile' src='data:image/png;base64,{plot_profiles(costs, 'tau (objective ratio to the best plan)')}'>")
    parts.append("<p>Plans are geometric models, not load-securing advice.</p></body></html>\n")
    files = [out / "grade.csv", out / "grade.html"]
    write_text_atomic(files[0], buf.getvalue())
    write_text_atomic(files[1], "".join(parts))
    return files


def _blank(x):
    return "" if x is None else x
