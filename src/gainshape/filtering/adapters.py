"""MNE objects and arrays in, filtered objects out (with ``outofcore``, the only
modules that know MNE).

Vocabulary (MNE's): *inst* is a ``Raw``, ``Epochs`` or ``Evoked``; *picks*
selects channels as in MNE; *data channels* are those MNE's ``"data"``
picks; a *discontinuity* is an annotation whose description starts with
``edge`` or ``bad_acq_skip`` (case-insensitive), as MNE marks joined
recordings.
"""

from __future__ import annotations

from typing import Any

import numpy as np

from .._checks import (
    check_bool, check_int, check_option, check_positive, DEFAULT_TOLERANCE, PAD_MODES, warn,
)
from .._compat import copy_with_empty_data, data_of, picks_to_indices, unlocked
from .._types import Filtered, KernelRequest, Picks, Recording, Verbosity
from ..record.steps import (
    chosen_after, fingerprint, make_step, RATE_PPM, same_rate, store_step, usable_steps,
)
from ..shaping.curves import GainCurve
from ..shaping.design import check_filter, check_kernel_request, design
from ..shaping.filter_design import FilterDesign
from ..shaping.measure import passband_edges
from .engine import check_finite, check_samples, fft_workers, filter_array, Progress, SegmentWords
from .outofcore import check_request, filtered_raw
from .signals import (
    array_picks, check_sfreq, mne_kind, names_of_rows, pick_indices, raw_segments, record_count,
    require_sfreq, rows_and_segments,
)

__all__ = ["apply", "replay"]

_APPLY_DEFAULTS = {"causal": False, "kernel": "shortest", "tolerance": DEFAULT_TOLERANCE}
_EPOCH_HINT = (
    "Filter the continuous recording before epoching, or use a gentler "
    "high-pass (a higher cutoff needs a shorter kernel)."
)


def apply(
    inst: Recording | np.ndarray,
    filt: GainCurve | FilterDesign,
    *,
    sfreq: float | None = None,
    picks: Picks = None,
    pad: str = "reflect",
    causal: bool = False,
    kernel: KernelRequest = "shortest",
    tolerance: float = DEFAULT_TOLERANCE,
    nan: str = "raise",
    n_jobs: int = 1,
    copy: bool = True,
    return_step: bool = False,
    verbose: Verbosity = None,
    comparison: Any = None,
) -> Filtered:
    """Filter a Raw, Epochs, Evoked or array with a gain curve or design.

    Parameters
    ----------
    inst : mne.io.Raw | mne.Epochs | mne.Evoked | ndarray
        Data to filter; arrays are filtered along their last axis.
    filt : GainCurve | FilterDesign
        What to apply. A curve is realized with :func:`gainshape.design`
        using ``causal``, ``kernel`` and ``tolerance``; a ready design
        carries its own (asking for others is an error).
    sfreq : float | None
        Sampling rate in Hz; required for arrays (unless ``filt`` is a
        design, whose rate is used), checked against ``info["sfreq"]``
        otherwise.
    picks : str | list | slice | None
        Channels as in MNE (names, types, indices, "data", "all"). None:
        MNE's data channels, bad channels included. EOG, ECG, EMG and misc
        channels are filtered only when picked; stim channels never ("all"
        leaves them out; naming one is an error). For arrays: indices along
        the second-to-last axis.
    pad : str
        ``numpy.pad`` mode extending each segment by the kernel's support.
    causal, kernel, tolerance : bool, str or float, float
        Passed to :func:`gainshape.design` when ``filt`` is a GainCurve. A
        FilterDesign carries its own: asking it for another is an error.
    nan : {"raise", "split"}
        Non-finite samples raise (naming channels and times), or split the
        data into segments filtered around them (they stay non-finite).
    n_jobs : int
        FFT worker threads (-1: all cores).
    copy : bool
        True: return a filtered copy and leave ``inst`` untouched. False:
        filter in place and return ``inst`` itself; if that is interrupted
        (an error, Ctrl-C), the object's history gets a step marked
        interrupted (data partly filtered) before the error is raised, and
        the methods text, BIDS entry and ``replay`` say so. An array
        filtered in place has no history: reload it. A Raw that is not loaded
        is never read whole: the result is a Raw that filters block by block
        as its data are read or saved (memory bounded by the block, not the
        recording; ``pad`` must then be a local mode, ``kernel`` not "exact",
        ``copy`` True; its history step carries no fingerprints).
    return_step : bool
        Also return the step record (a dict). MNE objects keep it in their
        history anyway (see :func:`gainshape.history`); arrays have nowhere
        to keep it, so this is how to get theirs.
    verbose : bool | str | int | None
        Progress bar: True shows it, False hides it; None follows MNE's log
        level (shown for long work when the level is INFO or more detailed,
        as by default; ``mne.set_log_level("WARNING")`` silences it); an MNE
        level ("info", "warning", ...) applies to this call. A plain text
        bar (no widgets), counting seconds of data, or epochs.
    comparison : xarray.Dataset | None
        The :func:`gainshape.compare_filters` result this filter was chosen
        after: the step records the comparison's candidates, data, reference
        and components, and the methods paragraph says so in one sentence.

    Returns
    -------
    Same type as ``inst`` (and the step dict if ``return_step``)
        For MNE objects, ``info["highpass"]``/``info["lowpass"]`` are set
        from the realized half-amplitude cutoffs (never loosened) when the
        picks cover every data channel, and the step is appended to the
        history in ``info["description"]``.

    Raises
    ------
    ValueError
        If the data hold NaN (with ``nan="raise"``), the picks select
        nothing, or the options are not understood; before any work.

    See Also
    --------
    design, replay, history, methods_text

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((4, 2500))
    >>> y = gs.apply(x, gs.bandpass(1.0, 40.0), sfreq=250.0)
    >>> y.shape, y.dtype
    ((4, 2500), dtype('float64'))
    """
    check_filter(filt)
    noted = {} if comparison is None else {"chosen_after_comparison": chosen_after(comparison)}
    check_option("nan", nan, ("raise", "split"))
    check_option("pad", pad, PAD_MODES)
    copy = check_bool("copy", copy)
    return_step = check_bool("return_step", return_step)
    options = _design_options(filt, causal, kernel, tolerance)
    fft_workers(n_jobs)  # checked before the design is made
    if isinstance(inst, np.ndarray):
        out, step = _apply_array(inst, filt, sfreq, picks, pad, options, nan, n_jobs, copy,
                                 verbose, noted)
        return (out, step) if return_step else out
    kind = mne_kind(inst)
    check_sfreq(inst, sfreq)
    if not record_count(inst, kind):
        raise ValueError(f"The 'inst' parameter is an {kind} object without any epochs "
                         "left (all dropped?); there is nothing to filter.")
    idx = pick_indices(inst, picks)
    if kind == "raw" and not inst.preload:
        check_request(filt, kernel, pad, nan, copy)
        filt = _realize(filt, inst.info["sfreq"], options)
        out, step = _apply_lazy(inst, filt, idx, pad, nan, n_jobs, noted)
    else:
        filt = _realize(filt, inst.info["sfreq"], options)
        out, step = _apply_loaded(inst, kind, filt, idx, pad, nan, n_jobs, copy, verbose, noted)
    _update_info(out, idx, filt)
    store_step(out.info, step)
    return (out, step) if return_step else out


