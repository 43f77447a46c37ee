"""gainshape: EEG/ERP filters drawn as gain curves, realized, applied and recorded.

The public names below are imported on first use (PEP 562), so that
``import gainshape`` and the ``gainshape`` command start quickly; each name
is the same object whichever way it is reached.
"""

import importlib
import sys
import types
import typing

if typing.TYPE_CHECKING:  # the same names, statically, for type checkers and editors
    from ._checks import GainshapeWarning
    from .about import about
    from .adapters import apply, replay
    from .audit import audit
    from .curves import GainCurve, bandpass, bandstop, highpass, lowpass, notch
    from .design import FilterDesign, design
    from .drawing import draw
    from .lines import find_lines, suggest_notches
    from .provenance import bids_filters, export, history, methods_text, write_bids_filters
    from .recipes import read_recipe, write_recipe
    from .study import run_study
    from .summaries import band_change, observed_gain
    from .viz import plot_audit, plot_band_change, plot_lines, plot_observed_gain

# public name -> the module that defines it
_HOMES = {
    "GainshapeWarning": "_checks", "apply": "adapters", "replay": "adapters",
    "GainCurve": "curves", "bandpass": "curves", "bandstop": "curves", "highpass": "curves",
    "lowpass": "curves", "notch": "curves", "FilterDesign": "design", "design": "design",
    "draw": "drawing", "audit": "audit", "find_lines": "lines", "suggest_notches": "lines",
    "bids_filters": "provenance", "export": "provenance", "history": "provenance",
    "methods_text": "provenance", "write_bids_filters": "provenance", "read_recipe": "recipes",
    "write_recipe": "recipes", "run_study": "study", "band_change": "summaries",
    "observed_gain": "summaries", "plot_audit": "viz", "plot_band_change": "viz",
    "plot_lines": "viz", "plot_observed_gain": "viz", "about": "about",
}


def __getattr__(name: str):
    """The public name ``name``, imported from its module on first use."""
    if name not in _HOMES:
        raise AttributeError(f"module 'gainshape' has no attribute {name!r}")
    value = getattr(importlib.import_module(f".{_HOMES[name]}", __name__), name)
    globals()[name] = value
    return value


def __dir__() -> list:
    return sorted(set(globals()) | set(__all__))


class _Package(types.ModuleType):
    """The package's module type: importing the submodule ``design`` (or
    ``audit``) does not hide the public function of the same name."""

    def __setattr__(self, name, value):
        if name in _HOMES and isinstance(value, types.ModuleType):
            return
        super().__setattr__(name, value)


sys.modules[__name__].__class__ = _Package

__version__ = "0.1.0"

__all__ = [
    "FilterDesign",
    "GainCurve",
    "GainshapeWarning",
    "about",
    "apply",
    "audit",
    "band_change",
    "bandpass",
    "bids_filters",
    "bandstop",
    "design",
    "draw",
    "export",
    "find_lines",
    "highpass",
    "history",
    "lowpass",
    "methods_text",
    "notch",
    "observed_gain",
    "plot_audit",
    "plot_band_change",
    "plot_lines",
    "plot_observed_gain",
    "read_recipe",
    "replay",
    "run_study",
    "suggest_notches",
    "write_bids_filters",
    "write_recipe",
]
