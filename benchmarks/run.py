"""Side-by-side speed and memory of gainshape, MNE-Python and a bare FFT round trip.

Workload: a simulated 64-channel, 10-minute, 1000 Hz recording (``--quick``:
16 channels, 2 minutes). Each case runs in its own process, after its imports
and inputs are ready; working memory is the peak resident set size during the
case (Linux VmHWM, reset just before) minus the size before it and minus the
output, as a multiple of the data size.

    python benchmarks/run.py [--quick] [--n-jobs N] [--out results.json]
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import tempfile
import sys
import time
from pathlib import Path

import numpy as np

# MNE's Raw.filter(0.1, 30) defaults put the -6 dB points at 0.05 Hz (0.1 Hz
# transition band) and 33.75 Hz (7.5 Hz transition band), as MNE reports; its
# kernel is 33 s long. The matched gain curve has the same half-amplitude
# points, a 12 dB/octave high-pass edge (a 48 s kernel) and a 24 dB/octave
# low-pass edge.
MNE_BAND = (0.1, 30.0)
HALF_AMPLITUDE = (0.05, 33.75)


def matched_curve():
    import gainshape as gs

    return gs.highpass(HALF_AMPLITUDE[0], rolloff=12.0) * gs.lowpass(HALF_AMPLITUDE[1], rolloff=24.0)
NOTCH = 50.0
HARMONICS = 3


def make_raw(n_channels, seconds, sfreq=1000.0):
    """The simulated recording, read back from a FIF file as users' data are
    (a RawArray would also keep its input array, which ``copy()`` duplicates)."""
    import mne

    fname = Path(tempfile.gettempdir()) / f"gainshape_bench_{n_channels}x{int(seconds)}_raw.fif"
    if not fname.exists():
        rng = np.random.default_rng(0)
        data = rng.standard_normal((n_channels, int(seconds * sfreq)))
        data *= 1e-5
        info = mne.create_info([f"EEG{i:03d}" for i in range(n_channels)], sfreq, "eeg")
        mne.io.RawArray(data, info, verbose=False).save(fname, fmt="double", verbose=False)
    return mne.io.read_raw_fif(fname, preload=True, verbose=False)


def _reset_peak_rss():
    """Reset the kernel's resident-set high-water mark (Linux >= 4.0)."""
    with open("/proc/self/clear_refs", "w") as fh:
        fh.write("5")


def _rss(field):
    with open("/proc/self/status") as fh:
        for line in fh:
            if line.startswith(field + ":"):
                return int(line.split()[1]) * 1024
    raise RuntimeError(f"{field} not found in /proc/self/status")


# Each case: setup(raw, n_jobs) -> state (untimed, before the memory baseline),
# run(state) -> output array (timed and measured).
def setup_gainshape(raw, n_jobs, dtype):
    import gainshape as gs

    curve = matched_curve()
    if dtype == "float32":
        data32 = raw._data.astype(np.float32)
        return lambda: gs.apply(data32, curve, sfreq=raw.info["sfreq"], n_jobs=n_jobs)
    return lambda: gs.apply(raw, curve, n_jobs=n_jobs, verbose=False)._data


def setup_gainshape_in_place(raw, n_jobs, dtype):
    import gainshape as gs

    curve = matched_curve()
    data32 = raw._data.astype(np.float32)
    return lambda: gs.apply(data32, curve, sfreq=raw.info["sfreq"], n_jobs=n_jobs, copy=False)


def setup_mne(raw, n_jobs, dtype):
    return lambda: raw.copy().filter(*MNE_BAND, n_jobs=n_jobs, verbose=False)._data


def setup_gainshape_notch(raw, n_jobs, dtype):
    import gainshape as gs

    curve = gs.notch(NOTCH, width=2.0, harmonics=HARMONICS)
    return lambda: gs.apply(raw, curve, n_jobs=n_jobs, verbose=False)._data


def setup_mne_notch(raw, n_jobs, dtype):
    freqs = NOTCH * np.arange(1, HARMONICS + 1)
    return lambda: raw.copy().notch_filter(freqs, n_jobs=n_jobs, verbose=False)._data


def setup_bare_fft(raw, n_jobs, dtype):
    """rfft -> multiply -> irfft of the data padded as gainshape pads it, one
    FFT over each whole padded channel (the design is made beforehand)."""
    import scipy.fft as sfft

    import gainshape as gs

    filt = gs.design(matched_curve(), raw.info["sfreq"])
    data = raw._data if dtype == "float64" else raw._data.astype(np.float32)
    n_pad = filt.support
    n_fft = sfft.next_fast_len(data.shape[-1] + 2 * n_pad, real=True)
    spec = filt.spectrum(n_fft).astype(data.dtype)

    def run():
        out = np.empty_like(data)
        for i in range(data.shape[0]):
            x = np.pad(data[i], n_pad, mode="reflect")
            y = sfft.irfft(sfft.rfft(x, n_fft, workers=n_jobs) * spec, n_fft, workers=n_jobs)
            out[i] = y[n_pad : n_pad + data.shape[-1]]
        return out

    return run


