#!/usr/bin/python3
"""Figures of the validation report, drawn from the figure data `stethogen validate --report`
writes. Usage: figures.py FIGURE_DATA.json OUT_DIR. Each PNG is written under a temporary name
and renamed into place, so a figure is complete or absent."""
import json
import os
import sys

import matplotlib

matplotlib.use("Agg")
import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
from scipy import signal  # noqa: E402

# Our own palette: states and sound components.
STATE_COLOURS = {0: "#f2f2f2", 1: "#c8553d", 2: "#f6d8ae", 3: "#2e86ab", 4: "#d6e6ef"}
STATE_NAMES = {1: "S1", 2: "systole", 3: "S2", 4: "diastole"}
COMPONENT_STYLE = {
    "M1": ("#8b1e3f", "v"), "T1": ("#e07a5f", "v"), "A2": ("#1b4965", "^"),
    "P2": ("#5fa8d3", "^"), "S3": ("#3d5a40", "s"), "S4": ("#81b29a", "D"),
}
STATE_LINE = {"exercise": "#e76f51", "lv_failure": "#264653", "rv_failure": "#2a9d8f", "global_failure": "#8d6a9f"}


def save(fig, out_dir, name):
    path = os.path.join(out_dir, name)
    tmp = path + ".partial.png"
    fig.savefig(tmp, dpi=110, bbox_inches="tight")
    plt.close(fig)
    os.replace(tmp, path)


def time_axis(w):
    n = len(w["pcg"][0])
    return w["t0_s"] + np.arange(n) / w["sample_rate_hz"]


def shade_states(ax, t, labels):
    labels = np.asarray(labels)
    edges = np.flatnonzero(np.diff(labels)) + 1
    starts = np.concatenate(([0], edges))
    ends = np.concatenate((edges, [len(labels)]))
    for a, b in zip(starts, ends):
        ax.axvspan(t[a], t[min(b, len(t) - 1)], color=STATE_COLOURS[int(labels[a])], lw=0, zorder=0)


def record_states(data, out_dir):
    w = data["waveform"]
    t = time_axis(w)
    fig, axes = plt.subplots(len(w["sites"]), 1, figsize=(11, 2.1 * len(w["sites"])), sharex=True)
    for s, (ax, site) in enumerate(zip(np.atleast_1d(axes), w["sites"])):
        x = np.asarray(w["pcg"][s])
        shade_states(ax, t, w["states"][s])
        ax.plot(t, x, color="#222222", lw=0.6, zorder=2)
        top = np.max(np.abs(x)) * 1.15 or 1.0
        for e in w["events"]:
            if e["site"] != s:
                continue
            colour, marker = COMPONENT_STYLE[e["kind"]]
            ax.plot(e["peak_s"], top * 0.92, marker=marker, color=colour, ms=6, ls="none", zorder=3)
        ax.set_ylim(-top, top)
        ax.set_ylabel(f"{site}\n(full scale)")
    handles = [plt.Rectangle((0, 0), 1, 1, color=STATE_COLOURS[k]) for k in STATE_NAMES]
    labels = list(STATE_NAMES.values())
    for kind, (colour, marker) in COMPONENT_STYLE.items():
        handles.append(plt.Line2D([], [], color=colour, marker=marker, ls="none"))
        labels.append(f"{kind} peak")
    fig.legend(handles, labels, loc="upper center", ncol=10, frameon=False, bbox_to_anchor=(0.5, 1.0))
    axes[-1].set_xlabel("time (s)")
    fig.suptitle(f"Resting record {w['record_id']}: clean PCG, four-state labels and component peaks", y=1.03)
    save(fig, out_dir, "record_states.png")


def pressures_pcg(data, out_dir):
    w = data["waveform"]
    p = w["pressures"]
    t = time_axis(w)
    site = w["sites"].index("mitral") if "mitral" in w["sites"] else 0
    fig, (ax1, ax2) = plt.subplots(2, 1, figsize=(11, 6), sharex=True, gridspec_kw={"height_ratios": [2, 1]})
    ax1.plot(p["time_s"], p["lv_mmhg"], color="#8b1e3f", lw=1.3, label="LV")
    ax1.plot(p["time_s"], p["aortic_mmhg"], color="#1b4965", lw=1.3, label="aorta")
    ax1.plot(p["time_s"], p["la_mmhg"], color="#e9c46a", lw=1.3, label="LA")
    ax1.set_ylabel("pressure (mmHg)")
    ax1.legend(loc="upper right")
    ax1.grid(alpha=0.3)
    ax2.plot(t, w["pcg"][site], color="#222222", lw=0.6)
    for e in w["events"]:
        if e["site"] == -1 and e["kind"] in ("M1", "A2"):
            for ax in (ax1, ax2):
                ax.axvline(e["onset_s"], color=COMPONENT_STYLE[e["kind"]][0], lw=0.8, ls="--")
    ax2.set_ylabel(f"PCG, {w['sites'][site]}\n(full scale)")
    ax2.set_xlabel("time (s)")
    fig.suptitle("Left-heart pressures above the PCG of the same beats (dashed: M1 and A2 onsets)")
    save(fig, out_dir, "pressures_pcg.png")


