"""Reads a bundle with h5py and checks every path of docs/bundle-format.md with its documented
dtype, shape and attributes. Usage: check_schema.py BUNDLE [--shard]. Exit 0 when it conforms;
otherwise prints each violation and exits 1."""
import hashlib
import sys

import h5py
import numpy as np

problems = []


def need(cond, message):
    if not cond:
        problems.append(message)


def fields_of(ds):
    return {name: ds.dtype.fields[name][0] for name in ds.dtype.names}


def check_fields(ds, expected, where):
    got = fields_of(ds)
    need(list(ds.dtype.names) == list(expected), f"{where}: fields {list(ds.dtype.names)} != {list(expected)}")
    for name, kind in expected.items():
        if name not in got:
            continue
        dt = got[name]
        ok = dt.kind == "S" if kind == "S" else dt == np.dtype(kind)
        need(ok, f"{where}.{name}: dtype {dt} != {kind}")
    units = ds.attrs.get("units")
    need(units is not None and len(units) == len(expected), f"{where}: 'units' attribute missing or wrong length")


# Root attribute `compression` (set in main); bundles without it were written "compact".
COMPRESSION = ["compact"]


def check_filters(ds, where, plain_in_fast=False):
    # Chunked with Fletcher32 always; deflate as dataset.compression chooses (docs/bundle-format.md,
    # "Storage"): every dataset under "compact", none under "none", all but float32 audio under "fast".
    if ds.size == 0:
        return
    need(ds.chunks is not None, f"{where}: not chunked")
    deflate = COMPRESSION[0] == "compact" or (COMPRESSION[0] == "fast" and not plain_in_fast)
    need(ds.compression == ("gzip" if deflate else None), f"{where}: compression {ds.compression} under {COMPRESSION[0]}")
    need(ds.fletcher32, f"{where}: no Fletcher32 checksum")


INDEX = {"record_id": "S", "record_index": "<u8", "population": "S", "state": "S",
         "exercise_intensity": "<f8", "severity": "<f8", "heart_rate_bpm": "<f8",
         "cardiac_output_l_min": "<f8", "lv_ejection_fraction": "<f8", "rv_ejection_fraction": "<f8",
         "snr_db": "<f8", "snr_achieved_db": "<f8", "duration_s": "<f8", "sample_rate_hz": "<i4",
         "n_samples": "<i8", "n_sites": "<i4", "n_beats": "<i4", "sensor": "S", "noise_profile": "S"}
SKIPPED = {"record_id": "S", "record_index": "<u8", "reason": "S"}
EVENTS = {"beat": "<i4", "kind": "S", "site": "<i4", "onset_s": "<f8", "peak_s": "<f8", "offset_s": "<f8",
          "onset_index": "<i8", "peak_index": "<i8", "offset_index": "<i8"}
BEATS = {"beat": "<i4", "activation_s": "<f8", "rr_s": "<f8", "resp_phase": "<f8", "inspiration": "|u1",
         "lv_stroke_volume_ml": "<f8", "rv_stroke_volume_ml": "<f8", "lv_ejection_fraction": "<f8",
         "rv_ejection_fraction": "<f8", "lv_dpdt_max_mmhg_s": "<f8", "aortic_systolic_mmhg": "<f8",
         "aortic_diastolic_mmhg": "<f8", "a2p2_split_ms": "<f8", "s1_amplitude": "<f8", "s2_amplitude": "<f8"}
ARTIFACTS = {"kind": "S", "site": "<i4", "onset_s": "<f8", "offset_s": "<f8", "onset_index": "<i8",
             "offset_index": "<i8", "level_db": "<f8"}
EVENT_KINDS = {"M1", "T1", "A2", "P2", "S3", "S4", "S1", "S2", "mitral_close", "tricuspid_close", "aortic_open",
               "pulmonic_open", "aortic_close", "pulmonic_close", "mitral_open", "tricuspid_open"}
PCG_DTYPES = {"float32": np.float32, "int16": np.int16, "int24": np.int32}
FULL_SCALE = {"int16": 32767, "int24": 8388607}
RECORD_ATTRS = {"record_index", "population", "state", "exercise_intensity", "severity", "sensor",
                "sample_rate_hz", "sites", "duration_s", "snr_db", "snr_achieved_db", "noise_profile",
                "stationary_noise"}


def check_pcg(ds, where, fmt, n_sites, n_samples, rate):
    need(ds.dtype == PCG_DTYPES[fmt], f"{where}: dtype {ds.dtype} for sample_format {fmt}")
    need(ds.shape == (n_sites, n_samples), f"{where}: shape {ds.shape} != {(n_sites, n_samples)}")
    check_filters(ds, where, plain_in_fast=fmt == "float32")
    need(ds.attrs["sample_rate_hz"] == rate, f"{where}: sample_rate_hz")
    need(len(ds.attrs["sites"]) == n_sites, f"{where}: sites")
    need(ds.attrs["unit"] == "full_scale", f"{where}: unit")
    if fmt in FULL_SCALE:
        full = FULL_SCALE[fmt]
        need(np.isclose(ds.attrs["scale"], 1.0 / full), f"{where}: scale")
        need(list(ds.attrs["valid_range"]) == [-full, full], f"{where}: valid_range")
        data = ds[()]
        need(data.min() >= -full and data.max() <= full, f"{where}: samples outside valid_range")
    else:
        need(ds.attrs["scale"] == 1.0, f"{where}: scale")


