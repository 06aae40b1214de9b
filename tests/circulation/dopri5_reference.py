"""Fixed-step Dormand-Prince 5(4) on a forced pendulum with scipy's RK45 (the same pair and the
same continuous extension), for tests/circulation/test_dopri5.cpp.

Prints JSON: the state after each step and the dense output at the given fractions of each step.
Usage: dopri5_reference.py STEP_S END_S FRACTION...
"""
import json
import sys

import numpy as np
from scipy.integrate import solve_ivp


def pendulum(t, y):
    return [y[1], -np.sin(y[0]) - 0.2 * y[1] + 0.5 * np.cos(1.3 * t)]


def main():
    step, end = float(sys.argv[1]), float(sys.argv[2])
    fractions = [float(f) for f in sys.argv[3:]]
    # Tolerances far above any error estimate: every step is accepted and capped at max_step.
    sol = solve_ivp(pendulum, (0.0, end), [1.0, 0.0], method="RK45", first_step=step, max_step=step,
                    rtol=1e3, atol=1e3, dense_output=True)
    steps, dense = [], []
    for k in range(1, len(sol.t)):
        t0, t1 = sol.t[k - 1], sol.t[k]
        steps.append([t1] + list(sol.y[:, k]))
        for f in fractions:
            t = t0 + f * (t1 - t0)
            dense.append([t] + list(sol.sol(t)))
    json.dump({"steps": steps, "dense": dense}, sys.stdout)


if __name__ == "__main__":
    main()
