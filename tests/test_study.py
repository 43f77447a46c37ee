"""A whole study: every recording filtered file to file on Dask, resumable."""

import json
from pathlib import Path

import mne
import numpy as np
import pytest

import gainshape as gs

distributed = pytest.importorskip("distributed")


@pytest.fixture(scope="module")
def client():
    # one thread: each task's warnings are caught apart (the warnings filters are per process)
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=1,
                            dashboard_address=None) as c:
        yield c


@pytest.fixture
def study(tmp_path, make_raw):
    """Three recordings (one at another rate) and one corrupt file, and a recipe."""
    paths = []
    for i, sfreq in enumerate([250.0, 250.0, 500.0]):
        path = tmp_path / "in" / f"rec{i}_raw.fif"
        path.parent.mkdir(exist_ok=True)
        make_raw(sfreq=sfreq, seconds=30.0, seed=i).save(path)
        paths.append(path)
    corrupt = tmp_path / "in" / "broken_raw.fif"
    corrupt.write_bytes(b"not a recording" * 100)
    recipe = gs.write_recipe(tmp_path / "filter.json", gs.bandpass(0.5, 40.0), picks="eeg")
    return recipe, paths + [corrupt], tmp_path / "out"


def _filtered(path):
    return mne.io.read_raw_fif(path, preload=True).get_data()


def test_each_output_equals_apply_on_its_recording_and_the_corrupt_file_is_reported(study, client):
    recipe, inputs, out = study
    table = gs.run_study(recipe, inputs, out, client=client, verbose=False)
    assert list(table["status"]) == ["filtered", "filtered", "filtered", "failed"]
    assert "broken_raw.fif" in table["error"].iloc[3] and table["output"].iloc[3] is None
    assert list(table["error"].iloc[:3]) == ["", "", ""]  # no error: an empty string, not None/NaN
    for source, output in zip(inputs[:3], table["output"].iloc[:3]):
        # reference: gs.apply on the recording read whole, with the recipe's arguments
        expected = gs.apply(mne.io.read_raw_fif(source, preload=True), **gs.read_recipe(recipe))
        np.testing.assert_allclose(_filtered(output), expected.get_data(), rtol=0, atol=1e-12)
        assert len(gs.history(mne.io.read_raw_fif(output))) == 1
    assert (table["seconds"].iloc[:3] > 0).all()


def test_a_rerun_redoes_nothing_and_overwrite_redoes_everything(study, client):
    recipe, inputs, out = study
    first = gs.run_study(recipe, inputs[:2], out, client=client, verbose=False)
    stamps = [p.stat().st_mtime_ns for p in first["output"]]
    again = gs.run_study(recipe, inputs[:2], out, client=client, verbose=False)
    assert list(again["status"]) == ["up to date", "up to date"]
    assert [p.stat().st_mtime_ns for p in again["output"]] == stamps
    forced = gs.run_study(recipe, inputs[:2], out, client=client, overwrite=True, verbose=False)
    assert list(forced["status"]) == ["filtered", "filtered"]


def test_a_changed_recipe_or_input_is_redone(study, client, tmp_path, make_raw):
    recipe, inputs, out = study
    gs.run_study(recipe, inputs[:1], out, client=client, verbose=False)
    other = gs.write_recipe(tmp_path / "other.json", gs.lowpass(30.0), picks="eeg")
    assert list(gs.run_study(other, inputs[:1], out, client=client, verbose=False)["status"]) == [
        "filtered"]
    make_raw(seconds=30.0, seed=99).save(inputs[0], overwrite=True)
    assert list(gs.run_study(other, inputs[:1], out, client=client, verbose=False)["status"]) == [
        "filtered"]


def test_failures_raise_only_when_asked(study, client):
    recipe, inputs, out = study
    with pytest.raises(RuntimeError, match="1 of 1 recordings failed.*broken_raw.fif"):
        gs.run_study(recipe, inputs[3:], out, client=client, raise_errors=True, verbose=False)


