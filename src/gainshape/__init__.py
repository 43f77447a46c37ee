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
    from .filtering.adapters import apply, replay
    from .examining.audit import audit
    from .examining.compare import compare_filters
    from .shaping.curves import GainCurve
    from .shaping.shapes import bandpass, bandstop, highpass, lowpass, notch
    from .shaping.filter_design import FilterDesign
    from .shaping.design import design
    from .showing.drawing import draw
    from .examining.lines import find_lines
    from .examining.notches import suggest_notches
    from .record.bids import bids_filters, export, write_bids_filters
    from .record.steps import history
    from .record.methods import methods_text
    from .record.recipes import read_recipe, write_recipe
    from .studies.study import run_study
    from .examining.summaries import band_change, observed_gain
    from .showing.waveform_plots import plot_audit
    from .showing.comparison_plots import plot_comparison
    from .showing.spectrum_plots import plot_band_change, plot_lines, plot_observed_gain

# public name -> the module that defines it
_HOMES = {
    "GainshapeWarning": "_checks", "about": "about", "audit": "examining.audit",
    "compare_filters": "examining.compare", "find_lines": "examining.lines",
    "suggest_notches": "examining.notches", "band_change": "examining.summaries",
    "observed_gain": "examining.summaries", "apply": "filtering.adapters",
    "replay": "filtering.adapters", "bids_filters": "record.bids", "export": "record.bids",
    "write_bids_filters": "record.bids", "methods_text": "record.methods",
    "read_recipe": "record.recipes", "write_recipe": "record.recipes", "history": "record.steps",
    "GainCurve": "shaping.curves", "design": "shaping.design",
    "FilterDesign": "shaping.filter_design", "bandpass": "shaping.shapes",
    "bandstop": "shaping.shapes", "highpass": "shaping.shapes", "lowpass": "shaping.shapes",
    "notch": "shaping.shapes", "plot_comparison": "showing.comparison_plots",
    "draw": "showing.drawing", "plot_band_change": "showing.spectrum_plots",
    "plot_lines": "showing.spectrum_plots", "plot_observed_gain": "showing.spectrum_plots",
    "plot_audit": "showing.waveform_plots", "run_study": "studies.study",
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

from ._version import __version__ as __version__  # noqa: E402  (re-exported)

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
    "compare_filters",
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
    "plot_comparison",
    "plot_lines",
    "plot_observed_gain",
    "read_recipe",
    "replay",
    "run_study",
    "suggest_notches",
    "write_bids_filters",
    "write_recipe",
]
