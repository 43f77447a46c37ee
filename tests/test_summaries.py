"""Band change and observed gain: shapes, metadata, errors, netCDF round trip."""

import mne
import numpy as np
import pytest
import xarray as xr

import gainshape as gs

SFREQ = 250.0


@pytest.fixture
def pair(make_raw):
    raw = make_raw(seconds=90.0)  # long enough for the slow band's 80 s window
    raw.info["line_freq"] = 50.0
    return raw, gs.apply(raw, gs.notch(50.0))


def test_dims_coords_and_units(pair):
    ds = gs.band_change(*pair)
    assert ds.change_db.dims == ("channel", "band")
    assert list(ds.band.values) == ["slow", "delta", "theta", "alpha", "beta", "gamma", "line"]
    assert list(ds.band_low.sel(band=["alpha", "line"]).values) == [8.0, 49.0]
    assert list(ds.channel.values) == ["Fz", "Cz", "Pz", "Oz"]
    assert set(ds.ch_type.values) == {"eeg"}
    assert ds.power_before.attrs["units"] == "V^2"
    np.testing.assert_allclose(ds.retained, ds.power_after / ds.power_before)
    np.testing.assert_allclose(ds.change_db, 10 * np.log10(ds.retained))


def test_history_steps_between(pair):
    before, after = pair
    ds = gs.band_change(before, after)
    assert ds.attrs["history_steps_between"] == gs.history(after)[0]["id"]
    assert gs.band_change(after, after).attrs["history_steps_between"] == ""


def test_epochs_have_epoch_dim(raw):
    events = mne.make_fixed_length_events(raw, duration=4.0)
    epochs = mne.Epochs(raw, events, tmin=0.0, tmax=3.996, baseline=None, preload=True)
    with pytest.warns(gs.GainshapeWarning, match=r"band\(s\) slow \(4 s, main lobe \+-1 Hz\), delta \(4 s"):
        ds = gs.band_change(epochs, gs.apply(epochs, gs.lowpass(20.0)))
    assert ds.change_db.dims == ("epoch", "channel", "band")
    assert ds.sizes["epoch"] == len(epochs)


def test_bands_finer_than_short_epochs_resolve_are_nan_with_a_warning(raw):
    # 1 s epochs give 1 Hz bins and a Blackman-Harris main lobe of +-4 bins
    # (Harris 1978, Proc. IEEE 66:51-83, from memory): a band needs the lobe
    # within half its low edge and within its width, so only alpha and above
    # are measured
    raw.info["line_freq"] = 50.0
    events = mne.make_fixed_length_events(raw, duration=1.0)
    epochs = mne.Epochs(raw, events, tmin=0.0, tmax=0.996, baseline=None, preload=True)
    with pytest.warns(gs.GainshapeWarning, match=r"slow \(1 s.*delta.*theta.*line \(1 s"):
        ds = gs.band_change(epochs, gs.apply(epochs, gs.lowpass(20.0)))
    resolved = ds.band_resolved.to_series().to_dict()
    assert resolved == {"slow": False, "delta": False, "theta": False, "alpha": True,
                        "beta": True, "gamma": True, "line": False}
    assert ds.change_db.sel(band=["slow", "delta", "theta", "line"]).isnull().all()
    assert ds.change_db.sel(band=["alpha", "beta", "gamma"]).notnull().all()


def test_slow_band_gets_a_long_window_and_needs_the_data_for_it(make_raw):
    # main lobe 4 / T at most half of 0.1 Hz: T >= 80 s; other bands 16 s
    long = make_raw(seconds=90.0)
    ds = gs.band_change(long, gs.apply(long, gs.lowpass(40.0)))
    assert bool(ds.band_resolved.all())
    assert ds.window_s.to_series().to_dict() == {"slow": 80.0, "delta": 16.0, "theta": 16.0,
                                                 "alpha": 16.0, "beta": 16.0, "gamma": 16.0}
    short = make_raw(seconds=40.0)
    with pytest.warns(gs.GainshapeWarning, match=r"slow \(40 s, main lobe \+-0.1 Hz\)"):
        ds = gs.band_change(short, gs.apply(short, gs.lowpass(40.0)))
    assert not bool(ds.band_resolved.sel(band="slow")) and bool(ds.band_resolved[1:].all())


