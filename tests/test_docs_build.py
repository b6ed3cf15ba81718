"""The API reference (docs/api, Sphinx + numpydoc) builds from the docstrings with warnings as
errors, so a broken docstring fails the suite rather than the published docs."""

import subprocess
import sys
from pathlib import Path

DOCS = Path(__file__).resolve().parents[1] / "docs" / "api"


def test_api_reference_builds_without_warnings(tmp_path):
    out = subprocess.run([sys.executable, "-m", "sphinx", "-W", "--keep-going", "-q", "-b",
                          "html", "-d", str(tmp_path / "doctrees"), str(DOCS),
                          str(tmp_path / "html")], capture_output=True, text=True)
    assert out.returncode == 0, out.stderr[-4000:]
    assert (tmp_path / "html" / "index.html").exists()
