"""The audit reproduces known effects of filters on ERP waveforms.

References: high-pass filters create opposite-polarity deflections that grow
with the cutoff (Tanner, Morgan-Short & Luck, 2015, Psychophysiology
52:997-1009; Acunzo, MacKenzie & van Rossum, 2012, J Neurosci Methods
209:212-218); a causal (minimum-phase) filter cannot respond before its input,
so onsets can only move later (common practice (no source); causality).
"""

import warnings

import numpy as np
import pytest

import gainshape as gs

SFREQ = 500.0


def _audit(curve, causal=False):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", gs.GainshapeWarning)
        return gs.audit(gs.design(curve, SFREQ, causal=causal))


def test_one_hz_high_pass_makes_larger_opposite_deflections_than_point_one():
    gentle, strong = _audit(gs.highpass(0.1)), _audit(gs.highpass(1.0))
    for side in ("pre_response_pct", "undershoot_pct"):
        late_gentle = float(gentle[side].sel(component="erp late"))
        late_strong = float(strong[side].sel(component="erp late"))
        assert late_strong > 2 * late_gentle
    assert float(strong.peak_change_pct.sel(component="erp late")) < -40.0


@pytest.mark.parametrize("cutoff", [15.0, 30.0, 45.0])
def test_minimum_phase_low_pass_onsets_later_never_earlier(cutoff):
    ds = _audit(gs.lowpass(cutoff), causal=True)
    shifts = ds.onset_shift_ms.values
    assert np.all(shifts >= 0.0)
    assert np.any(shifts > 0.0)
    assert np.all(ds.pre_response_pct.values < 1e-9)  # nothing before the input (FFT round-off)


def test_zero_phase_keeps_peak_latency_of_symmetric_components():
    ds = _audit(gs.bandpass(0.1, 30.0))
    np.testing.assert_array_equal(ds.latency_shift_ms.sel(component=["pulse", "erp early", "erp late"]), 0.0)