def test_custom_bands_and_arrays(rng):
    x = rng.standard_normal((2, 5000))
    ds = gs.band_change(x, x, bands={"low": (1, 10), "high": (10, 100)}, sfreq=SFREQ)
    assert list(ds.band.values) == ["low", "high"]
    np.testing.assert_allclose(ds.change_db, 0.0)


def test_netcdf_round_trip(pair, tmp_path):
    ds = gs.band_change(*pair)
    ds.to_netcdf(tmp_path / "change.nc")
    assert xr.load_dataset(tmp_path / "change.nc").identical(ds)


@pytest.mark.parametrize(
    ("other", "fragment"),
    [(lambda r: r.copy().pick(["Fz", "Cz"]), "channels"),
     (lambda r: r.copy().resample(125.0), "sampling rates"),
     (lambda r: r.copy().crop(tmax=10.0), "shapes")],
    ids=["channels", "sfreq", "length"],
)
def test_mismatched_inputs(raw, other, fragment):
    with pytest.raises(ValueError, match=f"their {fragment} differ"):
        gs.band_change(raw, other(raw))


def test_bad_bands(raw):
    with pytest.raises(ValueError, match="Nyquist"):
        gs.band_change(raw, raw, bands={"too high": (100.0, 200.0)})
    with pytest.raises(TypeError, match="'bands'"):
        gs.band_change(raw, raw, bands=[(1, 4)])


def test_observed_gain_shape_and_mask(rng):
    x = rng.standard_normal((3, 20000))
    x[2] = 0.0  # no power: nothing to measure
    y = gs.apply(x, gs.lowpass(30.0), sfreq=SFREQ)
    da = gs.observed_gain(x, y, sfreq=SFREQ)
    assert da.dims == ("channel", "frequency")
    assert np.isnan(da.values[2]).all()
    assert np.isnan(da.values[:2, :8]).all()  # main lobe reaching below f / 2
    assert np.isfinite(da.values[:2, 8:]).all()


def test_default_bands_above_nyquist_are_left_out_with_a_warning(rng):
    # common practice (no source): nothing above Nyquist can be measured
    x = rng.standard_normal((2, 100 * 80))  # 100 s at 80 Hz: Nyquist 40 Hz
    with pytest.warns(gs.GainshapeWarning, match=r"gamma \(30-45 Hz\).*Nyquist frequency \(40 Hz\)"):
        ds = gs.band_change(x, x, sfreq=80.0)
    assert list(ds.band.values) == ["slow", "delta", "theta", "alpha", "beta"]
    with pytest.raises(ValueError, match="Nyquist"):  # bands the user names still must fit
        gs.band_change(x, x, bands={"high": (30.0, 45.0)}, sfreq=80.0)


@pytest.mark.parametrize("sfreq", [500.0000001, 1000.0000283])
def test_slow_band_resolved_at_rates_just_off_an_integer(sfreq):
    # common practice (no source): amplifier clocks give rates such as
    # 1000.0000283 Hz; an 80 s window of whole samples must still count as 80 s
    x = np.random.default_rng(0).standard_normal((2, int(85 * sfreq)))
    ds = gs.band_change(x, 0.5 * x, sfreq=sfreq)
    assert bool(ds.band_resolved.sel(band="slow"))
    np.testing.assert_allclose(ds.change_db.sel(band="slow"), 20 * np.log10(0.5), atol=1e-9)


def test_line_band_taken_from_the_notch_in_the_history(make_raw):
    raw = make_raw(seconds=60.0)
    assert not raw.info["line_freq"]
    out = gs.apply(raw, gs.notch(50.0))
    ds = gs.band_change(raw, out)
    assert "line" in ds.band.values and ds.attrs["line_band"].startswith("the lowest notch")
    assert float(ds.band_low.sel(band="line")) == pytest.approx(49.0, abs=0.05)
    assert float(ds.change_db.sel(band="line").median()) < -10
    assert gs.band_change(raw, raw).attrs["line_band"].startswith("none")
    raw.info["line_freq"] = 60.0
    assert gs.band_change(raw, out).attrs["line_band"] == "info['line_freq'] (60 Hz)"
