"""Side by side: gainshape and MNE-Python on 2-, 10- and 60-minute recordings and on Epochs.

Workload: simulated 64-channel recordings at 1000 Hz read back from FIF
files (``--quick``: 16 channels, 2 minutes, no Epochs). Each case runs in
its own process after its imports and inputs are ready; time is the best of
``--repeat`` runs (design included in gainshape's times: the curve is
passed, not a ready design); working memory is the peak resident set size
during the case (Linux VmHWM, reset just before) minus the size before it
and minus the output, as a multiple of the data size. The 10- and 60-minute
recordings also run from file to file: gainshape out of core
(``preload=False``), MNE in memory; their peak memory is reported in MB.

That per-process (cold) table comes second. First comes the warm table, as
a notebook user sees it: one process per recording, one warm-up call each
side, then the best of ``--repeat`` calls, gainshape designing its curve at
each call with the low-pass edge moved by 1 mHz (no kept design serves it).

    python benchmarks/run.py [--quick] [--minutes 2 10 60] [--repeat 3] [--warm-only] [--out results.json]
"""

from __future__ import annotations

import argparse
import json
import os
import platform
import subprocess
import sys
import tempfile
import time
from pathlib import Path

import numpy as np

# MNE's Raw.filter(0.1, 30) defaults put the -6 dB points at 0.05 Hz (0.1 Hz
# transition band) and 33.75 Hz (7.5 Hz transition band), as MNE reports; its
# kernel is 33 s long. The matched gain curve has the same half-amplitude
# points, a 12 dB/octave high-pass edge and a 24 dB/octave low-pass edge;
# the steep one has 24 dB/octave on both.
MNE_BAND = (0.1, 30.0)
HALF_AMPLITUDE = (0.05, 33.75)
NOTCH, HARMONICS = 50.0, 3
SFREQ = 1000.0
EPOCHS, EPOCH_SECONDS = 300, 2.0
TARGETS = {"float64": 4.0, "float32": 8.0, "epochs": 4.0}


def curve_of(name, nudge=0):
    """The curve compared; ``nudge`` moves the low-pass edge by ``nudge`` mHz, so
    that no kept design serves a warm repeat."""
    import gainshape as gs

    high = 24.0 if name == "steep" else 12.0
    low_edge = HALF_AMPLITUDE[1] + 1e-3 * nudge
    if name == "low-pass":
        return gs.lowpass(low_edge, rolloff=24.0)
    return gs.highpass(HALF_AMPLITUDE[0], rolloff=high) * gs.lowpass(low_edge, rolloff=24.0)


def recording_file(n_channels, minutes):
    """The simulated recording as a FIF file (written once): white noise, 10 uV."""
    import mne

    fname = Path(tempfile.gettempdir()) / f"gainshape_bench_{n_channels}x{minutes}min_raw.fif"
    if not fname.exists():
        rng = np.random.default_rng(0)
        data = rng.standard_normal((n_channels, int(minutes * 60 * SFREQ))) * 1e-5
        info = mne.create_info([f"EEG{i:03d}" for i in range(n_channels)], SFREQ, "eeg")
        raw = mne.io.RawArray(data, info, verbose=False)
        del data
        raw.save(fname, fmt="double", verbose=False)
    return fname


def read_raw(n_channels, minutes, preload=True):
    import mne

    return mne.io.read_raw_fif(recording_file(n_channels, minutes), preload=preload, verbose=False)


def make_epochs(n_channels):
    import mne

    rng = np.random.default_rng(1)
    n = int(EPOCH_SECONDS * SFREQ)
    info = mne.create_info([f"EEG{i:03d}" for i in range(n_channels)], SFREQ, "eeg")
    return mne.EpochsArray(rng.standard_normal((EPOCHS, n_channels, n)) * 1e-5, info, verbose=False)


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


