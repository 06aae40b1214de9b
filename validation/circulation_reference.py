#!/usr/bin/python3
"""Independent integration of the stethogen circulation equations with scipy.integrate.solve_ivp.

Reads a case written by the engine (generator/circulation/reference_case.cpp): parameters,
activation pulses, breaths and the state at t0. Integrates the same closed-loop model (time-varying
elastance chambers, Mynard et al. 2012 valves, Windkessel vessels, pericardium, pleural pressure)
with an explicit Runge-Kutta method at tight tolerances and writes JSON to stdout: pressures at the
requested sample times and the valve leaflet threshold crossings.

Usage: circulation_reference.py CASE.json
"""
import bisect
import json
import math
import sys

import numpy as np
from scipy.integrate import solve_ivp

DYN_PER_MMHG = 1333.22
VALVES = ("mitral", "tricuspid", "aortic", "pulmonic")  # order of the engine's Valve enum


def load(path):
    with open(path) as f:
        return json.load(f)


class Model:
    def __init__(self, c):
        self.c = c
        self.pulses = {k: c["pulses"][k] for k in ("la", "lv", "ra", "rv")}
        self.onsets = {k: [p[0] for p in v] for k, v in self.pulses.items()}
        r = c["respiration"]
        self.starts, self.period = r["starts"], r["period"]
        self.f_insp, self.p_ee, self.depth = r["inspiration_fraction"], r["end_expiratory"], r["depth"]
        rho = c["density"]
        self.valve = {}
        for name in VALVES:
            v = c[name]
            self.valve[name] = dict(
                a_open=v["area"] * v["max_frac"], a_closed=v["area"] * v["min_frac"],
                bern=rho / (2.0 * DYN_PER_MMHG), iner=rho * v["length"] / DYN_PER_MMHG,
                k_open=v["k_open"], k_close=v["k_close"], dp_open=v["dp_open"], dp_close=v["dp_close"])

    # --- activation: raised cosine (atria) or double Hill (ventricles), max of the last two pulses
    def pulse(self, p, t):
        onset, a, b, norm, m1, m2 = p
        u = t - onset
        if u <= 0.0:
            return 0.0
        if m1 > 0.0:
            if u >= self.c["hill_cutoff"] * b:
                return 0.0
            g1 = (u / a) ** m1
            g2 = (u / b) ** m2
            return norm * g1 / (1.0 + g1) / (1.0 + g2)
        if u < a:
            return 0.5 * (1.0 - math.cos(math.pi * u / a))
        w = u - a
        if w < b:
            return 0.5 * (1.0 + math.cos(math.pi * w / b))
        return 0.0

    def activation(self, chamber, t):
        k = bisect.bisect_right(self.onsets[chamber], t) - 1
        if k < 0:
            return 0.0
        e = self.pulse(self.pulses[chamber][k], t)
        if k > 0:
            e = max(e, self.pulse(self.pulses[chamber][k - 1], t))
        return e

    # --- respiration
    def phase(self, t):
        s = self.starts
        if len(s) < 2 or t < s[0]:
            period, pt = self.period, t - (s[0] if s else 0.0)
        elif t >= s[-1]:
            period, pt = self.period, t - s[-1]
        else:
            i = bisect.bisect_right(s, t)
            period, pt = s[i] - s[i - 1], t - s[i - 1]
        ph = pt / period
        ph -= math.floor(ph)
        return ph if ph < 1.0 else 0.0

    def swing(self, ph):
        f = self.f_insp
        if ph < f:
            return 0.5 * (1.0 - math.cos(math.pi * ph / f))
        return 0.5 * (1.0 + math.cos(math.pi * (ph - f) / (1.0 - f)))

    # --- algebraic pressures
    @staticmethod
    def chamber(ch, e, v):
        dv = v - ch["v0"]
        return e * ch["ees"] * dv + (1.0 - e) * ch["a"] * (math.exp(ch["b"] * dv) - 1.0)

    @staticmethod
    def vessel(cp, v):
        return (v - cp["v0"]) / cp["c"]

    def pressures(self, x, t):
        c = self.c
        fall = self.depth * self.swing(self.phase(t))
        pt = self.p_ee - fall
        lung = 1.0 / (1.0 + c["lung_gain"] * fall)
        p0, lam, v0 = c["pericardium"]
        ppc = p0 * (math.exp(lam * (x[1] + x[3] - v0)) - 1.0)
        P = {}
        P["la"] = self.chamber(c["la"], self.activation("la", t), x[0]) + pt
        P["lv"] = self.chamber(c["lv"], self.activation("lv", t), x[1]) + ppc + pt
        P["ra"] = self.chamber(c["ra"], self.activation("ra", t), x[2]) + pt
        P["rv"] = self.chamber(c["rv"], self.activation("rv", t), x[3]) + ppc + pt
        P["ao"] = self.vessel(c["aorta"], x[4]) + pt
        P["sa"] = self.vessel(c["systemic_arteries"], x[5])
        P["sv"] = self.vessel(c["systemic_veins"], x[6]) + c["abdominal"] * fall
        P["tv"] = self.vessel(c["thoracic_veins"], x[7]) + pt
        P["pa"] = self.vessel(c["pulmonary_artery"], x[8]) * lung + pt
        P["lu"] = self.vessel(c["lung_arteries"], x[9]) * lung + pt
        P["pv"] = self.vessel(c["pulmonary_veins"], x[10]) + pt
        return P

    def valve_rates(self, name, dp, q, zeta):
        v = self.valve[name]
        z = min(max(zeta, 0.0), 1.0)
        area = v["a_closed"] + (v["a_open"] - v["a_closed"]) * z
        dq = (dp - v["bern"] / area ** 2 * q * abs(q)) / (v["iner"] / area)
        if dp > v["dp_open"]:
            dz = (1.0 - z) * v["k_open"] * (dp - v["dp_open"])
        elif dp < v["dp_close"]:
            dz = z * v["k_close"] * (dp - v["dp_close"])
        else:
            dz = 0.0
        return dq, dz

    # state: Vla Vlv Vra Vrv Vao Vsa Vsv Vtv Vpa Vlu Vpv Qmi Qao Qtr Qpu Qsa Qpa Zmi Zao Ztr Zpu
    def rhs(self, t, x):
        c = self.c
        P = self.pressures(x, t)
        d = np.empty(21)
        q_sys = (P["sa"] - P["sv"]) / c["r_systemic"]
        q_ven = (P["sv"] - P["tv"]) / c["r_venous"]
        q_cav = (P["tv"] - P["ra"]) / c["r_caval"]
        q_lung = (P["lu"] - P["pv"]) / c["r_pulm"]
        # The pulmonary-vein ostial sleeves narrow with the atrial contraction (Nathan & Eliakim 1966).
        q_pv = (P["pv"] - P["la"]) / (c["r_pulm_venous"] * (1.0 + c["sleeve_gain"] * self.activation("la", t)))
        d[11], d[17] = self.valve_rates("mitral", P["la"] - P["lv"], x[11], x[17])
        d[12], d[18] = self.valve_rates("aortic", P["lv"] - P["ao"], x[12], x[18])
        d[13], d[19] = self.valve_rates("tricuspid", P["ra"] - P["rv"], x[13], x[19])
        d[14], d[20] = self.valve_rates("pulmonic", P["rv"] - P["pa"], x[14], x[20])
        d[15] = (P["ao"] - P["sa"] - c["r_aortic"] * x[15]) / c["l_aortic"]
        d[16] = (P["pa"] - P["lu"] - c["r_pulm_char"] * x[16]) / c["l_pulm"]
        d[0] = q_pv - x[11]
        d[1] = x[11] - x[12]
        d[4] = x[12] - x[15]
        d[5] = x[15] - q_sys
        d[6] = q_sys - q_ven
        d[7] = q_ven - q_cav
        d[2] = q_cav - x[13]
        d[3] = x[13] - x[14]
        d[8] = x[14] - x[16]
        d[9] = x[16] - q_lung
        d[10] = q_lung - q_pv
        return d


