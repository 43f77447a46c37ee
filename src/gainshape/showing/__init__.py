"""The showing wing: every figure gainshape draws (matplotlib), and the curve editor.

The plotting functions are gathered here so that a plot method below this wing
reaches them by name through :mod:`gainshape._showing`.
"""

from .comparison_plots import plot_comparison
from .filter_plots import plot_design
from .spectrum_plots import plot_band_change, plot_lines, plot_observed_gain, plot_spectrum_pair
from .spectrum_plots import plot_study_band_change
from .waveform_plots import plot_audit, plot_erp_pair

__all__ = ["plot_audit", "plot_band_change", "plot_comparison", "plot_design", "plot_erp_pair", "plot_lines",
           "plot_observed_gain", "plot_spectrum_pair", "plot_study_band_change"]
