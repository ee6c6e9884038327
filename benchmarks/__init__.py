"""Benchmark suites, the runner, grading of external plans, reports and the `stackproof` command."""
