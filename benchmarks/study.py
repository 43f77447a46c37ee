"""A whole study: ``gs.run_study`` on its embedded cluster vs a plain loop over ``gs.apply``.

Workload: 16 simulated recordings (32 EEG channels, 10 minutes, 500 Hz, FIF
files in single precision, as MNE writes them by default) and the recipe
``bandpass(0.1, 40)`` on the EEG channels. Three ways to filter them all:

- the plain loop a user would write: read each recording, ``gs.apply``,
  ``save``;
- the same loop split over one forked process per core: what the cores
  give with no scheduler and no summary or report, the ceiling for the study;
- the same loop that also computes ``gs.band_change`` (the study does), alone
  and split over one process per core: the ceiling for the study with its
  band change and report (``gs.run_study`` should reach 0.9 of it);
- ``gs.run_study`` with no client: a local cluster of one single-threaded
  worker process per core, started and closed by the call, writing the
  derivatives, the study summary, the methods paragraph and the report.

Then the memory of one worker filtering a 10-minute and a 60-minute
recording (each on a fresh one-worker cluster: the process's peak resident
set size), and the scheduler's cost per recording (a no-op task per
recording, and the study's wall time minus its tasks' time shared over the
workers).

Each way is timed after one warm-up run in the same process (imports, first
designs, the report's first use), as the best of ``--repeat`` runs; the
study's times include starting and closing its cluster.

First, the command line on a 4-recording study: the run that does the
work, then re-runs with nothing to do (a fresh process each, interpreter
start included: they are answered from file stamps, with no cluster).

    python benchmarks/study.py [--recordings 16] [--minutes 10] [--repeat 2] [--folder DIR]
    python benchmarks/study.py --up-to-date-only --minutes 1
"""

from __future__ import annotations

import argparse
import os
import tempfile
import time
from pathlib import Path

import numpy as np

CHANNELS, SFREQ = 32, 500.0


def write_recording(path: Path, minutes: float, seed: int) -> Path:
    """White noise plus a slow drift and a 10 Hz rhythm (volts), saved as FIF."""
    import mne

    if path.exists():
        return path
    rng = np.random.default_rng(seed)
    n = int(minutes * 60 * SFREQ)
    t = np.arange(n) / SFREQ
    data = 1e-5 * rng.standard_normal((CHANNELS, n))
    data += 2e-5 * np.sin(2 * np.pi * 0.03 * t + rng.uniform(0, 2 * np.pi, (CHANNELS, 1)))
    data += 5e-6 * np.sin(2 * np.pi * 10.0 * t)
    info = mne.create_info([f"EEG{i:02d}" for i in range(CHANNELS)], SFREQ, "eeg")
    path.parent.mkdir(parents=True, exist_ok=True)
    mne.io.RawArray(data, info, verbose=False).save(path, verbose=False)
    return path


def plain_loop(paths, recipe: dict, out: Path, with_band_change: bool) -> float:
    import mne

    import gainshape as gs

    out.mkdir(parents=True, exist_ok=True)
    start = time.perf_counter()
    for path in paths:
        raw = mne.io.read_raw_fif(path, preload=True, verbose=False)
        filtered = gs.apply(raw, **recipe)
        filtered.save(out / path.name, overwrite=True, verbose=False)
        if with_band_change:
            gs.band_change(raw, filtered)
    return time.perf_counter() - start


def split_loop(paths, recipe: dict, out: Path, with_band_change: bool, warm: bool = True) -> float:
    """The plain loop split over one forked process per core (every other
    recording each): what the cores give with no scheduler, no report and no
    summary, the ceiling a study's speed-up is measured against. ``warm``: the
    pool's processes run a recording each before the timed run, as a kept
    cluster's workers have; else the pool is started inside the timed run, as
    ``run_study`` starts its own cluster."""
    import multiprocessing

    workers = os.cpu_count() or 1
    shares = [(paths[i::workers], recipe, out, with_band_change) for i in range(workers)]
    start = time.perf_counter()
    with multiprocessing.get_context("fork").Pool(workers) as pool:
        if warm:  # imports, first designs, first use of the memory
            pool.starmap(plain_loop, [(ps[:1], *rest) for ps, *rest in shares])
            start = time.perf_counter()
        pool.starmap(plain_loop, shares)
        return time.perf_counter() - start


