"""A whole study filtered with one recipe, one recording per Dask task.

Vocabulary: a *source* is one recording file; its *output* is the filtered
FIF in the output folder, beside its *sidecar* (JSON: the BIDS
``SoftwareFilters`` entry, the recipe and the source's fingerprint). An
output is *up to date* when its sidecar records the same recipe and the same
source fingerprint, and a re-run leaves it alone. Each recording is read
lazily and filtered file to file (:mod:`gainshape.outofcore`), so a worker's
memory does not grow with the recording; each file is written whole or not
at all.
"""

from __future__ import annotations

import contextlib
import json
import os
import re
import shutil
import sys
import time
import warnings
from pathlib import Path

from ._checks import check_bool, check_positive, missing_modules, warn
from ._files import atomic_output, atomic_outputs
from ._stamps import (SIDECAR_KEY, STATE_NAME, file_fingerprint, file_stamps, sidecar_record,
                      stamp, state, unchanged_study, verdict)
from .adapters import apply
from .provenance import bids_filters, methods_text
from .recipes import read_recipe, recipe_content, recipe_design, recipe_from_content
from .summaries import band_change

__all__ = ["run_study"]

COLUMNS = ["source", "subject", "session", "task", "status", "seconds", "worker_peak_mb",
           "output", "error", "warnings"]
_ENTITIES = ("subject", "session", "task")
_READABLE = [".vhdr", ".edf", ".bdf", ".set", ".fif", ".cnt", ".mff"]
_MB = 2**20
# How the local cluster's workers start. On Linux they are forked from this
# process: they start in 0.2 s instead of 2.8 s, find NumPy, SciPy, MNE and
# gainshape already imported, and keep this process's allocator (a spawned
# worker inherits Dask's MALLOC_TRIM_THRESHOLD_, which freezes glibc's mmap
# threshold: every array over 128 KiB is then a fresh mmap whose pages fault
# in, 1.1 s instead of 0.65 s per 10-minute, 32-channel recording). Elsewhere
# fork is unsafe, so they are spawned.
_LOCAL_WORKERS = {
    "distributed.worker.multiprocessing-method": "fork" if sys.platform == "linux" else "spawn",
    # Dask's sampling profiler walks the task's stack every 10 ms; without it a
    # recording took 0.89 s instead of 0.99 s on two busy workers (two A/B runs)
    "distributed.worker.profile.enabled": False,
}


