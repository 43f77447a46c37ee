"""The array engine: shapes, dtypes, padding, segments, rows, NaN handling."""

import numpy as np
import pytest

import gainshape as gs
from gainshape._checks import PAD_MODES
from gainshape.filtering.engine import filter_array

SFREQ = 250.0
DESIGN = gs.design(gs.bandpass(1.0, 30.0), SFREQ)


@pytest.mark.parametrize("shape", [(5000,), (3, 5000), (2, 3, 5000)], ids=["1d", "2d", "3d"])
def test_shape_kept_and_rows_filtered_independently(shape, rng):
    x = rng.standard_normal(shape)
    y = filter_array(x, DESIGN)
    assert y.shape == x.shape
    flat_x, flat_y = x.reshape(-1, 5000), y.reshape(-1, 5000)
    for i in range(flat_x.shape[0]):
        np.testing.assert_allclose(filter_array(flat_x[i], DESIGN), flat_y[i], atol=1e-12)


def test_float32_stays_float32_and_close_to_float64(rng):
    x = rng.standard_normal((4, 6000))
    y32 = filter_array(x.astype(np.float32), DESIGN)
    y64 = filter_array(x, DESIGN)
    assert y32.dtype == np.float32
    np.testing.assert_allclose(y32, y64, atol=2e-5)


@pytest.mark.parametrize("pad", PAD_MODES)
def test_every_pad_mode_equals_numpy_pad_then_fft(pad, rng):
    # reference: numpy.pad with the same mode, then one scipy.fft round trip
    import scipy.fft as sfft

    x = rng.standard_normal((2, 8000))
    y = filter_array(x, DESIGN, pad=pad)
    p = DESIGN.support
    n = sfft.next_fast_len(8000 + 2 * p, real=True)
    padded = np.pad(x, ((0, 0), (p, p)), mode=pad)
    ref = sfft.irfft(sfft.rfft(padded, n) * DESIGN.spectrum(n), n)[:, p : p + 8000]
    np.testing.assert_allclose(y, ref, atol=1e-12)


@pytest.mark.filterwarnings("ignore:.*shorter than 3 times:UserWarning")
@pytest.mark.parametrize("pad", PAD_MODES)
@pytest.mark.parametrize("design", [gs.design(gs.highpass(0.1) * gs.lowpass(30.0), SFREQ, kernel=30.0),
                                    gs.design(gs.highpass(0.1), SFREQ, causal=True)],
                         ids=["zero-phase", "minimum-phase"])
def test_short_epochs_beside_a_long_kernel_equal_numpy_pad_then_fft(pad, design, rng):
    # 0.5 s epochs, padding over 20 times longer: reflect, symmetric and wrap run as
    # one period of their extension; reference: numpy.pad, one FFT round trip
    # (a fixed length runs at one rate, so every mode is exact)
    import scipy.fft as sfft

    x = rng.standard_normal((3, 125))
    p = design.support
    assert p >= 20 * x.shape[-1]
    y = filter_array(x, design, pad=pad)
    n = sfft.next_fast_len(125 + 2 * p, real=True)
    padded = np.pad(x, ((0, 0), (p, p)), mode=pad)
    ref = sfft.irfft(sfft.rfft(padded, n) * design.spectrum(n), n)[:, p : p + 125]
    np.testing.assert_allclose(y, ref, atol=1e-12 * np.abs(ref).max())


def test_rows_subset_leaves_others_bit_identical(rng):
    x = rng.standard_normal((4, 5000))
    y = filter_array(x, DESIGN, rows=[1, 3])
    np.testing.assert_array_equal(y[[0, 2]], x[[0, 2]])
    assert not np.allclose(y[1], x[1])


def test_segments_are_filtered_independently(rng):
    x = rng.standard_normal((1, 6000))
    x[:, 3000:] += 100.0  # a jump at the boundary must not leak across
    y = filter_array(x, DESIGN, segments=[(0, 3000), (3000, 6000)])
    np.testing.assert_allclose(y[:, :3000], filter_array(x[:, :3000].copy(), DESIGN), atol=1e-12)
    np.testing.assert_allclose(y[:, 3000:], filter_array(x[:, 3000:].copy(), DESIGN), atol=1e-12)


def test_samples_outside_segments_unchanged(rng):
    x = rng.standard_normal((1, 6000))
    y = filter_array(x, DESIGN, segments=[(1000, 5000)])
    np.testing.assert_array_equal(y[:, :1000], x[:, :1000])
    np.testing.assert_array_equal(y[:, 5000:], x[:, 5000:])


def test_in_place_output(rng):
    x = rng.standard_normal((2, 5000))
    expected = filter_array(x, DESIGN)
    out = filter_array(x, DESIGN, out=x)
    assert out is x
    np.testing.assert_allclose(x, expected, atol=1e-12)


def test_nan_raise_names_rows_before_work(rng):
    x = rng.standard_normal((3, 5000))
    x[2, 100] = np.nan
    before = x.copy()
    with pytest.raises(ValueError, match=r"row 2 \(first at sample 100\)"):
        filter_array(x, DESIGN, out=x)
    np.testing.assert_array_equal(x, before)