def s1_amplitude(data, out_dir):
    fig, (ax1, ax2) = plt.subplots(1, 2, figsize=(11, 4.5))
    for state, colour in STATE_LINE.items():
        pts = sorted((p for p in data["sweeps"] if p["state"] == state), key=lambda p: p["level"])
        if not pts:
            continue
        x = [p["lv_dpdt_max_mmhg_s"] for p in pts]
        y = [p["s1_amplitude"] for p in pts]
        ax1.plot(x, y, "o-", color=colour, label=state.replace("_", " "))
        if state == "exercise":
            ax2.plot([p["cardiac_output_l_min"] for p in pts], y, "o-", color=colour, label="exercise, intensity 0-1")
    ax1.set_xlabel("LV dP/dt max (mmHg/s)")
    ax1.set_ylabel("S1 amplitude (heart-level units)")
    ax1.set_title("S1 amplitude against LV dP/dt max")
    ax1.legend()
    ax1.grid(alpha=0.3)
    ax2.set_xlabel("cardiac output (L/min)")
    ax2.set_ylabel("S1 amplitude (heart-level units)")
    ax2.set_title("S1 amplitude against cardiac output")
    ax2.legend()
    ax2.grid(alpha=0.3)
    save(fig, out_dir, "s1_amplitude.png")


def split_severity(data, out_dir):
    fig, ax = plt.subplots(figsize=(7, 4.5))
    for state in ("lv_failure", "rv_failure", "global_failure"):
        pts = sorted((p for p in data["sweeps"] if p["state"] == state), key=lambda p: p["level"])
        ax.plot([p["level"] for p in pts], [p["a2p2_split_ms"] for p in pts], "o-", color=STATE_LINE[state],
                label=state.replace("_", " "))
    ax.axhline(0, color="#555555", lw=0.8)
    ax.set_xlabel("failure severity (0 = edge of failure, 1 = most severe)")
    ax.set_ylabel("A2-P2 split (ms; negative = reversed)")
    ax.set_title("S2 splitting against failure severity")
    ax.legend()
    ax.grid(alpha=0.3)
    save(fig, out_dir, "split_severity.png")


def spectrogram(data, out_dir):
    w = data["waveform"]
    site = w["sites"].index("mitral") if "mitral" in w["sites"] else 0
    fs = w["sample_rate_hz"]
    x = np.asarray(w["pcg"][site])
    nper = int(0.064 * fs)
    f, t, sxx = signal.spectrogram(x, fs=fs, window="hann", nperseg=nper, noverlap=int(nper * 0.9))
    sxx_db = 10 * np.log10(sxx + 1e-20)
    fig, ax = plt.subplots(figsize=(11, 4.5))
    mesh = ax.pcolormesh(t + w["t0_s"], f, sxx_db, shading="auto", cmap="magma",
                         vmin=sxx_db.max() - 60, vmax=sxx_db.max())
    for e in w["events"]:
        if e["site"] == -1 and e["kind"] in ("M1", "A2"):
            ax.axvline(e["onset_s"], color="white", lw=0.6, ls=":")
    ax.set_ylim(0, 400)
    ax.set_xlim(w["t0_s"], w["t0_s"] + len(x) / fs)
    ax.set_xlabel("time (s)")
    ax.set_ylabel("frequency (Hz)")
    ax.set_title(f"Spectrogram of S1 and S2 at the {w['sites'][site]} area (64 ms Hann window; dotted: M1, A2 onsets)")
    fig.colorbar(mesh, ax=ax, label="power (dB, 60 dB range)")
    save(fig, out_dir, "spectrogram.png")


def snr(data, out_dir):
    target = [p["target_db"] for p in data["snr"]]
    achieved = [p["achieved_db"] for p in data["snr"]]
    fig, ax = plt.subplots(figsize=(5.5, 5))
    lo, hi = min(target) - 3, max(target) + 3
    ax.plot([lo, hi], [lo, hi], color="#999999", lw=1, label="achieved = target")
    ax.plot(target, achieved, "o", color="#c8553d", label="validation records")
    ax.set_xlabel("target SNR (dB)")
    ax.set_ylabel("achieved SNR (dB)")
    ax.set_title("Achieved against target SNR")
    ax.legend()
    ax.grid(alpha=0.3)
    save(fig, out_dir, "snr.png")


def main():
    if len(sys.argv) != 3:
        sys.exit("usage: figures.py FIGURE_DATA.json OUT_DIR")
    with open(sys.argv[1]) as f:
        data = json.load(f)
    for draw in (record_states, pressures_pcg, s1_amplitude, split_severity, spectrogram, snr):
        draw(data, sys.argv[2])


if __name__ == "__main__":
    main()
