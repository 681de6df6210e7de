"""Design studies on dask.distributed: same table as local processes; unreachable scheduler.

The local-process table is itself checked against the series-resistance closed form of a
steady one-layer plane wall (Incropera, Fundamentals of Heat and Mass Transfer, 6th ed.,
sec. 3.1, eq. 3.19); here the Dask path must reproduce it exactly.
"""
import socket
import time

import pytest
from study_cases import ONE_LAYER_WALL

from fdwall.errors import InputError
from fdwall.study import read_study, read_table, run_study

distributed = pytest.importorskip("distributed")

STUDY = """
base = "wall.toml"
outputs = ["outer_T_K", "loss_W", "peak_skin_T_K", "stored_energy_J"]
method = "latin-hypercube"
samples = 16
[[uncertain]]
path = "wall.layers[0].conductivity_factor"
distribution = "triangular"
low = 0.7
mode = 1.0
high = 1.3
[[uncertain]]
path = "wall.outer_face.film_coefficient"
distribution = "normal"
mean = "10 W/m2/K"
spread = "1 W/m2/K"
low = "6 W/m2/K"
"""

VOLATILE = ["run_time [s]", "host", "worker"]


def test_dask_table_equals_local_table(tmp_path):
    (tmp_path / "wall.toml").write_text(ONE_LAYER_WALL)
    p = tmp_path / "d-study.toml"
    p.write_text(STUDY)
    (tmp_path / "a").mkdir()
    (tmp_path / "b").mkdir()
    run_study(read_study(p, seed=11), tmp_path / "a", workers=1)
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False,
                                  protocol="tcp", host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        _, rows = run_study(read_study(p, seed=11), tmp_path / "b",
                            scheduler=cluster.scheduler_address, batch=5)
    a = read_table(tmp_path / "a" / "d-study.csv").drop(columns=VOLATILE)
    b = read_table(tmp_path / "b" / "d-study.csv").drop(columns=VOLATILE)
    assert len(a) == 16 and (a["status"] == "done").all()
    assert a.equals(b)
    # closed form for one variant (Incropera sec. 3.1): k = 0.1 W/m/K x factor
    r = rows[3]
    k = 0.1 * float(r["wall.layers[0].conductivity_factor"])
    ho = float(r["wall.outer_face.film_coefficient"].split()[0])
    q = 180.0 / (1 / 20 + 0.05 / k + 1 / ho)
    assert r["outer_T_K"] == pytest.approx(293.15 + q / ho, abs=1e-6)


def test_cli_scheduler_option(tmp_path, capsys):
    # the command on a loopback cluster writes the same table as on local processes
    import json

    from fdwall.cli import main
    (tmp_path / "wall.toml").write_text(ONE_LAYER_WALL)
    p = tmp_path / "d-study.toml"
    p.write_text(STUDY)
    assert main(["study", str(p), "--out", str(tmp_path / "a"), "--seed", "4", "--workers",
                 "1", "--quiet", "--no-plots"]) == 0
    with distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=False,
                                  protocol="tcp", host="127.0.0.1",
                                  dashboard_address=None) as cluster:
        assert main(["study", str(p), "--out", str(tmp_path / "b"), "--seed", "4",
                     "--scheduler", cluster.scheduler_address, "--json", "--no-plots"]) == 0
    d = json.loads(capsys.readouterr().out)
    assert d["summary"]["done"] == 16
    a = read_table(tmp_path / "a" / "d-study.csv").drop(columns=VOLATILE)
    b = read_table(tmp_path / "b" / "d-study.csv").drop(columns=VOLATILE)
    assert a.equals(b)


def test_unreachable_scheduler_is_a_clear_error_in_time(tmp_path):
    # common practice, no source: a port nobody listens on; the error must come within the
    # stated timeout (plus slack for the test machine), naming the option
    with socket.socket() as s:
        s.bind(("127.0.0.1", 0))
        port = s.getsockname()[1]
    (tmp_path / "wall.toml").write_text(ONE_LAYER_WALL)
    p = tmp_path / "d-study.toml"
    p.write_text(STUDY)
    t0 = time.perf_counter()
    with pytest.raises(InputError, match=r"--scheduler tcp://127.0.0.1:\d+: no Dask scheduler "
                                         r"answered within 2 s"):
        run_study(read_study(p, seed=1), tmp_path, scheduler=f"tcp://127.0.0.1:{port}",
                  timeout=2.0)
    assert time.perf_counter() - t0 < 15
    assert not (tmp_path / "d-study.csv").exists()
