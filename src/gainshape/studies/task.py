"""One recording's task: read it whole (or say how it is damaged), filter it, write the
output and its record, and measure the band change."""

from __future__ import annotations

import json
import re
import shutil
import sys
import time
import warnings
from pathlib import Path

from .._files import atomic_outputs
from ..examining.summaries import band_change
from ..filtering.adapters import apply
from ..record.recipes import recipe_from_content
from ..record.bids import bids_filters
from ..record.methods import methods_text
from .stamps import file_fingerprint, file_stamps, SIDECAR_KEY, stamp, verdict


MB = 2**20


def filter_recording(source: Path, content: dict, output: Path, overwrite: bool,
                      limits: dict) -> tuple:
    """One recording filtered (a Dask task): its table row, and extras: its
    band change (None if it failed or ``limits["band_change"]`` is False) and its
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
            written, error = failed_row(source, output, err)
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
    (None unless ``limits["band_change"]``), in memory from ``pair`` or by groups
    of channels from the files."""
    text = (methods_text(described), methods_text(described, detail="full"))
    if not limits["band_change"]:
        return text, None
    change = band_change(*pair) if pair else band_change_by_groups(
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


def remove_stale_staging(output: Path) -> None:
    """Staging folders a killed worker left for this output (the run holds
    the folder's lock, so none of them is in use)."""
    for name in (output.name, output.with_suffix(".json").name):
        for stale in output.parent.glob(f".{name}.*.partial"):
            shutil.rmtree(stale, ignore_errors=True)


def failed_row(source: Path, output: Path, err: Exception) -> tuple:
    """(the output kept, or None; the error's words) of a failed recording:
    its previous derivative, when there is one, is kept and said so."""
    words = f"{source.name}: {type(err).__name__}: {err}"
    if not (output.is_file() and output.with_suffix(".json").is_file()):
        return None, words
    when = time.strftime("%Y-%m-%d %H:%M:%S", time.localtime(output.stat().st_mtime))
    return output, f"previous output kept, from {when}; {words}"


def band_change_by_groups(source: Path, output: Path, group_bytes: float):
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
