"""A whole study filtered with one recipe, one recording per Dask task.

Vocabulary: a *source* is one recording file; its *output* is the filtered
FIF in the output folder, beside its *sidecar* (JSON: the BIDS
``SoftwareFilters`` entry, the recipe and the source's fingerprint). An
output is *up to date* when its sidecar records the same recipe and the same
source fingerprint, and a re-run leaves it alone. Each recording is read
lazily and filtered file to file (:mod:`gainshape.filtering.outofcore`), so a worker's
memory does not grow with the recording; each file is written whole or not
at all.
"""

from __future__ import annotations

import concurrent.futures
import contextlib
import json
import time
import warnings
from pathlib import Path
from typing import Any, TYPE_CHECKING

from .._checks import check_bool, check_positive, warn
from .._files import atomic_output
from .._types import PathLike, Verbosity
from .finding import (
    check_distinct, ENTITIES, PARTS, recipe_content_of, require_modules, study_recordings,
    write_dataset_description,
)
from .report import filter_figure, study_band_change, study_methods, write_report
from .stamps import sidecar_record, state, STATE_NAME, unchanged_study, verdict
from .task import MB, remove_stale_staging
from .workers import connected, gathered, one_run_at_a_time

if TYPE_CHECKING:  # for annotations only
    import pandas as pd

__all__ = ["run_study"]

COLUMNS = ["source", "subject", "session", "task", "status", "seconds", "worker_peak_mb",
           "output", "error", "warnings"]


