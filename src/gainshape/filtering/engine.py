"""Array in, array out: pad, FFT, multiply by the response, transform back.

Vocabulary: *rows* are everything but the last axis (channels, epochs); a
*segment* is a run of samples ``[start, stop)`` filtered on its own (between
discontinuities or NaN runs); *support* is the kernel's reach in samples, and
every segment is padded by at least that much on each side. This module knows
nothing of MNE; ``design`` is any object with ``support``, ``sfreq``,
``kernel`` and ``spectrum(n_fft, dtype)`` (a :class:`gainshape.FilterDesign`).
"""

from __future__ import annotations

import os
from contextlib import contextmanager
from dataclasses import dataclass

import numpy as np

from .._checks import check_int, check_option, warn
from ..shaping.rates import KernelPart
from .._checks import PAD_MODES
from .blocks import filter_segment

__all__ = ["Progress", "check_finite", "check_samples", "fft_workers", "filter_array"]

_SEGMENT_KERNELS = 3  # a segment shorter than this many kernels gets a warning
_LONG_WORK_ROW_SAMPLES = 10_000_000  # bars for verbose=None only above this much work


def filter_array(
    data: np.ndarray,
    design,
    *,
    pad: str = "reflect",
    segments=None,
    nan: str = "raise",
    n_jobs: int = 1,
    rows=None,
    out: np.ndarray | None = None,
    assume_finite: bool = False,
    words: SegmentWords | None = None,
    progress: Progress | None = None,
) -> np.ndarray:
    """Filter ``data`` along its last axis with ``design``.

    Parameters
    ----------
    data : ndarray of float32 or float64, shape (..., n_times)
    design : FilterDesign
    pad : str
        A ``numpy.pad`` mode used to extend each segment by the kernel's
        support on both sides.
    segments : list of (start, stop) or None
        Runs of samples filtered independently; samples outside every
        segment are copied unchanged. None: the whole record.
    nan : {"raise", "split"}
        "raise": non-finite samples raise ValueError before any work.
        "split": runs of non-finite samples become segment boundaries and
        stay as they are.
    n_jobs : int
        FFT worker threads (-1: all cores).
    rows : array of int or None
        Indices into the flattened leading axes of the rows to filter; the
        others are copied unchanged. None: every row.
    out : ndarray or None
        Where to write the result (may be ``data`` itself to filter in
        place); a new array of ``data``'s dtype when None.
    assume_finite : bool
        The caller has already checked the rows for non-finite values (with
        its own names for them); skips the check.
    words : SegmentWords | None
        How the warning about a short segment names it and what it advises.
    progress : Progress | None
        How to show progress (see :class:`Progress`); None: silently.

    Returns
    -------
    ndarray
        The filtered data, same shape and dtype as ``data``.

    Examples
    --------
    >>> import numpy as np
    >>> from gainshape import lowpass
    >>> from gainshape import design
    >>> x = np.random.default_rng(0).standard_normal((2, 1000))
    >>> filter_array(x, design(lowpass(20.0), 250.0)).shape
    (2, 1000)
    """
    data = check_samples(data)
    pad = check_option("pad", pad, PAD_MODES)
    nan = check_option("nan", nan, ("raise", "split"))
    workers = fft_workers(n_jobs)
    all_rows = data.reshape(-1, data.shape[-1])
    picked = np.arange(all_rows.shape[0]) if rows is None else np.asarray(rows, dtype=int)
    segments = _check_segments(segments, data.shape[-1])
    if nan == "raise" and not assume_finite:
        check_finite(all_rows, picked=picked)
    if out is None:
        out = np.empty_like(data)
    out_rows = out.reshape(-1, data.shape[-1])
    if not np.shares_memory(out_rows, all_rows):
        whole = nan == "raise" and segments == [(0, data.shape[-1])]
        untouched = np.setdiff1d(np.arange(all_rows.shape[0]), picked) if whole else slice(None)
        out_rows[untouched] = all_rows[untouched]  # picked rows are overwritten below
    with _bar(progress, picked.size * data.shape[-1]) as advance:
        for group, group_segments in _row_groups(all_rows, picked, segments, nan):
            for start, stop in group_segments:
                _warn_if_short(design, start, stop, words or SegmentWords())
                periodic = _periodic_extension(stop - start, design, pad)
                filter_rows = _filter_periodic if periodic else filter_segment
                filter_rows(all_rows, out_rows, group, start, stop, design, pad, workers, advance)
    return out