def _apply_loaded(inst, kind, filt, idx, pad, nan, n_jobs, copy, verbose, noted):
    """Filter data in memory; returns the filtered object and its step."""
    names = [inst.ch_names[i] for i in idx]
    if kind == "epochs" and not inst.preload:
        inst = inst.copy() if copy else inst
        inst.load_data()
        copy = False  # the loaded copy is ours to filter in place
    data = data_of(inst) if kind != "evoked" else inst.data
    rows, segments = rows_and_segments(inst, kind, idx, data)
    row_names = names_of_rows(names, kind, len(rows))
    flat = data.reshape(-1, data.shape[-1])
    if nan == "raise":  # before any work, on the input itself
        check_finite(flat, row_names, None if kind == "epochs" else inst.info["sfreq"],
                     picked=rows)
    out = copy_with_empty_data(inst) if copy else inst
    out_data = data_of(out) if kind != "evoked" else out.data
    before = fingerprint(flat, rows)
    seconds = None if segments is None else [
        [a / filt.sfreq, b / filt.sfreq] for a, b in segments]

    def record(after, also=None):
        return make_step(filt, channels=names, pad=pad, nan=nan, segments=seconds,
                         dtype=str(data.dtype), before=before, after=after,
                         data_sfreq=inst.info["sfreq"], also={**noted, **(also or {})})

    try:
        filter_array(
            data, filt, pad=pad, segments=segments, nan=nan, n_jobs=n_jobs, rows=rows,
            out=out_data, assume_finite=True,
            progress=_progress(verbose, kind, len(rows), data.shape[-1], inst.info["sfreq"], len(idx)),
            words=SegmentWords("Each epoch" if kind == "epochs" else None,
                               " ".join(filter(None, [_gentlest_edge(filt),
                                                      _EPOCH_HINT if kind == "epochs" else ""]))),
        )
    except BaseException:
        if out is inst:  # in place: the object itself now holds partly filtered data
            store_step(inst.info, record(None, also={"interrupted": True}))
        raise
    return out, record(fingerprint(out_data.reshape(-1, data.shape[-1]), rows))


