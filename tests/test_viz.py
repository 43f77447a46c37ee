"""What the design plot draws equals the design's own numbers."""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402

import gainshape as gs  # noqa: E402


@pytest.fixture
def design():
    return gs.design(gs.bandpass(0.5, 30.0) * gs.notch(50.0), 250.0)


def _line(ax, label):
    return next(line for line in ax.get_lines() if line.get_label() == label)


def test_gain_panels_show_request_area_and_realized_line(design):
    fig = design.plot(show=False)
    ax_lin, ax_db = fig.axes[:2]
    realized = _line(ax_lin, "realized")
    f = realized.get_xdata()
    np.testing.assert_allclose(realized.get_ydata(), design.realized_gain(f))
    # the request is a filled area whose upper boundary is the requested gain
    top = ax_lin.collections[0].get_paths()[0].vertices
    upper = top[1 : f.size + 1]  # fill_between: start point, then the upper curve
    np.testing.assert_allclose(upper[:, 0], f)
    np.testing.assert_allclose(upper[:, 1], design.requested_gain(f))
    db = _line(ax_db, "realized").get_ydata()
    np.testing.assert_allclose(db, 20 * np.log10(np.maximum(design.realized_gain(f), 1e-12)))
    assert ax_lin.get_xscale() == "log"
    plt.close(fig)


def test_deviation_panel_shows_realized_minus_requested(design):
    fig = design.plot(show=False)
    ax_dev = fig.axes[2]
    line = _line(ax_dev, "deviation")
    f = line.get_xdata()
    np.testing.assert_allclose(line.get_ydata(), design.realized_gain(f) - design.requested_gain(f))
    fig.canvas.draw()
    span = ax_dev.patches[0].get_window_extent().transformed(ax_dev.transData.inverted())
    assert (span.y0, span.y1) == pytest.approx((-design.tolerance, design.tolerance), rel=1e-3)
    worst = next(ln for ln in ax_dev.get_lines() if ln.get_label().startswith("largest"))
    assert abs(worst.get_ydata()[0]) == pytest.approx(np.abs(line.get_ydata()).max())
    plt.close(fig)


def test_time_panels_show_whole_kernel_and_step(design):
    fig = design.plot(show=False)
    ax_imp, ax_env, ax_step = fig.axes[3:6]
    np.testing.assert_array_equal(ax_imp.get_lines()[0].get_ydata(), design.taps)
    np.testing.assert_allclose(ax_step.get_lines()[0].get_ydata(), np.cumsum(design.taps))
    assert ax_imp.get_xlim() == (design.times[0], design.times[-1])  # the whole support
    envelope = _line(ax_env, "envelope").get_ydata()
    assert envelope.max() == 0.0 and np.all(np.diff(envelope[design.offset:]) <= 0)
    plt.close(fig)


def test_energy_span_holds_99_percent():
    # Parseval (NumPy only): energy is the sum of squared samples
    from gainshape.showing.filter_plots import energy_span

    f = gs.design(gs.bandpass(0.5, 30.0), 250.0)
    start, stop = energy_span(f.times, f.taps)
    inside = (f.times >= start) & (f.times <= stop)
    share = np.sum(f.taps[inside] ** 2) / np.sum(f.taps**2)
    assert 0.99 <= share < 0.995


def test_title_states_the_design(design):
    fig = design.plot(show=False)
    assert fig.get_suptitle().replace("\n", " ") == design.describe()
    plt.close(fig)


def test_band_change_map_equals_data(rng):
    x = rng.standard_normal((3, 10000))  # 40 s: the slow band is not resolved (NaN)
    with pytest.warns(gs.GainshapeWarning, match="slow"):
        ds = gs.band_change(x, gs.apply(x, gs.bandpass(2.0, 20.0), sfreq=250.0), sfreq=250.0)
    fig = gs.plot_band_change(ds, show=False)
    assert "not resolved" in fig.axes[1].get_yticklabels()[0].get_text()
    image = fig.axes[0].get_images()[0]
    np.testing.assert_allclose(image.get_array(), ds.change_db.transpose("channel", "band").values)
    assert image.norm.vmin == -image.norm.vmax  # centred on 0
    bars = [p.get_width() for p in fig.axes[1].patches]
    np.testing.assert_allclose(bars, ds.change_db.median("channel").values)
    plt.close(fig)


