"""The README tour runs as written (docs are tested, STYLE lesson 12)."""
from __future__ import annotations

import contextlib
import io
import re
from pathlib import Path

README = Path(__file__).resolve().parents[2] / "README.md"


def test_readme_python_blocks_run(tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)  # the tour writes figures and tables
    blocks = re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)
    assert blocks, "README has no python tour"
    namespace: dict = {}
    with contextlib.redirect_stdout(io.StringIO()):
        for block in blocks:
            exec(compile(block, str(README), "exec"), namespace)
    assert namespace["result"].converged
    assert 0.0 < namespace["result"].y["NH3"] < 1.0
    assert namespace["sealed"].converged and namespace["sealed"].P > 0.0
    assert bool(namespace["batch"].converged.all())
    assert namespace["cmp"].ideal_unsafe and namespace["out"].converged and namespace["out"].temperature_rise > 0
    assert (tmp_path / "map.csv").is_file() and (tmp_path / "figures" / "map.png").is_file()