def main():
    case = load(sys.argv[1])
    m = Model(case)
    thr = case["leaflet_threshold"]
    leaflet_index = {"mitral": 17, "tricuspid": 19, "aortic": 18, "pulmonic": 20}
    events = []
    for name in VALVES:
        idx = leaflet_index[name]
        ev = (lambda i: (lambda t, x: x[i] - thr))(idx)
        events.append(ev)
    sol = solve_ivp(m.rhs, (case["t0"], case["t1"]), np.array(case["state"]), method="DOP853",
                    rtol=1e-10, atol=1e-10, max_step=0.002, dense_output=True, events=events)
    if not sol.success:
        print(json.dumps({"error": sol.message}))
        return 1
    out = {"times": case["sample_times"], "p_lv": [], "p_ao": [], "p_rv": [], "p_pa": [], "p_la": [], "p_ra": []}
    for t in case["sample_times"]:
        P = m.pressures(sol.sol(t), t)
        for k in ("lv", "ao", "rv", "pa", "la", "ra"):
            out["p_" + k].append(P[k])
    transitions = []
    for valve_index, (name, times) in enumerate(zip(VALVES, sol.t_events)):
        for t in times:
            before = sol.sol(t - 1e-6)[leaflet_index[name]]
            transitions.append([valve_index, 1 if before < thr else 0, float(t)])
    transitions.sort(key=lambda e: e[2])
    out["transitions"] = transitions
    out["rhs_evaluations"] = int(sol.nfev)
    print(json.dumps(out))
    return 0


if __name__ == "__main__":
    sys.exit(main())