CASES = {
    "gainshape bandpass float64": (setup_gainshape, "float64"),
    "mne bandpass float64": (setup_mne, "float64"),
    "gainshape bandpass float32": (setup_gainshape, "float32"),
    "gainshape float32 in place": (setup_gainshape_in_place, "float32"),
    "bare fft float64": (setup_bare_fft, "float64"),
    "bare fft float32": (setup_bare_fft, "float32"),
    "gainshape notch float64": (setup_gainshape_notch, "float64"),
    "mne notch float64": (setup_mne_notch, "float64"),
}


def design_reuse(n_channels, seconds):
    """Seconds of a second ``gs.apply`` (another recording, the same curve) and
    of the design it asks for, which the first apply's design serves."""
    import gainshape as gs

    import warnings

    warnings.simplefilter("ignore", gs.GainshapeWarning)  # --quick records are short
    raw = make_raw(n_channels, seconds)
    curve, sfreq = matched_curve(), raw.info["sfreq"]
    gs.apply(raw.copy().crop(0.0, 60.0), curve, verbose=False)  # the first recording designs
    start = time.perf_counter()
    gs.design(curve, sfreq)
    designing = time.perf_counter() - start
    start = time.perf_counter()
    gs.apply(raw, curve, verbose=False)
    return designing, time.perf_counter() - start


def worker(name, n_channels, seconds, n_jobs):
    setup, dtype = CASES[name]
    raw = make_raw(n_channels, seconds)
    run = setup(raw, n_jobs, dtype)
    data_bytes = raw._data.nbytes // (2 if dtype == "float32" else 1)
    baseline = _rss("VmRSS")
    _reset_peak_rss()
    start = time.perf_counter()
    out = run()
    seconds_taken = time.perf_counter() - start
    new_output = 0 if setup is setup_gainshape_in_place else out.nbytes
    extra = max(_rss("VmHWM") - baseline - new_output, 0)
    return {"case": name, "seconds": seconds_taken, "data_bytes": data_bytes,
            "extra_memory_bytes": extra, "extra_memory_ratio": extra / data_bytes}


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="16 channels, 2 minutes")
    parser.add_argument("--n-jobs", type=int, default=1)
    parser.add_argument("--repeat", type=int, default=3, help="best of N runs per case")
    parser.add_argument("--out", default="benchmarks/results.json")
    parser.add_argument("--worker", help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    n_channels, seconds = (16, 120.0) if args.quick else (64, 600.0)
    if args.worker:
        print(json.dumps(worker(args.worker, n_channels, seconds, args.n_jobs)))
        return 0
    make_raw(n_channels, seconds)  # write the shared input file once
    results = {}
    for name in CASES:
        runs = []
        for _ in range(args.repeat):
            cmd = [sys.executable, __file__, "--worker", name, "--n-jobs", str(args.n_jobs)]
            cmd += ["--quick"] if args.quick else []
            done = subprocess.run(cmd, capture_output=True, text=True, check=True)
            runs.append(json.loads(done.stdout.strip().splitlines()[-1]))
        best = min(runs, key=lambda r: r["seconds"])
        best["extra_memory_ratio"] = max(r["extra_memory_ratio"] for r in runs)
        results[name] = best
        print(f"{name:<28} {best['seconds']:7.2f} s   extra memory "
              f"{best['extra_memory_ratio']:.2f} x data")
    t = {k: v["seconds"] for k, v in results.items()}
    ratios = {
        "mne / gainshape float64 (target >= 1.5)": t["mne bandpass float64"] / t["gainshape bandpass float64"],
        "gainshape / bare fft float64 (target <= 1.3)": t["gainshape bandpass float64"] / t["bare fft float64"],
        "mne float64 / gainshape float32 (target >= 3)": t["mne bandpass float64"] / t["gainshape bandpass float32"],
        "mne float64 / gainshape float32 in place": t["mne bandpass float64"] / t["gainshape float32 in place"],
        "mne notch / gainshape notch": t["mne notch float64"] / t["gainshape notch float64"],
    }
    for k, v in ratios.items():
        print(f"{k:<48} {v:6.2f}")
    designing, applying = design_reuse(n_channels, seconds)
    print(f"a second gs.apply (another recording, same curve): {applying:.2f} s, of which "
          f"designing {1e3 * designing:.3f} ms ({100 * designing / applying:.3f} %; target < 1 %)")
    report = {
        "machine": {"python": platform.python_version(), "platform": platform.platform(),
                    "cpus": os.cpu_count(), "n_jobs": args.n_jobs},
        "workload": {"channels": n_channels, "seconds": seconds, "sfreq": 1000.0},
        "results": results, "ratios": ratios,
        "design_reuse": {"designing_s": designing, "second_apply_s": applying},
    }
    from gainshape._files import atomic_output

    with atomic_output(Path(args.out)) as staged:
        staged.write_text(json.dumps(report, indent=2))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
