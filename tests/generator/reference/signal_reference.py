"""Reference computations for the generator tests, with scipy.signal and numpy.

  freqz FS F1,F2,... FILE...  each FILE holds biquad rows "b0 b1 b2 a1 a2" and a line "gain G";
                              prints |H| in dB at each frequency (scipy.signal.sosfreqz), a line per FILE.
  butter SPEC...              SPEC = ORDER:KIND:FC:FS; prints the single section of
                              scipy.signal.butter(ORDER, FC, KIND, fs=FS, output='sos'), a line per SPEC.
  inst_freq FILE FS         FILE holds float64 samples; prints the instantaneous frequency (Hz) from
                            the unwrapped phase of scipy.signal.hilbert, one value per sample.
  sosfilt SOSFILE FILE...   SOSFILE as for freqz; prints gain * scipy.signal.sosfilt(sos, x) of each FILE of
                            float64 samples, one value per line, the files one after the other.
  band_energy FS LO HI FILE...  prints, a line per FILE of float64 samples, the fraction of its
                                energy between LO and HI Hz (numpy rfft).
"""
import sys

import numpy as np
from scipy import signal


def read_sos(path):
    gain = 1.0
    rows = []
    with open(path) as f:
        for line in f:
            parts = line.split()
            if not parts:
                continue
            if parts[0] == "gain":
                gain = float(parts[1])
            else:
                b0, b1, b2, a1, a2 = map(float, parts)
                rows.append([b0, b1, b2, 1.0, a1, a2])
    return gain, np.array(rows)


def main(argv):
    cmd = argv[1]
    if cmd == "freqz":
        fs = float(argv[2])
        freqs = np.array([float(x) for x in argv[3].split(",")])
        for path in argv[4:]:
            gain, sos = read_sos(path)
            if len(sos):
                _, h = signal.sosfreqz(sos, worN=freqs, fs=fs)
            else:
                h = np.ones_like(freqs, dtype=complex)
            print(" ".join(f"{v:.12g}" for v in 20 * np.log10(np.abs(gain * h))))
    elif cmd == "butter":
        for spec in argv[2:]:
            order, kind, fc, fs = spec.split(":")
            sos = signal.butter(int(order), float(fc), kind, fs=float(fs), output="sos")
            row = sos[0]
            print(" ".join(f"{v:.17g}" for v in (row[0], row[1], row[2], row[4], row[5])))
    elif cmd == "inst_freq":
        x = np.fromfile(argv[2], dtype=np.float64)
        fs = float(argv[3])
        phase = np.unwrap(np.angle(signal.hilbert(x)))
        f = np.gradient(phase) * fs / (2 * np.pi)
        for v in f:
            print(f"{v:.9g}")
    elif cmd == "sosfilt":
        gain, sos = read_sos(argv[2])
        for path in argv[3:]:
            x = np.fromfile(path, dtype=np.float64)
            for v in gain * signal.sosfilt(sos, x):
                print(f"{v:.17g}")
    elif cmd == "band_energy":
        fs, lo, hi = float(argv[2]), float(argv[3]), float(argv[4])
        for path in argv[5:]:
            x = np.fromfile(path, dtype=np.float64)
            spec = np.abs(np.fft.rfft(x)) ** 2
            f = np.fft.rfftfreq(len(x), 1 / fs)
            band = (f >= lo) & (f <= hi)
            print(f"{spec[band].sum() / spec.sum():.12g}")
    elif cmd == "resample_poly":
        x = np.fromfile(argv[2], dtype=np.float64)
        for v in signal.resample_poly(x, 1, int(argv[3])):
            print(f"{v:.17g}")
    else:
        raise SystemExit(f"unknown command {cmd}")


if __name__ == "__main__":
    main(sys.argv)