@dataclass(frozen=True)
class SegmentWords:
    """How a warning about a segment shorter than the kernel reads.

    ``name`` names the segment (e.g. "Each epoch"; None: by its times);
    ``hint`` is the advice appended.

    Examples
    --------
    >>> SegmentWords("Each epoch").hint
    ''
    """

    name: str | None = None
    hint: str = ""


@dataclass(frozen=True)
class Progress:
    """How a progress bar counts the work of :func:`filter_array`.

    ``unit`` ("s" of recording, "epoch") with ``total`` of them; one sample
    of one row is worth ``per_row_sample`` units. ``always``: show it even
    for short work (else only above 10 million row samples).

    Examples
    --------
    >>> Progress("s", 60.0, 1 / (32 * 1000.0)).total
    60.0
    """

    unit: str
    total: float
    per_row_sample: float
    always: bool = False


@contextmanager
def _bar(progress, row_samples):
    """Yields ``advance(row_samples)``: moves a text progress bar (tqdm), or nothing."""
    if progress is None or not (progress.always or row_samples > _LONG_WORK_ROW_SAMPLES):
        yield lambda n: None
        return
    from tqdm.std import tqdm  # plain text: no widget warnings in Jupyter

    with tqdm(total=progress.total, unit=progress.unit, desc="filtering", leave=False,
              bar_format="{l_bar}{bar}| {n:.0f}/{total:.0f} {unit} [{elapsed}<{remaining}]") as bar:
        yield lambda n: bar.update(n * progress.per_row_sample)


def check_finite(rows: np.ndarray, row_names=None, sfreq=None, *, picked=None,
                 first_sample=0) -> None:
    """Raise ValueError naming the rows (and first times) holding NaN or inf.

    ``picked`` limits the check to those rows; ``row_names`` follow its order;
    ``first_sample`` is the recording's sample number of ``rows[:, 0]`` (for
    blocks read from a file), so positions are the recording's own.
    Rows are summed first (one pass, no copy); only rows whose sum is not
    finite are scanned sample by sample.

    Examples
    --------
    >>> import numpy as np
    >>> check_finite(np.array([[0.0, np.nan]]), ["Cz"])
    Traceback (most recent call last):
    ...
    ValueError: The data contain NaN or infinite values in Cz (first at sample 1); clean or interpolate them, or pass nan='split' to filter around them.
    """
    picked = np.arange(rows.shape[0]) if picked is None else np.asarray(picked)
    suspects = [i for i, r in enumerate(picked) if not np.isfinite(np.add.reduce(rows[r], dtype=float))]
    bad = [(i, int(np.argmin(np.isfinite(rows[picked[i]])))) for i in suspects
           if not np.isfinite(rows[picked[i]]).all()]
    if not bad:
        return
    parts = []
    for i, first in bad[:5]:
        name = row_names[i] if row_names is not None else f"row {picked[i]}"
        sample = first_sample + first
        where = f"{sample / sfreq:.3f} s, sample {sample}" if sfreq else f"sample {sample}"
        parts.append(f"{name} (first at {where})")
    more = f" and {len(bad) - 5} more" if len(bad) > 5 else ""
    raise ValueError(
        f"The data contain NaN or infinite values in {', '.join(parts)}{more}; "
        "clean or interpolate them, or pass nan='split' to filter around them."
    )


def check_samples(data, name: str = "data") -> np.ndarray:
    """``data`` if it is a float32/float64 array (native byte order) with at
    least one row of samples along its last axis; else an error naming ``name``.

    >>> check_samples(np.zeros((2, 3))).shape
    (2, 3)
    """
    if not isinstance(data, np.ndarray):
        raise TypeError(f"The '{name}' parameter takes a NumPy array; a {type(data).__name__} was given.")
    if data.dtype not in (np.float32, np.float64):
        raise TypeError(
            f"The '{name}' parameter must be float32 or float64 (this machine's byte order), "
            f"not {data.dtype}; convert it first, e.g. data.astype(float)."
        )
    if data.ndim == 0 or 0 in data.shape:
        raise ValueError(
            f"The '{name}' parameter must hold at least one row of samples along its last "
            f"axis, not an array of shape {data.shape}."
        )
    return data


def fft_workers(n_jobs) -> int:
    """FFT threads for ``n_jobs`` (-1: all cores), checked.

    >>> fft_workers(2)
    2
    """
    if n_jobs == -1:
        return os.cpu_count() or 1
    return check_int("n_jobs", n_jobs, minimum=1)


