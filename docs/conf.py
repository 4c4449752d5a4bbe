"""Sphinx configuration of the sitesettle documentation.

Build (CI does, with warnings as errors; about a minute):

    pip install ".[docs]"
    sphinx-build -W --keep-going -b html docs docs/_build/html

The pages are the Markdown files of this folder (myst-parser); the API reference
is generated from the numpydoc docstrings (autodoc with napoleon); the gallery
scripts in docs/examples/ are run by sphinx-gallery at every build, so an example
that no longer works fails the build.
"""

from __future__ import annotations

import os

# the installed package is documented and its examples run against it (in CI a
# non-editable install, so the gallery also checks that the demo is packaged)
import sitesettle

os.environ.setdefault("MPLBACKEND", "Agg")

project = "sitesettle"
author = "the sitesettle developers"
copyright = "2026, the sitesettle developers"  # noqa: A001 (Sphinx's name)
release = version = sitesettle.__version__

extensions = [
    "myst_parser",
    "sphinx.ext.autodoc",
    "sphinx.ext.napoleon",
    "sphinx.ext.mathjax",
    "sphinx_gallery.gen_gallery",
]

source_suffix = {".rst": "restructuredtext", ".md": "markdown"}
root_doc = "index"
exclude_patterns = ["_build", "examples/README.rst", "auto_examples/*.ipynb", "images"]
myst_heading_anchors = 3
myst_enable_extensions = ["dollarmath"]

# numpydoc docstrings through napoleon
napoleon_google_docstring = False
napoleon_numpy_docstring = True
napoleon_use_rtype = False
napoleon_use_ivar = True
autodoc_member_order = "bysource"
autodoc_typehints = "none"  # the docstrings say the types and units
autodoc_default_options = {"members": True, "undoc-members": False}

sphinx_gallery_conf = {
    "examples_dirs": "examples",
    "gallery_dirs": "auto_examples",
    "filename_pattern": r"/plot_",  # every example is run
    "abort_on_example_error": True,
    "only_warn_on_example_error": False,
    "download_all_examples": False,
    "remove_config_comments": True,
    "capture_repr": ("_repr_html_", "__repr__"),
    "within_subsection_order": "FileNameSortKey",
    "matplotlib_animations": False,
}

html_theme = "alabaster"
html_title = f"sitesettle {release}"
html_static_path: list[str] = []

# ----------------------------------------------------------------- docstrings
# The docstrings are written for a reader of the source (numpydoc, plain text):
# |x| is an absolute value, not a reST substitution, and every function numbers
# its references from [1]. Two small rewrites make them valid reST on one page
# without changing the source: bars outside literals are escaped, and each
# docstring's footnotes get names of their own (shown as numbers).
# Unreferenced footnotes are allowed: a module lists its references in full.
suppress_warnings = ["ref.footnote", "ref.citation"]

import re  # noqa: E402

_LITERAL = re.compile(r"(``.*?``|:\w+:`[^`]*`|`[^`]*`)", re.S)
_FOOTNOTE = re.compile(r"\[(\d+)\](_?)")


def _indent(line: str) -> int:
    return len(line) - len(line.lstrip())


def _escape_bars(lines: list[str]) -> list[str]:
    """Escape | outside literals, roles, math blocks and tables (roles may span lines)."""
    out: list[str] = []
    chunk: list[str] = []

    def flush():
        if chunk:
            parts = _LITERAL.split("\n".join(chunk))
            text = "".join(p if i % 2 else p.replace("|", r"\|") for i, p in enumerate(parts))
            out.extend(text.split("\n"))
            chunk.clear()

    math_indent = None
    for line in lines:
        if math_indent is not None and (not line.strip() or _indent(line) > math_indent):
            out.append(line)
            continue
        math_indent = None
        stripped = line.lstrip()
        if stripped.startswith(".. math::"):
            flush()
            math_indent = _indent(line)
            out.append(line)
        elif stripped.startswith(("+-", "+=")) or (  # a row of a reST grid table
            stripped.startswith("|") and stripped.rstrip().endswith("|") and "  " in stripped
        ):
            flush()
            out.append(line)
        else:
            chunk.append(line)
    flush()
    return out


def _name_footnotes(line: str, key: str) -> str:
    stripped = line.lstrip()
    if stripped.startswith(".. ["):
        return _FOOTNOTE.sub(lambda m: f"[#{key}-{m.group(1)}]", line, count=1)
    return _FOOTNOTE.sub(
        lambda m: f"[#{key}-{m.group(1)}]_" if m.group(2) else m.group(0), line
    )


def _process_docstring(app, what, name, obj, options, lines):
    key = re.sub(r"[^A-Za-z0-9]+", "-", name).strip("-")
    lines[:] = [_name_footnotes(line, key) for line in _escape_bars(list(lines))]


def setup(app):
    app.connect("autodoc-process-docstring", _process_docstring)