def run_study(recipe, inputs, out_dir, client=None, *, subjects=None, sessions=None, tasks=None,
              overwrite: bool = False, in_memory_mb: float = 1024.0, summary: bool = True,
              raise_errors: bool = False, workers: int | None = None, allow_short: bool = False,
              verbose=None):
    """Filter every recording of a study with one recipe, on a Dask cluster.

    Parameters
    ----------
    recipe : str | Path | dict
        A recipe file (:func:`gainshape.write_recipe`) or what
        :func:`gainshape.read_recipe` returned.
    inputs : str | Path | list of str | Path
        A BIDS root (every EEG recording in it, found with mne-bids), or
        recording files MNE can read (``mne.io.read_raw``).
    out_dir : str | Path
        The output folder, a BIDS derivatives folder: for a BIDS root, each
        recording at its own place (``sub-*/[ses-*/]eeg/*_desc-filtered_eeg.fif``),
        otherwise ``<name>_filtered_raw.fif``; each with a ``.json`` sidecar
        (``SoftwareFilters``, the recipe, the source's fingerprint), and
        ``dataset_description.json``.
    client : distributed.Client | str | None
        The cluster: a client, a scheduler address, or None for a local
        cluster of one single-threaded worker process per core, closed at
        the end.
    subjects, sessions, tasks : list of str | None
        For a BIDS root: only these (None: all).
    overwrite : bool
        Redo recordings whose output is up to date.
    in_memory_mb : float
        Recordings whose data take at most this many MB (in float64) are
        loaded and filtered in memory, the fastest way; larger ones are
        read lazily and filtered file to file (out of core), and their band
        change is read in groups of channels of at most this size, so a
        worker's memory stays within a few times this limit whatever the
        recording's length.
    summary : bool
        Measure each recording's band change and gather it (False: skip
        this, the slowest part after the filtering itself).
    raise_errors : bool
        Raise a RuntimeError after the run if any recording failed (the
        others are done all the same).
    workers : int | None
        Worker processes of the local cluster started when ``client`` is
        None (default: one per core); the cluster is closed at the end.
    allow_short : bool
        Filter a recording whose data are shorter than its own files state
        (a truncated data file, markers past the end); by default such a
        recording fails as "truncated or damaged input".
    verbose : bool | None
        False: no progress bar.

    Returns
    -------
    pandas.DataFrame
        One row per recording, in order: ``source``, ``subject``,
        ``session``, ``task`` (BIDS entities, None otherwise), ``status`` ("filtered",
        "up to date" or "failed"), ``seconds``, ``worker_peak_mb`` (the
        worker process's peak resident memory so far), ``output`` (Path or
        None), ``error`` and ``warnings`` (what the filtering and the band
        change warned about, one message per line, "" if nothing). A
        failed recording whose previous derivative is kept has that file as
        its ``output``, and its error starts "previous output kept, from
        <date>".
        A recording whose worker died (after Dask's retries) is "failed"
        like any other; one whose output was written but whose row was lost
        with its worker is run again by Dask and then reads "up to date". ``table.attrs["band_change"]`` holds
        :func:`gainshape.band_change` of every filtered recording (dims
        recording x channel x band, with subject, session and task
        coordinates; also written as ``band_change.nc``), and
        ``table.attrs["methods"]`` a methods paragraph for the study (also
        ``methods.txt``): each realized filter stated once with the
        recordings it served, and the recordings that failed. ``report.html``
        (an ``mne.Report``) shows the realized filter, the band change by
        recording, the methods paragraph and the table.
        ``table.attrs["problems"]`` lists the study's own files that could
        not be made (the summary, the methods paragraph, the report): such a
        failure is recorded there and warned about, never raised unless
        ``raise_errors``, and never undoes a recording.

    Raises
    ------
    ValueError
        Before any work, for a damaged recipe or two inputs that would
        write the same output.
    FileNotFoundError
        Before any work, for inputs that do not exist.
    ImportError
        Before any work, when the ``dask`` extra (or, for a BIDS root, the
        ``bids`` extra) is not installed; the message gives the command.
    FileExistsError
        Before any work, when another run is writing to ``out_dir``.

    See Also
    --------
    write_recipe, apply, bids_filters

    Notes
    -----
    Nothing is lost: each recording's filtered file, sidecar, methods text
    and band change are made in a staging folder and moved into place
    only when all of them succeeded, so a recording that fails leaves its
    previous derivative byte-identical. A recording is up to date when its
    sidecar holds the same recipe and its source files have the recorded
    sizes and times (when only the times moved, their content hash
    decides); this is decided before any cluster starts, and when nothing
    changed since the last complete run (``.gainshape-study.json`` in
    ``out_dir``) the call answers from the files alone. One run at a time
    may write to ``out_dir``: a second one raises FileExistsError before
    any work.

    Examples
    --------
    >>> table = gs.run_study("filter.json", ["a_raw.fif", "b_raw.fif"], "out")  # doctest: +SKIP
    >>> table[["source", "status", "seconds"]]  # doctest: +SKIP
    """
    content = _recipe_content(recipe)
    overwrite = check_bool("overwrite", overwrite)
    limits = {"in_memory_bytes": check_positive("in_memory_mb", in_memory_mb) * _MB,
              "summary": check_bool("summary", summary),
              "allow_short": check_bool("allow_short", allow_short)}
    raise_errors = check_bool("raise_errors", raise_errors)
    if workers is not None:
        workers = int(check_positive("workers", workers))
    _require("distributed", "dask", "pandas")
    out_dir = Path(out_dir)
    selection = {"subjects": subjects, "sessions": sessions, "tasks": tasks}
    kept = None if overwrite else unchanged_study(recipe, inputs, out_dir, selection,
                                                  limits["summary"])
    if kept is not None:  # nothing changed since the last complete run
        return _unchanged_table(kept, out_dir, limits["summary"])
    found = _recordings(inputs, selection)
    sources = [source for source, _, _ in found]
    outputs = [out_dir / relative for _, relative, _ in found]
    _check_distinct(sources, outputs)
    out_dir.mkdir(parents=True, exist_ok=True)
    with _one_run_at_a_time(out_dir):
        table = _run_locked(content, found, outputs, out_dir, {"client": client, "workers": workers},
                            overwrite, limits, raise_errors, verbose)
        _write_state(table, recipe, content, inputs, selection, limits["summary"], out_dir)
    failed = table[table["status"] == "failed"]
    if raise_errors and len(failed):
        raise RuntimeError(f"{len(failed)} of {len(table)} recordings failed: "
                           + "; ".join(failed["error"]))
    return table