def study(paths, recipe_file: Path, out: Path, client=None, **options):
    import gainshape as gs

    start = time.perf_counter()
    table = gs.run_study(recipe_file, paths, out, client, overwrite=True, verbose=False, **options)
    return time.perf_counter() - start, table


def worker_peak_mb(path: Path, recipe_file: Path, out: Path, in_memory_mb: float) -> float:
    """One fresh single-threaded worker process filters one recording.

    The worker is spawned, not forked: a forked worker's resident memory
    would count this process's pages it shares (the 60-minute recording was
    just simulated here), not what filtering needs.
    """
    import dask
    import distributed

    with dask.config.set({"distributed.worker.multiprocessing-method": "spawn"}), \
            distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                  dashboard_address=":0") as cluster, \
            distributed.Client(cluster) as client:
        _, table = study([path], recipe_file, out, client, in_memory_mb=in_memory_mb)
    assert (table["status"] == "filtered").all(), table["error"].tolist()
    return float(table["worker_peak_mb"].iloc[0])


def noop_round_trip(count: int) -> float:
    """Seconds per task for a task that does nothing, on a two-process cluster."""
    import distributed

    with distributed.LocalCluster(n_workers=os.cpu_count(), threads_per_worker=1,
                                  processes=True, dashboard_address=":0") as cluster, \
            distributed.Client(cluster) as client:
        client.gather(client.map(_nothing, range(count)))  # warm
        start = time.perf_counter()
        client.gather(client.map(_nothing, range(count, 2 * count)))
        return (time.perf_counter() - start) / count


def _nothing(i):
    return i


def up_to_date_rerun(folder: Path, minutes: float, repeat: int) -> tuple:
    """Seconds of ``gainshape run`` (the console script, a fresh process each
    time, interpreter start included) on a 4-recording study: the run that
    does the work, then re-runs with nothing to do (all of them)."""
    import shutil
    import subprocess
    import sys

    import gainshape as gs

    script = Path(sys.executable).parent / "gainshape"
    recipe = gs.write_recipe(folder / "rerun_recipe.json", gs.bandpass(0.1, 40.0), picks="eeg")
    paths = [write_recording(folder / "in4" / f"rec{i}_raw.fif", minutes, i) for i in range(4)]
    out = folder / "rerun_out"
    shutil.rmtree(out, ignore_errors=True)
    command = [str(script), "run", str(recipe), *map(str, paths), "--out", str(out), "--quiet"]
    start = time.perf_counter()
    subprocess.run(command, check=True, capture_output=True)
    work = time.perf_counter() - start
    reruns = []
    for _ in range(repeat):
        start = time.perf_counter()
        done = subprocess.run(command, check=True, capture_output=True, text=True)
        reruns.append(time.perf_counter() - start)
        assert done.stdout.count("up to date") == 4, done.stdout
    return work, reruns


