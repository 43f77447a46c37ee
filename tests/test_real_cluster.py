"""A study on a real Dask cluster: the scheduler and two workers started with
Dask's own ``dask scheduler`` and ``dask worker`` commands as separate
processes, bound to 127.0.0.1, each worker in its own working directory (as
separate nodes would be). Reference: gs.apply on each recording, to 1e-12.
"""

import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import mne
import numpy as np
import pytest

import gainshape as gs

distributed = pytest.importorskip("distributed")
mne_bids = pytest.importorskip("mne_bids")
psutil = pytest.importorskip("psutil")
DASK = Path(sys.executable).parent / "dask"
pytestmark = pytest.mark.skipif(not DASK.exists(), reason="the dask command is not installed")


@pytest.fixture
def cluster(tmp_path, free_port):
    """(address, worker processes); every process is stopped and checked gone at the end."""
    port = free_port()
    address = f"tcp://127.0.0.1:{port}"
    started = [subprocess.Popen([str(DASK), "scheduler", "--host", "127.0.0.1", "--port",
                                 str(port), "--no-dashboard"], cwd=tmp_path,
                                stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)]
    workers = []
    for i in range(2):
        node = tmp_path / f"node{i}"
        node.mkdir()
        workers.append(subprocess.Popen(
            [str(DASK), "worker", address, "--host", "127.0.0.1", "--nthreads", "1",
             "--no-nanny", "--no-dashboard", "--local-directory", str(node)], cwd=node,
            stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL))
    started += workers
    try:
        with distributed.Client(address, timeout=60) as client:
            client.wait_for_workers(2, timeout=60)
        yield address, workers
    finally:
        for process in started:
            if process.poll() is None:
                process.send_signal(signal.SIGTERM)
        for process in started:
            try:
                process.wait(timeout=30)
            except subprocess.TimeoutExpired:
                process.kill()
                process.wait()
        alive = [p.pid for p in started if psutil.pid_exists(p.pid)
                 and psutil.Process(p.pid).status() != psutil.STATUS_ZOMBIE]
        assert alive == [], f"processes left running: {alive}"


@pytest.fixture
def bids_study(tmp_path, make_raw):
    root = tmp_path / "bids"
    for seed, subject in enumerate(["01", "02", "03", "04"]):
        raw = make_raw(sfreq=250.0, seconds=60.0, seed=seed).pick("eeg")
        path = mne_bids.BIDSPath(subject=subject, task="rest", datatype="eeg", root=root)
        mne_bids.write_raw_bids(raw, path, format="BrainVision", allow_preload=True,
                                verbose=False)
    recipe = gs.write_recipe(tmp_path / "filter.json", gs.bandpass(0.5, 40.0), picks="eeg")
    return recipe, root


def _equal_apply(table, recipe):
    for source, output in zip(table["source"], table["output"]):
        expected = gs.apply(mne.io.read_raw(source, preload=True, verbose=False),
                            **gs.read_recipe(recipe))
        got = mne.io.read_raw_fif(output, verbose=False).get_data()
        np.testing.assert_allclose(got, expected.get_data(), rtol=0, atol=1e-12)


@pytest.mark.skipif(os.name == "nt", reason="POSIX signals")
def test_a_study_on_a_separate_scheduler_and_workers(cluster, bids_study, tmp_path):
    address, workers = cluster
    recipe, root = bids_study
    script = Path(sys.executable).parent / "gainshape"
    out = tmp_path / "by_command"
    done = subprocess.run([str(script), "run", str(recipe), str(root), "--out", str(out),
                           "--scheduler", address, "--quiet"], capture_output=True, text=True,
                          timeout=600)
    assert done.returncode == 0, done.stderr
    assert done.stdout.count("filtered") == 4

    table = gs.run_study(recipe, root, tmp_path / "by_call", client=address, verbose=False)
    assert list(table["status"]) == ["filtered"] * 4
    _equal_apply(table, recipe)
    again = gs.run_study(recipe, root, tmp_path / "by_call", client=address, overwrite=False,
                         verbose=False)
    assert list(again["status"]) == ["up to date"] * 4

    # a worker killed mid-run: the study goes on on the other one
    out = tmp_path / "with_a_death"
    running = subprocess.Popen([str(script), "run", str(recipe), str(root), "--out", str(out),
                                "--scheduler", address, "--quiet"], stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 120
    while not list(out.rglob("*_desc-filtered_eeg.fif")) and time.monotonic() < deadline:
        time.sleep(0.02)
    workers[0].kill()
    stdout, stderr = running.communicate(timeout=600)
    assert running.returncode in (0, 1), stderr
    table = gs.run_study(recipe, root, out, client=address, verbose=False)  # completes the rest
    assert set(table["status"]) <= {"up to date", "filtered"}
    _equal_apply(table, recipe)
