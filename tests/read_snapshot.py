#!/usr/bin/env python3
"""Outside check of Sluice HDF5 snapshots with h5py (which bundles the reference
HDF5 C library of The HDF Group), independent of Sluice's own reader.

Usage:
    read_snapshot.py SNAPSHOT EXPECT.json      check against expectations
    read_snapshot.py SNAPSHOT --structure      check the general layout only
    either form may add  --dump OUT.json       write everything h5py saw

EXPECT.json:
    {
      "root_attrs": {NAME: {"type": "f64"|"i64"|"str"|"f64s", "value": V}, ...},
      "datasets":   {PATH: {"bits": [u64, ...], "attrs": {NAME: {...}, ...}}, ...},
      "exact_members": true
    }
f64 values are given as their IEEE-754 bit patterns (unsigned 64-bit integers),
so the comparison is bit-exact (NaN payloads and -0.0 included). With
"exact_members" the file must hold exactly these datasets and root attributes.
Every dataset listed must also carry a `units` attribute read back as `str`.

--structure: at least one root attribute, at least one dataset, every dataset a
1D float64 array with a non-empty `units` attribute of Python type `str`, and
every string attribute anywhere read back as `str` (not bytes).

Exit status 0 when all checks pass; 1 with one line per failure otherwise;
2 for usage errors or an unreadable file.
"""

import json
import struct
import sys

try:
    import h5py
    import numpy as np
except ImportError as e:  # pragma: no cover - reported to the caller
    print(f"read_snapshot.py: cannot import h5py/numpy ({e}); run `bash tests/run.sh`",
          file=sys.stderr)
    sys.exit(2)


def bits_of(x):
    """IEEE-754 bit pattern of a Python/numpy float as an unsigned 64-bit int."""
    return struct.unpack("<Q", struct.pack("<d", float(x)))[0]


def describe_attr(value):
    """(type, json_value) for an attribute as h5py returns it, or (None, repr)."""
    if isinstance(value, str):
        return "str", value
    if isinstance(value, (bytes, np.bytes_)):
        return None, f"bytes {value!r} (strings must come back as str)"
    if isinstance(value, h5py.Empty):
        return None, f"h5py.Empty (dtype {value.dtype})"
    arr = np.asarray(value)
    if arr.ndim == 0:
        if arr.dtype == np.float64:
            return "f64", bits_of(arr)
        if arr.dtype == np.int64:
            return "i64", int(arr)
        return None, f"scalar of dtype {arr.dtype}"
    if arr.ndim == 1 and arr.dtype == np.float64:
        return "f64s", [bits_of(x) for x in arr]
    return None, f"array of dtype {arr.dtype} and shape {arr.shape}"


def dump_file(f, errors):
    """Everything h5py sees, in the expectations format."""
    out = {"root_attrs": {}, "datasets": {}, "groups_with_attrs": []}
    for name, value in f.attrs.items():
        t, v = describe_attr(value)
        if t is None:
            errors.append(f"root attribute `{name}`: {v}")
        out["root_attrs"][name] = {"type": t, "value": v}

    def visit(path, obj):
        full = "/" + path
        if isinstance(obj, h5py.Group):
            if len(obj.attrs):
                out["groups_with_attrs"].append(full)
            return
        if not isinstance(obj, h5py.Dataset):
            errors.append(f"`{full}` is neither a group nor a dataset")
            return
        if obj.dtype != np.float64 or obj.ndim != 1:
            errors.append(f"dataset `{full}`: dtype {obj.dtype}, shape {obj.shape}; "
                          "expected 1D float64")
            return
        data = obj[()]
        attrs = {}
        for name, value in obj.attrs.items():
            t, v = describe_attr(value)
            if t is None:
                errors.append(f"attribute `{name}` of `{full}`: {v}")
            attrs[name] = {"type": t, "value": v}
        out["datasets"][full] = {"bits": [bits_of(x) for x in data], "attrs": attrs}

    f.visititems(visit)
    return out


def show(v):
    s = repr(v)
    return s if len(s) <= 120 else s[:117] + "..."


