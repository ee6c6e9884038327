"""The exact mixed-integer model, its backends, warm starts and the solve pipeline."""
