"""Provenance of results: versions and input_sha256 (fdwall.provenance, Result.write_hdf5).

External references: the SHA-256 digests are recomputed here with Python's hashlib (FIPS 180-4
SHA-256) from the documented construction in docs/results.md, and the HDF5 files are read
back with h5py; the versions are compared with importlib.metadata / the modules themselves.
Whether the hash should change is the documented rule: same inputs, same hash; any one input
changed, another hash (common practice, no source).
"""

from __future__ import annotations

import hashlib
import os
import platform

import h5py
import numpy as np
import scipy

from fdwall.provenance import LIBRARY_PATH, input_sha256, provenance, stamp_h5

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
CASE = os.path.join(ROOT, "cases", "lab-furnace-wall.toml")


def _expected(case_bytes, extra=(), library=LIBRARY_PATH):
    # the construction of docs/results.md, recomputed with hashlib (FIPS 180-4)
    h = hashlib.sha256()
    parts = [("case", case_bytes)]
    parts += [("file:" + os.path.basename(p), open(p, "rb").read()) for p in extra]
    parts.append(("library", open(library, "rb").read()))
    for label, data in parts:
        h.update(f"{label}\0{len(data)}\0".encode())
        h.update(data)
    return h.hexdigest()


def test_hash_is_sha256_of_case_and_library():
    raw = open(CASE, "rb").read()
    assert input_sha256(CASE) == _expected(raw)
    assert input_sha256(raw.decode()) == _expected(raw)
    # CRLF line endings give the same hash (canonical text)
    assert input_sha256(raw.replace(b"\n", b"\r\n")) == _expected(raw)


def test_one_changed_input_changes_the_hash(tmp_path):
    raw = open(CASE, "rb").read()
    base = input_sha256(CASE)
    assert input_sha256(raw + b"\n# a comment\n") != base        # the case changed
    lib = tmp_path / "library.toml"
    lib.write_bytes(LIBRARY_PATH.read_bytes() + b"\n")
    assert input_sha256(CASE, library=lib) != base               # the library changed
    sched = tmp_path / "s.csv"
    sched.write_text("0,20\n")
    h1 = input_sha256(CASE, [sched])
    assert h1 != base and h1 == _expected(raw, [str(sched)])
    sched.write_text("0,21\n")
    assert input_sha256(CASE, [sched]) != h1                     # an extra file changed


def test_versions_are_those_of_the_installed_libraries():
    p = provenance(CASE)
    assert p["python_version"] == platform.python_version()
    assert p["numpy_version"] == np.__version__
    assert p["scipy_version"] == scipy.__version__
    assert p["h5py_version"] == h5py.__version__
    assert p["numba_version"]
    assert p["material_library_sha256"] == hashlib.sha256(LIBRARY_PATH.read_bytes()).hexdigest()


def test_stamp_h5_writes_attribute_and_group(tmp_path):
    prov = provenance(CASE)
    with h5py.File(tmp_path / "x.h5", "w") as f:
        stamp_h5(f, prov)
    with h5py.File(tmp_path / "x.h5", "r") as f:
        assert f.attrs["input_sha256"] == prov["input_sha256"]
        assert dict(f["provenance"].attrs) == prov


def _datasets(path):
    out = {}
    with h5py.File(path, "r") as f:
        attrs = {k: v for k, v in f.attrs.items() if k != "created"}

        def visit(name, obj):
            if isinstance(obj, h5py.Dataset):
                out[name] = obj[()]
        f.visititems(visit)
        prov = dict(f["provenance"].attrs)
    return attrs, out, prov


def test_two_identical_runs_give_identical_datasets_and_hash(tmp_path):
    from fdwall.case import load_case
    from fdwall.solver import run
    case = load_case(CASE)
    a, b = tmp_path / "a.h5", tmp_path / "b.h5"
    run(case).write_hdf5(a)
    run(load_case(CASE)).write_hdf5(b)
    attrs_a, ds_a, prov_a = _datasets(a)
    attrs_b, ds_b, prov_b = _datasets(b)
    assert attrs_a["input_sha256"] == attrs_b["input_sha256"] == input_sha256(CASE)
    assert prov_a == prov_b
    assert set(ds_a) == set(ds_b)
    timing = ("wall", "elapsed", "time_s_wall")
    for k in ds_a:
        if any(t in k for t in timing):
            continue
        va, vb = ds_a[k], ds_b[k]
        if isinstance(va, np.ndarray):
            np.testing.assert_array_equal(va, vb, err_msg=k)
        else:
            assert va == vb, k