def test_a_recording_that_fails_midway_leaves_nothing_and_a_rerun_completes_it(study, client,
                                                                              monkeypatch):
    from gainshape.studies import task as task_module

    recipe, inputs, out = study
    real_apply, calls = task_module.apply, []

    def failing_for_rec1(raw, **options):
        calls.append(raw.filenames[0])
        if "rec1" in str(raw.filenames[0]):
            raise RuntimeError("worker lost")
        return real_apply(raw, **options)

    monkeypatch.setattr(task_module, "apply", failing_for_rec1)
    table = gs.run_study(recipe, inputs[:3], out, client=client, verbose=False)
    assert list(table["status"]) == ["filtered", "failed", "filtered"]
    assert "worker lost" in table["error"].iloc[1]
    names = sorted(p.name for p in out.iterdir())
    assert names == sorted(["band_change.nc", "dataset_description.json", "methods.txt",
                            "methods_full.txt",
                            "report.html", "rec0_filtered_raw.fif", "rec0_filtered_raw.json",
                            "rec2_filtered_raw.fif", "rec2_filtered_raw.json"])  # no partial, no staging
    monkeypatch.undo()
    table = gs.run_study(recipe, inputs[:3], out, client=client, verbose=False)
    assert list(table["status"]) == ["up to date", "filtered", "up to date"]
    for source, output in zip(inputs[:3], table["output"]):
        expected = gs.apply(mne.io.read_raw_fif(source, preload=True), **gs.read_recipe(recipe))
        np.testing.assert_allclose(_filtered(output), expected.get_data(), rtol=0, atol=1e-12)


def test_the_embedded_cluster_runs_the_same_study(study):
    # no client: a local cluster of worker processes, started and closed by the call
    recipe, inputs, out = study
    table = gs.run_study(recipe, inputs[:2], out, verbose=False)
    assert list(table["status"]) == ["filtered", "filtered"]
    expected = gs.apply(mne.io.read_raw_fif(inputs[1], preload=True), **gs.read_recipe(recipe))
    np.testing.assert_allclose(_filtered(table["output"].iloc[1]), expected.get_data(), atol=1e-12)


@pytest.fixture(scope="module")
def bids_root(tmp_path_factory, make_raw):
    """Six recordings written with mne-bids (BrainVision): two subjects, two
    sessions, a second task in two of them, one at 500 Hz and one whose
    header is corrupt."""
    mne_bids = pytest.importorskip("mne_bids")
    root = tmp_path_factory.mktemp("bids")
    recordings = [("01", "a", "rest"), ("01", "a", "oddball"), ("01", "b", "rest"),
                  ("02", "a", "rest"), ("02", "b", "rest"), ("02", "b", "oddball")]
    for seed, (subject, session, task) in enumerate(recordings):
        sfreq = 500.0 if (subject, session) == ("02", "a") else 250.0
        raw = make_raw(sfreq=sfreq, seconds=20.0, seed=seed).pick("eeg")
        raw.info["line_freq"] = 50.0
        path = mne_bids.BIDSPath(subject=subject, session=session, task=task,
                                 datatype="eeg", root=root)
        mne_bids.write_raw_bids(raw, path, format="BrainVision", allow_preload=True,
                                verbose=False)
    _eeg_file(root, "01", "b", "rest", ".vhdr").write_text("not a BrainVision header\n")
    return root


def _eeg_file(root, subject, session, task, extension):
    name = f"sub-{subject}_ses-{session}_task-{task}_eeg{extension}"
    return root / f"sub-{subject}" / f"ses-{session}" / "eeg" / name


@pytest.fixture
def bids_recipe(tmp_path):
    return gs.write_recipe(tmp_path / "f.json", gs.highpass(0.5), picks="eeg")


def _outputs_equal_apply(table, recipe):
    """Reference: gs.apply on each recording read whole by MNE from its source."""
    for source, output in zip(table["source"], table["output"]):
        if output is not None:
            expected = gs.apply(mne.io.read_raw(source, preload=True), **gs.read_recipe(recipe))
            np.testing.assert_allclose(_filtered(output), expected.get_data(), rtol=0, atol=1e-12)


