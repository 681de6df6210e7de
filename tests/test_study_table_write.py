"""The study table's rewrite with cached row lines gives the bytes of a plain csv.writer pass,
and reads back with pandas (the library that reads it for users; common practice, no source)."""
import csv

import pandas as pd

from fdwall.analyses.study_run import _cell, _stamp, table_header, write_table

ST = {"input_paths": ["wall.layers[0].thickness"], "outputs": ["outer_T_K", "touch_verdict"],
      "sha": "abc", "method": "grid", "seed": None}


def _row(i):
    return {"variant": i, "wall.layers[0].thickness": f"{10 * i} mm", "outer_T_K": 300.0 + i / 7,
            "touch_verdict": "below-limit", "status": "done" if i != 2 else "failed",
            "error": 'bad "value", here' if i == 2 else "", "run_time_s": 0.01 * i,
            "host": "h", "worker": "1"}


def test_cached_rewrite_equals_a_plain_write(tmp_path):
    rows = {i: _row(i) for i in (3, 0, 2, 1)}
    lines = {}
    write_table(tmp_path / "a.csv", ST, {i: rows[i] for i in (0, 2)}, lines)   # a first batch
    write_table(tmp_path / "a.csv", ST, rows, lines)                           # the next one
    keys, head = table_header(ST)
    with open(tmp_path / "b.csv", "w", newline="") as f:
        w = csv.writer(f)
        w.writerow([_stamp(ST)])
        w.writerow(head)
        for i in sorted(rows):
            w.writerow([_cell(rows[i].get(k, "")) for k in keys])
    assert (tmp_path / "a.csv").read_bytes() == (tmp_path / "b.csv").read_bytes()
    df = pd.read_csv(tmp_path / "a.csv", comment="#", keep_default_na=False)
    assert list(df["variant"]) == [0, 1, 2, 3]
    assert list(df["outer_T [K]"]) == [300.0 + i / 7 for i in range(4)]   # repr round-trips
    assert df["error"][2] == 'bad "value", here'