def compare_attrs(owner, want, got, errors):
    for name, spec in want.items():
        if name not in got:
            errors.append(f"{owner}: attribute `{name}` missing (have {sorted(got)})")
            continue
        g = got[name]
        if g["type"] != spec["type"]:
            errors.append(f"{owner}: attribute `{name}` has type {g['type']} "
                          f"({show(g['value'])}), expected {spec['type']}")
        elif g["value"] != spec["value"]:
            errors.append(f"{owner}: attribute `{name}` = {show(g['value'])}, "
                          f"expected {show(spec['value'])}")


def check_expectations(seen, want, errors):
    compare_attrs("root group", want.get("root_attrs", {}), seen["root_attrs"], errors)
    for path, spec in want.get("datasets", {}).items():
        got = seen["datasets"].get(path)
        if got is None:
            errors.append(f"dataset `{path}` missing (have {sorted(seen['datasets'])})")
            continue
        if got["bits"] != spec["bits"]:
            n_want, n_got = len(spec["bits"]), len(got["bits"])
            if n_want != n_got:
                errors.append(f"dataset `{path}`: {n_got} values, expected {n_want}")
            else:
                i = next(i for i, (a, b) in enumerate(zip(got["bits"], spec["bits"]))
                         if a != b)
                errors.append(f"dataset `{path}`: value {i} has bits {got['bits'][i]:#018x}, "
                              f"expected {spec['bits'][i]:#018x}")
        compare_attrs(f"dataset `{path}`", spec.get("attrs", {}), got["attrs"], errors)
        units = got["attrs"].get("units")
        if units is None or units["type"] != "str":
            errors.append(f"dataset `{path}`: no `units` attribute of type str")
    if want.get("exact_members"):
        extra = sorted(set(seen["datasets"]) - set(want.get("datasets", {})))
        if extra:
            errors.append(f"unexpected datasets {extra}")
        extra = sorted(set(seen["root_attrs"]) - set(want.get("root_attrs", {})))
        if extra:
            errors.append(f"unexpected root attributes {extra}")


def check_structure(seen, errors):
    if not seen["root_attrs"]:
        errors.append("the root group has no attributes")
    if not seen["datasets"]:
        errors.append("the file has no datasets")
    for path, ds in seen["datasets"].items():
        units = ds["attrs"].get("units")
        if units is None:
            errors.append(f"dataset `{path}` has no `units` attribute")
        elif units["type"] != "str" or not units["value"].strip():
            errors.append(f"dataset `{path}`: `units` is {show(units['value'])}, "
                          "expected a non-empty str")


def main(argv):
    args = list(argv[1:])
    dump_to = None
    if "--dump" in args:
        i = args.index("--dump")
        if i + 1 >= len(args):
            print("read_snapshot.py: --dump needs a file name", file=sys.stderr)
            return 2
        dump_to = args[i + 1]
        del args[i:i + 2]
    if len(args) != 2:
        print(__doc__, file=sys.stderr)
        return 2
    snapshot, mode = args
    errors = []
    try:
        with h5py.File(snapshot, "r") as f:
            seen = dump_file(f, errors)
    except OSError as e:
        print(f"read_snapshot.py: h5py cannot open `{snapshot}`: {e}", file=sys.stderr)
        return 2
    if seen["groups_with_attrs"]:
        errors.append(f"groups other than the root carry attributes: "
                      f"{seen['groups_with_attrs']}")
    if mode == "--structure":
        check_structure(seen, errors)
    else:
        try:
            with open(mode, encoding="utf-8") as fh:
                want = json.load(fh)
        except (OSError, ValueError) as e:
            print(f"read_snapshot.py: cannot read expectations `{mode}`: {e}", file=sys.stderr)
            return 2
        check_expectations(seen, want, errors)
    if dump_to:
        with open(dump_to, "w", encoding="utf-8") as fh:
            json.dump(seen, fh, ensure_ascii=False)
    n_ds = len(seen["datasets"])
    n_at = len(seen["root_attrs"])
    if errors:
        for e in errors:
            print(f"read_snapshot.py: {snapshot}: {e}", file=sys.stderr)
        print(f"read_snapshot.py: FAILED ({len(errors)} problems; h5py {h5py.__version__}, "
              f"HDF5 {h5py.version.hdf5_version})", file=sys.stderr)
        return 1
    print(f"read_snapshot.py: OK: {snapshot}: {n_at} root attributes, {n_ds} datasets "
          f"(h5py {h5py.__version__}, HDF5 {h5py.version.hdf5_version})")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
