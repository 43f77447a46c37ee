"""Recordings larger than memory: filtered from disk to disk with bounded memory.

Reference: the in-memory result of gs.apply on the same data (1e-6 relative),
and tracemalloc (Python standard library), which counts NumPy's allocations.
"""

import tracemalloc

import mne
import numpy as np
import pytest

import gainshape as gs

CURVE = gs.bandpass(0.5, 30.0)


def _write_recording(path, seconds, n_channels=16, sfreq=250.0):
    rng = np.random.default_rng(5)
    n = int(seconds * sfreq)
    names = [f"EEG{i:02d}" for i in range(n_channels)] + ["Trigger"]
    info = mne.create_info(names, sfreq, ["eeg"] * n_channels + ["stim"])
    data = np.vstack([1e-5 * rng.standard_normal((n_channels, n)), np.zeros((1, n))])
    raw = mne.io.RawArray(data, info)
    raw.set_annotations(mne.Annotations([seconds / 2], [0.0], ["EDGE boundary"]))
    raw.save(path, fmt="double")
    return data.nbytes


def test_file_four_times_the_memory_bound_filters_within_it(tmp_path):
    src, dst = tmp_path / "long_raw.fif", tmp_path / "long_filtered_raw.fif"
    data_bytes = _write_recording(src, seconds=1200.0)
    bound = data_bytes / 4
    tracemalloc.start()
    try:
        lazy = gs.apply(mne.io.read_raw_fif(src, preload=False), CURVE)
        lazy.save(dst)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < bound
    written = mne.io.read_raw_fif(dst, preload=True)
    expected = gs.apply(mne.io.read_raw_fif(src, preload=True), CURVE)
    scale = np.abs(expected.get_data()).max()
    np.testing.assert_allclose(written.get_data(), expected.get_data(), rtol=0, atol=1e-6 * scale)
    assert [s["realized"]["kind"] for s in gs.history(written)] == ["band-pass"]
    assert written.info["lowpass"] == pytest.approx(expected.info["lowpass"], rel=1e-6)  # FIF stores float32


def test_lazy_nan_is_reported_with_channel(tmp_path):
    src = tmp_path / "nan_raw.fif"
    _write_recording(src, seconds=60.0, n_channels=2)
    raw = mne.io.read_raw_fif(src, preload=True)
    raw._data[1, 5000] = np.nan
    raw.save(src, overwrite=True, fmt="double")
    lazy = gs.apply(mne.io.read_raw_fif(src, preload=False), gs.lowpass(30.0))
    with pytest.raises(ValueError, match="EEG01"):
        lazy.get_data()


def test_unloaded_raw_is_filtered_lazily(tmp_path, raw):
    fname = tmp_path / "sim_raw.fif"
    raw.save(fname)
    unloaded = mne.io.read_raw_fif(fname, preload=False)
    out = gs.apply(unloaded, CURVE)
    assert not unloaded.preload and not out.preload
    expected = gs.apply(mne.io.read_raw_fif(fname, preload=True), CURVE)
    np.testing.assert_allclose(out.get_data(), expected.get_data(), rtol=0, atol=1e-15)
    np.testing.assert_allclose(out.get_data(start=1234, stop=2345),
                               expected.get_data(start=1234, stop=2345), rtol=0, atol=1e-15)
    assert out.info["highpass"] == pytest.approx(expected.info["highpass"])
    step = gs.history(out)[0]
    assert step["application"]["lazy"] is True and step["fingerprint_after"] is None