def _apply_lazy(raw, filt, idx, pad, nan, n_jobs, noted):
    """A lazily filtered Raw for one that is not loaded, and its step."""

    segments = raw_segments(raw)
    out = filtered_raw(raw, filt, idx, pad, n_jobs, segments)
    seconds = [[a / filt.sfreq, b / filt.sfreq] for a, b in segments]
    step = make_step(filt, channels=[raw.ch_names[i] for i in idx], pad=pad, nan=nan,
                     segments=seconds, dtype="float64", before=None, after=None,
                     data_sfreq=raw.info["sfreq"], also={**noted, "lazy": True})
    return out, step


def _apply_array(data, filt, sfreq, picks, pad, options, nan, n_jobs, copy, verbose, noted):
    if sfreq is None and isinstance(filt, FilterDesign):
        sfreq = filt.sfreq
    sfreq = require_sfreq(sfreq)
    data = _native_float(data, copy)
    n_ch = data.shape[-2] if data.ndim >= 2 else 1
    channels = np.arange(n_ch) if picks is None else array_picks(picks, n_ch)
    filt = _realize(filt, sfreq, options)
    n_lead = int(np.prod(data.shape[:-2])) if data.ndim >= 2 else 1
    rows = (np.arange(n_lead)[:, None] * n_ch + np.atleast_1d(channels)[None, :]).ravel()
    flat = data.reshape(-1, data.shape[-1])
    before = fingerprint(flat, rows)
    out = filter_array(
        data, filt, pad=pad, nan=nan, n_jobs=n_jobs, rows=rows,
        out=None if copy else data, words=SegmentWords(hint=_gentlest_edge(filt)),
        progress=_progress(verbose, "array", rows.size, data.shape[-1], sfreq, rows.size),
    )
    step = make_step(filt, channels=[f"row {c}" for c in np.atleast_1d(channels)], pad=pad,
                     nan=nan, segments=None, dtype=str(data.dtype), before=before,
                     after=fingerprint(out.reshape(-1, out.shape[-1]), rows), data_sfreq=sfreq,
                     also={**noted, "rows": [int(c) for c in np.atleast_1d(channels)]})
    return out, step


def _gentlest_edge(filt) -> str:
    """Which edge makes the kernel long: the lowest half-amplitude frequency."""
    edges = filt.characteristics.half_amplitude
    if not edges:
        return ""
    low = min(edges, key=float)
    kind = "high-pass" if low.direction == "rising" else "low-pass"
    return f"The kernel's length comes from its lowest edge, the {kind} edge at {float(low):.3g} Hz."


def _progress(verbose, kind, n_rows, n_times, sfreq, n_channels) -> Progress | None:
    """The progress bar for ``verbose``: True shows it, False hides it, None (or
    an MNE level name or number) shows it for long work when MNE's log level
    is INFO or more detailed. Epochs are counted, other data in seconds."""
    import logging

    import mne

    if verbose is None:
        level = mne.utils.logger.getEffectiveLevel()
    elif isinstance(verbose, str):
        level = logging.getLevelName(verbose.upper())
        if not isinstance(level, int):
            raise ValueError(f"{verbose!r} is not a choice for 'verbose': use True, False, None "
                             "or a logging level such as 'info' or 'warning'.")
    elif isinstance(verbose, (bool, np.bool_)):
        level = logging.INFO if verbose else logging.CRITICAL + 1
    else:
        level = check_int("verbose", verbose, minimum=0)
    if level > logging.INFO:
        return None
    always = isinstance(verbose, (bool, np.bool_)) and bool(verbose)
    if kind == "epochs":
        return Progress("epoch", n_rows / n_channels, 1.0 / (n_channels * n_times), always)
    return Progress("s", n_times / sfreq, 1.0 / (n_rows * sfreq), always)


def _design_options(filt, causal, kernel, tolerance) -> dict:
    """The options for :func:`design`; for a ready design, a check that none
    asks for something the design is not."""
    options = {"causal": check_bool("causal", causal), "kernel": check_kernel_request(kernel),
               "tolerance": check_positive("tolerance", tolerance, below=1.0)}
    if isinstance(filt, FilterDesign):
        own = {"causal": filt.causal, "kernel": filt.kernel_request, "tolerance": filt.tolerance}
        for name, value in options.items():
            if value != own[name] and value != _APPLY_DEFAULTS[name]:
                raise ValueError(
                    f"The 'filt' parameter is a ready design made with {name}={own[name]!r}, "
                    f"so {name}={value!r} cannot apply to it; leave '{name}' out, or pass "
                    f"the curve (filt.curve) to design it with {name}={value!r}."
                )
    return options


