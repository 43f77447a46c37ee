"""Design time of random drawn gain curves at random rates (the fuzz of the tests, wider).

Draws 300 curves through 2-8 random points (log-uniform from 0.01 Hz to the
rate, linear or log joins, some all-or-nothing gains) at rates from 100 to
5000 Hz, designs each (a third minimum-phase) and prints how long designs
take and how they end (met, tolerance not met and said so, refused).

    python benchmarks/fuzz_design.py [--n 300] [--seed 1]
"""

from __future__ import annotations

import argparse
import time
import warnings

import numpy as np

import gainshape as gs

RATES = (100.0, 128.0, 250.0, 256.0, 500.0, 512.0, 1000.0, 1024.0, 2048.0, 5000.0)


def random_request(rng):
    """A drawn curve, a rate and the causal switch."""
    sfreq = float(rng.choice(RATES))
    freqs = np.unique(np.exp(rng.uniform(np.log(0.01), np.log(sfreq), int(rng.integers(2, 9)))))
    gains = rng.uniform(0.0, 1.0, freqs.size)
    gains = np.round(gains) if rng.random() < 0.3 else gains
    scale = "log" if rng.random() < 0.5 else "linear"
    return gs.GainCurve.from_points(freqs, gains, freq_scale=scale), sfreq, bool(rng.random() < 1 / 3)


def main(argv=None) -> int:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--n", type=int, default=300)
    parser.add_argument("--seed", type=int, default=1)
    args = parser.parse_args(argv)
    rng = np.random.default_rng(args.seed)
    seconds, ends, kernels, requests = [], {"met": 0, "said unmet": 0, "refused": 0}, [], []
    for _ in range(args.n):
        curve, sfreq, causal = random_request(rng)
        requests.append(f"{curve!r} at {sfreq:g} Hz, causal={causal}")
        start = time.perf_counter()
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always")
            try:
                f = gs.design(curve, sfreq, causal=causal)
                ends["met" if f.characteristics.max_deviation <= f.tolerance else "said unmet"] += 1
                kernels.append(f.characteristics.length)
            except ValueError:
                ends["refused"] += 1
        seconds.append(time.perf_counter() - start)
        del caught
    seconds = np.array(seconds)
    print(f"{args.n} designs: median {np.median(seconds):.3f} s, 90th percentile "
          f"{np.percentile(seconds, 90):.3f} s, slowest {seconds.max():.2f} s; "
          f"over 1 s: {np.sum(seconds > 1)}, over 2 s: {np.sum(seconds > 2)}")
    print(f"outcomes: {ends}; longest kernel {max(kernels):.0f} s")
    print("slowest:", requests[int(np.argmax(seconds))])
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
