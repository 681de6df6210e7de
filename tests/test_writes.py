"""Write failures and signals: a failed write exits 1 with one message and leaves no file.

Sources: POSIX setrlimit(2)/RLIMIT_FSIZE (a write past the limit fails with EFBIG once SIGXFSZ
is ignored) and rename(2) atomicity (the target is either the old or the new file); the
checks are on operating-system behaviour, not on fdwall's own numbers.
"""
import os
import subprocess
import sys
import time

import h5py
import numpy as np
import pytest

from fdwall import atomic, h5tree
from fdwall.errors import OutputError

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
CASE = os.path.join(ROOT, "cases", "lab-furnace-wall.toml")

_LIMITED = r"""
import resource, signal, sys, runpy
signal.signal(signal.SIGXFSZ, signal.SIG_IGN)
resource.setrlimit(resource.RLIMIT_FSIZE, (20000, 20000))
sys.argv = ["fdwall"] + sys.argv[1:]
runpy.run_module("fdwall.cli", run_name="__main__")
"""


def _files(d):
    return sorted(os.listdir(d)) if os.path.isdir(d) else []


def test_run_under_file_size_limit_exits_1_no_file(tmp_path):
    # setrlimit(2): writes beyond RLIMIT_FSIZE fail with EFBIG (SIGXFSZ ignored)
    out = tmp_path / "out"
    env = dict(os.environ, PYTHONPATH=ROOT)
    p = subprocess.run([sys.executable, "-c", _LIMITED, "run", CASE, "--out", str(out),
                        "--no-plots", "--quiet"], capture_output=True, text=True, env=env,
                       timeout=600)
    assert p.returncode == 1, (p.returncode, p.stderr[-2000:])
    assert "Traceback" not in p.stderr
    assert p.stderr.count("error:") == 1 and "cannot write" in p.stderr, p.stderr
    left = [f for f in _files(out) if f.endswith(".h5") or f.endswith(".part")]
    assert left == [], left


def test_write_bytes_oserror_is_outputerror(tmp_path):
    # a folder that is a file: mkdir/open raise OSError (POSIX), which must become OutputError
    blocker = tmp_path / "file"
    blocker.write_text("x")
    with pytest.raises(OutputError):
        atomic.write_bytes(blocker / "a.bin", b"abc")


def test_h5_roundtrip_in_memory_then_add_group(tmp_path):
    # h5py core driver image -> file: read back with h5py (an independent reader of the bytes)
    p = tmp_path / "a.h5"
    h5tree.write_file(p, {"summary": {"T_K": 300.0, "x_m": [1.0, 2.0]}}, attrs={"kind": "steady"})
    h5tree.add_group(p, "notes", {"a": 1.0})
    with h5py.File(p, "r") as h:
        assert h.attrs["kind"] == "steady"
        assert h["summary"].attrs["T_K"] == 300.0
        np.testing.assert_array_equal(h["summary/x_m"][()], [1.0, 2.0])
        assert "notes" in h
    assert [f for f in os.listdir(tmp_path) if f.endswith(".part")] == []


def test_stale_part_removed(tmp_path):
    # common practice, no source: a .part older than this process is a leftover of a killed run
    stale = tmp_path / ".fdwall-old.part"
    stale.write_bytes(b"x")
    old = atomic.PROCESS_START - 3600
    os.utime(stale, (old, old))
    atomic.write_bytes(tmp_path / "b.bin", b"y")
    assert not stale.exists()
    assert (tmp_path / "b.bin").read_bytes() == b"y"


_KILL = r"""
import sys, numpy as np
from fdwall import h5tree
h5tree.write_file(sys.argv[1], {"d": {"x": np.arange(4_000_000, dtype=float)}})
print("done", flush=True)
"""


@pytest.mark.parametrize("delay", [0.3, 0.8, 1.5])
def test_sigterm_during_write_old_or_new_never_part(tmp_path, delay):
    # rename(2) atomicity: after a SIGTERM the target is the old file or the new one, no .part
    target = tmp_path / "big.h5"
    h5tree.write_file(target, {"d": {"old": 1.0}})
    env = dict(os.environ, PYTHONPATH=ROOT)
    p = subprocess.Popen([sys.executable, "-c", _KILL, str(target)], env=env,
                         stdout=subprocess.PIPE, stderr=subprocess.PIPE)
    time.sleep(delay)
    p.terminate()
    p.communicate(timeout=120)
    assert [f for f in os.listdir(tmp_path) if f.endswith(".part")] == []
    with h5py.File(target, "r") as h:
        assert ("old" in h["d"].attrs) or (h["d/x"].shape == (4_000_000,))
