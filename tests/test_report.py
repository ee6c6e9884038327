"""Tests of benchmarks.profiles and benchmarks.report: performance profiles and report contents."""
from __future__ import annotations

import csv
import io
import math

from hypothesis import given, settings
from hypothesis import strategies as st

from benchmarks.profiles import performance_profile, ratios
from benchmarks.report import results_csv, set_summary, summary_markdown


def test_profile_follows_the_definition_on_a_worked_case():
    # Dolan & More (2002), Math. Programming 91(2):201-213, eq. (1)-(2): r = t / min t, failures infinite,
    # rho(tau) = share of problems with r <= tau. Worked by hand:
    #   a: p1 1, p2 4, p3 fails  -> ratios 1, 2, inf
    #   b: p1 2, p2 2, p3 3      -> ratios 2, 1, 1
    costs = {"a": {"p1": 1.0, "p2": 4.0, "p3": None}, "b": {"p1": 2.0, "p2": 2.0, "p3": 3.0}}
    assert ratios(costs) == {"a": {"p1": 1.0, "p2": 2.0, "p3": math.inf}, "b": {"p1": 2.0, "p2": 1.0, "p3": 1.0}}
    prof = performance_profile(costs)
    assert prof["a"].at(0.99) == 0.0 and prof["a"].at(1.0) == 1 / 3 and prof["a"].at(2.0) == 2 / 3 and prof["a"].at(1e9) == 2 / 3
    assert prof["b"].at(1.0) == 2 / 3 and prof["b"].at(1.999) == 2 / 3 and prof["b"].at(2.0) == 1.0


@settings(max_examples=60, deadline=None)
@given(st.dictionaries(st.sampled_from("abc"), st.dictionaries(st.sampled_from(["p1", "p2", "p3", "p4"]),
                                                               st.one_of(st.none(), st.floats(0.01, 100.0)), min_size=1),
                       min_size=1))
def test_profile_properties(costs):
    prof = performance_profile(costs)
    problems = {p for per in costs.values() for p in per}
    for s, p in prof.items():
        values = [p.at(t) for t in (1.0, 1.5, 3.0, 1e6)]
        assert values == sorted(values) and all(0.0 <= v <= 1.0 for v in values)
        solved = sum(1 for q in problems if costs[s].get(q) is not None)
        assert math.isclose(p.at(math.inf), solved / len(problems))
    # rho(1) sums to at least 1 over solvers for each problem someone solved (ties count for all)
    solved_any = sum(1 for q in problems if any(costs[s].get(q) is not None for s in costs))
    assert sum(p.at(1.0) for p in prof.values()) * len(problems) >= solved_any - 1e-9


def record(key: str, status: str, objective, bound, seconds: float, config: str = "c", **extra) -> dict:
    set_name, name = key.split("/")
    r = {"key": key, "set": set_name, "name": name, "n": 3, "status": status, "objective": objective, "bound": bound,
         "gap": None if objective is None else (objective - bound) / objective, "checked": objective is not None,
         "seconds": seconds, "config": config, "version": "v", "contradictions": [], "problems": [], "known": None}
    r.update(extra)
    return r


def test_summary_counts_and_tables():
    recs = [record("s1/a", "optimal", 2.0, 2.0, 1.0), record("s1/b", "feasible", 4.0, 3.0, 3.0),
            record("s1/c", "error", None, None, 9.0, notes=["killed"]),
            record("s2/d", "optimal", 5.0, 5.0, 2.0, contradictions=["proven optimum 5 differs from the known optimum 4"])]
    s = set_summary(recs[:3])
    assert s == {"instances": 3, "proven": 1, "with_plan": 2, "contradictions": 0, "unchecked": 0, "errors": 1,
                 "median_seconds": 3.0, "mean_gap": 0.125}
    md = summary_markdown(recs)
    assert "| s1 | 3 | 1 | 2 | 0 | 0 | 1 | 3.00 | 12.50% |" in md  # gaps read in percent, as on every command
    assert "| s2 | 1 | 0 | 1 | 1 | 0 | 0 | 2.00 | 0.00% |" in md  # a contradicted optimum is not "proven"
    assert "differs from the known optimum 4" in md
    rows = list(csv.DictReader(io.StringIO(results_csv(recs))))
    assert [r["key"] for r in rows] == ["s1/a", "s1/b", "s1/c", "s2/d"] and rows[2]["objective"] == ""
    assert float(rows[1]["gap"]) == 0.25  # the CSV keeps FORMATS.md's fraction


def _tick_texts(fig, axis: str) -> list[str]:
    fig.canvas.draw()
    ax = fig.axes[0]
    ticks = ax.xaxis if axis == "x" else ax.yaxis
    return [t.get_text() for t in ticks.get_ticklabels(which="both") if t.get_text() and t.get_visible()]


def _close(fig):
    import matplotlib.pyplot as plt

    plt.close(fig)


def test_time_axis_labels_are_plain_numbers():
    """A log time axis spanning under one decade used to print minor ticks as '6x10^0'."""
    from benchmarks.report import time_figure

    recs = [record(f"s/i{k}", "optimal", 1.0, 1.0, seconds) for k, seconds in enumerate((2.5, 4.0, 6.5, 9.0))]
    for k, r in enumerate(recs):
        r["n"] = 5 + 3 * k
    fig = time_figure(recs)
    ys, xs = _tick_texts(fig, "y"), _tick_texts(fig, "x")
    _close(fig)
    assert ys and xs
    for text in ys + xs:
        assert "$" not in text and "10^" not in text and "\u00d7" not in text, text
        float(text.replace("\u2212", "-"))  # a plain number
    assert all(float(t.replace("\u2212", "-")).is_integer() for t in xs), xs


def test_histogram_counts_are_whole_numbers():
    from benchmarks.report import gap_histogram

    fig = gap_histogram([("a", [0.01, 0.02]), ("b", [0.03])], "gap")
    ys = _tick_texts(fig, "y")
    _close(fig)
    assert len(ys) >= 2
    assert all(float(t.replace("\u2212", "-")).is_integer() for t in ys), ys


def test_profile_axis_plain_numbers():
    from benchmarks.report import profile_figure

    fig = profile_figure({"a": {"p1": 1.0, "p2": 3.0}, "b": {"p1": 2.0, "p2": 1.0}}, "tau")
    xs = _tick_texts(fig, "x")
    _close(fig)
    assert xs
    for text in xs:
        assert "$" not in text, text
        float(text)
