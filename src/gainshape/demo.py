"""Demo on simulated data: a tone-listening session beside a bandsaw.

Scenario (invented for the demo only): an apprentice in a joinery workshop
listens to tone pips through earphones while a 50 Hz bandsaw motor runs two
metres away. The 32-channel recording carries mains hum at 50, 100 and 150 Hz,
slow skin-potential drift from a warm room, posterior alpha, eye blinks, and
auditory responses to the tones (a sharp negativity near 100 ms, a positivity
near 180 ms and a slow late positivity). Run with ``python -m gainshape.demo``.
"""

from __future__ import annotations

import argparse
import time
from pathlib import Path

import numpy as np

from ._files import atomic_output

__all__ = ["simulate_workshop_recording", "main", "TONE_CHANNEL"]

_CHANNELS = [
    "Fp1", "Fp2", "F7", "F3", "Fz", "F4", "F8", "FC5", "FC1", "FC2", "FC6",
    "T7", "C3", "Cz", "C4", "T8", "CP5", "CP1", "CP2", "CP6", "P7", "P3", "Pz",
    "P4", "P8", "PO9", "O1", "Oz", "O2", "PO10", "TP9", "TP10",
]
_TONE_ID = 1
TONE_CHANNEL = "Tones"  # the stim channel marking tone onsets (code 1)


def simulate_workshop_recording(seconds: float = 180.0, sfreq: float = 500.0, seed: int = 7):
    """Simulate the workshop session as an ``mne.io.RawArray`` (volts).

    Returns 32 EEG channels (10-20 montage), one EOG and one stim channel
    whose events (code 1) mark tone onsets; ``info["line_freq"]`` is 50 Hz.

    Examples
    --------
    >>> raw = simulate_workshop_recording(seconds=10.0)
    >>> len(raw.ch_names), raw.info["sfreq"]
    (34, 500.0)
    """
    import mne

    rng = np.random.default_rng(seed)
    n = int(seconds * sfreq)
    t = np.arange(n) / sfreq
    info = mne.create_info(_CHANNELS + ["EOG1", TONE_CHANNEL], sfreq,
                           ["eeg"] * len(_CHANNELS) + ["eog", "stim"])
    builtin = mne.channels.get_builtin_montages()
    info.set_montage("colin27_1020" if "colin27_1020" in builtin else "standard_1020")
    pos = np.array([info["chs"][i]["loc"][:3] for i in range(len(_CHANNELS))])
    front = (pos[:, 1] - pos[:, 1].min()) / np.ptp(pos[:, 1])  # 0 back .. 1 front
    top = (pos[:, 2] - pos[:, 2].min()) / np.ptp(pos[:, 2])  # 0 low .. 1 vertex

    eeg = 6e-6 * _pink_noise(rng, len(_CHANNELS), n)
    alpha_env = 1.0 + 0.6 * np.sin(2 * np.pi * 0.07 * t + rng.uniform(0, 6))
    eeg += np.outer(8e-6 * (1.0 - front), alpha_env * np.sin(2 * np.pi * 10.2 * t))
    for k, amp in ((1, 25e-6), (2, 7e-6), (3, 3e-6)):  # bandsaw hum and harmonics
        gains = amp * rng.uniform(0.5, 1.5, len(_CHANNELS))
        eeg += np.outer(gains, np.sin(2 * np.pi * 50.0 * k * t + rng.uniform(0, 6)))
    eeg += _drift(rng, len(_CHANNELS), n, sfreq) * 40e-6

    onsets = np.cumsum(rng.uniform(1.1, 1.5, int(seconds / 1.1)))
    onsets = onsets[onsets < seconds - 1.0]
    response = _auditory_response(sfreq)
    spread_early = 0.4 + 0.6 * top * (0.5 + 0.5 * front)
    spread_late = 0.4 + 0.6 * top * (1.0 - 0.5 * front)
    stim = np.zeros(n)
    for onset in onsets:
        i = int(onset * sfreq)
        stop = min(n, i + response.shape[1])
        eeg[:, i:stop] += np.outer(spread_early, response[0, : stop - i])
        eeg[:, i:stop] += np.outer(spread_late, response[1, : stop - i])
        stim[i] = _TONE_ID

    eog = 20e-6 * _pink_noise(rng, 1, n)[0]
    for blink in rng.uniform(0, seconds - 1, int(seconds / 4)):
        eog += 150e-6 * np.exp(-0.5 * ((t - blink) / 0.05) ** 2)
    eeg += np.outer(0.3 * front**2, eog)

    raw = mne.io.RawArray(np.vstack([eeg, eog, stim]), info, verbose=False)
    raw.info["line_freq"] = 50.0  # the workshop's mains
    return raw