def _run_locked(content, found, outputs, out_dir, cluster: dict, overwrite, limits,
                raise_errors, verbose):
    """run_study's work once the output folder is this run's alone: the
    recordings found up to date from their stamps are answered here, the
    others go to the cluster (none is started when there are none)."""
    import pandas as pd

    _write_dataset_description(out_dir)
    for output in outputs:  # what a killed worker of an earlier run left (this run holds the lock)
        _remove_stale_staging(output)
    sources = [source for source, _, _ in found]
    previous = None if overwrite or not limits["summary"] else _previous_summary(out_dir)
    results = [None if overwrite else _kept_result(s, o, content, previous, limits)
               for s, o in zip(sources, outputs)]
    todo = [i for i, r in enumerate(results) if r is None]
    if todo:
        with _connected(cluster["client"], cluster["workers"]) as connection:
            # the report's filter figure is drawn on the cluster beside the recordings
            figure = connection.submit(_filter_figure, content, sources, pure=False)
            done = _gathered(connection, [sources[i] for i in todo],
                             [content, [outputs[i] for i in todo], overwrite, limits],
                             verbose is not False)
            for i, result in zip(todo, done):
                results[i] = result
            try:
                figure = figure.result()
            except Exception:  # the report goes without it; the recordings' rows say why
                figure = None
    else:
        figure = _filter_figure(content, sources)
    table = pd.DataFrame([[row[0], *entities, *row[1:]] for (row, _), (_, _, entities)
                          in zip(results, found)], columns=COLUMNS)
    for column in ("error", "warnings"):  # no error, no warning: an empty string
        table[column] = [text if isinstance(text, str) else "" for text in table[column]]
    table.attrs.update(band_change=None, methods="", problems=[])
    for key, make in (
            ("band_change", lambda: _study_band_change(results, found, out_dir)),
            ("methods", lambda: _study_methods(table, [extras["methods"] for _, extras in results],
                                               out_dir)),
            (None, lambda: _write_report(table, figure, out_dir))):
        try:  # what is drawn from the recordings never undoes them
            made = make()
        except Exception as err:
            if raise_errors:
                raise
            table.attrs["problems"].append(f"{_PARTS[key]}: {type(err).__name__}: {err}")
            warn(f"The study's {_PARTS[key]} could not be made ({type(err).__name__}: {err}); "
                 "the recordings' outputs are complete, and table.attrs['problems'] says so.")
        else:
            if key:
                table.attrs[key] = made
    return table


def _kept_result(source: Path, output: Path, content: dict, previous, limits: dict):
    """The (row, extras) of a recording found up to date from its stamps,
    with its methods texts from its sidecar and its band change from
    ``previous``, the study's last summary; None when it must go to the cluster."""
    start = time.perf_counter()
    if verdict(source, output, content) != "up to date":
        return None
    record = sidecar_record(output) or {}
    change = _band_change_of(previous, source) if limits["summary"] else None
    if "methods" not in record or (limits["summary"] and change is None):
        return None
    return ([str(source), "up to date", time.perf_counter() - start, float("nan"), output, "",
             ""], {"band_change": change, "methods": tuple(record["methods"])})


def _previous_summary(out_dir: Path):
    """The study's last ``band_change.nc``, loaded (None if absent or unreadable)."""
    import xarray as xr

    try:
        return xr.load_dataset(out_dir / "band_change.nc")
    except (OSError, ValueError):
        return None


def _band_change_of(summary, source: Path):
    """One recording's band change in a study summary (None if it is not there)."""
    if summary is None or str(source) not in summary["recording"].values:
        return None
    one = summary.sel(recording=str(source)).drop_vars(["recording", *_ENTITIES], errors="ignore")
    return one.dropna("channel", how="all")  # channels the study's union added


def _unchanged_table(kept, out_dir: Path, summary: bool):
    """run_study's table when nothing changed since the last complete run."""
    import pandas as pd
    import xarray as xr

    table = pd.DataFrame([[source, sub, ses, task, "up to date", 0.0, float("nan"), Path(output),
                           "", ""] for source, sub, ses, task, output in kept], columns=COLUMNS)
    state = json.loads((out_dir / STATE_NAME).read_text(encoding="utf-8"))
    table.attrs.update(band_change=xr.load_dataset(out_dir / "band_change.nc") if summary else None,
                       methods=state["methods"], problems=[])
    return table


def _write_state(table, recipe, content, inputs, selection, summary, out_dir: Path) -> None:
    """The study's state after a run in which every part succeeded (else none:
    the next run then looks at every recording again)."""
    path = out_dir / STATE_NAME
    if (table["status"] == "failed").any() or table.attrs["problems"]:
        with contextlib.suppress(OSError):  # a read-only folder keeps it; each recording is checked
            path.unlink(missing_ok=True)
        return
    rows = [(r.source, r.subject, r.session, r.task, r.output) for r in table.itertuples()]
    record = {**state(recipe, content, inputs, selection, summary, rows),
              "methods": table.attrs["methods"]}
    with atomic_output(path) as staged:
        staged.write_text(json.dumps(record, indent=1) + "\n", encoding="utf-8")


_PARTS = {"band_change": "band-change summary (band_change.nc)",
          "methods": "methods paragraph (methods.txt)", None: "report (report.html)"}


def _recipe_content(recipe) -> dict:
    """The recipe's JSON content, checked (from a file or read_recipe's dict)."""
    if isinstance(recipe, dict):
        return recipe_content(**recipe)
    return recipe_content(**read_recipe(recipe))


