"""Each private SciPy or MNE interface gainshape uses (gainshape._compat), tested by
what it must do, so a change in MNE or SciPy fails here first. Passed with
MNE-Python 1.6.0 / SciPy 1.11.4 (make test-oldest) and MNE-Python 1.13.2 /
SciPy 1.17.1."""

import numpy as np
import pytest

import gainshape as gs
from gainshape import _compat


def test_picks_to_indices_reads_picks_as_mne_does(make_raw):
    import mne

    raw = make_raw()
    assert list(_compat.picks_to_indices(raw.info, "eeg")) == list(
        mne.pick_types(raw.info, eeg=True, exclude=[]))
    assert list(_compat.picks_to_indices(raw.info, ["Cz", "Fz"])) == [1, 0]
    assert {"eeg", "eog", "misc", "stim"} <= _compat.channel_type_words()


def test_unlocked_lets_the_filter_band_be_set(make_raw):
    raw = make_raw()
    with pytest.raises(RuntimeError):
        raw.info["highpass"] = 1.0  # MNE protects it
    with _compat.unlocked(raw.info):
        raw.info["highpass"] = 1.0
    assert raw.info["highpass"] == 1.0


def test_data_of_is_the_array_itself_and_the_empty_copy_leaves_the_input(make_raw):
    raw = make_raw()
    before = raw.get_data().copy()
    _compat.data_of(raw)[0, 0] = 123.0
    assert raw.get_data()[0, 0] == 123.0  # the array itself, not a copy
    raw.get_data()  # still readable
    out = _compat.copy_with_empty_data(raw)
    assert out.get_data().shape == before.shape and out.ch_names == raw.ch_names
    assert not np.shares_memory(_compat.data_of(out), _compat.data_of(raw))
    assert raw.get_data()[0, 0] == 123.0 and np.array_equal(raw.get_data()[1:], before[1:])


def test_a_reader_raw_reads_its_samples_from_the_reader(make_raw, tmp_path):
    import mne

    raw = make_raw()
    values = np.arange(len(raw.ch_names) * raw.n_times, dtype=float).reshape(len(raw.ch_names), -1)

    class Reader:
        def read(self, start, stop):
            return values[:, start - raw.first_samp: stop - raw.first_samp]

    info = raw.info.copy()
    with _compat.unlocked(info):
        for ch in info["chs"]:
            ch["cal"], ch["range"] = 1.0, 1.0
    lazy = _compat.reader_raw_class()(info, **_compat.reader_raw_arguments(
        Reader(), raw.first_samp, raw.last_samp))
    assert isinstance(lazy, mne.io.BaseRaw) and not lazy.preload
    np.testing.assert_array_equal(lazy.get_data(), values)
    np.testing.assert_array_equal(lazy.get_data(start=10, stop=20, picks=[2]), values[2:3, 10:20])


def test_the_pocketfft_binding_or_the_public_fallback_transforms_alike():
    x = np.random.default_rng(0).standard_normal((3, 64))
    for binding in (_compat.POCKETFFT, None):
        spec = _compat.forward_real(x, np.empty((3, 33), complex), 1, binding=binding)
        np.testing.assert_allclose(spec, np.fft.rfft(x), atol=1e-12)
        back = _compat.backward_real(spec, 64, np.empty((3, 64)), 1, binding=binding)
        np.testing.assert_allclose(back, x, atol=1e-12)


def test_about_names_every_shim_and_the_versions():
    text = gs.about()
    for shim in _compat.shims_in_use():
        assert shim in text
    for name in ("gainshape ", "MNE-Python ", "NumPy ", "SciPy ", "xarray ", "Python "):
        assert name in text
