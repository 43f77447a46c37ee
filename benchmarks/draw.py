"""The curve editor's update time: one drag of one point, as the page sends it.

Each case opens ``gs.draw`` on a curve at 1000 Hz and drags one point
through ``--drags`` positions (each a new curve, so no design is reused);
the time of an update is ``GainEditor.edit`` from the message to the new
state (clamping, design, the view the page draws, the preview when a
recording is given). The page adds drawing and the message's trip; the
browser test prints that round trip.

    python benchmarks/draw.py [--drags 20]
"""

from __future__ import annotations

import argparse
import time
import warnings

import numpy as np

SFREQ = 1000.0


def cases():
    """(name, curve, index of the point dragged, data) for kernels from short to 30 s."""
    import mne

    import gainshape as gs

    points = gs.GainCurve.from_points
    rng = np.random.default_rng(0)
    info = mne.create_info(["Cz"], SFREQ, "eeg")
    epochs = mne.EpochsArray(1e-5 * rng.standard_normal((100, 1, 1000)), info, verbose=False)
    return [
        ("low-pass edge, drawn", points([0.01, 30.0, 45.0, 499.0], [1, 1, 0, 0], freq_scale="log"),
         2, None),
        ("band-pass, drawn", points([0.01, 0.5, 2.0, 30.0, 45.0, 499.0], [0, 0, 1, 1, 0, 0],
                                    freq_scale="log"), 2, None),
        ("high-pass edge, drawn", points([0.01, 0.15, 0.6, 499.0], [0, 0, 1, 1], freq_scale="log"),
         1, None),
        ("notch comb (editable copy)", gs.notch(50.0, harmonics=4), 10, None),
        ("band-pass, drawn, with 100 epochs", points([0.01, 0.5, 2.0, 30.0, 45.0, 499.0],
                                                     [0, 0, 1, 1, 0, 0], freq_scale="log"),
         2, epochs),
    ]


def main() -> None:
    import gainshape as gs

    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--drags", type=int, default=20)
    args = parser.parse_args()
    print(f"{'case':38s} {'kernel (s)':>10s} {'median ms':>10s} {'slowest ms':>10s}")
    for name, curve, index, data in cases():
        editor = gs.draw(curve, sfreq=SFREQ) if data is None else gs.draw(curve, data=data)
        freq, gain = editor.points[index]
        times, lengths = [], []
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            for step in range(args.drags):
                start = time.perf_counter()
                editor.drag(index, freq * (1 + 0.004 * (step + 1)), gain)
                times.append(1e3 * (time.perf_counter() - start))
                lengths.append(editor.design.characteristics.length)
        print(f"{name:38s} {max(lengths):10.1f} {np.median(times):10.1f} {max(times):10.1f}")


if __name__ == "__main__":
    main()
