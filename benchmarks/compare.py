"""``gs.compare_filters``: 6 candidates on 64 channels x 300 epochs of 1 s at 500 Hz.

Simulated epochs (an early negativity and a late positivity on 1/f noise), the
candidates the high-pass cutoffs 0.01, 0.1, 0.3, 0.5, 1 and 2 Hz with a 30 Hz
low-pass. Timed after a warm-up call in the same process, best of ``--repeat``.
With ``--figure PATH`` the comparison's view is saved there too.

    python benchmarks/compare.py [--repeat 2] [--figure docs/_static/compare_filters.png]
"""

from __future__ import annotations

import argparse
import time
import warnings

import numpy as np

SFREQ, CHANNELS, EPOCHS = 500.0, 64, 300


def simulated_epochs(seed: int = 3):
    import mne

    rng = np.random.default_rng(seed)
    times = np.arange(round(-0.2 * SFREQ), round(0.8 * SFREQ)) / SFREQ
    erp = (-3e-6 * np.exp(-((times - 0.1) / 0.02) ** 2)
           + 6e-6 * np.exp(-((times - 0.45) / 0.1) ** 2))
    weights = np.linspace(0.4, 1.0, CHANNELS)[:, None]
    freqs = np.fft.rfftfreq(times.size, 1 / SFREQ)
    shaped = np.fft.rfft(rng.standard_normal((EPOCHS, CHANNELS, times.size)), axis=-1) \
        / np.sqrt(np.maximum(freqs, 1.0))
    noise = np.fft.irfft(shaped, times.size, axis=-1)
    data = weights * erp + 4e-6 * noise / noise.std()
    info = mne.create_info([f"E{i:02d}" for i in range(CHANNELS)], SFREQ, "eeg")
    events = np.column_stack([np.arange(EPOCHS), np.zeros(EPOCHS, int), np.ones(EPOCHS, int)])
    return mne.EpochsArray(data, info, events=events, tmin=times[0], verbose=False)


def main() -> None:
    import gainshape as gs

    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--repeat", type=int, default=2)
    parser.add_argument("--figure", help="save the comparison's view here (PNG)")
    args = parser.parse_args()
    epochs = simulated_epochs()
    candidates = {f"{hp:g}-30 Hz": gs.bandpass(hp, 30.0) for hp in (0.01, 0.1, 0.3, 0.5, 1, 2)}
    components = {"N1": (0.06, 0.15, "-"), "P3": (0.3, 0.65, "+")}
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # 1 s epochs, long kernels: said in the result
        gs.compare_filters(candidates, epochs[:10], components=components)  # warm-up
        best = float("inf")
        for _ in range(args.repeat):
            start = time.perf_counter()
            ds = gs.compare_filters(candidates, epochs, components=components)
            best = min(best, time.perf_counter() - start)
    print(f"compare_filters, {len(candidates)} candidates, {CHANNELS} channels x {EPOCHS} "
          f"epochs of 1 s at {SFREQ:g} Hz: {best:.1f} s (best of {args.repeat}, warm)")
    print(ds[["peak_change_pct", "deflection_before_pct", "latency_shift_ms", "onset_shift_ms"]]
          .sel(channel="E63").isel(condition=0).to_dataframe().round(2)
          .drop(columns="condition").to_string())
    if args.figure:
        import matplotlib

        matplotlib.use("Agg")
        fig = gs.plot_comparison(ds, show=False)
        fig.savefig(args.figure, dpi=90)
        print("view saved to", args.figure)


if __name__ == "__main__":
    main()