def _recordings(inputs, selection) -> list:
    """(source, output path relative to the output folder, (subject, session, task)) per recording."""
    if isinstance(inputs, (str, Path)) and Path(inputs).is_dir():
        return _bids_recordings(Path(inputs), selection)
    if isinstance(inputs, (str, Path)):
        raise ValueError(f"The 'inputs' parameter is a BIDS root folder or a list of recording "
                         f"files; {inputs!s} is neither (no such folder).")
    if any(value is not None for value in selection.values()):
        raise ValueError("'subjects', 'sessions' and 'tasks' select recordings of a BIDS root; "
                         "the inputs are a list of files.")
    missing = [str(p) for p in inputs if not Path(p).is_file()]
    if missing:
        raise FileNotFoundError(f"{len(missing)} of the {len(inputs)} inputs do not exist or are "
                                f"not files: {', '.join(missing[:5])}{' ...' if len(missing) > 5 else ''}"
                                " (nothing was done).")
    return [(Path(p), Path(f"{_base_name(Path(p))}_filtered_raw.fif"), (None, None, None))
            for p in inputs]


def _bids_recordings(root: Path, selection) -> list:
    """Every EEG recording of a BIDS dataset (the selected ones), with its derivative's place."""
    _require("mne_bids", "bids")
    import mne_bids

    if not (root / "dataset_description.json").exists():
        raise ValueError(f"The 'inputs' folder {root} is not a BIDS root (no "
                         "dataset_description.json); pass the dataset's top folder or a list of files.")
    paths = mne_bids.find_matching_paths(root, datatypes="eeg", suffixes="eeg",
                                         extensions=_READABLE, **selection)
    if not paths:
        raise ValueError(f"No EEG recording in {root} matches the selection {selection}.")
    found = []
    for path in sorted(paths, key=lambda p: str(p.fpath)):
        folder = path.fpath.parent.relative_to(root)
        derived = path.copy().update(description="filtered", extension=".fif", check=False)
        found.append((path.fpath, folder / derived.basename,
                      (path.subject, path.session, path.task)))
    return found


def _base_name(source: Path) -> str:
    """The source's name without extensions and a trailing "_raw" or "_eeg".

    >>> _base_name(Path("sub-01_task-rest_eeg.vhdr")), _base_name(Path("rec_raw.fif.gz"))
    ('sub-01_task-rest', 'rec')
    """
    name = source.name.split(".")[0]
    for tail in ("_raw", "_eeg"):
        if name.endswith(tail):
            return name[: -len(tail)]
    return name


def _check_distinct(sources, outputs) -> None:
    seen = {}
    for source, output in zip(sources, outputs):
        if output in seen and seen[output] != source:
            raise ValueError(f"The inputs {seen[output]} and {source} would both be written to "
                             f"{output.name}; give recordings distinct names.")
        seen[output] = source


def _write_dataset_description(out_dir: Path) -> None:
    """BIDS derivatives' dataset_description.json, written once."""
    from . import __version__

    path = out_dir / "dataset_description.json"
    if path.exists():
        return
    content = {"Name": "Recordings filtered by gainshape", "BIDSVersion": "1.9.0",
               "DatasetType": "derivative",
               "GeneratedBy": [{"Name": "gainshape", "Version": __version__,
                                "Description": "gain-curve FIR filtering (gainshape.run_study)"}]}
    with atomic_output(path) as staged:
        staged.write_text(json.dumps(content, indent=2) + "\n", encoding="utf-8")


def _require(module: str, extra: str, *more: str) -> None:
    """ImportError naming the extra to install unless ``module`` (and ``more``) import.

    >>> _require("json", "none")
    """
    absent = missing_modules(module, *more)
    if absent:
        raise ImportError(f"This needs {', '.join(absent)}, which is not installed: "
                          f'pip install "gainshape[{extra}]"')


_LOCK_NAME = ".gainshape-run.lock"


@contextlib.contextmanager
def _one_run_at_a_time(out_dir: Path):
    """Hold the output folder's lock file for the run: a second run on the
    same folder refuses (a lock left by a process that is gone is taken over)."""
    import socket

    lock = out_dir / _LOCK_NAME
    me = {"pid": os.getpid(), "host": socket.gethostname(), "since": time.strftime("%Y-%m-%d %H:%M:%S")}
    for _ in range(2):
        try:
            with open(lock, "x", encoding="utf-8") as stream:
                stream.write(json.dumps(me))
            break
        except FileExistsError:
            holder = _lock_holder(lock)
            if holder is None or _alive(holder, me["host"]):
                raise FileExistsError(
                    f"Another gainshape run is writing to {out_dir} ({_holder_words(holder)}); "
                    "nothing was done. Run again when it has finished; if no run is going on, "
                    f"remove {lock}.") from None
            lock.unlink(missing_ok=True)  # its process is gone
    try:
        yield
    finally:
        lock.unlink(missing_ok=True)


def _lock_holder(lock: Path) -> dict | None:
    try:
        return json.loads(lock.read_text(encoding="utf-8"))
    except (OSError, ValueError):
        return None


