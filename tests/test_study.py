"""A whole study: every recording filtered file to file on Dask, resumable."""

import json

import mne
import numpy as np
import pytest

import gainshape as gs

distributed = pytest.importorskip("distributed")


@pytest.fixture(scope="module")
def client():
    with distributed.Client(processes=False, n_workers=1, threads_per_worker=2,
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
    from gainshape import study as study_module

    recipe, inputs, out = study
    real_apply, calls = study_module.apply, []

    def failing_for_rec1(raw, **options):
        calls.append(raw.filenames[0])
        if "rec1" in str(raw.filenames[0]):
            raise RuntimeError("worker lost")
        return real_apply(raw, **options)

    monkeypatch.setattr(study_module, "apply", failing_for_rec1)
    table = gs.run_study(recipe, inputs[:3], out, client=client, verbose=False)
    assert list(table["status"]) == ["filtered", "failed", "filtered"]
    assert "worker lost" in table["error"].iloc[1]
    names = sorted(p.name for p in out.iterdir())
    assert names == sorted(["band_change.nc", "dataset_description.json", "methods.txt",
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


@pytest.fixture
def bids_root(tmp_path, make_raw):
    """Two subjects, two sessions each, written with mne-bids (BrainVision)."""
    mne_bids = pytest.importorskip("mne_bids")
    root = tmp_path / "bids"
    for subject in ("01", "02"):
        for session in ("a", "b"):
            raw = make_raw(seconds=20.0, seed=int(subject) * 10 + ord(session)).pick("eeg")
            raw.info["line_freq"] = 50.0
            path = mne_bids.BIDSPath(subject=subject, session=session, task="rest",
                                     datatype="eeg", root=root)
            mne_bids.write_raw_bids(raw, path, format="BrainVision", allow_preload=True,
                                    verbose=False)
    return root


def test_a_bids_root_is_filtered_into_derivatives_with_its_entities(bids_root, client, tmp_path):
    recipe = gs.write_recipe(tmp_path / "f.json", gs.highpass(0.5), picks="eeg")
    out = tmp_path / "derivatives" / "gainshape"
    table = gs.run_study(recipe, bids_root, out, client=client, subjects=["02"], verbose=False)
    assert list(table["subject"]) == ["02", "02"] and list(table["session"]) == ["a", "b"]
    assert list(table["status"]) == ["filtered", "filtered"]
    output = table["output"].iloc[1]
    assert output == out / "sub-02" / "ses-b" / "eeg" / "sub-02_ses-b_task-rest_desc-filtered_eeg.fif"
    # reference: gs.apply on the recording read by MNE from the BIDS folder
    source = bids_root / "sub-02" / "ses-b" / "eeg" / "sub-02_ses-b_task-rest_eeg.vhdr"
    expected = gs.apply(mne.io.read_raw(source, preload=True), **gs.read_recipe(recipe))
    np.testing.assert_allclose(_filtered(output), expected.get_data(), rtol=0, atol=1e-12)
    description = json.loads((out / "dataset_description.json").read_text())
    assert description["DatasetType"] == "derivative"
    assert description["GeneratedBy"][0]["Name"] == "gainshape"
    sidecar = json.loads(output.with_suffix(".json").read_text())
    assert sidecar["SoftwareFilters"] == gs.bids_filters(mne.io.read_raw_fif(output))


def test_the_study_summary_gathers_band_change_and_states_the_filter_once(study, client):
    recipe, inputs, out = study
    table = gs.run_study(recipe, inputs, out, client=client, verbose=False)
    summary = table.attrs["band_change"]
    assert summary.change_db.dims == ("recording", "channel", "band")
    assert list(summary.recording.values) == [str(p) for p in inputs[:3]]  # the failed one is left out
    # reference: gs.band_change on each recording and its output, read whole
    for source, output in zip(inputs[:3], table["output"].iloc[:3]):
        whole = gs.band_change(mne.io.read_raw_fif(source, preload=True),
                               mne.io.read_raw_fif(output, preload=True))
        np.testing.assert_allclose(summary.change_db.sel(recording=str(source)).sel(
            channel=whole.channel).values, whole.change_db.values, rtol=1e-10)
    import xarray as xr

    with xr.open_dataset(out / "band_change.nc") as on_disk:
        np.testing.assert_allclose(on_disk.change_db.values, summary.change_db.values)
    methods = table.attrs["methods"]
    # stated once per realized filter: the recordings at 250 Hz share one, the 500 Hz one has its own
    assert methods.count("Data were filtered with gainshape") == 2
    assert "applied to 3 of the 4 recordings" in methods and "broken_raw.fif" in methods
    assert "2 recordings (rec0_raw.fif, rec1_raw.fif)" in methods
    assert (out / "methods.txt").read_text() == methods + "\n"
    report = (out / "report.html").read_text()
    assert "The realized filter" in report and "broken_raw.fif" in report
    assert "One filter recipe was applied to 3 of the 4 recordings" in report