# Each case: setup(n_channels, minutes) -> (run, data_bytes, in_place); run() -> output
# array, or None when it writes a file.
def gainshape_raw(curve_name, dtype):
    def setup(n_channels, minutes):
        import gainshape as gs

        raw, curve = read_raw(n_channels, minutes), curve_of(curve_name)
        if dtype == "float32":
            data32 = raw._data.astype(np.float32)
            del raw
            return lambda: gs.apply(data32, curve, sfreq=SFREQ), data32.nbytes, False
        return lambda: gs.apply(raw, curve, verbose=False)._data, raw._data.nbytes, False

    return setup


def gainshape_file_to_file(curve_name):
    def setup(n_channels, minutes):
        import gainshape as gs

        src, curve = recording_file(n_channels, minutes), curve_of(curve_name)
        dst = Path(tempfile.mkdtemp()) / "filtered_raw.fif"

        def run():
            import mne

            lazy = gs.apply(mne.io.read_raw_fif(src, preload=False, verbose=False), curve,
                            verbose=False)
            lazy.save(dst, fmt="double", overwrite=True, verbose=False)

        return run, n_channels * int(minutes * 60 * SFREQ) * 8, False

    return setup


def mne_raw(n_channels, minutes):
    raw = read_raw(n_channels, minutes)
    return lambda: raw.copy().filter(*MNE_BAND, verbose=False)._data, raw._data.nbytes, False


def mne_file_to_file(n_channels, minutes):
    src = recording_file(n_channels, minutes)
    dst = Path(tempfile.mkdtemp()) / "filtered_raw.fif"

    def run():
        import mne

        raw = mne.io.read_raw_fif(src, preload=True, verbose=False)
        raw.filter(*MNE_BAND, verbose=False)
        raw.save(dst, fmt="double", overwrite=True, verbose=False)

    return run, n_channels * int(minutes * 60 * SFREQ) * 8, False


def gainshape_float32_in_place(n_channels, minutes):
    import gainshape as gs

    data32 = read_raw(n_channels, minutes)._data.astype(np.float32)
    curve = curve_of("matched")
    return lambda: gs.apply(data32, curve, sfreq=SFREQ, copy=False), data32.nbytes, True


def gainshape_notch(n_channels, minutes):
    import gainshape as gs

    raw = read_raw(n_channels, minutes)
    curve = gs.notch(NOTCH, width=2.0, harmonics=HARMONICS)
    return lambda: gs.apply(raw, curve, verbose=False)._data, raw._data.nbytes, False


def mne_notch(n_channels, minutes):
    raw = read_raw(n_channels, minutes)
    freqs = NOTCH * np.arange(1, HARMONICS + 1)
    return lambda: raw.copy().notch_filter(freqs, verbose=False)._data, raw._data.nbytes, False


def gainshape_epochs(curve_name):
    def setup(n_channels, minutes):
        import gainshape as gs

        epochs, curve = make_epochs(n_channels), curve_of(curve_name)
        return lambda: gs.apply(epochs, curve, verbose=False)._data, epochs._data.nbytes, False

    return setup


def mne_epochs(band):
    def setup(n_channels, minutes):
        epochs = make_epochs(n_channels)
        return lambda: epochs.copy().filter(*band, verbose=False)._data, epochs._data.nbytes, False

    return setup


def cases(minutes_list, quick):
    """name -> (setup, minutes)."""
    out = {}
    for m in minutes_list:
        if m >= 10:  # file to file: gainshape out of core, MNE in memory
            out[f"{m} min mne band-pass file to file"] = (mne_file_to_file, m)
            out[f"{m} min gainshape band-pass file to file"] = (gainshape_file_to_file("matched"), m)
            out[f"{m} min gainshape steep file to file"] = (gainshape_file_to_file("steep"), m)
        out[f"{m} min mne band-pass float64"] = (mne_raw, m)
        for curve in ("matched", "steep"):
            label = "band-pass" if curve == "matched" else "steep"
            out[f"{m} min gainshape {label} float64"] = (gainshape_raw(curve, "float64"), m)
            out[f"{m} min gainshape {label} float32"] = (gainshape_raw(curve, "float32"), m)
    if 10 in minutes_list:
        out["10 min gainshape band-pass float32 in place"] = (gainshape_float32_in_place, 10)
        out["10 min mne notch float64"] = (mne_notch, 10)
        out["10 min gainshape notch float64"] = (gainshape_notch, 10)
    if not quick:
        out["epochs mne low-pass"] = (mne_epochs((None, MNE_BAND[1])), 0)
        out["epochs gainshape low-pass"] = (gainshape_epochs("low-pass"), 0)
        out["epochs mne band-pass"] = (mne_epochs(MNE_BAND), 0)
        out["epochs gainshape band-pass"] = (gainshape_epochs("matched"), 0)
    return out