def _alive(holder: dict, host: str) -> bool:
    """Whether the lock's process may still run (on another host it is assumed so)."""
    if holder.get("host") != host:
        return True
    import psutil  # distributed's own dependency

    return psutil.pid_exists(int(holder.get("pid", -1)))


def _holder_words(holder: dict | None) -> str:
    if holder is None:
        return "its lock file cannot be read"
    return f"process {holder.get('pid')} on {holder.get('host')}, since {holder.get('since')}"


@contextlib.contextmanager
def _connected(client, workers=None):
    """The client to use: the given one, one for an address, or a local cluster."""
    import distributed

    if isinstance(client, distributed.Client):
        yield client
        return
    if client is None:
        import dask

        if _LOCAL_WORKERS["distributed.worker.multiprocessing-method"] == "fork":
            _import_what_workers_use()
        with dask.config.set(_LOCAL_WORKERS), distributed.LocalCluster(
                n_workers=workers or os.cpu_count() or 1, threads_per_worker=1, processes=True,
                dashboard_address=":0") as cluster, distributed.Client(cluster) as own:
            yield own
        return
    with distributed.Client(client) as own:
        yield own


def _import_what_workers_use() -> None:
    """Import here what every worker would import on its first task (the
    plotting stack with its font list, MNE's FIF reader and writer), so that
    forked workers start with it: the report's figure took 4.8 s on a fresh
    worker and 3.1 s on one that had it, the first recording 1.7 s and 1.25 s
    (benchmarks/study.py's recordings)."""
    import importlib

    for name in ("matplotlib.pyplot", "mne.io.fiff.raw"):
        importlib.import_module(name)


def _gathered(connection, sources, task_arguments, show: bool) -> list:
    """Each recording's (row, extras) from one task per recording, in
    input order, with a bar over recordings as they finish.

    A result is let go of as soon as it is gathered, so a worker that dies
    later does not make the cluster run finished recordings again; a task
    lost with its worker (after Dask's retries) becomes a failed row.
    """
    import distributed
    from tqdm.std import tqdm

    content, outputs, overwrite, limits = task_arguments
    count = len(sources)
    pending = {future.key: (i, future) for i, future in enumerate(connection.map(
        _filter_recording, sources, [content] * count, outputs, [overwrite] * count,
        [limits] * count, pure=False))}
    rows = [None] * count
    try:
        with tqdm(total=count, unit="recording", disable=not show) as bar:
            for future in distributed.as_completed([f for _, f in pending.values()]):
                i, _ = pending.pop(future.key)
                rows[i] = _task_result(future, sources[i], outputs[i])
                bar.update(1)
    except KeyboardInterrupt as err:  # what has not started does not start
        connection.cancel([f for _, f in pending.values()])
        raise Interrupted(sum(r is not None for r in rows), count) from err
    except BaseException:
        connection.cancel([f for _, f in pending.values()])
        raise
    return rows


class Interrupted(KeyboardInterrupt):
    """Ctrl-C during a study, with how many of its recordings were done."""

    def __init__(self, done: int, total: int):
        super().__init__(f"{done} of {total} recordings done")
        self.done, self.total = done, total


def _task_result(future, source: Path, output: Path) -> tuple:
    """The task's (row, extras), or a failed row if its worker died."""
    try:
        return future.result()
    except Exception as err:  # e.g. KilledWorker: the process died running it
        written, error = _failure(source, output, err)
        return [str(source), "failed", float("nan"), float("nan"), written, error, ""], {
            "band_change": None, "methods": None}
    finally:
        future.release()


def _failure(source: Path, output: Path, err: Exception) -> tuple:
    """(the output kept, or None; the error's words) of a failed recording:
    its previous derivative, when there is one, is kept and said so."""
    words = f"{source.name}: {type(err).__name__}: {err}"
    if not (output.is_file() and output.with_suffix(".json").is_file()):
        return None, words
    when = time.strftime("%Y-%m-%d %H:%M:%S", time.localtime(output.stat().st_mtime))
    return output, f"previous output kept, from {when}; {words}"


def _filter_recording(source: Path, content: dict, output: Path, overwrite: bool,
                      limits: dict) -> tuple:
    """One recording filtered (a Dask task): its table row, and extras: its
    band change (None if it failed or ``limits["summary"]`` is False) and its
    methods paragraph (None if it failed). Failures become a row."""
    import mne

    start = time.perf_counter()
    status, error, written, change, text = "filtered", None, output, None, None
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        try:
            if not overwrite and verdict(source, output, content) == "up to date":
                status = "up to date"
                described = mne.io.read_raw_fif(output, verbose=False)
                text, change = _described(described, None, source, output, limits)
            else:
                output.parent.mkdir(parents=True, exist_ok=True)
                # everything is made in a staging folder; the previous output is
                # replaced only when the recording's every part has succeeded
                with atomic_outputs(output, output.with_suffix(".json")) as staged:
                    text, change = _filtered_and_described(source, content, staged, limits)
        except Exception as err:  # isolated: the other recordings go on
            written, error = _failure(source, output, err)
            status, text, change = "failed", None, None
    said = "\n".join(dict.fromkeys(str(w.message) for w in caught))
    return [str(source), status, time.perf_counter() - start, _peak_mb(), written, error,
            said], {"band_change": change, "methods": text}


