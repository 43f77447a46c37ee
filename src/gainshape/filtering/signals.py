"""Data as the arrays filtering works on: the rows of Raw, Epochs, Evoked and arrays, the
channels picked, the events, and the spans between discontinuities (boundaries, bad
annotations)."""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np

from .._checks import check_positive
from .._compat import channel_type_words, picks_to_indices
from ..record.steps import history, same_rate


_BOUNDARY_PREFIXES = ("edge", "bad_acq_skip")


_NEVER_FILTERED = ("stim",)


@dataclass(frozen=True)
class Signals:
    """Data channels of an input as plain arrays, for the summaries.

    ``data`` has shape (n_channels, n_times) or (n_epochs, n_channels,
    n_times); ``history_ids`` are the ids of its recorded steps.
    """

    data: np.ndarray
    sfreq: float
    ch_names: list
    ch_types: list
    kind: str
    unit: str
    line_freq: float | None
    history_ids: list
    times: np.ndarray
    notches: tuple = ()  # centres (Hz) of the notches its recorded steps removed


def as_arrays(inst, *, sfreq=None, name="inst") -> Signals:
    """Data channels (MNE's "data" picks) of a Raw/Epochs/Evoked, or an array.

    Examples
    --------
    >>> import numpy as np
    >>> as_arrays(np.zeros((3, 100)), sfreq=100.0).ch_names
    ['0', '1', '2']
    """
    if isinstance(inst, np.ndarray):
        sfreq = require_sfreq(sfreq)
        if inst.ndim not in (1, 2) or inst.dtype.kind != "f" or 0 in inst.shape:
            raise ValueError(
                f"The '{name}' parameter takes a 1-D or 2-D (channels x times) floating-point "
                "array with at least one channel and one sample; one of shape "
                f"{inst.shape} and dtype {inst.dtype} was given."
            )
        data = np.atleast_2d(inst)
        names = [str(i) for i in range(data.shape[0])]
        return Signals(data, float(sfreq), names, ["n/a"] * len(names), "array", "unit",
                       None, [], np.arange(data.shape[-1]) / float(sfreq))
    kind = mne_kind(inst, name)
    check_sfreq(inst, sfreq)
    idx = picks_to_indices(inst.info, "data", allow_empty=True)
    if idx.size == 0 or not record_count(inst, kind):
        raise ValueError(
            f"The '{name}' {kind} has no data channels or no "
            f"{'epochs' if kind == 'epochs' else 'samples'} to work on ({len(inst.ch_names)} channels: {', '.join(inst.ch_names[:4])})."
        )
    data = inst.get_data(picks=idx) if kind != "evoked" else inst.data[idx]
    steps = history(inst)
    ids = [step.get("id") for step in steps]
    notches = tuple(sorted({round((b["low"] + b["high"]) / 2, 2) for step in steps
                            for b in step["realized"].get("stop_bands", []) if "notch" in b["kind"]}))
    return Signals(data, float(inst.info["sfreq"]), [inst.ch_names[i] for i in idx],
                   inst.get_channel_types(picks=idx), kind, "V", inst.info.get("line_freq"),
                   ids, inst.times, notches)


def array_picks(picks, n_ch) -> np.ndarray:
    """Row indices (second-to-last axis) of an array from integer picks or a slice."""
    try:
        rows = np.arange(n_ch)[picks]
    except (IndexError, TypeError):
        raise ValueError(
            f"The 'picks' parameter takes an index of the array's {n_ch} rows along its "
            f"second-to-last axis (integers, a slice or a boolean mask); {picks!r} was given."
        ) from None
    return _distinct_nonempty(np.atleast_1d(rows), picks, lambda i: f"row {i}")


def _distinct_nonempty(idx, picks, name) -> np.ndarray:
    """``idx`` if it selects something and names nothing twice."""
    if idx.size == 0:
        raise ValueError(
            f"The 'picks' parameter ({_short_repr(picks)}) selects no channel to filter; "
            "pick at least one data channel."
        )
    values, counts = np.unique(idx, return_counts=True)
    if (counts > 1).any():
        twice = ", ".join(name(int(i)) for i in values[counts > 1])
        raise ValueError(
            f"The 'picks' parameter names {twice} more than once; name each channel once."
        )
    return idx


