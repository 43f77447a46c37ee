"""Time of FilterDesign.realized_gain at 20,001 frequencies for long kernels.

    python benchmarks/realized_gain.py
"""

from __future__ import annotations

import time

import numpy as np

import gainshape as gs

CASES = [("demo band-pass x notch, 500 Hz", gs.bandpass(0.1, 40.0) * gs.notch(50.0, harmonics=3), 500.0),
         ("high-pass 0.05 Hz, 12 dB/octave, 500 Hz", gs.highpass(0.05), 500.0),
         ("high-pass 0.05 Hz, 24 dB/octave, 1000 Hz", gs.highpass(0.05, rolloff=24.0), 1000.0)]


def main() -> int:
    for name, curve, sfreq in CASES:
        f = gs.design(curve, sfreq)
        freqs = np.linspace(0.0, sfreq / 2, 20001)
        start = time.perf_counter()
        f.realized_gain(freqs)
        print(f"{name}: kernel {f.characteristics.length:.1f} s, 20,001 frequencies in "
              f"{time.perf_counter() - start:.3f} s")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