def _filtered_and_described(source: Path, content: dict, staged: tuple, limits: dict) -> tuple:
    """Filter ``source`` into the staged (data, sidecar) pair; its methods
    texts and band change (the staged data file is what is described). The
    sidecar, which vouches for the data, is written last."""
    import mne

    stamps, fingerprint = file_stamps(source), file_fingerprint(source)
    raw = read_whole(source, allow_short=limits["allow_short"])
    if _data_bytes(raw) <= limits["in_memory_bytes"]:
        raw.load_data(verbose=False)
    filtered = apply(raw, verbose=False, **recipe_from_content(content, source))
    filtered.save(staged[0], overwrite=True, verbose=False)
    pair = (raw, filtered) if raw.preload else None
    described = filtered if pair else mne.io.read_raw_fif(staged[0], verbose=False)
    text, change = _described(described, pair, source, staged[0], limits)
    record = {"SoftwareFilters": bids_filters(filtered),
              SIDECAR_KEY: {"recipe": content, "source": str(source),
                            "source_fingerprint": fingerprint, "source_stamps": stamps,
                            "output_stamp": stamp(staged[0]), "methods": list(text)}}
    staged[1].write_text(json.dumps(record, indent=2) + "\n", encoding="utf-8")
    return text, change


def _described(described, pair, source: Path, output: Path, limits: dict) -> tuple:
    """(brief, full) methods texts of ``described`` and its band change
    (None unless ``limits["summary"]``), in memory from ``pair`` or by groups
    of channels from the files."""
    text = (methods_text(described), methods_text(described, detail="full"))
    if not limits["summary"]:
        return text, None
    change = band_change(*pair) if pair else _band_change_by_groups(
        source, output, limits["in_memory_bytes"])
    return text, change


_DAMAGE_SAID = ("outside data range", "Invalid tag", "truncated", "does not match")


def read_whole(source: Path, allow_short: bool = False):
    """``mne.io.read_raw`` (not loaded), refusing a recording whose data are
    shorter than its own files state, unless ``allow_short``.

    What is checked: the reader's warnings (events beyond the data, a
    damaged FIF tag, a size that does not match); for BrainVision, a data
    file that ends inside a sample and markers past its last sample; for
    EDF/BDF, the records the header states against the bytes that follow it.

    Examples
    --------
    >>> read_whole(Path("missing.vhdr"))  # doctest: +IGNORE_EXCEPTION_DETAIL
    Traceback (most recent call last):
    ...
    FileNotFoundError: missing.vhdr
    """
    import mne

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        raw = mne.io.read_raw(source, preload=False, verbose=False)
    said = [str(w.message) for w in caught]
    problem = _shortfall(source, raw) or next(
        (f"the reader said: {m.rstrip('.')}; the file holds {raw.n_times} samples" for m in said
         if any(k in m for k in _DAMAGE_SAID)), None)
    for message in said:  # passed on, as a reader's warnings would be
        warnings.warn(message, stacklevel=2)
    if problem and not allow_short:
        raise ValueError(f"truncated or damaged input: {problem}. Nothing was filtered; "
                         "restore the file, or pass allow_short=True (--allow-short) to "
                         "filter the samples it holds.")
    return raw


def _shortfall(source: Path, raw) -> str | None:
    """What the recording's own files say it should hold and it does not (or None)."""
    suffix = source.suffix.lower()
    if suffix == ".vhdr":
        return _brainvision_shortfall(source, raw)
    if suffix in (".edf", ".bdf"):
        return _edf_shortfall(source, raw, 3 if suffix == ".bdf" else 2)
    return None


def _brainvision_shortfall(source: Path, raw) -> str | None:
    header = source.read_text(encoding="utf-8", errors="replace")
    files = dict(re.findall(r"^(DataFile|MarkerFile)=(.+?)\s*$", header, flags=re.M))
    width = {"INT_16": 2, "UINT_16": 2, "INT_32": 4, "IEEE_FLOAT_32": 4}.get(
        (re.findall(r"^BinaryFormat=(\S+)", header, flags=re.M) or ["INT_16"])[0], 2)
    n_channels = int((re.findall(r"^NumberOfChannels=(\d+)", header, flags=re.M) or ["0"])[0])
    data = source.parent / files.get("DataFile", "")
    if n_channels and data.is_file():
        size, frame = data.stat().st_size, n_channels * width
        if size % frame:
            return (f"the header states {n_channels} channels of {width} bytes per sample, and "
                    f"{data.name} holds {size // frame} samples and {size % frame} bytes more")
    markers = source.parent / files.get("MarkerFile", "")
    if markers.is_file():
        positions = [int(p) for p in re.findall(r"^Mk\d+=[^,]*,[^,]*,(\d+),",
                                                markers.read_text(encoding="utf-8",
                                                                  errors="replace"), flags=re.M)]
        if positions and max(positions) > raw.n_times:
            return (f"the marker file states events up to sample {max(positions)}, and the "
                    f"data file holds {raw.n_times} samples")
    return None