def _short_repr(value) -> str:
    text = repr(value)
    return text if len(text) <= 60 else text[:57] + "..."


def pick_indices(inst, picks) -> np.ndarray:
    names = inst.ch_names
    listing = (f"The data have {len(names)} channels ({', '.join(names[:6])}"
               f"{', ...' if len(names) > 6 else ''})")
    given = picks
    if isinstance(picks, np.ndarray) and picks.dtype == bool and picks.shape == (len(names),):
        picks = np.flatnonzero(picks)  # a boolean mask over the channels
    try:
        idx = picks_to_indices(inst.info, picks, allow_empty=True)
    except (ValueError, TypeError, IndexError) as err:
        unknown = _unknown_channel_names(inst, picks)
        if unknown:
            raise ValueError(
                f"The 'picks' parameter names channel(s) not in the data: {', '.join(unknown)}. "
                f"{listing}; channel types such as 'eeg' or 'data' are also accepted."
            ) from err
        raise ValueError(
            f"The 'picks' parameter ({_short_repr(given)}) selects no channels of these data. "
            f"{listing}; pass names, indices below {len(names)}, a boolean mask of "
            f"{len(names)} values or a channel type such as 'eeg'."
        ) from err
    _distinct_nonempty(idx, given, lambda i: names[i])
    types = inst.get_channel_types(picks=idx)
    blocked = [i for i, t in zip(idx, types) if t in _NEVER_FILTERED]
    if blocked and not (isinstance(picks, str) and picks == "all"):
        names = ", ".join(inst.ch_names[i] for i in blocked)
        raise ValueError(
            f"The 'picks' parameter selects stim channel(s) {names}; stim "
            "channels are never filtered. Pick data channels instead."
        )
    return _distinct_nonempty(np.array([i for i in idx if i not in blocked], dtype=int),
                              given, lambda i: names[i])


def _unknown_channel_names(inst, picks) -> list[str]:
    """The strings in ``picks`` that are neither channel names nor type words."""
    names = [picks] if isinstance(picks, str) else picks
    if not isinstance(names, (list, tuple)):
        return []
    words = channel_type_words()
    return [str(n) for n in names if isinstance(n, str) and n not in inst.ch_names and n not in words]


