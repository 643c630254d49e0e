"""The README's Python example runs and prints the documented numbers."""

import re
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]


def test_readme_python_example(monkeypatch, capsys):
    readme = (ROOT / "README.md").read_text()
    example = re.search(r"## Python.*?```python\n(.*?)```", readme, re.S).group(1)
    monkeypatch.chdir(ROOT)
    # Run without a display: matplotlib, if installed, must not open a window.
    monkeypatch.setenv("MPLBACKEND", "Agg")
    exec(compile(example, "README.md", "exec"), {})
    total, switches = capsys.readouterr().out.split()
    # tests/snapshots/score.json (the command line's output): "total" and "switch_count".
    assert float(total) == pytest.approx(15103.590357841626, rel=1e-12)
    assert float(switches) == pytest.approx(12.0, abs=0)
