#!/usr/bin/python3
"""Straightforward reference of one stethogen record in general-purpose scientific Python.

Reads a case written by the benchmark (bench/reference_run.cpp): the engine's circulation case
(generator/circulation/reference_case.cpp) plus the source laws, the record's source variation
and its transmission plan. Reproduces, independently of the C++ code:
  - the closed-loop hemodynamics with scipy.integrate.solve_ivp (RK45, the Dormand & Prince
    1980 pair the engine also uses, at the engine's tolerances), equations from
    circulation_reference.py, valve transitions as solve_ivp events;
  - the dense series at the engine's series rate and the valve-closure sound components
    (M1, T1, A2, P2) from the source laws of generator/sources/source_laws.hpp, with the
    chirp of Xu, Durand & Pibarot 2000 (IEEE Trans Biomed Eng 47:1328);
  - their rendering at every site: weight, delay and the chest-wall/sensor biquads with
    scipy.signal.sosfilt.
Writes JSON to stdout: transitions, components, per-site relative RMS difference to the
engine's rendering (a float64 file named in the case) and the CPU time spent.

Usage: reference_model.py CASE.json
"""
import json
import math
import os
import sys
import time

import numpy as np
from scipy.integrate import solve_ivp
from scipy.optimize import brentq
from scipy.signal import sosfilt

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
from circulation_reference import VALVES, Model  # noqa: E402

KINDS = ("M1", "T1", "A2", "P2")  # EventKind order of core/types.hpp
LEAFLET = {"mitral": 17, "tricuspid": 19, "aortic": 18, "pulmonic": 20}
ENVELOPE_ORDER = 2.0


def envelope_shape(x):
    return (x / ENVELOPE_ORDER) ** ENVELOPE_ORDER * math.exp(ENVELOPE_ORDER - x) if x > 0 else 0.0


ONSET_X = brentq(lambda x: envelope_shape(x) - 0.1, 1e-9, ENVELOPE_ORDER, xtol=1e-15)
SUPPORT_X = brentq(lambda x: envelope_shape(x) - 1e-5, ENVELOPE_ORDER, 200.0, xtol=1e-12)


def integrate(case):
    m = Model(case)
    thr = case["leaflet_threshold"]
    events = []
    for name in VALVES:
        ev = (lambda i: (lambda t, x: x[i] - thr))(LEAFLET[name])
        events.append(ev)
    sol = solve_ivp(m.rhs, (case["t0"], case["t1"]), np.array(case["state"]), method="RK45", rtol=1e-5, atol=1e-5,
                    max_step=0.010, first_step=1e-4, dense_output=True, events=events)
    if not sol.success:
        raise RuntimeError(sol.message)
    transitions = []
    for valve_index, (name, times) in enumerate(zip(VALVES, sol.t_events)):
        for t in times:
            opening = sol.sol(t + 1e-7)[LEAFLET[name]] > thr
            transitions.append((valve_index, bool(opening), float(t)))
    transitions.sort(key=lambda e: e[2])
    return m, sol, transitions


def dense_series(m, sol, case, rate_hz, n):
    t = case["t0"] + np.arange(n) / rate_hz
    x = sol.sol(t)
    keys = ("lv", "la", "rv", "ra", "ao", "pa")
    series = {k: np.empty(n) for k in keys}
    for k in range(n):
        p = m.pressures(x[:, k], t[k])
        for key in keys:
            series[key][k] = p[key]
    return series


class Probe:
    """Linear interpolation and central-difference rates on the uniform series."""

    def __init__(self, series, t0, rate_hz):
        self.s, self.t0, self.fs = series, t0, rate_hz
        self.n = len(next(iter(series.values())))

    def value(self, key, t):
        return float(np.interp(t, self.t0 + np.arange(self.n) / self.fs, self.s[key]))

    def max_rate(self, a, b, t0, t1):
        lo = max(math.ceil((t0 - self.t0) * self.fs), 1)
        hi = min(math.floor((t1 - self.t0) * self.fs), self.n - 2)
        if hi < lo:
            return 0.0
        d = self.s[a] - self.s[b]
        return float(np.max((d[lo + 1:hi + 2] - d[lo - 1:hi]) * 0.5 * self.fs))


def first_after(transitions, valve, opening, t, within):
    for v, o, te in transitions:
        if v == valve and o == opening and t < te <= t + within:
            return te
    return None