def main() -> None:
    import gainshape as gs
    from gainshape.studies.workers import connected  # the cluster run_study starts

    parser = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    parser.add_argument("--recordings", type=int, default=16)
    parser.add_argument("--minutes", type=float, default=10.0)
    parser.add_argument("--repeat", type=int, default=2, help="best of this many runs")
    parser.add_argument("--folder", type=Path,
                        default=Path(tempfile.gettempdir()) / "gainshape_study_bench")
    parser.add_argument("--up-to-date-only", action="store_true",
                        help="only the 4-recording re-run with nothing to do")
    parser.add_argument("--no-memory", action="store_true",
                        help="skip the worker memory measurements")
    args = parser.parse_args()
    folder = args.folder
    folder.mkdir(parents=True, exist_ok=True)
    work, reruns = up_to_date_rerun(folder, args.minutes, max(args.repeat, 5))
    print(f"gainshape run, 4 recordings of {args.minutes:g} min (cold: a fresh process each): "
          f"{work:.2f} s doing the work; re-runs with nothing to do: "
          + ", ".join(f"{r:.3f}" for r in reruns) + " s")
    if args.up_to_date_only:
        return
    recipe_file = gs.write_recipe(folder / "recipe.json", gs.bandpass(0.1, 40.0), picks="eeg")
    recipe = gs.read_recipe(recipe_file)
    paths = [write_recording(folder / "in" / f"rec{i:02d}_raw.fif", args.minutes, i)
             for i in range(args.recordings)]
    size_mb = CHANNELS * args.minutes * 60 * SFREQ * 8 / 2**20
    print(f"{len(paths)} recordings, {CHANNELS} channels x {args.minutes:g} min at {SFREQ:g} Hz "
          f"({size_mb:.0f} MB each in float64), {os.cpu_count()} cores")

    # warm-up (imports, first designs, the report's first use), then the best of --repeat
    plain_loop(paths[:1], recipe, folder / "warm", with_band_change=True)
    study(paths[:2], recipe_file, folder / "warm")
    loop = min(plain_loop(paths, recipe, folder / "loop", with_band_change=False)
               for _ in range(args.repeat))
    split = min(split_loop(paths, recipe, folder / "split", with_band_change=False)
                for _ in range(args.repeat))
    bare = min(study(paths, recipe_file, folder / "study_bare", band_change=False)[0]
               for _ in range(args.repeat))
    loop_bc = min(plain_loop(paths, recipe, folder / "loop_bc", with_band_change=True)
                  for _ in range(args.repeat))
    split_bc = min(split_loop(paths, recipe, folder / "split_bc", with_band_change=True)
                   for _ in range(args.repeat))
    fresh_bc = min(split_loop(paths, recipe, folder / "fresh_bc", with_band_change=True,
                              warm=False) for _ in range(args.repeat))
    wall, table = min((study(paths, recipe_file, folder / "study") for _ in range(args.repeat)),
                      key=lambda run: run[0])
    with connected(None, os.cpu_count()) as client:  # a cluster kept between calls, as in a notebook
        study(paths[:2], recipe_file, folder / "kept_warm", client)
        kept = min(study(paths, recipe_file, folder / "kept", client)[0]
                   for _ in range(args.repeat))
    assert (table["status"] == "filtered").all(), table["error"].tolist()
    tasks = table["seconds"].sum()
    workers = os.cpu_count()
    print(f"plain loop, read + gs.apply + save:                 {loop:6.1f} s")
    print(f"the same loop split over {workers} processes (ceiling):   {split:6.1f} s  "
          f"speed-up {loop / split:.2f}x")
    print(f"gs.run_study(band_change=False), {workers} workers:            {bare:6.1f} s  "
          f"speed-up {loop / bare:.2f}x")
    print(f"plain loop, read + gs.apply + save + band_change:   {loop_bc:6.1f} s")
    print(f"  split over {workers} processes started for the run:         {fresh_bc:6.1f} s  "
          f"speed-up {loop_bc / fresh_bc:.2f}x (ceiling of a study on its own cluster)")
    print(f"  split over {workers} warm processes (kept pool):            {split_bc:6.1f} s  "
          f"speed-up {loop_bc / split_bc:.2f}x (ceiling of a study on a kept cluster)")
    print(f"gs.run_study (band change, summary, report), own cluster:   {wall:6.1f} s  "
          f"speed-up {loop_bc / wall:.2f}x, {fresh_bc / wall:.2f} of its ceiling")
    print(f"gs.run_study (band change, summary, report), kept cluster:  {kept:6.1f} s  "
          f"speed-up {loop_bc / kept:.2f}x, {split_bc / kept:.2f} of its ceiling")
    beyond = wall - tasks / workers
    print(f"study time beyond its tasks' share (cluster start, gathering, summary, report): "
          f"{beyond:.1f} s, {beyond / len(paths):.2f} s per recording")
    print(f"a no-op task's round trip: {1e3 * noop_round_trip(len(paths)):.1f} ms per recording")

    for minutes, limit in () if args.no_memory else ((10.0, 64.0), (60.0, 64.0), (10.0, 1024.0),
                                                     (60.0, 1024.0)):
        path = write_recording(folder / "long" / f"rec_{int(minutes)}min_raw.fif", minutes, 99)
        peak = worker_peak_mb(path, recipe_file, folder / "long_out", limit)
        data_mb = CHANNELS * minutes * 60 * SFREQ * 8 / 2**20
        how = "in memory" if data_mb <= limit else "out of core"
        print(f"one worker, {minutes:3.0f}-minute recording ({data_mb:4.0f} MB in float64), "
              f"in_memory_mb={limit:g} ({how}): peak resident memory {peak:5.0f} MB")


if __name__ == "__main__":
    main()
