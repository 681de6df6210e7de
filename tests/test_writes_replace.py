"""Replacing an existing result: `fdwall run` twice into one folder warns and says which file.

Behaviour checked against the documented rule (docs/results.md, "Replacing a result"): warn,
don't refuse (common practice, no source). The replaced file is really a new one: its HDF5
`created` attribute changes and the file is a valid HDF5 file read with h5py (an independent
library), with no `.part` left.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
import time

import h5py

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
CASE = os.path.join(ROOT, "cases", "lab-furnace-wall.toml")


def _run(out):
    env = dict(os.environ, PYTHONPATH=ROOT)
    return subprocess.run([sys.executable, "-m", "fdwall.cli", "run", CASE, "--out", str(out),
                           "--no-plots", "--json"], capture_output=True, text=True, env=env,
                          cwd=ROOT, timeout=300)


def test_second_run_into_one_folder_warns_which_file_it_replaces(tmp_path):
    out = tmp_path / "res"
    h5 = out / "lab-furnace-wall.h5"
    p1 = _run(out)
    assert p1.returncode == 0, p1.stderr
    assert "replacing" not in p1.stderr
    assert json.loads(p1.stdout)["replaced_files"] == []
    with h5py.File(h5, "r") as f:
        created1 = f.attrs["created"]
    time.sleep(1.1)
    p2 = _run(out)
    assert p2.returncode == 0, p2.stderr
    err = " ".join(p2.stderr.split())   # the message is wrapped to the terminal width
    assert f"replacing the existing result file '{h5}'" in err
    assert "lab-furnace-wall-summary.json" in err
    assert str(h5) in json.loads(p2.stdout)["replaced_files"]
    with h5py.File(h5, "r") as f:
        assert f.attrs["created"] != created1
    assert not [n for n in os.listdir(out) if n.endswith(".part")]
