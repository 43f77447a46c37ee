"""Faults in a study: nothing lost, nothing silently replaced.

Each row starts from a completed study (a BIDS root of three BrainVision
recordings written by mne-bids, and its derivatives), applies one fault, and
runs the study again. Afterwards the faulted recording's previous output and
sidecar are byte-identical (SHA-256), the inputs are unchanged except where
the row changes them on purpose, no staging folder is left, and the fault
is named in the table (or, for the study's own files, in
``table.attrs["problems"]``). The rules are the project's (nothing lost,
files whole or not at all): common practice (no source). ENOSPC is the
POSIX error number for "no space left on device" (errno module).
"""

import errno
import hashlib
import json
import os
import shutil
import socket
from pathlib import Path

import mne
import numpy as np
import pytest

import gainshape as gs
from gainshape.studies import task as task_module, workers as workers_module

distributed = pytest.importorskip("distributed")
mne_bids = pytest.importorskip("mne_bids")
VICTIM = "sub-02"


@pytest.fixture(scope="module")
def client():
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=1,
                            dashboard_address=None) as c:
        yield c


@pytest.fixture(scope="module")
def template(tmp_path_factory, make_raw):
    """A BIDS root of three recordings with events, a recipe, and a completed run."""
    base = tmp_path_factory.mktemp("template")
    root = base / "bids"
    for number in ("01", "02", "03"):
        raw = make_raw(sfreq=250.0, seconds=30.0, seed=int(number))
        events = mne.find_events(raw, stim_channel="Trigger", verbose=False)
        raw.pick("eeg")
        path = mne_bids.BIDSPath(subject=number, task="tones", datatype="eeg", root=root)
        mne_bids.write_raw_bids(raw, path, events=events, event_id={"tone": 1},
                                format="BrainVision", allow_preload=True, verbose=False)
    recipe = gs.write_recipe(base / "filter.json", gs.bandpass(0.5, 40.0), picks="eeg")
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=1,
                            dashboard_address=None) as c:
        table = gs.run_study(recipe, root, base / "out", client=c, verbose=False)
    assert list(table.status) == ["filtered"] * 3
    return base


@pytest.fixture
def study(template, tmp_path):
    """A fresh copy of the completed study (mtimes kept)."""
    for name in ("bids", "out", "filter.json"):
        copy = shutil.copytree if (template / name).is_dir() else shutil.copy2
        copy(template / name, tmp_path / name)
    return tmp_path / "filter.json", tmp_path / "bids", tmp_path / "out"


def _sums(folder: Path) -> dict:
    return {str(p.relative_to(folder)): hashlib.sha256(p.read_bytes()).hexdigest()
            for p in sorted(folder.rglob("*")) if p.is_file()}


def _victim_files(sums: dict, extension: str = "") -> dict:
    return {k: v for k, v in sums.items() if VICTIM in k and k.endswith(extension)}


def _eeg(root: Path, ext: str) -> Path:
    return next(root.rglob(f"{VICTIM}_task-tones_eeg{ext}"))


# -- faults of the victim's input (no monkeypatching): the recording fails ----------------------
def _truncate(root):
    os.truncate(_eeg(root, ".eeg"), 1000)


