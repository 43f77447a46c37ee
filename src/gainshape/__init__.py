"""gainshape: EEG/ERP filters drawn as gain curves, realized, applied and recorded."""

from ._checks import GainshapeWarning
from .adapters import apply, replay
from .curves import GainCurve, bandpass, bandstop, highpass, lowpass, notch
from .design import FilterDesign, design
from .provenance import bids_filters, history, methods_text, write_bids_filters

__version__ = "0.1.0"

__all__ = [
    "FilterDesign",
    "GainCurve",
    "GainshapeWarning",
    "apply",
    "bandpass",
    "bids_filters",
    "bandstop",
    "design",
    "highpass",
    "history",
    "lowpass",
    "methods_text",
    "notch",
    "replay",
    "write_bids_filters",
]
