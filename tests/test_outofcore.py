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
SLOW_EDGE = gs.highpass(0.05) * gs.lowpass(30.0, rolloff=24.0)  # runs in two rates


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


@pytest.mark.parametrize("curve", [CURVE, SLOW_EDGE], ids=["one rate", "two rates"])
def test_file_four_times_the_memory_bound_filters_within_it(tmp_path, curve):
    src, dst = tmp_path / "long_raw.fif", tmp_path / "long_filtered_raw.fif"
    data_bytes = _write_recording(src, seconds=1200.0)
    bound = data_bytes / 4
    assert (gs.design(curve, 250.0).rates is not None) == (curve is SLOW_EDGE)
    tracemalloc.start()
    try:
        lazy = gs.apply(mne.io.read_raw_fif(src, preload=False), curve)
        lazy.save(dst)
        _, peak = tracemalloc.get_traced_memory()
    finally:
        tracemalloc.stop()
    assert peak < bound
    written = mne.io.read_raw_fif(dst, preload=True)
    expected = gs.apply(mne.io.read_raw_fif(src, preload=True), curve)
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
    # the position is the recording's own (5000 samples at 250 Hz), not the block's
    with pytest.raises(ValueError, match=r"EEG01 \(first at 20.000 s, sample 5000\)"):
        lazy.get_data()


def _lazy_recording(tmp_path, nan_at=None):
    src = tmp_path / "src_raw.fif"
    _write_recording(src, seconds=240.0, n_channels=4)
    if nan_at is not None:
        raw = mne.io.read_raw_fif(src, preload=True)
        raw._data[1, nan_at] = np.nan
        raw.save(src, overwrite=True, fmt="double")
    return gs.apply(mne.io.read_raw_fif(src, preload=False), gs.lowpass(30.0))


class _FailAfter:
    """Wraps a function; raises ``error`` on its call number ``k`` (a fault injector)."""

    def __init__(self, func, k, error):
        self.func, self.k, self.error, self.calls = func, k, error, 0

    def __call__(self, *args, **kwargs):
        self.calls += 1
        if self.calls >= self.k:
            raise self.error
        return self.func(*args, **kwargs)


@pytest.mark.parametrize("error", [OSError(28, "No space left on device"), KeyboardInterrupt()],
                         ids=["disk-full", "ctrl-c"])
def test_interrupted_save_leaves_nothing_under_the_final_name(tmp_path, monkeypatch, error):
    # common practice (no source): write under a temporary name, rename when complete
    from gainshape.filtering import outofcore

    lazy = _lazy_recording(tmp_path)
    dst = tmp_path / "out_raw.fif"
    monkeypatch.setattr(outofcore, "filter_span", _FailAfter(outofcore.filter_span, 3, error))
    with pytest.raises(type(error)):
        lazy.save(dst)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["src_raw.fif"]


def test_nan_met_mid_file_leaves_nothing_and_says_where(tmp_path):
    lazy = _lazy_recording(tmp_path, nan_at=30000)  # 120 s at 250 Hz
    with pytest.raises(ValueError, match=r"EEG01 \(first at 120.000 s, sample 30000\)"):
        lazy.save(tmp_path / "out_raw.fif")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["src_raw.fif"]


def test_complete_save_and_refused_overwrite(tmp_path):
    lazy = _lazy_recording(tmp_path)
    dst = tmp_path / "out_raw.fif"
    lazy.save(dst)
    assert sorted(p.name for p in tmp_path.iterdir()) == ["out_raw.fif", "src_raw.fif"]
    with pytest.raises(FileExistsError, match="overwrite=True"):
        lazy.save(dst)
    expected = lazy.get_data()  # saved as float32 (MNE's default fmt="single")
    np.testing.assert_allclose(mne.io.read_raw_fif(dst).get_data(), expected, rtol=0,
                               atol=1e-6 * np.abs(expected).max())


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


def test_a_lazily_filtered_raw_pickles_with_its_data_and_history(tmp_path):
    import pickle

    import mne

    data = np.random.default_rng(0).standard_normal((3, 5000)) * 1e-6
    raw = mne.io.RawArray(data, mne.create_info(["Fz", "Cz", "Pz"], 250.0, "eeg"), verbose=False)
    raw.save(tmp_path / "r_raw.fif", verbose=False)
    lazy = gs.apply(mne.io.read_raw_fif(tmp_path / "r_raw.fif", preload=False, verbose=False),
                    gs.lowpass(30.0))
    back = pickle.loads(pickle.dumps(lazy))
    np.testing.assert_array_equal(back.get_data(), lazy.get_data())
    assert gs.history(back) == gs.history(lazy) and len(gs.history(back)) == 1