def worker(name, n_channels, minutes_list, quick):
    import warnings

    warnings.simplefilter("ignore")  # short epochs: the kernel-length warnings are expected
    setup, minutes = cases(minutes_list, quick)[name]
    run, data_bytes, in_place = setup(n_channels, minutes)
    baseline = _rss("VmRSS")
    _reset_peak_rss()
    start = time.perf_counter()
    out = run()
    seconds_taken = time.perf_counter() - start
    new_output = 0 if (in_place or out is None) else out.nbytes
    peak = _rss("VmHWM") - baseline
    extra = max(peak - new_output, 0)
    return {"case": name, "seconds": seconds_taken, "data_bytes": data_bytes,
            "extra_memory_bytes": extra, "extra_memory_ratio": extra / data_bytes,
            "peak_memory_mb": peak / 2**20}


def design_times(repeat=3):
    """Seconds to design each curve at 1000 Hz, no design reused (best of ``repeat``)."""
    import gainshape as gs

    store = sys.modules["gainshape.shaping.design"]._DESIGNS
    curves = {
        "matched band-pass": curve_of("matched"),
        "steep band-pass": curve_of("steep"),
        "high-pass 0.05 Hz, 24 dB/octave": gs.highpass(0.05, rolloff=24.0),
        "band-pass 0.1-30 Hz": gs.bandpass(0.1, 30.0),
        "high-pass 0.5 Hz": gs.highpass(0.5),
        "low-pass 30 Hz": gs.lowpass(30.0),
        "notch 50 Hz + 2 harmonics": gs.notch(50.0, width=2.0, harmonics=3),
        "band-stop 8-13 Hz": gs.bandstop(8.0, 13.0),
        "drawn: points through 0.1-30 Hz band-pass": gs.GainCurve.from_points(
            [0.02, 0.1, 0.3, 20.0, 30.0, 45.0], [0.0, 0.5, 1.0, 1.0, 0.5, 0.0], freq_scale="log"),
    }
    out = {}
    for name, curve in curves.items():
        best = np.inf
        for _ in range(repeat):
            store.kept.clear()
            start = time.perf_counter()
            made = gs.design(curve, SFREQ)
            best = min(best, time.perf_counter() - start)
        out[name] = {"seconds": best, "kernel_s": made.characteristics.length,
                     "two_rates": made.rates is not None}
    return out


def design_reuse(n_channels, minutes):
    """Seconds of a second ``gs.apply`` (another recording, the same curve) and
    of the design it asks for, which the first apply's design serves."""
    import warnings

    import gainshape as gs

    warnings.simplefilter("ignore", gs.GainshapeWarning)
    raw = read_raw(n_channels, minutes)
    curve = curve_of("matched")
    gs.apply(raw.copy().crop(0.0, 60.0), curve, verbose=False)  # the first recording designs
    start = time.perf_counter()
    gs.design(curve, SFREQ)
    designing = time.perf_counter() - start
    start = time.perf_counter()
    gs.apply(raw, curve, verbose=False)
    return designing, time.perf_counter() - start