def _cli(argv):
    from fdwall.cli import main
    return main(argv)


def test_analysis_files_carry_provenance_and_options_hash(tmp_path):
    # size, rc and fit files: the same construction (FIPS 180-4 via hashlib), plus the options
    # that change the answer as canonical JSON; identical inputs give identical data sets
    import json as _json
    panel = os.path.join(ROOT, "cases", "curing-oven-panel.toml")
    log = os.path.join(ROOT, "cases", "lab-oven-log.csv")
    runs = {
        "size": ["size", panel, "--layer", "1", "--skin-limit", "55 degC", "--no-plots",
                 "--quiet"],
        "rc": ["rc", CASE, "--quiet"],
        "fit": ["fit", log, "--time", "time", "--temperature", "chamber top", "--power",
                "heater", "--ambient", "20 degC", "--quiet"],
    }
    for kind, argv in runs.items():
        files = []
        for rep in ("a", "b"):
            out = tmp_path / f"{kind}-{rep}"
            assert _cli(argv + ["--out", str(out)]) == 0, kind
            (h5,) = sorted(out.glob("*.h5"))
            files.append(h5)
        attrs_a, ds_a, prov_a = _datasets(files[0])
        attrs_b, ds_b, prov_b = _datasets(files[1])
        assert attrs_a["kind"] == kind
        assert len(attrs_a["input_sha256"]) == 64
        assert attrs_a["input_sha256"] == attrs_b["input_sha256"] == prov_a["input_sha256"]
        for key in ("fdwall_version", "python_version", "numpy_version", "numba_version"):
            assert prov_a[key], (kind, key)
        opts = _json.loads(prov_a["options"])
        assert "out" not in opts and "quiet" not in opts
        # the hash: case (or log) file, extra files, library, options
        h = hashlib.sha256()
        src = {"size": panel, "rc": CASE, "fit": log}[kind]
        for label, data in (("case", open(src, "rb").read().replace(b"\r\n", b"\n")),
                            ("library", LIBRARY_PATH.read_bytes()),
                            ("options", _json.dumps(opts, sort_keys=True).encode())):
            h.update(f"{label}\0{len(data)}\0".encode())
            h.update(data)
        assert attrs_a["input_sha256"] == h.hexdigest(), kind
        for k in ds_a:
            if isinstance(ds_a[k], np.ndarray) and ds_a[k].dtype.kind == "f":
                np.testing.assert_array_equal(ds_a[k], ds_b[k], err_msg=f"{kind} {k}")
    # an option that changes the answer changes the hash
    out = tmp_path / "size-c"
    _cli(runs["size"][:4] + ["--skin-limit", "60 degC", "--no-plots", "--quiet", "--out", str(out)])
    (h5,) = sorted(out.glob("*.h5"))
    with h5py.File(h5, "r") as f, h5py.File(sorted((tmp_path / "size-a").glob("*.h5"))[0]) as g:
        assert f.attrs["input_sha256"] != g.attrs["input_sha256"]


def test_study_file_carries_provenance(tmp_path):
    # the same construction as above (FIPS 180-4 via hashlib): the study file as the case,
    # the base case it names as an extra file, the library, and seed and method as options
    import json as _json
    study = os.path.join(ROOT, "cases", "studies", "curing-oven-insulation-study.toml")
    out = tmp_path / "st"
    assert _cli(["study", study, "--out", str(out), "--workers", "1", "--quiet",
                 "--no-plots"]) == 0
    (h5,) = sorted(out.glob("*.h5"))
    with h5py.File(h5, "r") as f:
        sha = f.attrs["input_sha256"]
        prov = dict(f["provenance"].attrs)
    base = prov["input_files"]
    assert os.path.basename(base) == "curing-oven-panel.toml"
    opts = _json.loads(prov["options"])
    h = hashlib.sha256()
    for label, data in (("case", open(study, "rb").read().replace(b"\r\n", b"\n")),
                        ("file:" + os.path.basename(base), open(base, "rb").read()),
                        ("library", LIBRARY_PATH.read_bytes()),
                        ("options", _json.dumps(opts, sort_keys=True).encode())):
        h.update(f"{label}\0{len(data)}\0".encode())
        h.update(data)
    assert sha == h.hexdigest()
