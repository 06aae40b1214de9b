"""Compares two bundles object by object with h5py: same groups, datasets (dtype, shape, bytes) and
attributes, ignoring only the wall-clock created_utc and the shard attribute. Exit 0 if equal;
otherwise prints the differences and exits 1. Usage: compare_bundles.py A.h5 B.h5"""
import sys

import h5py
import numpy as np

IGNORED = {"created_utc", "shard"}


def same(x, y):
    x, y = np.asarray(x), np.asarray(y)
    if x.dtype.kind == "O" or y.dtype.kind == "O":
        return x.shape == y.shape and all(str(p) == str(q) for p, q in zip(x.ravel(), y.ravel()))
    return x.dtype == y.dtype and x.shape == y.shape and x.tobytes() == y.tobytes()  # NaN-aware


def main():
    a, b = h5py.File(sys.argv[1], "r"), h5py.File(sys.argv[2], "r")
    diffs = []

    def attrs(x, y, name):
        ka, kb = set(x.attrs) - IGNORED, set(y.attrs) - IGNORED
        if ka != kb:
            diffs.append(f"{name}: attributes differ: {sorted(ka ^ kb)}")
        for k in ka & kb:
            if not same(x.attrs[k], y.attrs[k]):
                diffs.append(f"{name}: attribute {k} differs")

    names_a, names_b = [], []
    a.visit(names_a.append)
    b.visit(names_b.append)
    if sorted(names_a) != sorted(names_b):
        diffs.append(f"objects differ: {sorted(set(names_a) ^ set(names_b))[:10]}")
    attrs(a, b, "/")
    for name in names_a:
        if name not in b:
            continue
        x, y = a[name], b[name]
        attrs(x, y, name)
        if isinstance(x, h5py.Dataset) and not same(x[()], y[()]):
            diffs.append(f"{name}: data differs")
    for d in diffs[:20]:
        print("differ:", d)
    return 1 if diffs else 0


if __name__ == "__main__":
    sys.exit(main())
