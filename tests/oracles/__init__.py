"""Independent references the exact solver is judged against.

- `exhaustive`: plain exhaustive search over every rule of PROBLEM.md, for tiny integer instances;
- `cpsat`: OR-Tools CP-SAT model of the precedence-free strip packing case;
- `tiny`: hypothesis strategies drawing tiny valid instances over every rule combination;
- `handworked`: tiny instances with optima argued by hand, the reasoning beside each.

None of these modules imports `milp` or `bounds`: they must stay independent of what they judge.
"""
