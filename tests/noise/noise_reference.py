"""Outside reference for the noise tests: spectra and resampling computed with scipy/numpy.

Usage: noise_reference.py <check> <args...>; prints "key value" lines.
Samples arrive as little-endian float32 files.
"""
import sys

import numpy as np
import scipy.signal as sg


def load(path):
    return np.fromfile(path, dtype="<f4").astype(np.float64)


def slope_db_per_octave(f, p, lo, hi):
    sel = (f >= lo) & (f <= hi)
    return np.polyfit(np.log2(f[sel]), 10 * np.log10(p[sel]), 1)[0]


def slope(path, fs, lo, hi):
    f, p = sg.welch(load(path), fs=fs, nperseg=8192)
    print("slope_db_per_octave", slope_db_per_octave(f, p, lo, hi))


def band(path, fs, lo, hi):
    f, p = sg.welch(load(path), fs=fs, nperseg=8192)
    inside = p[(f >= lo) & (f <= hi)].mean()
    # Leave one Welch main lobe (Hann, 8192 points) beside each edge out of both sums.
    guard = 4 * fs / 8192
    outside = p[((f < lo - guard) | (f > hi + guard)) & (f > 0)].mean()
    print("outside_vs_inside_db", 10 * np.log10(outside / inside))


def breath(path, fs, period_s, insp_fraction, corner_hz, upper_hz):
    x = load(path)
    t = np.arange(x.size) / fs
    phase = (t / period_s) % 1.0
    insp = phase < insp_fraction
    print("insp_vs_exp_db", 10 * np.log10(np.mean(x[insp] ** 2) / np.mean(x[~insp] ** 2)))
    # Welch spectra over the middle 80 % of every inspiration, averaged.
    n_period = int(round(period_s * fs))
    start, stop = int(0.1 * insp_fraction * n_period), int(0.9 * insp_fraction * n_period)
    spectra = []
    for k in range(x.size // n_period):
        seg = x[k * n_period + start:k * n_period + stop]
        f, p = sg.welch(seg, fs=fs, nperseg=1024)
        spectra.append(p)
    p = np.mean(spectra, axis=0)
    print("insp_slope_db_per_octave", slope_db_per_octave(f, p, 1.5 * corner_hz, 0.9 * upper_hz))
    plateau = np.mean(p[(f >= 40) & (f <= 0.75 * corner_hz)])
    above = np.nonzero(p >= plateau * 10 ** (-30 / 10))[0]
    print("upper_limit_30db_hz", f[above.max()])


def peaks(path, fs, f0, count):
    f, p = sg.welch(load(path), fs=fs, nperseg=int(16 * fs))
    for k in range(1, int(count) + 1):
        sel = (f > k * f0 - 5) & (f < k * f0 + 5)
        print(f"peak_{k}_hz", f[sel][np.argmax(p[sel])])
        between = (f > (k + 0.3) * f0) & (f < (k + 0.7) * f0)
        print(f"peak_{k}_vs_between_db", 10 * np.log10(p[sel].max() / np.median(p[between])))


def snr(clean_path, noisy_path, records):
    clean = load(clean_path).reshape(int(records), -1)
    noisy = load(noisy_path).reshape(int(records), -1)
    for k in range(int(records)):
        s = np.sum(clean[k] ** 2)
        e = np.sum((noisy[k] - clean[k]) ** 2)
        print(f"snr_{k}_db", 10 * np.log10(s / e))


def resample(wav_path, noise_path, up, down, edge):
    import soundfile
    x, _ = soundfile.read(wav_path, dtype="float64")
    y = load(noise_path)
    ref = sg.resample_poly(x, int(up), int(down))
    n, e = min(ref.size, y.size), int(edge)
    ref, y = ref[e:n - e], y[e:n - e]
    gain = np.dot(ref, y) / np.dot(ref, ref)  # the mixer scales the recording to the SNR
    err = y - gain * ref
    print("error_power_db", 10 * np.log10(np.sum(err ** 2) / np.sum((gain * ref) ** 2)))


def normal(path):
    import scipy.stats as st
    x = load(path)
    print("ks_pvalue", st.kstest(x, "norm").pvalue)
    print("mean", x.mean())
    print("variance", x.var())
    print("excess_kurtosis", st.kurtosis(x))
    print("tail_fraction_beyond_4sd", np.mean(np.abs(x) > 4))


checks = {"normal": (normal, 1), "slope": (slope, 1), "band": (band, 1), "breath": (breath, 1), "peaks": (peaks, 1),
          "snr": (snr, 2), "resample": (resample, 2)}
function, n_paths = checks[sys.argv[1]]
args = sys.argv[2:]
function(*args[:n_paths], *[float(a) for a in args[n_paths:]])
