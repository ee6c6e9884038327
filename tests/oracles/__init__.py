"""Independent references the exact solver is judged against.

- `exhaustive`: plain exhaustive search over every rule of PROBLEM.md, for tiny integer instances;
- `cpsat`: OR-Tools CP-SAT model of the precedence-free strip packing case;
- `tiny`: hypothesis strategies drawing tiny valid instances over every rule combination;
- `published`: a minimal reader for the small published strip instances (used until
  `benchmarks.published` exists).

None of these modules imports `milp` or `bounds`: they must stay independent of what they judge.
"""
