"""The Python examples in README.md run as written (documentation kept in step with the API).

Each ```python block is executed in a temporary folder, with the bundled case paths made
absolute; the second block's ``daily_case`` (a placeholder in the README) is the bundled
heat-treat furnace.  Physics is checked elsewhere; here two outside facts keep the run
honest: the energy ledger closes (first law) and the lab-furnace skin stays between room
temperature and the furnace's inner face (second law: heat flows from hot to cold).
Source: the first and second laws as stated in Incropera, Fundamentals of Heat and Mass
Transfer, §1.3 (from memory).
"""
import pathlib
import re

import pytest

ROOT = pathlib.Path(__file__).resolve().parent.parent
BLOCKS = re.findall(r"```python\n(.*?)```", (ROOT / "README.md").read_text(), re.S)


def test_readme_has_python_examples():
    assert len(BLOCKS) >= 2


@pytest.mark.parametrize("i", range(len(BLOCKS)))
def test_readme_example_runs(i, tmp_path, monkeypatch, capsys):
    import fdwall
    monkeypatch.chdir(tmp_path)
    code = BLOCKS[i].replace('"cases/', f'"{ROOT}/cases/')
    ns = {"daily_case": fdwall.load_case(ROOT / "cases" / "heat-treat-furnace.toml")}
    exec(compile("import fdwall\n" + code, f"README.md python block {i + 1}", "exec"), ns)
    res = ns["res"]
    assert res.complete and res.relative_residual < 1e-9
    if i == 0:
        assert (tmp_path / "furnace.h5").is_file()
        lab = fdwall.run(fdwall.load_case(ROOT / "cases" / "lab-furnace-wall.toml"))
        inner, outer = lab.face_T[-1]
        assert 293.0 < outer < inner
