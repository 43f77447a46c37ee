"""gainshape: EEG/ERP filters drawn as gain curves, realized, applied and recorded."""

from ._checks import GainshapeWarning
from .curves import GainCurve, bandpass, bandstop, highpass, lowpass, notch

__version__ = "0.1.0"

__all__ = [
    "GainCurve",
    "GainshapeWarning",
    "bandpass",
    "bandstop",
    "highpass",
    "lowpass",
    "notch",
]
