"""gainshape: EEG/ERP filters drawn as gain curves, realized, applied and recorded."""

from ._checks import GainshapeWarning
from .adapters import apply
from .curves import GainCurve, bandpass, bandstop, highpass, lowpass, notch
from .design import FilterDesign, design

__version__ = "0.1.0"

__all__ = [
    "FilterDesign",
    "GainCurve",
    "GainshapeWarning",
    "apply",
    "bandpass",
    "bandstop",
    "design",
    "highpass",
    "lowpass",
    "notch",
]