def warm_worker(n_channels, minutes, repeat):
    """Warm seconds of each in-memory case on one recording, in this process.

    Each case gets one warm-up call, then the best of ``repeat`` calls;
    gainshape's curve is designed at every call with its low-pass edge
    moved by 1 mHz, so no kept design serves it (as a notebook user
    trying cutoffs sees it). MNE filters a copy each time.
    """
    import warnings

    import gainshape as gs

    warnings.simplefilter("ignore")
    raw = read_raw(n_channels, minutes) if minutes else None
    data32 = raw._data.astype(np.float32) if minutes else None
    epochs = make_epochs(n_channels) if not minutes else None
    runs = {}
    if minutes:
        runs[f"{minutes} min mne band-pass float64"] = lambda i: raw.copy().filter(*MNE_BAND,
                                                                                   verbose=False)
        for curve, label in (("matched", "band-pass"), ("steep", "steep")):
            runs[f"{minutes} min gainshape {label} float64"] = (
                lambda i, c=curve: gs.apply(raw, curve_of(c, i), verbose=False))
            runs[f"{minutes} min gainshape {label} float32"] = (
                lambda i, c=curve: gs.apply(data32, curve_of(c, i), sfreq=SFREQ))
    else:
        runs["epochs mne low-pass"] = lambda i: epochs.copy().filter(None, MNE_BAND[1], verbose=False)
        runs["epochs gainshape low-pass"] = lambda i: gs.apply(epochs, curve_of("low-pass", i),
                                                               verbose=False)
        runs["epochs mne band-pass"] = lambda i: epochs.copy().filter(*MNE_BAND, verbose=False)
        runs["epochs gainshape band-pass"] = lambda i: gs.apply(epochs, curve_of("matched", i),
                                                                verbose=False)
    out = {}
    for name, run in runs.items():
        run(0)  # the warm-up call
        best = np.inf
        for i in range(1, repeat + 1):
            start = time.perf_counter()
            run(i)
            best = min(best, time.perf_counter() - start)
        out[name] = best
    return out