def test_nan_split_keeps_nan_and_filters_around(rng):
    x = rng.standard_normal((2, 9000))
    x[:, 4000:4100] = np.nan
    y = filter_array(x, DESIGN, nan="split")
    assert np.isnan(y[:, 4000:4100]).all()
    assert np.isfinite(y[:, :4000]).all() and np.isfinite(y[:, 4100:]).all()
    np.testing.assert_allclose(y[:, :4000], filter_array(x[:, :4000].copy(), DESIGN), atol=1e-12)


def test_short_segment_warns_with_numbers(rng):
    x = rng.standard_normal((1, 6000))
    design = gs.design(gs.highpass(0.2), SFREQ)
    with pytest.warns(gs.GainshapeWarning, match=r"\(100 samples, 0.4 s\) is shorter than 3 times"):
        filter_array(x, design, segments=[(0, 100), (100, 6000)])


def test_progress_bar_silent_without_a_plan(capsys, rng):
    filter_array(rng.standard_normal((2, 3000)), DESIGN)
    assert capsys.readouterr().err == ""


@pytest.mark.parametrize("binding", ["pocketfft with out", "public scipy.fft"])
def test_blocks_in_time_equal_one_fft_over_the_record(binding, rng, monkeypatch):
    # scipy.fft reference: one rfft/irfft over the whole reflect-padded record;
    # both transform paths of the engine (reused buffers, or the public API
    # for a SciPy without the binding) must agree with it
    import scipy.fft as sfft

    from gainshape import _compat
    from gainshape.filtering.blocks import block_plan

    if binding == "public scipy.fft":
        monkeypatch.setattr(_compat, "POCKETFFT", None)
        monkeypatch.setattr(_compat.forward_real, "__defaults__", (None,))
        monkeypatch.setattr(_compat.backward_real, "__defaults__", (None,))
    else:
        assert _compat.POCKETFFT is not None  # this SciPy has the binding

    design = gs.design(gs.highpass(1.0), SFREQ)
    x = rng.standard_normal((3, 150_000))
    n_fft, step = block_plan(x.shape[1], design.support)
    assert step < x.shape[1]  # several blocks
    n = sfft.next_fast_len(x.shape[1] + 2 * design.support, real=True)
    p = design.support
    reference = sfft.irfft(sfft.rfft(np.pad(x, ((0, 0), (p, p)), mode="reflect"), n) * design.spectrum(n), n)
    expected = reference[:, p : p + x.shape[1]]
    np.testing.assert_allclose(filter_array(x, design), expected, atol=1e-12)
    in_place = x.copy()
    filter_array(in_place, design, out=in_place)
    np.testing.assert_allclose(in_place, expected, atol=1e-12)


def test_progress_bar_counts_the_planned_units(monkeypatch, rng):
    import tqdm.std

    from gainshape.filtering.engine import Progress

    seen = {}

    class Recorder(tqdm.std.tqdm):
        def close(self):
            seen.update(n=self.n, total=self.total, unit=self.unit)
            super().close()

    monkeypatch.setattr(tqdm.std, "tqdm", Recorder)
    x = rng.standard_normal((2, 3000))  # 12 s at 250 Hz
    filter_array(x, DESIGN, segments=[(0, 1000), (1000, 3000)],
                 progress=Progress("s", 12.0, 1 / (2 * SFREQ), always=True))
    assert seen["unit"] == "s" and seen["total"] == 12.0
    assert seen["n"] == pytest.approx(12.0)


@pytest.mark.parametrize("n_fft", [4096, 1215])  # next_fast_len sizes can be odd
@pytest.mark.parametrize("dtype", [np.float32, np.float64])
def test_convolve_rows_matches_scipy_fft(dtype, n_fft, rng):
    # scipy.fft reference: irfft(rfft(x) * H), for real and complex responses
    import scipy.fft as sfft

    from gainshape.filtering.blocks import convolve_rows, spectrum_buffer

    x = rng.standard_normal((5, n_fft)).astype(dtype)
    n_bins = n_fft // 2 + 1
    for response in (rng.uniform(size=n_bins), np.exp(1j * rng.uniform(0, 6, n_bins))):
        if dtype == np.float32:  # the engine passes responses in the data's precision
            response = response.astype(np.complex64 if np.iscomplexobj(response) else np.float32)
        expected = sfft.irfft(sfft.rfft(x) * response, n_fft)
        buf = x.copy()
        convolve_rows(buf, response, 1, spectrum_buffer(buf))
        assert buf.dtype == dtype
        np.testing.assert_allclose(buf, expected, atol=1e-5 if dtype == np.float32 else 1e-12)


def test_public_fallbacks_of_the_private_transforms(rng):
    # scipy.fft reference: rfft/irfft; the fallbacks _compat uses without the binding
    import scipy.fft as sfft

    from gainshape._compat import backward_real, forward_real

    x = rng.standard_normal((3, 64))
    spec = forward_real(x, np.empty((3, 33), complex), 1, binding=None)
    np.testing.assert_allclose(spec, sfft.rfft(x))
    np.testing.assert_allclose(backward_real(spec, 64, np.empty((3, 64)), 1, binding=None), x)
