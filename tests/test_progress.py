"""Progress display (benchmarks.progress, the bench rows in benchmarks.runner) and the shared
human formatting (benchmarks.text): shown on a terminal only, moves from 1, gaps in percent."""
from __future__ import annotations

import io
import time

from benchmarks.progress import SolveProgress, StatusLine, solve_status
from benchmarks.runner import Progress, record_row
from benchmarks.text import percent, plural, violation_text
from instances.checker import Violation


class FakeTerminal(io.StringIO):
    def isatty(self) -> bool:
        return True


def last_screen_line(text: str) -> str:
    """What a terminal shows on the current line after the carriage returns."""
    return text.split("\n")[-1].split("\r")[-1].rstrip()


def test_status_line_redraws_in_place_and_prints_rows_above():
    tty = FakeTerminal()
    line = StatusLine(tty)
    line.show("a long status text")
    line.row("finished row")
    line.show("short")
    assert "finished row\n" in tty.getvalue()
    assert last_screen_line(tty.getvalue()) == "short"
    line.close()
    assert last_screen_line(tty.getvalue()) == ""


def test_nothing_is_written_when_not_a_terminal_or_quiet():
    plain = io.StringIO()
    for line in (StatusLine(plain), StatusLine(FakeTerminal(), enabled=False)):
        line.show("x")
        line.row("y")
        line.close()
        assert not line.on
    assert plain.getvalue() == ""


def test_solve_progress_shows_incumbent_bound_gap_and_a_ticking_clock():
    tty = FakeTerminal()
    with SolveProgress(StatusLine(tty), interval=0.05) as show:
        show({"stage": "height 8", "incumbent": 9.0, "bound": 8.0, "gap": 1 / 9, "elapsed": 0.2})
        first = tty.getvalue()
        time.sleep(0.3)
        ticked = tty.getvalue()
    assert "incumbent 9" in first and "bound 8" in first and "gap 11.11%" in first
    assert len(ticked) > len(first)  # the ticker redrew the elapsed time between the solver's calls
    assert last_screen_line(tty.getvalue()) == ""  # cleared at the end


def test_solve_status_without_a_plan_shows_dashes():
    text = solve_status({"stage": "bounds", "incumbent": None, "bound": 3.0, "gap": None}, 1.25)
    assert "incumbent -" in text and "bound 3" in text and "gap -" in text and "1.2 s" in text


def test_bench_rows_show_bound_and_gap_in_percent_and_the_status_line_counts():
    rec = {"key": "s/a", "status": "feasible", "objective": 10.0, "bound": 8.0, "gap": 0.2, "checked": True,
           "seconds": 0.5, "contradictions": [], "problems": []}
    bad = dict(rec, key="s/b", status="optimal", gap=0.0, bound=10.0, contradictions=["bound 12 exceeds the known optimum 10"])
    tty = FakeTerminal()
    bar = Progress(2, stream=tty)
    bar.update(rec)
    bar.update(bad)
    text = tty.getvalue()
    assert "s/a: feasible  objective 10  bound 8  gap 20.00%  0.5 s\n" in text
    assert "CONTRADICTION: bound 12 exceeds" in text
    assert "bench: 2/2 done, 0 proven" in last_screen_line(text)
    bar.close()
    plain = io.StringIO()
    Progress(1, stream=plain).update(rec)
    assert plain.getvalue() == ""


def test_one_gap_unit_and_one_move_numbering():
    assert percent(0.125) == "12.50%" and percent(None) == "-" and percent(0.0) == "0.00%"
    assert record_row({"key": "k", "status": "unknown", "objective": None, "bound": None, "gap": None, "seconds": 2}) \
        == "k: unknown  objective -  bound -  gap -  2.0 s"
    assert violation_text(Violation(0, "b1", "overlap", "x")) == "move 1 (box b1): overlap: x"
    assert violation_text(Violation(None, "b2", "missing-box", "y")) == "plan (box b2): missing-box: y"


def test_plural():
    assert (plural(1, "violation"), plural(2, "violation"), plural(0, "box", "boxes")) == ("1 violation", "2 violations", "0 boxes")


def test_bench_status_line_keeps_the_clock_moving_between_instances():
    tty = FakeTerminal()
    bar = Progress(3, stream=tty)
    time.sleep(1.3)
    drawn = tty.getvalue().count("bench: 0/3 done")
    bar.close()
    assert drawn >= 2  # redrawn by the ticker while no instance finished
    assert last_screen_line(tty.getvalue()) == ""
