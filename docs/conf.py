"""Sphinx configuration: the API reference, one page per wing, generated from the docstrings.

Built by bin/check with warnings as errors (``python -m sphinx -W --keep-going``), so a docstring
that does not render, or a page that names a module that is gone, fails the suite.
"""

from __future__ import annotations

import feasibly

project = "feasibly"
author = "feasibly developers"
release = feasibly.__version__
version = release
extensions = ["sphinx.ext.autodoc", "sphinx.ext.napoleon", "sphinx.ext.viewcode"]
# Members in source order read as the modules were written: the main entry point first.
autodoc_member_order = "bysource"
autodoc_typehints = "description"
# The optional dependencies of the widgets wing need not be installed to document it.
autodoc_mock_imports: list[str] = []
exclude_patterns = ["_build"]
html_theme = "alabaster"
html_static_path: list[str] = []
# Plain text after a colon in our docstrings is prose, not a cross-reference target.
default_role = None