def closure_components(transitions, probe, laws, variation):
    mi, tr, ao, pu = (VALVES.index(v) for v in ("mitral", "tricuspid", "aortic", "pulmonic"))
    out = []
    for valve, opening, t in transitions:
        if opening or not (probe.t0 <= t <= probe.t0 + (probe.n - 1) / probe.fs):
            continue
        if valve in (mi, tr):  # M1 / T1: rise of the ventricle against the closed AV valve
            kind = 0 if valve == mi else 1
            ven, atr = ("lv", "la") if valve == mi else ("rv", "ra")
            op = first_after(transitions, ao if valve == mi else pu, True, t, 0.3)
            op = t + 0.08 if op is None else op
            drive = max(probe.max_rate(ven, atr, t - 0.010, op), 0.0)
            load = probe.value(ven, op)
        else:  # A2 / P2: the diastolic load taken up by the closed semilunar valve
            kind = 2 if valve == ao else 3
            art, ven = ("ao", "lv") if valve == ao else ("pa", "rv")
            relaxed = first_after(transitions, mi if valve == ao else tr, True, t, 0.2)
            relaxed = t + 0.08 if relaxed is None else relaxed
            load = probe.value(art, t)
            drive = max(load - probe.value(ven, relaxed), 0.0)
        g, d_ref, d_exp, f_ref, l_ref, f_exp, chirp, zeta = laws[kind]
        gain, pitch, damping = variation[kind]
        amplitude = g * (drive / d_ref) ** d_exp * gain
        f_end = f_ref * (max(load, 1.0) / l_ref) ** f_exp * pitch
        tau = 1.0 / (2.0 * math.pi * zeta * damping * f_end)
        out.append(dict(kind=kind, start=t, onset=t + ONSET_X * tau, amplitude=amplitude, f_end=f_end,
                        f_start=f_end * chirp, tau=tau))
    return out


def render(components, site, fs, n):
    """Real part of weight * analytic(t - delay), filtered from a zero state."""
    x = np.zeros(n)
    t_rec = np.arange(n) / fs
    for c in components:
        t = t_rec - site["delay"][c["kind"]] - c["start"]
        live = (t > 0) & (t < SUPPORT_X * c["tau"])
        u = t[live]
        env = c["amplitude"] * (u / (ENVELOPE_ORDER * c["tau"])) ** 2 * np.exp(ENVELOPE_ORDER - u / c["tau"])
        chirp_tau = 2.0 * c["tau"]
        cycles = c["f_end"] * u + (c["f_start"] - c["f_end"]) * chirp_tau * (1.0 - np.exp(-u / chirp_tau))
        x[live] += site["weight"][c["kind"]] * env * np.cos(2.0 * np.pi * cycles)
    sos = np.array(site["sos"], dtype=float).reshape(-1, 6)
    return site["gain"] * (sosfilt(sos, x) if len(sos) else x)


def main():
    with open(sys.argv[1]) as f:
        case = json.load(f)
    sound = case["sound"]
    cpu0 = time.process_time()
    m, sol, transitions = integrate(case)
    cpu1 = time.process_time()
    series = dense_series(m, sol, case, sound["series_rate_hz"], sound["series_samples"])
    probe = Probe(series, case["t0"], sound["series_rate_hz"])
    components = closure_components(transitions, probe, sound["laws"], sound["variation"])
    fs, n = sound["sample_rate_hz"], sound["n_samples"]
    rendered = [render(components, site, fs, n) for site in sound["sites"]]
    cpu2 = time.process_time()
    engine = np.fromfile(sound["engine_render"], dtype=np.float64).reshape(len(rendered), n)
    rel_rms = [float(np.sqrt(np.mean((r - e) ** 2)) / np.sqrt(np.mean(e ** 2))) for r, e in zip(rendered, engine)]
    print(json.dumps({
        "transitions": transitions,
        "components": [[c["kind"], c["start"], c["onset"], c["amplitude"], c["f_end"]] for c in components],
        "site_relative_rms": rel_rms,
        "cpu_circulation_s": cpu1 - cpu0,
        "cpu_sounds_s": cpu2 - cpu1,
        "rhs_evaluations": int(sol.nfev),
        "steps": int(len(sol.t) - 1),
    }))
    return 0


if __name__ == "__main__":
    sys.exit(main())