def main():
    f = h5py.File(sys.argv[1], "r")
    a = f.attrs
    need(a["format"] == "stethogen-bundle", "format")
    need(list(a["format_version"]) == [1, 1] and a["format_version"].dtype == np.int32, "format_version")
    for key in ("generator_version", "recipe_toml", "recipe_sha256", "sample_format", "content", "created_utc"):
        need(isinstance(a.get(key), str), f"root attribute {key} missing or not a string")
    need(a["seed"].dtype == np.uint64 and a["record_count"].dtype == np.uint64, "seed / record_count dtype")
    # hashlib is the reference SHA-256 (FIPS 180-4).
    need(hashlib.sha256(a["recipe_toml"].encode()).hexdigest() == a["recipe_sha256"], "recipe_sha256 mismatch")
    fmt = a["sample_format"]
    COMPRESSION[0] = a.get("compression", "compact")
    need(COMPRESSION[0] in ("fast", "compact", "none"), f"compression {COMPRESSION[0]}")
    need(fmt in PCG_DTYPES, f"sample_format {fmt}")

    index = f["index"]
    check_fields(index, INDEX, "/index")
    skipped = f["skipped"]
    check_fields(skipped, SKIPPED, "/skipped")
    ids = [r.decode() for r in index["record_id"]]
    need(sorted(f["records"].keys()) == sorted(ids), "/records and /index list different records")
    need(list(index["record_index"]) == sorted(index["record_index"]), "/index not in record order")
    if "shard" not in a:
        need(len(index) + len(skipped) == a["record_count"], "records + skipped != record_count")

    for row in index:
        rid = row["record_id"].decode()
        g = f["records"][rid]
        where = f"/records/{rid}"
        need(RECORD_ATTRS <= set(g.attrs), f"{where}: attributes missing {RECORD_ATTRS - set(g.attrs)}")
        rate, n_sites, n_samples = int(row["sample_rate_hz"]), int(row["n_sites"]), int(row["n_samples"])
        need(np.isclose(row["duration_s"], n_samples / rate), f"{where}: duration_s != n_samples / rate")
        check_pcg(g["pcg"], where + "/pcg", fmt, n_sites, n_samples, rate)
        if "pcg_clean" in g:
            check_pcg(g["pcg_clean"], where + "/pcg_clean", fmt, n_sites, n_samples, rate)
        if "states" in g:
            st = g["states"]
            need(st.dtype == np.uint8 and st.shape == (n_sites, n_samples), f"{where}/states: dtype/shape")
            need(st[()].max() <= 4, f"{where}/states: label above 4")
            need(list(st.attrs["labels"]) == ["unlabelled", "S1", "systole", "S2", "diastole"], f"{where}/states: labels")
            check_filters(st, where + "/states")
        if "events" in g:
            ev = g["events"]
            check_fields(ev, EVENTS, where + "/events")
            check_filters(ev, where + "/events")
            kinds = {k.decode() for k in ev["kind"]}
            need(kinds <= EVENT_KINDS, f"{where}/events: unknown kinds {kinds - EVENT_KINDS}")
            need(ev.size == 0 or ev["site"].min() >= -1 and ev["site"].max() < n_sites, f"{where}/events: site")
            for t, k in (("onset_s", "onset_index"), ("peak_s", "peak_index"), ("offset_s", "offset_index")):
                # The sample index is the time at the record rate, rounded: within one sample.
                need(ev.size == 0 or np.all(np.abs(ev[t] * rate - ev[k]) <= 1.0), f"{where}/events: {k} vs {t}")
        if "beats" in g:
            check_fields(g["beats"], BEATS, where + "/beats")
            need(len(g["beats"]) == row["n_beats"], f"{where}/beats: count != n_beats")
        if "artifacts" in g:
            art = g["artifacts"]
            check_fields(art, ARTIFACTS, where + "/artifacts")
            need(art.size == 0 or np.all(np.abs(art["onset_s"] * rate - art["onset_index"]) <= 1.0),
                 f"{where}/artifacts: onset_index")
        if "hemodynamics" in g:
            h = g["hemodynamics"]
            need(h.attrs["sample_rate_hz"] > 0, f"{where}/hemodynamics: sample_rate_hz")
            channels = list(h.attrs["channels"])
            need(sorted(channels) == sorted(h.keys()), f"{where}/hemodynamics: channels != datasets")
            for c in channels:
                d = h[c]
                need(d.dtype == np.float32 and d.ndim == 1, f"{where}/hemodynamics/{c}: dtype/shape")
                need(isinstance(d.attrs.get("unit"), str) and d.attrs["unit"], f"{where}/hemodynamics/{c}: unit")
    for p in problems:
        print("schema:", p)
    return 1 if problems else 0


if __name__ == "__main__":
    sys.exit(main())
