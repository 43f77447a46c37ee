"""Sphinx configuration of gainshape's documentation site (``make docs``)."""

import os
import pathlib
import shutil
import sys

import gainshape

project = "gainshape"
author = "the gainshape developers"
copyright = "2026, the gainshape developers"
release = version = gainshape.__version__

extensions = [
    "sphinx.ext.autodoc",
    "sphinx.ext.autosummary",
    "numpydoc",
    "myst_nb",
]

html_theme = "pydata_sphinx_theme"
html_title = "gainshape"
html_theme_options = {
    "navigation_with_keys": False,
    "header_links_before_dropdown": 3,
    "show_toc_level": 2,
    "secondary_sidebar_items": ["page-toc"],
}
html_static_path = []

autosummary_generate = True
autodoc_typehints = "none"
numpydoc_show_class_members = False
numpydoc_xref_param_type = False
# every public docstring is checked; left out: a summary on the line of the
# opening quotes (GL01), an extended summary (ES01), descriptions in See Also (SA04)
numpydoc_validation_checks = {"all", "GL01", "ES01", "SA04"}
# dataclass fields are documented in their class's Attributes section
numpydoc_validation_exclude = {
    r"\.__\w+__$",
    r"^gainshape\.FilterDesign\.(curve|sfreq|causal|kernel_request|tolerance|taps|offset"
    r"|characteristics|notes|rates)$",
    r"^gainshape\.GainCurve\.func$",
}

nb_execution_mode = "force"
nb_execution_timeout = 600
nb_execution_raise_on_error = True
exclude_patterns = ["_build", "**.ipynb_checkpoints"]
suppress_warnings = ["mystnb.unknown_mime_type"]


def _copy_tutorials():
    """Copy ../tutorials/*.ipynb into tutorials/ (each written whole, then renamed)."""
    source = pathlib.Path(__file__).parent.parent / "tutorials"
    target = pathlib.Path(__file__).parent / "tutorials"
    target.mkdir(exist_ok=True)
    for notebook in sorted(source.glob("*.ipynb")):
        staged = target / f".{notebook.name}.partial"
        shutil.copyfile(notebook, staged)
        os.replace(staged, target / notebook.name)


_copy_tutorials()
# the wings and their imports, drawn from the code (docs/architecture.md shows it)
sys.path.insert(0, str(pathlib.Path(__file__).parent))
import wings  # noqa: E402

wings.write_picture(pathlib.Path(__file__).parent / "generated" / "wings.svg")
# the notebooks' kernels draw inline, so their figures land in the pages
os.environ["MPLBACKEND"] = "module://matplotlib_inline.backend_inline"