def names_of_rows(names, kind, n_rows):
    """Channel names for each filtered row (epochs repeat them per epoch)."""
    if kind != "epochs":
        return names
    return [f"{name} in epoch {i // len(names)}" for i, name in
            zip(range(n_rows), names * (n_rows // max(len(names), 1)))]


def rows_and_segments(inst, kind, idx, data, with_segments=True):
    if kind == "epochs":
        n_epochs, n_ch = data.shape[:2]
        rows = (np.arange(n_epochs)[:, None] * n_ch + idx[None, :]).ravel()
        return rows, None
    if kind == "evoked":
        return idx, None
    return idx, raw_segments(inst) if with_segments else None


def event_onsets(inst, events, sfreq: float):
    """Stimulus onsets in seconds: from ``events`` (an MNE events array with
    samples in its first column, sample indices, or annotations), or, when
    ``events`` is None, from ``inst`` (an Epochs' events; a Raw's
    annotations other than bad and edge spans, else its stim channels);
    None when there are none or ``events`` is False.

    >>> event_onsets(None, np.array([[250, 0, 1], [500, 0, 1]]), 250.0)
    array([1., 2.])
    """
    import mne

    if events is False:
        return None
    if events is None:
        events = _events_of(inst)
    if events is None:
        return None
    if isinstance(events, mne.Annotations):
        return np.asarray(events.onset, dtype=float)
    array = np.asarray(events)
    if array.ndim not in (1, 2) or array.size == 0 or not np.issubdtype(array.dtype, np.number):
        raise ValueError("The 'events' parameter takes an MNE events array (samples in the "
                         "first column), annotations, None or False; an array of shape "
                         f"{array.shape} was given.")
    return (array[:, 0] if array.ndim == 2 else array).astype(float) / sfreq


def _events_of(inst):
    """The onsets an MNE object carries (see :func:`event_onsets`)."""
    import mne

    if isinstance(inst, mne.BaseEpochs):
        return inst.events
    if not isinstance(inst, mne.io.BaseRaw):
        return None
    kept = [i for i, d in enumerate(inst.annotations.description)
            if not d.lower().startswith(("bad", "edge"))]
    if kept:
        return inst.annotations[kept]
    if "stim" in inst.get_channel_types():
        found = mne.find_events(inst, shortest_event=1, verbose=False)
        return (found[:, 0] - inst.first_samp) if found.size else None
    return None


def clean_spans(inst):
    """For a Raw, the runs of samples (start, stop) that no annotation whose
    description starts with "bad" covers (as MNE leaves them out of
    spectra); None for Epochs, Evoked and arrays.

    Examples
    --------
    >>> import mne, numpy as np
    >>> raw = mne.io.RawArray(np.zeros((1, 1000)), mne.create_info(1, 100.0, "eeg"), verbose=False)
    >>> raw.set_annotations(mne.Annotations([2.0], [1.5], ["BAD_movement"]))  # doctest: +ELLIPSIS
    <RawArray ...>
    >>> clean_spans(raw)
    [(0, 200), (350, 1000)]
    """
    import mne

    if not isinstance(inst, mne.io.BaseRaw):
        return None
    n, bad = inst.n_times, np.zeros(inst.n_times + 1, int)
    for start, stop, _ in _annotated_spans(inst, ("bad",)):
        bad[start] += 1
        bad[stop] -= 1
    good = np.cumsum(bad)[:n] == 0
    edges = np.flatnonzero(np.diff(np.concatenate([[0], good.astype(int), [0]])))
    return [(int(a), int(b)) for a, b in zip(edges[::2], edges[1::2])]


def _annotated_spans(raw, prefixes):
    """(start, stop, lower-case description) in samples, clipped to the record,
    of the annotations whose description starts with one of ``prefixes``."""
    n, annot = raw.n_times, raw.annotations
    for onset, duration, desc in zip(annot.onset, annot.duration, annot.description):
        if desc.lower().startswith(prefixes):
            start = int(raw.time_as_index(onset, use_rounding=True, origin=annot.orig_time)[0])
            stop = start + int(round(duration * raw.info["sfreq"]))
            yield min(max(start, 0), n), min(max(stop, 0), n), desc.lower()


def raw_segments(raw):
    """Runs of samples between discontinuities; bad_acq_skip spans are left out."""
    n = raw.n_times
    cuts, skipped = {0, n}, []
    for start, stop, low in _annotated_spans(raw, _BOUNDARY_PREFIXES):
        cuts.update((start, stop))
        if low.startswith("bad_acq_skip") and stop > start:
            skipped.append((start, stop))
    bounds = sorted(cuts)
    return [
        (a, b)
        for a, b in zip(bounds[:-1], bounds[1:])
        if b > a and not any(s <= a and b <= e for s, e in skipped)
    ]


def check_sfreq(inst, sfreq):
    if sfreq is not None and not same_rate(check_positive("sfreq", sfreq), inst.info["sfreq"]):
        raise ValueError(
            f"The 'sfreq' parameter ({sfreq!r}) differs from the data's "
            f"info['sfreq'] ({inst.info['sfreq']!r}); leave it out for MNE objects."
        )


def require_sfreq(sfreq) -> float:
    if sfreq is None:
        raise ValueError(
            "The 'sfreq' parameter is required for arrays: pass the sampling "
            "rate in Hz, e.g. sfreq=1000.0."
        )
    return check_positive("sfreq", sfreq)


def record_count(inst, kind) -> int:
    """Epochs in an Epochs (samples otherwise): 0 means nothing to work on."""
    if kind == "epochs":  # unloaded epochs know their events, not yet their drops
        return len(inst) if inst.preload else len(inst.events)
    return inst.times.size


def mne_kind(inst, name="inst") -> str:
    import mne

    if isinstance(inst, mne.io.BaseRaw):
        return "raw"
    if isinstance(inst, mne.BaseEpochs):
        return "epochs"
    if isinstance(inst, mne.Evoked):
        return "evoked"
    raise TypeError(
        f"The '{name}' parameter takes an mne.io.Raw, mne.Epochs, mne.Evoked or a "
        f"NumPy array; a {type(inst).__name__} was given."
    )