def _realize(filt, sfreq, options) -> FilterDesign:
    if isinstance(filt, FilterDesign):
        if not same_rate(filt.sfreq, sfreq):
            raise ValueError(  # full digits: the rates may differ in the ninth
                f"The 'filt' design was made at {float(filt.sfreq)!r} Hz but the data are "
                f"sampled at {float(sfreq)!r} Hz ({abs(sfreq / filt.sfreq - 1) * 1e6:.3g} parts per million apart; "
                f"up to {RATE_PPM:g} are accepted). Design the curve again at the data's "
                "rate: gs.design(filt.curve, <the data's sfreq>)."
            )
        return filt
    return design(filt, sfreq, **options)


def _check_steps(steps) -> None:
    if not isinstance(steps, (list, tuple)) or not all(
        isinstance(s, dict) and {"design", "application"} <= set(s) for s in steps
    ):
        raise TypeError(
            "The 'steps' parameter takes a list of recorded steps, e.g. "
            f"gs.history(filtered); a {type(steps).__name__} was given. Call "
            "replay(steps, unfiltered_data)."
        )


def _native_float(data, copy) -> np.ndarray:
    """``data`` checked (:func:`gainshape.filtering.engine.check_samples`), byte-swapped
    floats (e.g. ``>f8`` from a file) first put in native order, which needs
    ``copy=True``."""
    if data.dtype.kind == "f" and not data.dtype.isnative:
        if not copy:
            raise ValueError(
                f"The 'copy' parameter is False, but the array's byte order ({data.dtype.str}) "
                "is not this machine's, so it cannot be filtered in place; use copy=True."
            )
        data = data.astype(data.dtype.newbyteorder("="))
    return check_samples(data, "inst")


def _update_info(inst, idx, filt):
    data_idx = picks_to_indices(inst.info, "data")
    if not set(data_idx.tolist()) <= set(idx.tolist()):
        return
    edges = {name: hz for name, hz, _, _ in passband_edges(filt.characteristics.to_dict())}
    highpass, lowpass = edges.get("high-pass"), edges.get("low-pass")
    with unlocked(inst.info):
        if highpass is not None:
            inst.info["highpass"] = max(float(inst.info["highpass"] or 0.0), highpass)
        if lowpass is not None:
            inst.info["lowpass"] = min(float(inst.info["lowpass"]), lowpass)


def replay(steps: list[dict], inst: Recording, *, n_jobs: int = 1,
           verbose: Verbosity = None) -> Recording:
    """Re-apply recorded steps, in order, to unfiltered data.

    Parameters
    ----------
    steps : list of dict
        Steps from :func:`gainshape.history` (or ``apply(..., return_step=True)``).
    inst : mne.io.Raw | mne.Epochs | mne.Evoked | ndarray
        The data as they were before the first step; left untouched.
    n_jobs, verbose : int, bool or str or int or None
        As for :func:`gainshape.apply`.

    Returns
    -------
    mne.io.Raw | mne.Epochs | mne.Evoked | ndarray
        A filtered copy of ``inst``. A warning says if the input's or the
        result's fingerprint differs from the recorded one.

    See Also
    --------
    history, apply

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> x = np.random.default_rng(0).standard_normal((2, 2000))
    >>> y, step = gs.apply(x, gs.lowpass(20.0), sfreq=250.0, return_step=True)
    >>> np.array_equal(gs.replay([step], x), y)
    True
    """
    _check_steps(steps)
    steps = usable_steps(steps)
    stopped = [n for n, s in enumerate(steps, start=1) if s["application"].get("interrupted")]
    if stopped:
        raise ValueError(
            f"The 'steps' parameter holds interrupted step(s) {stopped}: they left data "
            "partly filtered and cannot be reproduced. Replay the steps before them."
        )
    out = inst
    for number, step in enumerate(steps, start=1):
        curve_record, d, a = step.get("curve", {}), step["design"], step["application"]
        if curve_record.get("reproducible") is False:
            raise ValueError(
                f"Step {number} ({curve_record.get('description')}) was built from a "
                "callable and cannot be replayed; rebuild it with GainCurve.from_points."
            )
        curve = GainCurve.from_dict(curve_record)
        is_array = isinstance(out, np.ndarray)
        picks = a.get("rows") if is_array else step["channels"]
        out, new = apply(
            out, curve, sfreq=d["sfreq"] if is_array else None, picks=picks, pad=a["pad"],
            causal=d["causal"], kernel=d["kernel"], tolerance=d["tolerance"], nan=a["nan"],
            n_jobs=n_jobs, copy=True, return_step=True, verbose=verbose,
        )
        for key, what in (("fingerprint_before", "input"), ("fingerprint_after", "result")):
            if None not in (new[key], step.get(key)) and new[key] != step.get(key):
                warn(f"Step {number}: the {what} differs from the recorded one "
                     f"(fingerprint {new[key][:19]}... vs {str(step.get(key))[:19]}...).")
    return out
