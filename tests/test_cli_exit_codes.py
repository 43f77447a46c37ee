"""Exit codes of the real ``gainshape`` console script, one process per case.

The codes are the command's own contract (cli.py): 0 done, 1 some failed,
2 bad usage or input (nothing done), 130 interrupted. 130 = 128 + SIGINT (2)
is the shell's convention for a command ended by Ctrl-C (POSIX shell
specification, "Exit Status for Commands"; common practice (no source) for
programs that catch the interrupt themselves).
"""

import json
import os
import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

import gainshape as gs

pytest.importorskip("distributed")
SCRIPT = Path(sys.executable).parent / ("gainshape.exe" if os.name == "nt" else "gainshape")
pytestmark = pytest.mark.skipif(not SCRIPT.exists(), reason="the console script is not installed")


def _run(*args, env=None, cwd=None):
    return subprocess.run([str(SCRIPT), *map(str, args)], capture_output=True, text=True,
                          env=env, cwd=cwd, timeout=300)


def test_a_missing_input_exits_2_before_any_folder_or_cluster(two_recordings, tmp_path):
    recipe, paths = two_recordings
    done = _run("run", recipe, paths[0], tmp_path / "nonexist_dir", "--out", tmp_path / "o2")
    assert done.returncode == 2
    assert not (tmp_path / "o2").exists()
    lines = done.stderr.strip().splitlines()
    assert len(lines) == 1 and "nonexist_dir" in lines[0] and "Traceback" not in done.stderr


def test_a_damaged_recipe_exits_2(two_recordings, tmp_path):
    _, paths = two_recordings
    bad = tmp_path / "bad.json"
    bad.write_text("{not json")
    done = _run("run", bad, paths[0], "--out", tmp_path / "o")
    assert done.returncode == 2 and not (tmp_path / "o").exists()


def test_a_missing_extra_is_named_with_its_install_command_and_exits_2(two_recordings, tmp_path):
    recipe, paths = two_recordings
    hidden = tmp_path / "hide"
    (hidden / "distributed").mkdir(parents=True)  # an installed-looking package that cannot import
    (hidden / "distributed" / "__init__.py").write_text(
        "raise ModuleNotFoundError(\"No module named 'distributed'\")\n")
    env = dict(os.environ, PYTHONPATH=str(hidden))
    done = _run("run", recipe, *paths, "--out", tmp_path / "o", env=env)
    assert done.returncode == 2, done.stderr
    assert 'pip install "gainshape[dask]"' in done.stderr and "Traceback" not in done.stderr
    assert not (tmp_path / "o").exists()


def test_history_of_a_file_it_cannot_read_exits_2_with_one_line(tmp_path):
    text = tmp_path / "notes.txt"
    text.write_text("not a recording")
    for target in (text, tmp_path / "absent_raw.fif"):
        done = _run("history", target)
        assert done.returncode == 2
        assert len(done.stderr.strip().splitlines()) == 1, done.stderr
        assert "cannot read" in done.stderr and "naming convention" not in done.stderr


def test_done_exits_0_and_a_failed_recording_exits_1_with_empty_error_cells(two_recordings, tmp_path):
    recipe, paths = two_recordings
    done = _run("run", recipe, *paths, "--out", tmp_path / "o", "--workers", "1", "--quiet")
    assert done.returncode == 0, done.stderr
    table = done.stdout.split("\nWarnings for")[0]
    assert "filtered" in table and "None" not in table and "NaN" not in table
    broken = tmp_path / "broken_raw.fif"
    broken.write_bytes(b"x" * 100)
    done = _run("run", recipe, paths[0], broken, "--out", tmp_path / "o", "--workers", "1",
                "--quiet")
    assert done.returncode == 1 and "broken_raw.fif" in done.stdout


def test_a_second_run_on_the_same_folder_exits_2_and_writes_nothing(two_recordings, tmp_path):
    recipe, paths = two_recordings
    out = tmp_path / "o"
    out.mkdir()
    import socket

    (out / ".gainshape-run.lock").write_text(json.dumps(
        {"pid": os.getpid(), "host": socket.gethostname(), "since": "now"}))  # this live process
    done = _run("run", recipe, *paths, "--out", out, "--workers", "1", "--quiet")
    assert done.returncode == 2 and "Another gainshape run" in done.stderr
    assert sorted(p.name for p in out.iterdir()) == [".gainshape-run.lock"]


@pytest.mark.skipif(os.name == "nt", reason="SIGINT to a child process is POSIX")
def test_ctrl_c_exits_130_with_one_line_and_nothing_half_written(tmp_path, make_raw):
    first = tmp_path / "long0_raw.fif"
    make_raw(seconds=200.0, seed=0).save(first)
    paths = [first] + [tmp_path / f"long{i}_raw.fif" for i in range(1, 30)]
    for path in paths[1:]:
        path.write_bytes(first.read_bytes())
    recipe = gs.write_recipe(tmp_path / "f.json", gs.bandpass(0.1, 40.0), picks="eeg")
    out = tmp_path / "o"
    process = subprocess.Popen([str(SCRIPT), "run", str(recipe), *map(str, paths), "--out",
                                str(out), "--workers", "1"], stdout=subprocess.PIPE,
                               stderr=subprocess.PIPE, text=True)
    deadline = time.monotonic() + 120
    while not list(out.glob("*_filtered_raw.fif")) and time.monotonic() < deadline:
        time.sleep(0.02)  # interrupted once the first recording is written
    process.send_signal(signal.SIGINT)
    stdout, stderr = process.communicate(timeout=120)
    assert process.returncode == 130, (stdout, stderr)
    last = [line for line in stderr.strip().splitlines() if line.strip()][-1]
    assert "interrupted:" in last and "nothing half-written" in last
    assert "Traceback" not in stderr
    for written in out.rglob("*_filtered_raw.fif"):  # whatever reached a final name is whole
        import mne

        assert mne.io.read_raw_fif(written, verbose=False).n_times == 200 * 250
