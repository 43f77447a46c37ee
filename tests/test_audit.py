"""Waveform audit: layout, user waveforms, warnings, consistency."""

import warnings

import mne
import numpy as np
import pytest

import gainshape as gs

SFREQ = 500.0


def _quiet_audit(*args, **kwargs):
    with warnings.catch_warnings():
        warnings.simplefilter("ignore", gs.GainshapeWarning)
        return gs.audit(*args, **kwargs)


def test_default_waveforms_and_components():
    ds = _quiet_audit(gs.lowpass(30.0), sfreq=SFREQ)
    assert list(ds.component.values) == ["step", "pulse", "erp early", "erp late"]
    assert list(ds.waveform.values) == ["step", "pulse", "erp"]
    assert ds.original.dims == ("waveform", "time")
    for var in ("peak_change_pct", "latency_shift_ms", "onset_shift_ms", "pre_response",
                "pre_response_pct", "undershoot", "undershoot_pct", "ringing_s"):
        assert ds[var].dims == ("component",)
        assert "units" in ds[var].attrs


def test_components_add_up_to_waveforms():
    ds = _quiet_audit(gs.highpass(0.5), sfreq=SFREQ)
    erp = ds.component_filtered.sel(component=["erp early", "erp late"]).sum("component")
    np.testing.assert_allclose(erp, ds.filtered.sel(waveform="erp"), atol=1e-12)


def test_identity_filter_changes_nothing():
    with pytest.warns(gs.GainshapeWarning, match="only scales"):
        ds = gs.audit(gs.GainCurve.from_points([1.0, 2.0], [1.0, 1.0]), sfreq=SFREQ)
    np.testing.assert_allclose(ds.filtered, ds.original, atol=1e-9)
    assert float(np.abs(ds.peak_change_pct).max()) < 1e-6
    assert float(np.abs(ds.onset_shift_ms).max()) == 0.0


def test_high_pass_warnings_cite_literature():
    with pytest.warns(gs.GainshapeWarning) as record:
        gs.audit(gs.highpass(0.5), sfreq=SFREQ)
    messages = " ".join(str(w.message) for w in record)
    assert "Tanner, Morgan-Short & Luck, 2015" in messages and "0.5 Hz" in messages
    with pytest.warns(gs.GainshapeWarning, match="Acunzo, MacKenzie & van Rossum, 2012"):
        gs.audit(gs.highpass(0.2), sfreq=SFREQ)


def test_no_warning_at_point_one_hz():
    with warnings.catch_warnings():
        warnings.simplefilter("error", gs.GainshapeWarning)
        gs.audit(gs.highpass(0.1), sfreq=SFREQ)


def test_user_array_and_evoked():
    t = np.arange(-0.2, 0.8, 1 / SFREQ)
    wave = -4e-6 * np.exp(-0.5 * ((t - 0.17) / 0.03) ** 2)
    ds = _quiet_audit(gs.lowpass(20.0), sfreq=SFREQ, waveform=wave)
    assert list(ds.component.values) == ["waveform"] and float(ds.peak.values[0]) < 0
    info = mne.create_info(["Cz", "Pz"], SFREQ, "eeg")
    evoked = mne.EvokedArray(np.vstack([wave, 0.5 * wave]), info, tmin=-0.2)
    ds = _quiet_audit(gs.lowpass(20.0), waveform=evoked)
    assert list(ds.component.values) == ["Cz"]
    assert float(ds.peak_latency_ms.values[0]) == pytest.approx(170.0, abs=2.0)
    assert ds.attrs["units"] == "V"


def test_short_user_waveform_is_embedded_in_zeros_for_the_kernels_reach():
    # a 1 s evoked and a 14 s high-pass kernel: the waveform is treated as
    # isolated (zero before and after), nothing the filter spreads is cut off,
    # and no "shorter than the kernel" warning is raised
    t = np.arange(-0.2, 0.8, 1 / SFREQ)
    wave = 5e-6 * np.exp(-0.5 * ((t - 0.4) / 0.1) ** 2)
    filt = gs.design(gs.highpass(0.1), SFREQ)
    with warnings.catch_warnings():
        warnings.simplefilter("error", gs.GainshapeWarning)
        ds = gs.audit(filt, waveform=wave)
    support = filt.support / SFREQ
    assert float(ds.time[0]) == pytest.approx(-support) and float(ds.time[-1]) == pytest.approx(1.0 - 1 / SFREQ + support)
    original = ds.original.sel(waveform="waveform")
    assert float(np.abs(original.sel(time=slice(None, -0.01))).max()) == 0.0
    # the zero-phase high-pass spreads an opposite (negative) deflection
    # outside the 1 s waveform; linearity (NumPy reference): it equals the
    # filter applied to the zero-embedded waveform
    expected = gs.apply(original.values, filt)
    np.testing.assert_allclose(ds.filtered.sel(waveform="waveform"), expected, atol=1e-18)
    outside = ds.filtered.sel(waveform="waveform").where((ds.time < 0) | (ds.time >= 1.0))
    assert float(outside.min()) < -0.01 * 5e-6


def test_design_rate_mismatch():
    with pytest.raises(ValueError, match="'sfreq'"):
        gs.audit(gs.design(gs.lowpass(30.0), 250.0), sfreq=500.0)


def test_ends_off_zero_are_levelled_and_said():
    # an ERP-like peak sitting on a 30 % offset: embedded in zeros the offset
    # would make two steps, each answered by the high-pass with its own deflection
    t = np.arange(-0.2, 0.8, 1 / SFREQ)
    peak = 4e-6 * np.exp(-0.5 * ((t - 0.3) / 0.05) ** 2)
    clean = gs.audit(gs.highpass(1.0), sfreq=SFREQ, waveform=peak)
    shifted = gs.audit(gs.highpass(1.0), sfreq=SFREQ, waveform=peak + 1.2e-6)
    assert "straight line between them was removed" in shifted.attrs["notes"]
    assert "straight line" not in clean.attrs["notes"]
    for key in ("pre_response_pct", "undershoot_pct", "peak_change_pct"):
        assert float(shifted[key][0]) == pytest.approx(float(clean[key][0]), abs=1.0)


def test_data_given_as_the_filter_points_to_waveform():
    # common practice (no source): the data are passed by name, the filter first
    info = mne.create_info(["Cz"], 500.0, "eeg")
    evoked = mne.EvokedArray(np.zeros((1, 500)), info, tmin=-0.2)
    for wrong in (evoked, np.zeros(500)):
        with pytest.raises(TypeError, match=r"Pass it as waveform="):
            gs.audit(wrong)
