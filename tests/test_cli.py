"""The command line: run a recipe over files, describe a recipe, print a file's history."""

import subprocess
import sys

import mne
import pytest

import gainshape as gs
from gainshape.cli import main

pytest.importorskip("distributed")


def test_run_filters_every_file_and_exits_0(two_recordings, tmp_path, capsys):
    recipe, paths = two_recordings
    code = main(["run", str(recipe), *map(str, paths), "--out", str(tmp_path / "out"),
                 "--workers", "1", "--quiet"])
    assert code == 0
    printed = capsys.readouterr().out
    assert printed.count("filtered") >= 2
    # 20 s recordings: the band change warns on the workers that the slow band is not resolved
    assert "Warnings for rec1_raw.fif:" in printed and "too short to resolve" in printed
    for path in paths:  # reference: gs.apply on the recording, read whole
        expected = gs.apply(mne.io.read_raw_fif(path, preload=True), **gs.read_recipe(recipe))
        out = mne.io.read_raw_fif(tmp_path / "out" / path.name.replace("_raw", "_filtered_raw"))
        assert abs(out.get_data() - expected.get_data()).max() < 1e-12


def test_run_exits_1_when_a_recording_fails(two_recordings, tmp_path):
    recipe, paths = two_recordings
    broken = tmp_path / "broken_raw.fif"
    broken.write_bytes(b"x" * 100)
    assert main(["run", str(recipe), str(paths[0]), str(broken), "--out", str(tmp_path / "o"),
                 "--workers", "1", "--quiet"]) == 1


def test_describe_prints_the_realized_characteristics(two_recordings, capsys):
    recipe, _ = two_recordings
    assert main(["describe", str(recipe), "--sfreq", "250"]) == 0
    printed = capsys.readouterr().out
    realized = gs.design(gs.lowpass(30.0), 250.0).summary()
    for label, value in realized:
        assert f"{label}: {value}" in printed


def test_history_prints_steps_and_the_methods_paragraph(two_recordings, tmp_path, capsys):
    _, paths = two_recordings
    filtered = gs.apply(mne.io.read_raw_fif(paths[0], preload=True), gs.lowpass(30.0))
    filtered.save(tmp_path / "f_raw.fif")
    assert main(["history", str(tmp_path / "f_raw.fif")]) == 0
    printed = capsys.readouterr().out
    assert gs.methods_text(filtered) in printed and "1 step" in printed


def test_bad_usage_exits_2_and_help_is_complete():
    result = subprocess.run([sys.executable, "-m", "gainshape.cli", "--help"], capture_output=True,
                            text=True)
    assert result.returncode == 0
    for command in ("run", "describe", "history"):
        assert command in result.stdout
    run_help = subprocess.run([sys.executable, "-m", "gainshape.cli", "run", "--help"],
                              capture_output=True, text=True).stdout
    for option in ("--out", "--scheduler", "--workers", "--subject", "--session", "--task",
                   "--overwrite", "--quiet"):
        assert option in run_help
    assert subprocess.run([sys.executable, "-m", "gainshape.cli", "describe"],
                          capture_output=True).returncode == 2