def _edf_shortfall(source: Path, raw, width: int) -> str | None:
    with open(source, "rb") as stream:
        head = stream.read(256)
        n_signals = int(head[252:256].decode("ascii", "replace").strip() or 0)
        n_records = int(head[236:244].decode("ascii", "replace").strip() or -1)
        stream.seek(256 + 216 * n_signals)
        counts = [int(stream.read(8).decode("ascii", "replace").strip() or 0)
                  for _ in range(n_signals)]
    record_bytes = width * sum(counts)
    held = (source.stat().st_size - 256 * (1 + n_signals)) // max(record_bytes, 1)
    if n_records > held:
        per_record = max(counts) if counts else 0
        return (f"the header states {n_records * per_record} samples ({n_records} records), and "
                f"the file holds {held * per_record}")
    return None


def _peak_mb() -> float:
    """This process's peak resident set size in MB (NaN where it cannot be read)."""
    try:
        import resource
    except ImportError:  # Windows
        return float("nan")
    scale = 1024.0 * 1024.0 if sys.platform == "darwin" else 1024.0  # bytes on macOS, KiB on Linux
    return resource.getrusage(resource.RUSAGE_SELF).ru_maxrss / scale


def _data_bytes(raw) -> int:
    """The size of a Raw's samples in float64."""
    return 8 * len(raw.ch_names) * raw.n_times


def _remove_stale_staging(output: Path) -> None:
    """Staging folders a killed worker left for this output (the run holds
    the folder's lock, so none of them is in use)."""
    for name in (output.name, output.with_suffix(".json").name):
        for stale in output.parent.glob(f".{name}.*.partial"):
            shutil.rmtree(stale, ignore_errors=True)