def _ratios(t, minutes_list):
    """(label, value, target) of every comparison the targets name."""
    rows = []
    for m in minutes_list:
        mne = t.get(f"{m} min mne band-pass float64")
        for label in ("band-pass", "steep"):
            for dtype in ("float64", "float32"):
                mine = t.get(f"{m} min gainshape {label} {dtype}")
                if mne and mine:
                    rows.append((f"{m} min {label} {dtype}: MNE / gainshape", mne / mine,
                                 TARGETS[dtype]))
            ours = t.get(f"{m} min gainshape {label} file to file")
            theirs = t.get(f"{m} min mne band-pass file to file")
            if ours and theirs:
                rows.append((f"{m} min {label} file to file: MNE / gainshape out of core",
                             theirs / ours, TARGETS["float64"]))
    for label in ("low-pass", "band-pass"):
        mne, mine = t.get(f"epochs mne {label}"), t.get(f"epochs gainshape {label}")
        if mne and mine:
            rows.append((f"epochs {label}: MNE / gainshape", mne / mine, TARGETS["epochs"]))
    if t.get("10 min gainshape notch float64"):
        rows.append(("10 min notch: MNE / gainshape",
                     t["10 min mne notch float64"] / t["10 min gainshape notch float64"], None))
    return rows


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--quick", action="store_true", help="16 channels, 2 minutes, no Epochs")
    parser.add_argument("--minutes", type=int, nargs="+", default=[2, 10, 60])
    parser.add_argument("--repeat", type=int, default=3, help="best of N runs per case")
    parser.add_argument("--out", default="benchmarks/results.json")
    parser.add_argument("--warm-only", action="store_true", help="only the warm table")
    parser.add_argument("--worker", help=argparse.SUPPRESS)
    parser.add_argument("--warm-worker", type=int, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    n_channels = 16 if args.quick else 64
    minutes_list = [2] if args.quick else args.minutes
    if args.worker:
        print(json.dumps(worker(args.worker, n_channels, minutes_list, args.quick)))
        return 0
    if args.warm_worker is not None:
        print(json.dumps(warm_worker(n_channels, args.warm_worker, args.repeat)))
        return 0
    for m in minutes_list:
        recording_file(n_channels, m)  # write the shared input files once
    warm = _warm_table(n_channels, minutes_list, args)
    if args.warm_only:
        return _write_report(args.out, n_channels, minutes_list, {"warm": warm})
    results = {}
    for name, (_, minutes) in cases(minutes_list, args.quick).items():
        runs = []
        for _ in range(1 if minutes >= 60 else args.repeat):
            cmd = [sys.executable, __file__, "--worker", name, "--minutes", *map(str, minutes_list)]
            cmd += ["--quick"] if args.quick else []
            done = subprocess.run(cmd, capture_output=True, text=True, check=True)
            runs.append(json.loads(done.stdout.strip().splitlines()[-1]))
        best = min(runs, key=lambda r: r["seconds"])
        best["extra_memory_ratio"] = max(r["extra_memory_ratio"] for r in runs)
        best["peak_memory_mb"] = max(r["peak_memory_mb"] for r in runs)
        results[name] = best
        print(f"{name:<48} {best['seconds']:7.2f} s   extra memory "
              f"{best['extra_memory_ratio']:.2f} x data   peak {best['peak_memory_mb']:7.0f} MB",
              flush=True)
    t = {k: v["seconds"] for k, v in results.items()}
    ratios = _ratios(t, minutes_list)
    print("cold (one fresh process per case, best of the processes):")
    for label, value, target in ratios:
        verdict = "" if target is None else f"   target >= {target:g}: {'met' if value >= target else 'NOT met'}"
        print(f"{label:<62} {value:6.2f}{verdict}")
    designs = design_times()
    for name, d in designs.items():
        print(f"design {name:<48} {1e3 * d['seconds']:7.1f} ms   kernel {d['kernel_s']:6.1f} s"
              f"{'   two rates' if d['two_rates'] else ''}")
    designing, applying = design_reuse(n_channels, minutes_list[0])
    print(f"a second gs.apply (another recording, same curve): {applying:.2f} s, of which "
          f"designing {1e3 * designing:.3f} ms ({100 * designing / applying:.3f} %; target < 1 %)")
    return _write_report(args.out, n_channels, minutes_list, {
        "warm": warm, "results": results, "ratios": [list(r) for r in ratios],
        "designs": designs, "design_reuse": {"designing_s": designing, "second_apply_s": applying},
    })


def _warm_table(n_channels, minutes_list, args) -> dict:
    """Run the warm cases (one process per recording, and one for the Epochs) and print them."""
    seconds = {}
    for minutes in minutes_list + ([] if args.quick else [0]):
        cmd = [sys.executable, __file__, "--warm-worker", str(minutes), "--repeat", str(args.repeat)]
        cmd += ["--quick"] if args.quick else []
        done = subprocess.run(cmd, capture_output=True, text=True, check=True)
        seconds.update(json.loads(done.stdout.strip().splitlines()[-1]))
    print("warm (one process per recording: a warm-up call each side, then the best of "
          f"{args.repeat}, gainshape designing each time):")
    for name, value in seconds.items():
        print(f"  {name:<46} {value:7.3f} s")
    ratios = _ratios(seconds, minutes_list)
    for label, value, target in ratios:
        print(f"  {label:<60} {value:6.2f}")
    return {"seconds": seconds, "ratios": [list(r) for r in ratios]}


def _write_report(out, n_channels, minutes_list, parts) -> int:
    from gainshape._files import atomic_output

    report = {
        "machine": {"python": platform.python_version(), "platform": platform.platform(),
                    "cpus": os.cpu_count()},
        "workload": {"channels": n_channels, "minutes": minutes_list, "sfreq": SFREQ,
                     "epochs": [EPOCHS, EPOCH_SECONDS]},
        **parts,
    }
    with atomic_output(Path(out)) as staged:
        staged.write_text(json.dumps(report, indent=2))
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