def _cut_at_a_whole_sample(root):
    data = _eeg(root, ".eeg")
    os.truncate(data, (data.stat().st_size // 2) // (4 * 4) * (4 * 4))  # 4 channels, float32


def _missing_data_file(root):
    header = _eeg(root, ".vhdr")
    header.write_text(header.read_text().replace("DataFile=", "DataFile=gone_"))


def _zero_bytes(root):
    _eeg(root, ".vhdr").write_bytes(b"")


def _not_eeg(root):
    _eeg(root, ".vhdr").write_text("Shopping list\n- bread\n- milk\n")


INPUT_FAULTS = [
    ("truncated BrainVision data file", _truncate, "truncated or damaged input"),
    ("data cut at a whole sample, markers past the end", _cut_at_a_whole_sample,
     "marker file states events up to sample"),
    ("header pointing to a missing data file", _missing_data_file, "gone_"),
    ("zero-byte header", _zero_bytes, "Error"),
    ("a header that is not EEG at all", _not_eeg, "Error"),
]


@pytest.mark.parametrize("name, fault, said", INPUT_FAULTS, ids=[r[0] for r in INPUT_FAULTS])
def test_a_damaged_input_fails_and_its_previous_output_is_kept(study, client, name, fault, said):
    recipe, root, out = study
    before = _sums(out)
    fault(root)
    inputs_after_fault = _sums(root)
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    row = table[table.subject == "02"].iloc[0]
    assert row.status == "failed" and said in row.error, row.error
    assert row.error.startswith("previous output kept, from ") and row.output.is_file()
    assert list(table.status[table.subject != "02"]) == ["up to date"] * 2
    after = _sums(out)
    assert _victim_files(after) == _victim_files(before)  # byte-identical
    assert _sums(root) == inputs_after_fault  # the inputs untouched by the run
    assert not list(out.rglob("*.partial"))


def test_the_issue_s_scenario_truncated_input_without_overwrite_keeps_the_good_derivative(
        study, client):
    # the scenario of the report: `truncate -s 1000` of one .eeg file, then a re-run
    recipe, root, out = study
    fif = next(out.rglob(f"{VICTIM}*_desc-filtered_eeg.fif"))
    good = hashlib.sha256(fif.read_bytes()).hexdigest(), fif.stat().st_size
    _truncate(root)
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert "truncated or damaged input" in table.error.iloc[1]
    assert (hashlib.sha256(fif.read_bytes()).hexdigest(), fif.stat().st_size) == good


def test_allow_short_filters_what_a_truncated_input_holds(study, client):
    recipe, root, out = study
    _cut_at_a_whole_sample(root)
    table = gs.run_study(recipe, root, out, client=client, allow_short=True, verbose=False)
    assert table.status.iloc[1] == "filtered"
    written = mne.io.read_raw_fif(table.output.iloc[1], verbose=False)
    assert written.n_times == 30 * 250 // 2


# -- faults while the victim is worked on (monkeypatched): the recording fails -----------------
def _only_victim(real, exception):
    def faulty(*args, **kwargs):
        if VICTIM in " ".join(str(a) for a in args) + str(getattr(args[0], "filenames", "")):
            raise exception
        return real(*args, **kwargs)
    return faulty


def _disk_full():
    return OSError(errno.ENOSPC, "No space left on device")


def _patch_read(mp):
    mp.setattr(mne.io, "read_raw", _only_victim(mne.io.read_raw, OSError("read error")))


def _patch_filter(mp):
    mp.setattr(task_module, "apply", _only_victim(task_module.apply, RuntimeError("filter")))


def _patch_fif_write(mp):
    real = mne.io.BaseRaw.save

    def save(self, fname, *args, **kwargs):
        if VICTIM in str(fname):
            raise _disk_full()
        return real(self, fname, *args, **kwargs)
    mp.setattr(mne.io.BaseRaw, "save", save)


def _patch_sidecar_write(mp):
    real = Path.write_text

    def write_text(self, *args, **kwargs):
        if VICTIM in self.name and self.suffix == ".json" and ".partial" in self.parent.name:
            raise _disk_full()
        return real(self, *args, **kwargs)
    mp.setattr(Path, "write_text", write_text)


def _patch_band_change(mp):
    mp.setattr(task_module, "band_change", _only_victim(task_module.band_change,
                                                         ValueError("band change")))


def _patch_methods(mp):
    real = task_module.methods_text

    def methods_text(inst, *args, **kwargs):
        if VICTIM in str(inst.filenames[0]) or ".partial" in str(inst.filenames[0]):
            raise ValueError("methods")
        return real(inst, *args, **kwargs)
    mp.setattr(task_module, "methods_text", methods_text)


WORK_FAULTS = [
    ("read fails", _patch_read, "read error"),
    ("filter fails", _patch_filter, "filter"),
    ("disk full writing the filtered file", _patch_fif_write, "No space left"),
    ("disk full writing the sidecar", _patch_sidecar_write, "No space left"),
    ("band change fails", _patch_band_change, "band change"),
    ("methods text fails", _patch_methods, "methods"),
]


@pytest.mark.parametrize("name, patch, said", WORK_FAULTS, ids=[r[0] for r in WORK_FAULTS])
def test_a_fault_while_filtering_keeps_the_previous_output(study, client, monkeypatch, name,
                                                           patch, said):
    recipe, root, out = study
    before, inputs = _sums(out), _sums(root)
    patch(monkeypatch)
    table = gs.run_study(recipe, root, out, client=client, overwrite=True, verbose=False)
    monkeypatch.undo()
    row = table[table.subject == "02"].iloc[0]
    assert row.status == "failed" and said in row.error, row.error
    assert row.error.startswith("previous output kept, from ") and row.output.is_file()
    assert _victim_files(_sums(out)) == _victim_files(before)
    assert _sums(root) == inputs
    assert not list(out.rglob("*.partial"))


# -- faults in the study's own files: recorded, never raised, previous file kept ---------------
def _patch_netcdf(mp):
    import xarray as xr

    def to_netcdf(self, *args, **kwargs):
        raise _disk_full()
    mp.setattr(xr.Dataset, "to_netcdf", to_netcdf)


def _patch_methods_file(mp):
    real = Path.write_text

    def write_text(self, *args, **kwargs):
        if self.name == "methods.txt":
            raise _disk_full()
        return real(self, *args, **kwargs)
    mp.setattr(Path, "write_text", write_text)


def _patch_report_figure(mp):
    import gainshape.showing.spectrum_plots as viz

    def broken(*args, **kwargs):  # the error a damaged recording once caused there
        raise ValueError("The truth value of an array with more than one element is ambiguous")
    mp.setattr(viz, "plot_study_band_change", broken)


def _patch_report_save(mp):
    def save(self, *args, **kwargs):
        raise _disk_full()
    mp.setattr(mne.Report, "save", save)


STUDY_FAULTS = [
    ("disk full writing band_change.nc", _patch_netcdf, "band_change.nc", "band-change"),
    ("disk full writing methods.txt", _patch_methods_file, "methods.txt", "methods"),
    ("report figure fails", _patch_report_figure, "report.html", "report"),
    ("disk full writing report.html", _patch_report_save, "report.html", "report"),
]


@pytest.mark.parametrize("name, patch, kept, said", STUDY_FAULTS, ids=[r[0] for r in STUDY_FAULTS])
def test_a_fault_in_the_study_s_files_is_recorded_not_raised(study, client, monkeypatch, name,
                                                             patch, kept, said):
    recipe, root, out = study
    before = _sums(out)
    patch(monkeypatch)
    with pytest.warns(gs.GainshapeWarning, match="could not be made"):
        table = gs.run_study(recipe, root, out, client=client, overwrite=True, verbose=False)
    monkeypatch.undo()
    assert list(table.status) == ["filtered"] * 3
    assert len(table.attrs["problems"]) == 1 and said in table.attrs["problems"][0]
    assert _sums(out)[kept] == before[kept]
    assert not list(out.rglob("*.partial"))


def test_raise_errors_raises_a_fault_in_the_study_s_files(study, client, monkeypatch):
    recipe, root, out = study
    _patch_report_figure(monkeypatch)
    with pytest.raises(ValueError, match="truth value"):
        gs.run_study(recipe, root, out, client=client, overwrite=True, raise_errors=True,
                     verbose=False)


def test_a_read_only_output_folder_fails_every_recording_and_keeps_every_file(study, client,
                                                                            monkeypatch):
    # as root, file modes do not stop writes: a staging folder that cannot be made is the fault
    import gainshape._files as files

    recipe, root, out = study
    before = _sums(out)

    def refused(*args, **kwargs):
        raise PermissionError(errno.EACCES, "Permission denied")
    monkeypatch.setattr(files.tempfile, "mkdtemp", refused)
    with pytest.warns(gs.GainshapeWarning):
        table = gs.run_study(recipe, root, out, client=client, overwrite=True, verbose=False)
    monkeypatch.undo()
    assert list(table.status) == ["failed"] * 3 and all("Permission denied" in e for e in table.error)
    assert len(table.attrs["problems"]) == 2  # methods.txt and report.html (no band change)
    state = ".gainshape-study.json"  # the run's bookkeeping, dropped after a failure
    assert {k: v for k, v in _sums(out).items() if k != state} == {
        k: v for k, v in before.items() if k != state}


# -- two runs, edited recipes, replaced inputs, lying clocks ---------------------------------
def test_a_second_run_on_the_same_folder_is_refused_before_any_work(study, client):
    recipe, root, out = study
    before = _sums(out)
    (out / ".gainshape-run.lock").write_text(json.dumps(
        {"pid": os.getpid(), "host": socket.gethostname(), "since": "now"}))
    with pytest.raises(FileExistsError, match="Another gainshape run"):
        gs.run_study(recipe, root, out, client=client, overwrite=True, verbose=False)
    assert {k: v for k, v in _sums(out).items() if "lock" not in k} == before


def test_a_lock_left_by_a_process_that_is_gone_is_taken_over(study, client):
    recipe, root, out = study
    (out / ".gainshape-run.lock").write_text(json.dumps(
        {"pid": 2**22 + 12345, "host": socket.gethostname(), "since": "yesterday"}))
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert list(table.status) == ["up to date"] * 3
    assert not (out / ".gainshape-run.lock").exists()


def test_an_edited_recipe_redoes_every_recording_with_the_new_recipe(study, client):
    recipe, root, out = study
    gs.write_recipe(recipe, gs.bandpass(1.0, 30.0), picks="eeg")
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert list(table.status) == ["filtered"] * 3
    for source, output in zip(table.source, table.output):  # reference: gs.apply on the input
        expected = gs.apply(mne.io.read_raw(source, preload=True, verbose=False),
                            **gs.read_recipe(recipe))
        got = mne.io.read_raw_fif(output, verbose=False).get_data(picks="eeg")
        np.testing.assert_allclose(got, expected.get_data(picks="eeg"), rtol=0, atol=1e-12)


def _replace_victim(root, make_raw, seed):
    """The victim's recording replaced by another one with the same names and sizes."""
    raw = make_raw(sfreq=250.0, seconds=30.0, seed=seed).pick("eeg")
    header = _eeg(root, ".vhdr")
    data = _eeg(root, ".eeg")
    stat = data.stat()
    scale = np.float32(1e6)  # BrainVision in µV, float32, multiplexed (pybv's layout)
    replacement = (raw.get_data().T * scale).astype("<f4").tobytes()
    assert len(replacement) == stat.st_size
    data.write_bytes(replacement)
    return header, data, stat


def test_an_input_replaced_by_another_recording_is_filtered_again(study, client, make_raw):
    recipe, root, out = study
    _replace_victim(root, make_raw, seed=99)
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert list(table.status) == ["up to date", "filtered", "up to date"]


def test_a_replacement_with_a_lying_clock_is_still_seen(study, client, make_raw):
    # clock skew: the new data file carries an mtime in the past, the same size
    recipe, root, out = study
    _, data, stat = _replace_victim(root, make_raw, seed=98)
    os.utime(data, ns=(stat.st_atime_ns, stat.st_mtime_ns - 86_400 * 10**9))
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert list(table.status) == ["up to date", "filtered", "up to date"]


def test_a_touched_input_with_the_same_content_is_up_to_date(study, client):
    recipe, root, out = study
    before = _sums(out)
    data = _eeg(root, ".eeg")
    os.utime(data, ns=(data.stat().st_atime_ns, data.stat().st_mtime_ns + 10**9))
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert list(table.status) == ["up to date"] * 3
    assert _victim_files(_sums(out)) == _victim_files(before)


def test_a_damaged_sidecar_is_not_trusted(study, client):
    recipe, root, out = study
    sidecar = next(out.rglob(f"{VICTIM}*_desc-filtered_eeg.json"))
    sidecar.write_text(sidecar.read_text()[:40])  # half a sidecar
    table = gs.run_study(recipe, root, out, client=client, verbose=False)
    assert list(table.status) == ["up to date", "filtered", "up to date"]
    assert json.loads(sidecar.read_text())["gainshape"]["recipe"]


# -- truncated FIF and EDF files in a list of files -----------------------------------------
def _fif(path, raw):
    raw.save(path, verbose=False)


def _edf(path, raw):
    pytest.importorskip("edfio")
    mne.export.export_raw(path, raw, fmt="edf", verbose=False)


@pytest.mark.parametrize("suffix, write", [("_raw.fif", _fif), (".edf", _edf)], ids=["FIF", "EDF"])
def test_a_truncated_file_in_a_list_fails_as_truncated(tmp_path, client, make_raw, suffix,
                                                       write):
    raw = make_raw(sfreq=250.0, seconds=30.0, seed=5).pick("eeg")
    good, cut = tmp_path / f"good{suffix}", tmp_path / f"cut{suffix}"
    write(good, raw)
    write(cut, raw)
    os.truncate(cut, cut.stat().st_size // 2)
    recipe = gs.write_recipe(tmp_path / "f.json", gs.lowpass(30.0), picks="eeg")
    table = gs.run_study(recipe, [good, cut], tmp_path / "out", client=client, verbose=False)
    assert list(table.status) == ["filtered", "failed"]
    assert "truncated or damaged input" in table.error.iloc[1], table.error.iloc[1]
    assert not (tmp_path / "out" / "cut_filtered_raw.fif").exists()


def test_a_worker_killed_while_writing_keeps_the_previous_output(study, monkeypatch):
    # the worker process dies (os._exit) after part of the victim's new file is staged
    import dask

    recipe, root, out = study
    before, inputs = _sums(out), _sums(root)
    real = workers_module.filter_recording

    def dies_while_writing(source, content, output, overwrite, limits):  # pickled by value
        if VICTIM in str(source):
            staging = output.parent / f".{output.name}.killed.partial"
            staging.mkdir()
            (staging / output.name).write_bytes(b"half a recording")
            os._exit(1)
        return real(source, content, output, overwrite, limits)

    monkeypatch.setattr(workers_module, "filter_recording", dies_while_writing)
    with dask.config.set({"distributed.scheduler.allowed-failures": 0}), \
            distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                     dashboard_address=":0") as cluster, \
            distributed.Client(cluster) as processes:
        table = gs.run_study(recipe, root, out, client=processes, overwrite=True, verbose=False)
    row = table[table.subject == "02"].iloc[0]
    assert row.status == "failed" and "KilledWorker" in row.error
    final = {k: v for k, v in _victim_files(_sums(out)).items() if ".partial" not in k}
    assert final == _victim_files(before)
    assert _sums(root) == inputs
    monkeypatch.undo()
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=1,
                            dashboard_address=None) as c:
        again = gs.run_study(recipe, root, out, client=c, verbose=False)
    assert list(again.status) == ["up to date"] * 3  # the kept output is still the right one
    assert not list(out.rglob("*.partial"))  # and the dead worker's staging folder is gone