def _band_change_by_groups(source: Path, output: Path, group_bytes: float):
    """:func:`band_change` of a recording and its output, read a group of
    channels at a time (both files' samples of a group take at most
    ``group_bytes``, one channel at least), so memory is bounded by the
    group, not the recording."""
    import mne
    import xarray as xr

    before = mne.io.read_raw(source, preload=False, verbose=False)
    after = mne.io.read_raw_fif(output, preload=False, verbose=False)
    names = [after.ch_names[i] for i in mne.pick_types(after.info, meg=True, eeg=True, seeg=True,
                                                          ecog=True, dbs=True, fnirs=True)]
    size = max(1, int(group_bytes // (2 * 8 * after.n_times)))
    groups = [names[i : i + size] for i in range(0, len(names), size)]
    parts = [band_change(before.copy().pick(group), after.copy().pick(group)) for group in groups]
    return xr.concat(parts, dim="channel", combine_attrs="drop_conflicts",
                     coords="different", compat="equals")


def _study_band_change(results, found, out_dir: Path):
    """Every filtered recording's band change along "recording", written as netCDF."""
    import xarray as xr

    parts = [extras["band_change"].expand_dims(recording=[row[0]]).assign_coords(
                 {name: ("recording", [value or ""]) for name, value in zip(_ENTITIES, entities)})
             for (row, extras), (_, _, entities) in zip(results, found)
             if extras["band_change"] is not None]
    if not parts:
        return None
    summary = xr.concat(parts, dim="recording", join="outer", combine_attrs="drop_conflicts",
                        coords="different", compat="equals")
    with atomic_output(out_dir / "band_change.nc") as staged:
        summary.to_netcdf(staged)
    return summary


def _study_methods(table, texts, out_dir: Path) -> str:
    """The study's methods paragraph, brief (``methods.txt``, returned) and
    full (``methods_full.txt``): each realized filter once, with the
    recordings it served (``texts``: each recording's (brief, full)
    paragraphs, None if it failed)."""
    done = table[table["status"] != "failed"]
    failed = [Path(s).name for s in table.loc[table["status"] == "failed", "source"]]
    opening = (f"One filter recipe was applied to {len(done)} of the {len(table)} recordings"
               + (f"; {len(failed)} could not be filtered ({', '.join(failed)})." if failed else "."))
    paragraphs = []
    for form in (0, 1):
        by_text = {}
        for source, text in zip(table["source"], texts):
            if text is not None:
                by_text.setdefault(text[form], []).append(Path(source).name)
        paragraphs.append(" ".join([opening] + [
            f"For {len(names)} recording{'s' if len(names) > 1 else ''} ({', '.join(names)}): {text}"
            for text, names in by_text.items()]))
    with atomic_output(out_dir / "methods.txt") as staged:
        staged.write_text(paragraphs[0] + "\n\n(Every stop band and edge of each filter: "
                          "methods_full.txt.)\n", encoding="utf-8")
    with atomic_output(out_dir / "methods_full.txt") as staged:
        staged.write_text(paragraphs[1] + "\n", encoding="utf-8")
    return paragraphs[0]


def _filter_figure(content: dict, sources) -> tuple | None:
    """The realized filter's figure as PNG bytes and its caption, at the rate of
    the first recording whose header can be read (a Dask task); None if none can."""
    import matplotlib.pyplot as plt
    import mne

    for source in sources:
        try:
            sfreq = mne.io.read_raw(source, preload=False, verbose=False).info["sfreq"]
        except Exception:  # the recording's own task reports it
            continue
        realized = recipe_design(recipe_from_content(content), sfreq)
        figure = realized.plot(show=False)
        png = _png(figure)
        plt.close(figure)
        return png, f"{realized.describe()} (the recordings at {sfreq:g} Hz)"
    return None


def _png(figure) -> bytes:
    import io

    buffer = io.BytesIO()
    figure.savefig(buffer, format="png", dpi=100)
    return buffer.getvalue()


def _figure_html(png: bytes, caption: str) -> str:
    import base64
    import html

    return (f'<figure><img style="max-width:100%" alt="{html.escape(caption)}" '
            f'src="data:image/png;base64,{base64.b64encode(png).decode()}">'
            f"<figcaption>{html.escape(caption)}</figcaption></figure>")


_REPORT_HEADERS = {"worker_peak_mb": "worker peak (MB)"}
_TABLE_STYLE = "<style>.gs-recordings {width: 100%} .gs-recordings td {overflow-wrap: break-word}</style>"


def _breakable(text) -> str:
    """``text`` escaped for HTML, with break opportunities after ``_ - / . \\`` so
    that long file names wrap inside the report's table (which then fits the page).

    >>> _breakable("sub-01_eeg.fif")
    'sub-<wbr>01_<wbr>eeg.<wbr>fif'
    """
    import html

    return re.sub(r"([_/\\.-])", r"\1<wbr>", html.escape(str(text)))


def _write_report(table, filter_figure, out_dir: Path) -> None:
    """The study's ``report.html`` (mne.Report), written whole or not at all."""
    import html

    import matplotlib.pyplot as plt
    import mne

    from .viz import plot_study_band_change

    report = mne.Report(title="gainshape study", verbose=False)
    if table.attrs.get("problems"):
        report.add_html("<ul>" + "".join(f"<li>{_breakable(p)}</li>" for p in
                                         table.attrs["problems"]) + "</ul>",
                        title="Parts of this report that could not be made", tags=("problems",))
    if filter_figure is not None:
        report.add_html(_figure_html(*filter_figure), title="The realized filter",
                        tags=("filter",))
    if table.attrs.get("band_change") is not None:
        figure = plot_study_band_change(table.attrs["band_change"], show=False)
        report.add_html(_figure_html(_png(figure), "Median over channels of the power change "
                                     "(dB)."), title="What changed, by recording and band",
                        tags=("band-change",))
        plt.close(figure)
    report.add_html(f"<p>{html.escape(table.attrs['methods'])}</p><p><i>Every stop band and "
                    "edge of each filter: methods_full.txt beside this report.</i></p>",
                    title="Methods", tags=("methods",))
    shown = table.assign(source=[Path(s).name for s in table["source"]])
    shown = shown.drop(columns=["output", "error", "warnings"]
                       + [e for e in _ENTITIES if shown[e].isna().all()])
    text = {c: (_breakable if c == "source" else html.escape)
            for c in shown.columns if shown[c].dtype == object}
    report.add_html(_TABLE_STYLE + shown.rename(columns=_REPORT_HEADERS).to_html(
        index=False, na_rep="", float_format="{:.3g}".format, justify="left", escape=False,
        formatters={_REPORT_HEADERS.get(c, c): f for c, f in text.items()},
        classes="table table-sm table-striped gs-recordings", border=0)
        + "<p><i>The filtered files: the table's output column, and the derivatives "
        "folder beside this report.</i></p>", title="Recordings", tags=("recordings",))
    for column, title, tag in (("error", "Why recordings failed", "failures"),
                               ("warnings", "Warnings", "warnings")):
        said = [(Path(source).name, text) for source, text in zip(table["source"], table[column])
                if text]
        if said:
            report.add_html("<dl>" + "".join(
                f"<dt>{_breakable(name)}</dt><dd>{_breakable(text).replace(chr(10), '<br>')}</dd>"
                for name, text in said) + "</dl>", title=title, tags=(tag,))
    with atomic_output(out_dir / "report.html") as staged:
        report.save(staged, open_browser=False, overwrite=True, verbose=False)