def run_study(recipe: PathLike | dict, inputs: PathLike | list[PathLike], out_dir: PathLike,
              client: Any = None, *, subjects: list[str] | None = None,
              sessions: list[str] | None = None, tasks: list[str] | None = None,
              overwrite: bool = False, in_memory_mb: float = 1024.0, band_change: bool = True,
              raise_errors: bool = False, workers: int | None = None, allow_short: bool = False,
              verbose: Verbosity = None, summary: bool | None = None) -> pd.DataFrame:
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
    band_change : bool
        Measure each recording's band change (:func:`gainshape.band_change`)
        and gather it (False: skip this, the slowest part after the
        filtering itself).
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
    summary : bool | None
        The name of ``band_change`` before 0.2 (a FutureWarning says so).

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
    if summary is not None:
        warnings.warn("run_study's 'summary' is now 'band_change' (what it measures); the old "
                      "name goes in a later release.", FutureWarning, stacklevel=2)
        band_change = summary
    content = recipe_content_of(recipe)
    overwrite = check_bool("overwrite", overwrite)
    limits: dict = {"in_memory_bytes": check_positive("in_memory_mb", in_memory_mb) * MB,
              "band_change": check_bool("band_change", band_change),
              "allow_short": check_bool("allow_short", allow_short)}
    raise_errors = check_bool("raise_errors", raise_errors)
    if workers is not None:
        workers = int(check_positive("workers", workers))
    require_modules("distributed", "dask", "pandas")
    out_dir = Path(out_dir)
    selection = {"subjects": subjects, "sessions": sessions, "tasks": tasks}
    kept = None if overwrite else unchanged_study(recipe, inputs, out_dir, selection,
                                                  limits["band_change"])
    if kept is not None:  # nothing changed since the last complete run
        return _unchanged_table(kept, out_dir, limits["band_change"])
    found = study_recordings(inputs, selection)
    sources = [source for source, _, _ in found]
    outputs = [out_dir / relative for _, relative, _ in found]
    check_distinct(sources, outputs)
    out_dir.mkdir(parents=True, exist_ok=True)
    with one_run_at_a_time(out_dir):
        table = _run_locked(content, found, outputs, out_dir, {"client": client, "workers": workers},
                            overwrite, limits, raise_errors, verbose)
        _write_state(table, recipe, content, inputs, selection, limits["band_change"], out_dir)
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

    write_dataset_description(out_dir)
    for output in outputs:  # what a killed worker of an earlier run left (this run holds the lock)
        remove_stale_staging(output)
    sources = [source for source, _, _ in found]
    previous = None if overwrite or not limits["band_change"] else _previous_summary(out_dir)
    results: list = [None if overwrite else _kept_result(s, o, content, previous, limits)
               for s, o in zip(sources, outputs)]
    todo = [i for i, r in enumerate(results) if r is None]
    if todo:
        # the report's filter figure is drawn here, in this process, once fewer recordings
        # are left than there are workers: on a core that would otherwise idle
        with concurrent.futures.ThreadPoolExecutor(1) as drawer, \
                connected(cluster["client"], cluster["workers"]) as connection:
            drawing: list = []
            done = gathered(connection, [sources[i] for i in todo],
                            [content, [outputs[i] for i in todo], overwrite, limits],
                            verbose is not False, lambda: drawing.append(
                                drawer.submit(filter_figure, content, sources)))
            for i, result in zip(todo, done):
                results[i] = result
            try:
                figure = drawing[0].result()
            except Exception:  # the report goes without it; the recordings' rows say why
                figure = None
    else:
        figure = filter_figure(content, sources)
    table = pd.DataFrame([[row[0], *entities, *row[1:]] for (row, _), (_, _, entities)
                          in zip(results, found)], columns=COLUMNS)
    for column in ("error", "warnings"):  # no error, no warning: an empty string
        table[column] = [text if isinstance(text, str) else "" for text in table[column]]
    table.attrs.update(band_change=None, methods="", problems=[])
    for key, make in (
            ("band_change", lambda: study_band_change(results, found, out_dir)),
            ("methods", lambda: study_methods(table, [extras["methods"] for _, extras in results],
                                               out_dir)),
            (None, lambda: write_report(table, figure, out_dir))):
        try:  # what is drawn from the recordings never undoes them
            made = make()
        except Exception as err:
            if raise_errors:
                raise
            table.attrs["problems"].append(f"{PARTS[key]}: {type(err).__name__}: {err}")
            warn(f"The study's {PARTS[key]} could not be made ({type(err).__name__}: {err}); "
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
    change = _band_change_of(previous, source) if limits["band_change"] else None
    if "methods" not in record or (limits["band_change"] and change is None):
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
    one = summary.sel(recording=str(source)).drop_vars(["recording", *ENTITIES], errors="ignore")
    return one.dropna("channel", how="all")  # channels the study's union added


def _unchanged_table(kept, out_dir: Path, band_change: bool):
    """run_study's table when nothing changed since the last complete run."""
    import pandas as pd
    import xarray as xr

    table = pd.DataFrame([[source, sub, ses, task, "up to date", 0.0, float("nan"), Path(output),
                           "", ""] for source, sub, ses, task, output in kept], columns=COLUMNS)
    state = json.loads((out_dir / STATE_NAME).read_text(encoding="utf-8"))
    table.attrs.update(band_change=xr.load_dataset(out_dir / "band_change.nc") if band_change else None,
                       methods=state["methods"], problems=[])
    return table


def _write_state(table, recipe, content, inputs, selection, band_change, out_dir: Path) -> None:
    """The study's state after a run in which every part succeeded (else none:
    the next run then looks at every recording again)."""
    path = out_dir / STATE_NAME
    if (table["status"] == "failed").any() or table.attrs["problems"]:
        with contextlib.suppress(OSError):  # a read-only folder keeps it; each recording is checked
            path.unlink(missing_ok=True)
        return
    rows = [(r.source, r.subject, r.session, r.task, r.output) for r in table.itertuples()]
    record = {**state(recipe, content, inputs, selection, band_change, rows),
              "methods": table.attrs["methods"]}
    with atomic_output(path) as staged:
        staged.write_text(json.dumps(record, indent=1) + "\n", encoding="utf-8")


