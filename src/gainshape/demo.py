"""Demo on simulated data: a tone-listening session beside a bandsaw.

Designs, applies, reports and plots the demo filter on the simulated
workshop recording (:mod:`gainshape.simulate`). Run with
``python -m gainshape.demo``.
"""

from __future__ import annotations

import argparse
import time
from pathlib import Path

from ._files import atomic_output
from .simulate import TONE_CHANNEL, simulate_workshop_recording

__all__ = ["main", "demo_curve"]


def _mean_spectra(raw, filtered):
    """Channel-averaged Welch PSDs (40 s Hann windows, 50 % overlap) of EEG."""
    from scipy.signal import welch

    sfreq = raw.info["sfreq"]
    kw = dict(fs=sfreq, nperseg=int(40 * sfreq), axis=-1)
    freqs, before = welch(raw.get_data(picks="eeg"), **kw)
    _, after = welch(filtered.get_data(picks="eeg"), **kw)
    return freqs, before.mean(axis=0), after.mean(axis=0)


def demo_curve(notches=None):
    """Band-pass 0.1-40 Hz (12 dB/octave) times ``notches`` (a GainCurve,
    such as the comb :func:`gainshape.suggest_notches` proposes), or by
    default a 50 Hz notch with 3 harmonics."""
    from .shaping.shapes import bandpass, notch

    if notches is None:
        notches = notch(50.0, width=2.0, harmonics=3)
    return bandpass(0.1, 40.0, rolloff=12.0) * notches


def main(argv=None) -> int:
    """Simulate, design, filter, report, and write figures and FIF to ``--out``."""
    import matplotlib

    matplotlib.use("Agg")
    import mne

    from .filtering.adapters import apply
    from .examining.audit import audit
    from .examining.summaries import band_change, observed_gain
    from .shaping.design import design
    from .examining.lines import find_lines
    from .examining.notches import suggest_notches
    from .record.methods import methods_text
    from .showing.waveform_plots import plot_audit, plot_erp_pair
    from .showing.spectrum_plots import (
        plot_band_change, plot_lines, plot_observed_gain, plot_spectrum_pair,
    )
    from .showing.filter_plots import plot_design

    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--out", default="demo-output", help="output folder")
    args = parser.parse_args(argv)
    out = Path(args.out)
    out.mkdir(parents=True, exist_ok=True)
    mne.set_log_level("ERROR")
    start = time.perf_counter()

    raw = simulate_workshop_recording()
    print(f"Simulated {len(raw.ch_names)} channels, {raw.times[-1]:.0f} s at "
          f"{raw.info['sfreq']:g} Hz (workshop tone session).")
    found = find_lines(raw)
    _save_figure(plot_lines(found, show=False), out / "lines_found.png")
    print(f"\nLines found before filtering (at least {found.attrs['threshold_db']:.1f} dB above "
          f"the background in at least half the channels)")
    print(found[["line_frequency", "height_db", "width", "harmonic_of", "n_channels"]]
          .to_dataframe().round(3).to_string(index=False))
    proposal = suggest_notches(found)
    print("Proposed notches:\n  " + "\n  ".join(proposal.reasons))
    curve = demo_curve(proposal)
    print(f"\nRequested: {curve.describe()}")
    filt = design(curve, raw.info["sfreq"])
    print("\nRealized filter")
    width = max(len(label) for label, _ in filt.summary())
    for label, value in filt.summary():
        print(f"  {label:<{width}}  {value}")

    filtered = apply(raw, filt)
    fif = out / "workshop_filtered_raw.fif"
    with atomic_output(fif) as staged:
        filtered.save(staged, overwrite=True)

    _save_figure(plot_design(filt, show=False), out / "filter_design.png")
    freqs, before, after = _mean_spectra(raw, filtered)
    _save_figure(plot_spectrum_pair(freqs, before, after, show=False),
                 out / "spectra_before_after.png")
    events = mne.find_events(raw, stim_channel=TONE_CHANNEL)
    evokeds = [
        mne.Epochs(r, events, tmin=-0.2, tmax=0.8, baseline=(-0.2, 0.0), picks="eeg").average()
        for r in (raw, filtered)
    ]
    cz = [e.copy().pick(["Cz"]).data[0] * 1e6 for e in evokeds]
    _save_figure(plot_erp_pair(evokeds[0].times, *cz, label="Cz (µV)", show=False),
                 out / "erp_cz_before_after.png")
    print(f"\ninfo: highpass {filtered.info['highpass']:.4g} Hz, lowpass "
          f"{filtered.info['lowpass']:.4g} Hz")

    change = band_change(raw, filtered, lines=found)
    with atomic_output(out / "band_change.nc") as staged:
        change.to_netcdf(staged)
    _save_figure(plot_band_change(change, show=False), out / "band_change.png")
    print("\nBand power change, dB (median and range over the 32 EEG channels)")
    for band in change.band.values:
        values = change.change_db.sel(band=band)
        print(f"  {band:<12} {float(change.band_low.sel(band=band)):>5.4g}-"
              f"{float(change.band_high.sel(band=band)):<5.4g} Hz  {float(values.median()):8.2f}"
              f"   [{float(values.min()):.2f}, {float(values.max()):.2f}]")
    gain = observed_gain(raw, filtered)
    _save_figure(plot_observed_gain(gain, filt, show=False), out / "observed_gain.png")

    waveforms = audit(filt)
    _save_figure(plot_audit(waveforms, show=False), out / "waveform_audit.png")
    print("\nWaveform audit (test waveforms)")
    table = waveforms[["peak_change_pct", "latency_shift_ms", "onset_shift_ms",
                       "pre_response_pct", "undershoot_pct", "ringing_s"]]
    print(table.to_dataframe().drop(columns="component_waveform").round(2).to_string())
    print("\nMethods paragraph\n" + methods_text(filtered))
    print(f"\nWrote {fif}, band_change.nc and 7 figures to {out}/ in "
          f"{time.perf_counter() - start:.1f} s.")
    return 0


def _save_figure(fig, path):
    """Write a figure whole or not at all, and release it."""
    import matplotlib.pyplot as plt

    with atomic_output(path) as staged:
        fig.savefig(staged, dpi=110)
    plt.close(fig)


if __name__ == "__main__":
    raise SystemExit(main())
