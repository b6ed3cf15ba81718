"""Sphinx configuration of the API reference (built from the numpydoc docstrings).

Build: ``python -m sphinx -W -b html docs/api docs/api/_build`` (the test suite builds it
with warnings as errors, see tests/test_api_docs.py).
"""

import os
import sys

sys.path.insert(0, os.path.abspath(os.path.join(os.path.dirname(__file__), "..", "..")))

project = "thermonet"
author = "thermonet contributors"
extensions = ["sphinx.ext.autodoc", "numpydoc"]
numpydoc_show_class_members = False
numpydoc_class_members_toctree = False
numpydoc_xref_param_type = False
autodoc_default_options = {"members": True, "undoc-members": False}
autodoc_typehints = "none"
exclude_patterns = ["_build"]
html_theme = "alabaster"
