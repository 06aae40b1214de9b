#!/usr/bin/python3
"""Read one record of a stethogen bundle with h5py and numpy, by the documented schema
(docs/bundle-format.md), and print a short summary.

    /usr/bin/python3 examples/python/read_bundle.py BUNDLE.h5 [--record r000042]

Only h5py and numpy are needed; nothing of stethogen itself.
"""
import argparse
import sys

import h5py
import numpy as np

LABELS = ["unlabelled", "S1", "systole", "S2", "diastole"]  # values 0..4 of /states


def text(value):
    """Compound string fields are fixed-length bytes; attributes are str already."""
    return value.decode("utf-8") if isinstance(value, bytes) else str(value)


def load_record(f, record_id):
    """The record's signals, labels, events and beats as numpy arrays."""
    group = f["records"][record_id]
    pcg = group["pcg"]
    rate_hz = int(pcg.attrs["sample_rate_hz"])
    sites = [text(s) for s in pcg.attrs["sites"]]
    # Integer storage keeps the scale beside the integers: value = integer * scale.
    signal = pcg[()].astype(np.float64) * float(pcg.attrs.get("scale", 1.0))
    return {
        "rate_hz": rate_hz,
        "sites": sites,
        "pcg": signal,                                                  # [site, sample], full scale 1
        "states": group["states"][()] if "states" in group else None,   # [site, sample], uint8
        "events": group["events"][()] if "events" in group else None,   # structured array
        "beats": group["beats"][()] if "beats" in group else None,
        "attrs": dict(group.attrs),
    }


def main(argv):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("bundle")
    parser.add_argument("--record", help="record id (default: the first in /index)")
    args = parser.parse_args(argv)

    with h5py.File(args.bundle, "r") as f:
        if text(f.attrs["format"]) != "stethogen-bundle" or int(f.attrs["format_version"][0]) != 1:
            sys.exit(f"{args.bundle}: not a stethogen bundle of format version 1")
        index = f["index"][()]
        ids = [text(r) for r in index["record_id"]]
        record_id = args.record or ids[0]
        if record_id not in ids:
            sys.exit(f"{args.bundle}: no record {record_id!r} (the bundle has {len(ids)} records)")
        row = index[ids.index(record_id)]
        seed = int(f.attrs["seed"])
        rec = load_record(f, record_id)

    n_sites, n_samples = rec["pcg"].shape
    print(f"bundle {args.bundle}: {len(ids)} records, dataset seed {seed}")
    print(f"record {record_id} (index {int(row['record_index'])}): population {text(row['population'])}, state {text(row['state'])}, "
          f"severity {row['severity']:.2f}, exercise_intensity {row['exercise_intensity']:.2f}")
    print(f"signal: {n_sites} sites ({', '.join(rec['sites'])}), {n_samples} samples at {rec['rate_hz']} Hz "
          f"= {n_samples / rec['rate_hz']:.2f} s; drawn SNR {row['snr_db']:.1f} dB")
    for s, site in enumerate(rec["sites"]):
        rms = float(np.sqrt(np.mean(rec["pcg"][s] ** 2)))
        line = f"  {site:<10} rms {rms:.4f}"
        if rec["states"] is not None:
            fractions = np.bincount(rec["states"][s], minlength=len(LABELS)) / n_samples
            line += "  " + "  ".join(f"{LABELS[v]} {100 * fractions[v]:.1f}%" for v in range(1, len(LABELS)))
        print(line)
    if rec["events"] is not None:
        events = rec["events"]
        kinds = [text(k) for k in events["kind"]]
        heart = events["site"] == -1
        counts = {k: kinds.count(k) for k in dict.fromkeys(kinds)}
        print("events: " + ", ".join(f"{k} {n}" for k, n in counts.items()))
        s1 = [e for e, k, h in zip(events, kinds, heart) if k == "S1" and h]
        if s1:
            # Integer sample indices sit beside the seconds, so the truth is exact at the record rate.
            print("heart-level S1 onsets (s / sample): " +
                  ", ".join(f"{e['onset_s']:.4f}/{int(e['onset_index'])}" for e in s1[:5]))
    if rec["beats"] is not None and len(rec["beats"]) > 0:
        rr = rec["beats"]["rr_s"]
        print(f"beats: {len(rr)}, mean heart rate {60.0 / np.mean(rr):.1f} bpm, "
              f"mean A2-P2 split {np.mean(rec['beats']['a2p2_split_ms']):.1f} ms")


if __name__ == "__main__":
    main(sys.argv[1:])
