"""The README's quick start and Python example stay true."""

import re
from pathlib import Path

import numpy as np

ROOT = Path(__file__).resolve().parents[1]
README = (ROOT / "README.md").read_text(encoding="utf-8")


def test_quick_start_has_two_commands_and_ci_runs_the_test_one():
    block = re.search(r"## Quick start\s+```bash\n(.*?)```", README, re.S).group(1)
    commands = [line for line in block.splitlines() if line.strip()]
    assert len(commands) == 2
    assert "thermonet demo" in commands[0]
    ci = (ROOT / ".ci" / "run").read_text(encoding="utf-8")
    assert commands[1].strip() in ci


def test_python_example_runs_and_its_balance_closes(capsys):
    code = re.search(r"## From Python\s+```python\n(.*?)```", README, re.S).group(1)
    scope: dict = {}
    exec(compile(code, "README.md", "exec"), scope)   # noqa: S102 - our own README
    res = scope["res"]
    b = res.balance(["room", "slab"], freq="YS")
    assert np.abs(b["residual"]).max() <= 1e-9 * b.drop(columns="residual").abs().max().max()
    assert res.summary()["heating_kwh"] > 0
    assert "opaque" in capsys.readouterr().out


def test_cautions_are_stated():
    text = README.lower()
    assert "not a substitute for code-compliance" in text
    assert "licensed professionals" in text
