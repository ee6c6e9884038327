"""Sub-commands of `stackproof`; every module here is discovered by `benchmarks.cli`."""