def test_a_bids_root_is_filtered_into_derivatives_and_the_corrupt_file_is_reported(
        bids_root, bids_recipe, client, tmp_path):
    out = tmp_path / "derivatives" / "gainshape"
    # a limit below every recording's size: each is filtered file to file, out of core
    table = gs.run_study(bids_recipe, bids_root, out, client=client, in_memory_mb=0.05,
                         verbose=False)
    assert list(zip(table["subject"], table["session"], table["task"])) == [
        ("01", "a", "oddball"), ("01", "a", "rest"), ("01", "b", "rest"),
        ("02", "a", "rest"), ("02", "b", "oddball"), ("02", "b", "rest")]
    assert list(table["status"]) == ["filtered"] * 2 + ["failed"] + ["filtered"] * 3
    assert "sub-01_ses-b_task-rest_eeg.vhdr" in table["error"].iloc[2]
    assert table["output"].iloc[3] == (out / "sub-02" / "ses-a" / "eeg"
                                       / "sub-02_ses-a_task-rest_desc-filtered_eeg.fif")
    assert mne.io.read_raw_fif(table["output"].iloc[3]).info["sfreq"] == 500.0
    _outputs_equal_apply(table, bids_recipe)
    description = json.loads((out / "dataset_description.json").read_text())
    assert description["DatasetType"] == "derivative"
    assert description["GeneratedBy"][0]["Name"] == "gainshape"
    sidecar = json.loads(table["output"].iloc[5].with_suffix(".json").read_text())
    assert sidecar["SoftwareFilters"] == gs.bids_filters(mne.io.read_raw_fif(table["output"].iloc[5]))
    _summary_labels_follow_their_recordings(table)
    again = gs.run_study(bids_recipe, bids_root, out, client=client, verbose=False)
    assert list(again["status"]) == ["up to date"] * 2 + ["failed"] + ["up to date"] * 3
    _summary_labels_follow_their_recordings(again)


def _summary_labels_follow_their_recordings(table):
    """Row by row: each recording of the band-change summary carries its own subject,
    session and task (the BIDS names in its path), the failed one is absent, and its
    change equals gs.band_change of its input and output."""
    import re

    summary = table.attrs["band_change"]
    done = table[table["status"] != "failed"]
    assert list(summary.recording.values) == list(done["source"])
    for source, output in zip(done["source"], done["output"]):
        one = summary.sel(recording=source)
        named = re.search(r"sub-(\w+?)_ses-(\w+?)_task-(\w+?)_eeg", Path(source).name).groups()
        assert (str(one.subject.values), str(one.session.values), str(one.task.values)) == named
        expected = gs.band_change(mne.io.read_raw(source, preload=True),
                                  mne.io.read_raw_fif(output, preload=True))
        np.testing.assert_allclose(one.change_db.sel(channel=expected.channel).values,
                                   expected.change_db.values, rtol=1e-6, atol=1e-9)


def test_bids_entities_select_recordings(bids_root, bids_recipe, client, tmp_path):
    table = gs.run_study(bids_recipe, bids_root, tmp_path / "out", client=client,
                         subjects=["02"], tasks=["rest"], verbose=False)
    assert list(zip(table["subject"], table["session"], table["task"])) == [
        ("02", "a", "rest"), ("02", "b", "rest")]


def test_warnings_on_the_workers_reach_the_table(bids_root, bids_recipe, client, tmp_path):
    table = gs.run_study(bids_recipe, bids_root, tmp_path / "out", client=client,
                         subjects=["02"], sessions=["b"], tasks=["rest"], verbose=False)
    # reference: the warnings gs.band_change gives in this process on the same pair
    with pytest.warns(gs.GainshapeWarning) as caught:
        gs.band_change(mne.io.read_raw(table["source"].iloc[0], preload=True),
                       mne.io.read_raw_fif(table["output"].iloc[0], preload=True))
    assert caught and all(str(w.message) in table["warnings"].iloc[0] for w in caught)


def test_the_progress_bar_counts_recordings_unless_silenced(bids_root, bids_recipe, client,
                                                           tmp_path, capsys):
    gs.run_study(bids_recipe, bids_root, tmp_path / "out", client=client, subjects=["02"])
    assert "3/3" in capsys.readouterr().err
    gs.run_study(bids_recipe, bids_root, tmp_path / "out", client=client, subjects=["02"],
                 verbose=False)
    assert capsys.readouterr().err == ""


