"""Property test of the study-file reader: any text gives a study or an InputError.

Common practice, no source (fuzzing the reader; hypothesis with a fixed seed).
"""
from hypothesis import given, seed, settings
from hypothesis import strategies as st

from fdwall.errors import InputError
from fdwall.study import read_study

CASE = open("cases/curing-oven-panel.toml").read()
_lines = st.sampled_from([
    'base = "base.toml"', 'base = 3', 'base = "missing.toml"', "[[vary]]",
    'path = "wall.layers[1].thickness"', 'path = "wall.layerz[1].thickness"',
    'path = "wall.layers[9].thickness"', 'path = "a..b"', 'path = 5',
    'values = ["50 mm"]', "values = []", 'values = "x"', "[vary]", "=", 'x = [',
    "[[uncertain]]", 'distribution = "lognormal"', 'distribution = "triangular"',
    'median = "60 mm"', "log_spread = 0.2", "log_spread = -1", 'low = "x"', 'low = "70 mm"',
    'high = "50 mm"', 'mode = "55 mm"', "samples = 3", "samples = -1",
    'method = "monte-carlo"', 'method = "grid"', "[exceed]", 'outer_T_K = "60 degC"',
    'loss_W = "hot"',
])


@seed(15)
@settings(max_examples=300, deadline=None)
@given(st.lists(_lines, max_size=8))
def test_reader_never_tracebacks(tmp_path_factory, lines):
    d = tmp_path_factory.mktemp("s")
    (d / "base.toml").write_text(CASE)
    p = d / "x-study.toml"
    p.write_text("\n".join(lines) + "\n")
    try:
        st_ = read_study(p, seed=1)
    except InputError:
        return
    assert st_["variants"]