def _pink_noise(rng, n_ch, n):
    """Unit-variance 1/f noise (spectral shaping of white noise)."""
    spec = np.fft.rfft(rng.standard_normal((n_ch, n)), axis=-1)
    f = np.arange(spec.shape[-1], dtype=float)
    f[0] = 1.0
    x = np.fft.irfft(spec / np.sqrt(f), n, axis=-1)
    return x / x.std(axis=-1, keepdims=True)


def _drift(rng, n_ch, n, sfreq):
    """Skin-potential drift: smooth random excursions below about 0.1 Hz."""
    spec = np.fft.rfft(rng.standard_normal((n_ch, n)), axis=-1)
    f = np.fft.rfftfreq(n, 1.0 / sfreq)
    spec *= np.exp(-((f / 0.04) ** 2))
    x = np.fft.irfft(spec, n, axis=-1)
    return x / x.std(axis=-1, keepdims=True)


def _auditory_response(sfreq):
    """Early (sharp negativity then positivity) and late slow components, volts."""
    t = np.arange(int(0.9 * sfreq)) / sfreq
    early = -5e-6 * np.exp(-0.5 * ((t - 0.100) / 0.018) ** 2)
    early += 4e-6 * np.exp(-0.5 * ((t - 0.180) / 0.030) ** 2)
    late = 3e-6 * np.exp(-0.5 * ((t - 0.420) / 0.120) ** 2)
    return np.vstack([early, late])


def _mean_spectra(raw, filtered):
    """Channel-averaged Welch PSDs (40 s Hann windows, 50 % overlap) of EEG."""
    from scipy.signal import welch

    sfreq = raw.info["sfreq"]
    kw = dict(fs=sfreq, nperseg=int(40 * sfreq), axis=-1)
    freqs, before = welch(raw.get_data(picks="eeg"), **kw)
    _, after = welch(filtered.get_data(picks="eeg"), **kw)
    return freqs, before.mean(axis=0), after.mean(axis=0)


def demo_curve():
    """Band-pass 0.1-40 Hz (12 dB/octave) times a 50 Hz notch with 3 harmonics."""
    from . import bandpass, notch

    return bandpass(0.1, 40.0, rolloff=12.0) * notch(50.0, width=2.0, harmonics=3)


def main(argv=None) -> int:
    """Simulate, design, filter, report, and write figures and FIF to ``--out``."""
    import matplotlib

    matplotlib.use("Agg")
    import mne

    from . import apply, audit, band_change, design, methods_text, observed_gain
    from .viz import (plot_audit, plot_band_change, plot_design, plot_erp_pair,
                      plot_observed_gain, plot_spectrum_pair)

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
    curve = demo_curve()
    print(f"Requested: {curve.describe()}")
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

    change = band_change(raw, filtered)
    with atomic_output(out / "band_change.nc") as staged:
        change.to_netcdf(staged)
    _save_figure(plot_band_change(change, show=False), out / "band_change.png")
    print("\nBand power change, dB (median and range over the 32 EEG channels)")
    for band in change.band.values:
        values = change.change_db.sel(band=band)
        print(f"  {band:<6} {float(change.band_low.sel(band=band)):>5g}-"
              f"{float(change.band_high.sel(band=band)):<5g} Hz  {float(values.median()):8.2f}"
              f"   [{float(values.min()):.2f}, {float(values.max()):.2f}]")
    gain = observed_gain(raw, filtered)
    _save_figure(plot_observed_gain(gain, filt, show=False), out / "observed_gain.png")

    waveforms = audit(filt)
    _save_figure(plot_audit(waveforms, show=False), out / "waveform_audit.png")
    print("\nWaveform audit (test waveforms)")
    table = waveforms[["peak_change_pct", "latency_shift_ms", "onset_shift_ms",
                       "opposite_before_pct", "opposite_after_pct", "ringing_s"]]
    print(table.to_dataframe().drop(columns="component_waveform").round(2).to_string())
    print("\nMethods paragraph\n" + methods_text(filtered))
    print(f"\nWrote {fif}, band_change.nc and 6 figures to {out}/ in "
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
