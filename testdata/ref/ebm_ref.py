"""Golden runs of the energy balance models by scipy's solve_ivp.

Run from the repository root with the Debian python (python3-scipy):

    /usr/bin/python3 testdata/ref/ebm_ref.py   # -> testdata/ref/ebm_ref.json

The two-layer model (Held et al. 2010; Geoffroy et al. 2013a,b)

    C  dT/dt  = F - lambda T - eps gamma (T - T0)
    C0 dT0/dt = gamma (T - T0)

and the one-box model (C dT/dt = F - lambda T) are integrated month by month
with the forcing held constant within each month (the forcing below changes
only at month boundaries, so each month is one smooth initial value problem),
by DOP853 with rtol 1e-12 and atol 1e-14. A third state variable integrates T,
giving the mean of T over each month; a fourth integrates
N = F - lambda T - (eps - 1) gamma (T - T0).

Output (JSON, numbers written with Python's repr, which reads back as the same
double): generator, scipy_version, python_version, method, rtol, atol,
dt_years, and cases[]: {name, model, lambda, gamma, c, c0, efficacy, forcing[],
end_t[], end_t0[], mean_t[], int_n[]} with end_* the state at each month's end,
mean_t the mean of T over the month and int_n the running integral of N from
the start (W yr m-2). The run starts at rest.

Deterministic: rerunning gives byte-identical output.
"""

import json
import math
import platform

import scipy
from scipy.integrate import solve_ivp

DT = 1.0 / 12
MONTHS = 600


def forcing(i):
    """Invented piecewise-constant forcing (W m-2) for month i: a ramp, an
    11-year cycle and a volcanic-like dip."""
    t = (i + 0.5) / 12
    return 3.7 * t / 50 + 0.3 * math.sin(2 * math.pi * t / 11) - 2.5 * math.exp(-(((t - 17.0) / 0.8) ** 2))


def run(name, model, lam, gam, c, c0, eps):
    f = [forcing(i) for i in range(MONTHS)]
    y = [0.0, 0.0, 0.0, 0.0]  # T, T0, int T, int N
    end_t, end_t0, mean_t, int_n = [], [], [], []
    for i in range(MONTHS):
        fi = f[i]

        def rhs(_t, s):
            T, T0 = s[0], s[1]
            if model == "onebox":
                dT, dT0, n = (fi - lam * T) / c, 0.0, fi - lam * T
            else:
                dT = (fi - lam * T - eps * gam * (T - T0)) / c
                dT0 = gam * (T - T0) / c0
                n = fi - lam * T - (eps - 1) * gam * (T - T0)
            return [dT, dT0, T, n]

        start = [y[0], y[1], 0.0, y[3]]
        sol = solve_ivp(rhs, (0.0, DT), start, method="DOP853", rtol=1e-12, atol=1e-14)
        if not sol.success:
            raise SystemExit(sol.message)
        y = [float(v) for v in sol.y[:, -1]]
        end_t.append(y[0])
        end_t0.append(y[1])
        mean_t.append(y[2] / DT)
        int_n.append(y[3])
    return {"name": name, "model": model, "lambda": lam, "gamma": gam, "c": c, "c0": c0, "efficacy": eps,
            "forcing": f, "end_t": end_t, "end_t0": end_t0, "mean_t": mean_t, "int_n": int_n}


def main():
    cases = [
        run("twolayer", "twolayer", 1.2, 0.7, 8.0, 100.0, 1.0),
        run("twolayer_efficacy", "twolayer", 1.1, 0.8, 7.0, 90.0, 1.4),
        run("onebox", "onebox", 1.3, 0.0, 8.0, 0.0, 1.0),
    ]
    out = {
        "generator": "testdata/ref/ebm_ref.py",
        "scipy_version": scipy.__version__,
        "python_version": platform.python_version(),
        "method": "scipy.integrate.solve_ivp DOP853, one call per month (forcing constant within the month), start at rest",
        "rtol": 1e-12,
        "atol": 1e-14,
        "dt_years": DT,
        "cases": cases,
    }
    with open("testdata/ref/ebm_ref.json", "w") as fh:
        json.dump(out, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