def test_a_worker_killed_while_writing_loses_one_recording_and_a_rerun_completes_it(
        bids_root, bids_recipe, tmp_path, client, monkeypatch):
    import os

    import dask

    from gainshape.studies import workers as workers_module

    uninterrupted = gs.run_study(bids_recipe, bids_root, tmp_path / "whole", client=client,
                                 verbose=False)
    real = workers_module.filter_recording

    def dies_while_writing(source, content, output, overwrite, limits):  # pickled by value
        if "ses-b_task-oddball" in str(source):
            staging = output.parent / f".{output.name}.killed.partial"
            staging.mkdir(parents=True)
            (staging / output.name).write_bytes(b"half a recording")
            os._exit(1)  # the worker process dies mid-write
        return real(source, content, output, overwrite, limits)

    out = tmp_path / "out"
    monkeypatch.setattr(workers_module, "filter_recording", dies_while_writing)
    # no retry of the dying task, and one task at a time on the worker (none lost beside it)
    with dask.config.set({"distributed.scheduler.allowed-failures": 0,
                          "distributed.scheduler.worker-saturation": 1.0}), \
            distributed.LocalCluster(n_workers=1, threads_per_worker=1, processes=True,
                                     dashboard_address=":0") as cluster, \
            distributed.Client(cluster) as processes:
        table = gs.run_study(bids_recipe, bids_root, out, client=processes, verbose=False)
    # the recording finished just before the death may be run again by Dask if its result had
    # not reached the client yet: it then finds its output written and up to date
    assert table["status"].iloc[3] in ("filtered", "up to date")
    assert list(table["status"].drop(index=3)) == ["filtered"] * 2 + ["failed"] * 2 + ["filtered"]
    assert "KilledWorker" in table["error"].iloc[4]
    lost = uninterrupted["output"].iloc[4].relative_to(tmp_path / "whole")
    assert not (out / lost).exists() and not (out / lost).with_suffix(".json").exists()
    monkeypatch.undo()
    table = gs.run_study(bids_recipe, bids_root, out, client=client, verbose=False)
    assert list(table["status"]) == ["up to date"] * 2 + ["failed", "up to date", "filtered",
                                                          "up to date"]
    assert not list((out / lost).parent.glob(".*.partial"))  # the stale staging folder is gone
    for mine, reference in zip(table["output"], uninterrupted["output"]):
        if mine is not None:
            np.testing.assert_array_equal(_filtered(mine), _filtered(reference))


def test_the_study_summary_gathers_band_change_and_states_the_filter_once(study, client):
    recipe, inputs, out = study
    table = gs.run_study(recipe, inputs, out, client=client, verbose=False)
    summary = table.attrs["band_change"]
    assert summary.change_db.dims == ("recording", "channel", "band")
    assert list(summary.recording.values) == [str(p) for p in inputs[:3]]  # the failed one is left out
    # reference: gs.band_change on each recording and its output file, read whole (the file
    # holds float32 samples, the study measured the float64 result: 1e-6 dB apart at most)
    for source, output in zip(inputs[:3], table["output"].iloc[:3]):
        whole = gs.band_change(mne.io.read_raw_fif(source, preload=True),
                               mne.io.read_raw_fif(output, preload=True))
        np.testing.assert_allclose(summary.change_db.sel(recording=str(source)).sel(
            channel=whole.channel).values, whole.change_db.values, rtol=0, atol=1e-6)
    # out of core (a limit below the recordings' size), the band change is read from the files
    small = gs.run_study(recipe, inputs[:1], out.parent / "small", client=client,
                         in_memory_mb=0.01, verbose=False).attrs["band_change"]
    np.testing.assert_allclose(small.change_db.sel(recording=str(inputs[0])).values,
                               summary.change_db.sel(recording=str(inputs[0])).values, atol=1e-6)
    import xarray as xr

    with xr.open_dataset(out / "band_change.nc") as on_disk:
        np.testing.assert_allclose(on_disk.change_db.values, summary.change_db.values)
    methods = table.attrs["methods"]
    # stated once per realized filter: the recordings at 250 Hz share one, the 500 Hz one has its own
    assert methods.count("Data were filtered with gainshape") == 2
    assert "applied to 3 of the 4 recordings" in methods and "broken_raw.fif" in methods
    assert "2 recordings (rec0_raw.fif, rec1_raw.fif)" in methods
    assert (out / "methods.txt").read_text().startswith(methods + "\n\n")
    assert "Every stop band" in (out / "methods.txt").read_text()
    assert "Its stop bands were" in (out / "methods_full.txt").read_text()
    report = (out / "report.html").read_text()
    assert "The realized filter" in report and "broken_raw.fif" in report
    assert "One filter recipe was applied to 3 of the 4 recordings" in report


