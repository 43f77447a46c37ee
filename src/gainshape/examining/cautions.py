"""Cautions on candidate filters, from published findings: notes, not verdicts.

Which filter to use is the researcher's choice, made before looking at condition
effects; these notes point at what the literature found where a candidate is in
the range it studied.
"""

from __future__ import annotations

import numpy as np
import xarray as xr

from ..shaping.filter_design import FilterDesign

__all__ = ["DEFLECTION_SHARE", "EXPRESSED_SHARE", "HIGH_PASS_CAUTION_HZ", "ONSET_NOTED_MS", "SOURCES",
           "candidate_notes"]

HIGH_PASS_CAUTION_HZ = 0.3  # at or above: artefactual opposite-polarity effects reported
DEFLECTION_SHARE = 0.1  # a deflection larger than this share of the peak gets a note
ONSET_NOTED_MS = 0.5  # a zero-phase candidate moving an onset earlier by more gets a note
EXPRESSED_SHARE = 0.5  # cautions read the channels where a component is at least half its largest
SOURCES = {
    "Tanner et al. 2015": "Tanner D, Morgan-Short K, Luck SJ (2015). How inappropriate "
                          "high-pass filters can produce artifactual effects and incorrect "
                          "conclusions in ERP studies of language and cognition. "
                          "Psychophysiology 52:997-1009.",
    "Acunzo et al. 2012": "Acunzo DJ, MacKenzie G, van Rossum MCW (2012). Systematic biases "
                          "in early ERP and ERF components as a result of high-pass filtering. "
                          "J Neurosci Methods 209:212-218.",
    "Rousselet 2012": "Rousselet GA (2012). Does filtering preclude us from studying ERP "
                      "time-courses? Front Psychol 3:131.",
}


def candidate_notes(figures: xr.Dataset, design: FilterDesign, share: float) -> str:
    """The cautions for one candidate (``figures``: its slice of the comparison), joined
    by "; " (empty when none applies).

    >>> import gainshape as gs
    >>> d = gs.design(gs.highpass(0.5), 250.0)
    >>> empty = xr.Dataset({"deflection_before_pct": ("component", [0.0]),
    ...     "deflection_after_pct": ("component", [0.0]), "onset_shift_ms": ("component", [0.0])},
    ...     coords={"component": ["P3"]})
    >>> candidate_notes(empty, d, 0.1)[:40]
    'high-pass at 0.501 Hz (0.3 Hz or above):'
    """
    notes = []
    high = [float(e) for e in design.characteristics.half_amplitude if e.direction == "rising"]
    if high and high[0] >= HIGH_PASS_CAUTION_HZ:
        notes.append(f"high-pass at {high[0]:.3g} Hz ({HIGH_PASS_CAUTION_HZ:g} Hz or above): "
                     "cutoffs in this range produced artefactual effects of opposite polarity "
                     "before a late positivity (Tanner et al. 2015); at most 0.1 Hz was "
                     "recommended for ERPs (Acunzo et al. 2012)")
    expressed = _expressed(figures)
    for side in ("before", "after"):
        pct = figures[f"deflection_{side}_pct"].where(expressed)
        if bool((pct > 100 * share).any()):
            worst = pct.max(dim=[d for d in pct.dims if d != "component"])
            listed = ", ".join(f"{c} {float(v):.0f} %" for c, v in
                               zip(worst["component"].values, worst.values) if v > 100 * share)
            notes.append(f"a deflection of opposite polarity {side} the component larger than "
                         f"{100 * share:g} % of its peak (largest over the channels where the "
                         f"component is at least half its largest: {listed})")
    shifts = figures["onset_shift_ms"].where(expressed)
    if not design.causal and bool((shifts < -ONSET_NOTED_MS).any()):
        notes.append(f"zero-phase (non-causal): onsets moved earlier, by up to "
                     f"{-float(np.nanmin(shifts.values)):.1f} ms; a non-causal filter can "
                     "make an effect start before it does (Rousselet 2012)")
    return "; ".join(notes)


def _expressed(figures: xr.Dataset) -> xr.DataArray:
    """Where a component is expressed: channels whose reference peak is at least half the
    largest (all of them when the reference peak is not in ``figures``)."""
    if "reference_peak" not in figures or "channel" not in figures["reference_peak"].dims:
        return xr.ones_like(figures["onset_shift_ms"], dtype=bool)
    size = abs(figures["reference_peak"])
    return size >= EXPRESSED_SHARE * size.max("channel")