def _check_segments(segments, n_times):
    if segments is None:
        return [(0, n_times)]
    checked = []
    for start, stop in segments:
        if not 0 <= start < stop <= n_times:
            raise ValueError(
                f"Segment ({start}, {stop}) lies outside the record's {n_times} "
                "samples or is empty."
            )
        checked.append((int(start), int(stop)))
    return checked


def _row_groups(rows, picked, segments, nan):
    """Yield (row indices, segments) to filter; NaN runs split segments."""
    if nan == "raise":
        yield picked, segments
        return
    patterns = {}
    for r in picked:
        patterns.setdefault(np.isfinite(rows[r]).tobytes(), []).append(r)
    for members in patterns.values():
        runs = _true_runs(np.isfinite(rows[members[0]]))
        pieces = [
            (max(a, s), min(b, e)) for s, e in segments for a, b in runs if max(a, s) < min(b, e)
        ]
        if pieces:
            yield np.array(members), pieces


def _true_runs(mask: np.ndarray):
    edges = np.flatnonzero(np.diff(np.concatenate([[0], mask.astype(np.int8), [0]])))
    return list(zip(edges[::2].tolist(), edges[1::2].tolist()))


def _warn_if_short(design, start, stop, words):
    """Warn when the kernel is longer than a third of the segment it filters:
    most of the segment is then within the kernel's reach of its padded ends."""
    n_kernel, sfreq = design.taps.size, design.sfreq
    if stop - start >= _SEGMENT_KERNELS * n_kernel:
        return
    name, hint = words.name or f"The segment at {start / sfreq:.3f}-{stop / sfreq:.3f} s", words.hint
    warn(
        f"{name} ({stop - start} samples, {(stop - start) / sfreq:.3g} s) is shorter than "
        f"{_SEGMENT_KERNELS} times the filter's kernel ({n_kernel} samples, "
        f"{n_kernel / sfreq:.3g} s): much of it is filtered against the padding, so "
        f"the result there depends on the padding.{' ' + hint if hint else ''}",
    )


_PERIODS = {"reflect": lambda n: 2 * n - 2, "symmetric": lambda n: 2 * n, "wrap": lambda n: n}


def _periodic_extension(n_seg: int, design, pad: str) -> bool:
    """True when the segment is short beside the kernel (the padding at least
    twice the segment on each side) and the pad mode extends it periodically.

    ``numpy.pad``'s "reflect", "symmetric" and "wrap" modes, however wide,
    are the periodic extension of the segment mirrored (period 2n - 2 or 2n)
    or repeated (period n). Filtering it is then a circular convolution over
    one period with the kernel folded onto that period: exactly the padded
    result, for the work of about three segments instead of the segment
    plus its padding. Zero-phase kernels only (their folded spectra are real).

    Examples
    --------
    >>> from types import SimpleNamespace
    >>> long_kernel = SimpleNamespace(support=50_000, exact=False)
    >>> _periodic_extension(2000, long_kernel, "reflect"), _periodic_extension(2000, long_kernel, "edge")
    (True, False)
    """
    return (pad in _PERIODS and not getattr(design, "exact", False) and n_seg > 1
            and not getattr(design, "causal", False) and design.support >= 2 * n_seg)


def _filter_periodic(rows, out_rows, group, start, stop, design, pad, workers, advance):
    """Filter ``rows[group, start:stop]`` as the periodic extension its pad
    mode makes (see :func:`_periodic_extension`): the kernel folded onto one
    period reaches about one segment to each side, so padding by it is
    the same extension, and the blocks are about three segments long."""
    folded = _folded(design, _PERIODS[pad](stop - start))
    filter_segment(rows, out_rows, group, start, stop, folded, pad, workers, advance)


def _folded(design, period: int) -> KernelPart:
    """The kernel folded onto ``period`` samples, centred.

    >>> from types import SimpleNamespace
    >>> k = SimpleNamespace(taps=np.array([1.0, 2.0, 3.0]), offset=1, sfreq=10.0)
    >>> _folded(k, 2).taps.tolist()  # t = -1 and 1 fall on the same sample
    [4.0, 2.0]
    """
    half = period // 2
    at = (np.arange(design.taps.size) - design.offset + half) % period
    return KernelPart(np.bincount(at, weights=design.taps, minlength=period), half, design.sfreq)


