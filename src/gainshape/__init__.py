"""gainshape: EEG/ERP filters drawn as gain curves, realized, applied and recorded."""

from ._checks import GainshapeWarning
from .adapters import apply, replay
from .curves import GainCurve, bandpass, bandstop, highpass, lowpass, notch
from .design import FilterDesign, design
from .drawing import draw
from .audit import audit
from .lines import find_lines, suggest_notches
from .provenance import bids_filters, export, history, methods_text, write_bids_filters
from .recipes import read_recipe, write_recipe
from .study import run_study
from .summaries import band_change, observed_gain
from .viz import plot_audit, plot_band_change, plot_lines, plot_observed_gain

__version__ = "0.1.0"

__all__ = [
    "FilterDesign",
    "GainCurve",
    "GainshapeWarning",
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
