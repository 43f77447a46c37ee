"""The README's code runs as written, in order, on simulated data.

Every ```python block of README.md runs in one namespace, from the first
(which imports gainshape as gs) to the last, in a temporary folder. The
only names given beforehand are the ones a reader brings: ``raw`` (the
simulated workshop recording) and ``epochs`` (its tone epochs); the study
block's BIDS root is written at the path the README names, with mne-bids.
"""

import re
import warnings
from pathlib import Path

import matplotlib
import mne
import pytest

from gainshape.simulate import simulate_workshop_recording

README = Path(__file__).parent.parent / "README.md"


def _python_blocks() -> list[str]:
    return re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)


def test_the_first_block_imports_gainshape_before_any_use():
    blocks = _python_blocks()
    assert blocks and blocks[0].startswith("import gainshape as gs\n")
    assert all("import gainshape as gs" not in b for b in blocks[1:])


def test_the_readme_blocks_run_in_order(tmp_path, monkeypatch):
    mne_bids = pytest.importorskip("mne_bids")
    pytest.importorskip("distributed")
    monkeypatch.chdir(tmp_path)
    raw = simulate_workshop_recording(seconds=60.0)
    events = mne.find_events(raw, verbose=False)
    epochs = mne.Epochs(raw, events, tmin=-0.2, tmax=0.8, baseline=None, preload=True,
                        verbose=False)
    root = tmp_path / "path" / "to" / "bids_root"  # the path the study block names
    path = mne_bids.BIDSPath(subject="01", task="tones", datatype="eeg", root=root)
    mne_bids.write_raw_bids(raw.copy().pick(["eeg", "stim"]), path, events=events,
                            event_id={"tone": 1}, format="BrainVision", allow_preload=True,
                            verbose=False)
    namespace = {"raw": raw, "epochs": epochs}
    matplotlib.use("Agg")
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # a 60 s recording is short for a 0.1 Hz edge: said, not wrong
        for number, block in enumerate(_python_blocks(), 1):
            try:
                exec(compile(block, f"README.md python block {number}", "exec"), namespace)
            except Exception as err:  # the block and the error, for whoever reads the failure
                raise AssertionError(f"README python block {number} failed:\n{block}") from err
    assert (tmp_path / "sub-01_filtered.vhdr").exists()
    assert list(namespace["table"]["status"]) == ["filtered"]
    assert namespace["editor"].design.sfreq == raw.info["sfreq"]
