"""The exact mixed-integer model, its backends, warm starts and the solve pipeline.

One public entry point: `milp.solve(instance, *, time_limit, backend, threads, seed, log, export_model)`.
"""
from .pipeline import solve, validate_options

__all__ = ["solve", "validate_options"]