@pytest.fixture
def finished(tmp_path, make_raw, client):
    """Two recordings filtered by a completed run (so the study's state is written)."""
    paths = []
    for i in range(2):
        path = tmp_path / "in" / f"rec{i}_raw.fif"
        path.parent.mkdir(exist_ok=True)
        make_raw(seconds=30.0, seed=i).save(path)
        paths.append(path)
    recipe = gs.write_recipe(tmp_path / "filter.json", gs.bandpass(0.5, 40.0), picks="eeg")
    first = gs.run_study(recipe, paths, tmp_path / "out", client=client, verbose=False)
    assert list(first["status"]) == ["filtered"] * 2
    return recipe, paths, tmp_path / "out", first


def _no_cluster(monkeypatch):
    from gainshape.studies import study as study_module

    def refuse(*args, **kwargs):
        raise AssertionError("a cluster was asked for")
    monkeypatch.setattr(study_module, "connected", refuse)


def test_nothing_changed_is_answered_from_stamps_without_a_cluster(finished, monkeypatch):
    recipe, paths, out, first = finished
    _no_cluster(monkeypatch)
    again = gs.run_study(recipe, paths, out, verbose=False)
    assert list(again["status"]) == ["up to date"] * 2 and list(again["error"]) == ["", ""]
    assert again.attrs["methods"] == first.attrs["methods"]
    np.testing.assert_array_equal(again.attrs["band_change"].change_db.values,
                                  first.attrs["band_change"].change_db.values)


def test_a_rewritten_recipe_of_the_same_content_is_still_up_to_date_without_a_cluster(
        finished, monkeypatch):
    recipe, paths, out, first = finished
    recipe.write_text(json.dumps(json.loads(recipe.read_text()), indent=4))  # other bytes
    _no_cluster(monkeypatch)
    again = gs.run_study(recipe, paths, out, verbose=False)
    assert list(again["status"]) == ["up to date"] * 2
    xr = pytest.importorskip("xarray")
    xr.testing.assert_allclose(again.attrs["band_change"].change_db,
                               first.attrs["band_change"].change_db)


def test_a_replaced_output_file_is_redone(finished, client):
    recipe, paths, out, first = finished
    output = first["output"].iloc[1]
    output.write_bytes(output.read_bytes()[:-10] + b"0123456789")  # same size, other bytes
    again = gs.run_study(recipe, paths, out, client=client, verbose=False)
    assert list(again["status"]) == ["up to date", "filtered"]


def test_a_new_input_in_a_bids_root_is_seen(bids_root, bids_recipe, client, tmp_path, make_raw):
    import shutil

    import mne_bids

    root = tmp_path / "root"
    shutil.copytree(bids_root, root)
    broken = _eeg_file(root, "01", "b", "rest", ".vhdr")
    for companion in broken.parent.glob(broken.name.split(".")[0] + ".*"):
        companion.unlink()  # a study whose recordings all succeed
    out = tmp_path / "out"
    first = gs.run_study(bids_recipe, root, out, client=client, verbose=False)
    assert set(first["status"]) == {"filtered"}
    raw = make_raw(sfreq=250.0, seconds=20.0, seed=50).pick("eeg")
    path = mne_bids.BIDSPath(subject="03", session="a", task="rest", datatype="eeg", root=root)
    mne_bids.write_raw_bids(raw, path, format="BrainVision", allow_preload=True, verbose=False)
    again = gs.run_study(bids_recipe, root, out, client=client, verbose=False)
    assert list(again["status"]) == ["up to date"] * len(first) + ["filtered"]


def test_the_old_name_of_band_change_still_works_with_a_future_warning(two_recordings, tmp_path):
    # the deprecation rule of the project plan: a renamed parameter keeps its old name one release
    recipe, paths = two_recordings
    with pytest.warns(FutureWarning, match="'band_change'"):
        table = gs.run_study(recipe, paths[:1], tmp_path / "out", summary=False, workers=1,
                             verbose=False)
    assert table.attrs["band_change"] is None and list(table["status"]) == ["filtered"]