def test_observed_gain_plot_equals_data(rng):
    x = rng.standard_normal((2, 20000))
    f = gs.design(gs.lowpass(30.0), 250.0)
    da = gs.observed_gain(x, gs.apply(x, f), sfreq=250.0)
    fig = gs.plot_observed_gain(da, f, show=False)
    measured = np.isfinite(da.values).any(axis=0)
    for ax, to_y in zip(fig.axes, (np.asarray, lambda g: 20 * np.log10(g))):
        median = _line(ax, "observed (median)")
        realized = _line(ax, "realized")
        freqs = median.get_xdata()
        expected = np.full(da.sizes["frequency"], np.nan)
        expected[measured] = np.nanmedian(to_y(da.values[:, measured]), axis=0)
        np.testing.assert_allclose(median.get_ydata(), expected[da.frequency.values > 0])
        np.testing.assert_allclose(realized.get_ydata(), to_y(f.realized_gain(realized.get_xdata())))
        assert set(freqs) <= set(realized.get_xdata())  # drawn at every observed frequency too
    assert [ax.get_ylabel() for ax in fig.axes] == ["gain", "gain (dB)"]
    plt.close(fig)


def test_audit_plot_equals_data():
    import warnings

    with warnings.catch_warnings():
        warnings.simplefilter("ignore", gs.GainshapeWarning)
        ds = gs.audit(gs.highpass(1.0), sfreq=250.0)
    fig = gs.plot_audit(ds, show=False)
    for ax, name in zip(fig.axes, ds.waveform.values):
        np.testing.assert_array_equal(_line(ax, "original").get_ydata(), ds.original.sel(waveform=name).values)
        np.testing.assert_array_equal(_line(ax, "filtered").get_ydata(), ds.filtered.sel(waveform=name).values)
    plt.close(fig)


def test_audit_markers_sit_on_the_waveform_peaks():
    ds = gs.audit(gs.design(gs.lowpass(20.0), 250.0, causal=True))
    fig = gs.plot_audit(ds, show=False)
    for ax, name in zip(fig.axes, ds.waveform.values):
        comps = ds.component.values[ds.component_waveform.values == name]
        alone = ds.component_filtered.sel(component=comps[0]).values
        original = ds.original.sel(waveform=name).values if len(comps) == 1 else None
        marks = [ln for ln in ax.get_lines() if ln.get_marker() in ("v", "^")]
        grey, blue = marks[0], marks[1]  # the component's peak before, then after
        t = ds.time.values
        i = int(np.argmin(np.abs(t - blue.get_xdata()[0])))
        assert blue.get_ydata()[0] == pytest.approx(alone[i], rel=1e-9)
        if original is not None:
            k = int(np.argmin(np.abs(t - grey.get_xdata()[0])))
            assert grey.get_ydata()[0] == pytest.approx(original[k], rel=1e-9)
    plt.close(fig)


def test_audit_of_an_evoked_in_volts_is_drawn_in_microvolts():
    # MNE stores EEG in volts (MNE documentation, "units": SI units); ERPs are read in µV
    import mne

    t = np.arange(-0.2, 0.8, 1 / 250.0)
    wave = 5e-6 * np.exp(-0.5 * ((t - 0.3) / 0.05) ** 2)
    evoked = mne.EvokedArray(wave[None, :], mne.create_info(["Cz"], 250.0, "eeg"), tmin=-0.2)
    ds = gs.audit(gs.lowpass(20.0), waveform=evoked)
    fig = gs.plot_audit(ds, show=False)
    ax = fig.axes[0]
    assert ax.get_ylabel().endswith("(µV)")
    np.testing.assert_allclose(_line(ax, "original").get_ydata(), 1e6 * ds.original.values[0])
    peak_mark = [ln for ln in ax.get_lines() if ln.get_marker() in ("v", "^")][0]
    assert peak_mark.get_ydata()[0] == pytest.approx(1e6 * float(ds.peak[0]), rel=1e-9)
    plt.close(fig)
