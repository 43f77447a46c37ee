"""Array in, array out: pad, FFT, multiply by the response, transform back.

Vocabulary: *rows* are everything but the last axis (channels, epochs); a
*segment* is a run of samples ``[start, stop)`` filtered on its own (between
discontinuities or NaN runs); *support* is the kernel's reach in samples, and
every segment is padded by at least that much on each side. This module knows
nothing of MNE; ``design`` is any object with ``support``, ``sfreq``,
``kernel`` and ``spectrum(n_fft)`` (a :class:`gainshape.design.FilterDesign`).
"""

from __future__ import annotations

import os

import numpy as np
import scipy.fft as sfft

from ._checks import check_int, check_option, warn

__all__ = ["filter_array", "check_finite", "PAD_MODES"]

PAD_MODES = (
    "reflect",
    "symmetric",
    "edge",
    "constant",
    "linear_ramp",
    "maximum",
    "mean",
    "median",
    "minimum",
    "wrap",
)
_MIN_BLOCK_BYTES = 16 * 2**20
_BLOCK_FRACTION = 0.125  # working memory per block, as a fraction of the data


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
    row_names=None,
    segment_name: str | None = None,
    short_hint: str = "",
    verbose=None,
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
    row_names : list of str or None
        Names for the rows in ``rows`` order, for error messages.
    segment_name : str or None
        How warnings name a segment (e.g. "Each epoch"); None: by its times.
    short_hint : str
        Advice appended to the warning for segments shorter than the kernel.

    Returns
    -------
    ndarray
        The filtered data, same shape and dtype as ``data``.

    Examples
    --------
    >>> import numpy as np
    >>> from gainshape import lowpass
    >>> from gainshape.design import design
    >>> x = np.random.default_rng(0).standard_normal((2, 1000))
    >>> filter_array(x, design(lowpass(20.0), 250.0)).shape
    (2, 1000)
    """
    data = _check_data(data)
    pad = check_option("pad", pad, PAD_MODES)
    nan = check_option("nan", nan, ("raise", "split"))
    workers = _workers(n_jobs)
    all_rows = data.reshape(-1, data.shape[-1])
    picked = np.arange(all_rows.shape[0]) if rows is None else np.asarray(rows, dtype=int)
    segments = _check_segments(segments, data.shape[-1])
    if nan == "raise":
        check_finite(all_rows[picked], row_names)
    if out is None:
        out = np.empty_like(data)
    out_rows = out.reshape(-1, data.shape[-1])
    if not np.shares_memory(out_rows, all_rows):
        out_rows[...] = all_rows
    for group, group_segments in _row_groups(all_rows, picked, segments, nan):
        for start, stop in group_segments:
            _warn_if_short(design, start, stop, segment_name, short_hint)
            _filter_segment(all_rows, out_rows, group, start, stop, design, pad, workers, verbose)
    return out


def check_finite(rows: np.ndarray, row_names=None, sfreq=None) -> None:
    """Raise ValueError naming the rows (and first times) holding NaN or inf.

    Examples
    --------
    >>> import numpy as np
    >>> check_finite(np.array([[0.0, np.nan]]), ["Cz"])
    Traceback (most recent call last):
    ...
    ValueError: The data contain NaN or infinite values in Cz (first at sample 1); clean or interpolate them, or pass nan='split' to filter around them.
    """
    bad = ~np.isfinite(rows)
    bad_rows = np.flatnonzero(bad.any(axis=-1))
    if bad_rows.size == 0:
        return
    parts = []
    for r in bad_rows[:5]:
        name = row_names[r] if row_names is not None else f"row {r}"
        first = int(np.argmax(bad[r]))
        where = f"{first / sfreq:.3f} s" if sfreq else f"sample {first}"
        parts.append(f"{name} (first at {where})")
    more = f" and {bad_rows.size - 5} more" if bad_rows.size > 5 else ""
    raise ValueError(
        f"The data contain NaN or infinite values in {', '.join(parts)}{more}; "
        "clean or interpolate them, or pass nan='split' to filter around them."
    )


def _check_data(data) -> np.ndarray:
    if not isinstance(data, np.ndarray):
        raise TypeError(
            "The 'data' parameter must be a NumPy array, but got "
            f"{type(data).__name__} instead."
        )
    if data.dtype not in (np.float32, np.float64):
        raise TypeError(
            "The 'data' parameter must be float32 or float64, but got dtype "
            f"{data.dtype}; convert it first, e.g. data.astype(float)."
        )
    if data.ndim < 1 or data.shape[-1] < 1:
        raise ValueError(
            "The 'data' parameter must have samples along its last axis, but "
            f"got shape {data.shape}."
        )
    return data


def _workers(n_jobs) -> int:
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


def _warn_if_short(design, start, stop, name, hint):
    n_kernel, sfreq = design.kernel.size, design.sfreq
    if stop - start >= n_kernel:
        return
    name = name or f"The segment at {start / sfreq:.3f}-{stop / sfreq:.3f} s"
    warn(
        f"{name} ({stop - start} samples, {(stop - start) / sfreq:.3g} s) is "
        f"shorter than the filter's kernel ({n_kernel} samples, "
        f"{n_kernel / sfreq:.3g} s): the result depends on the padding."
        f"{' ' + hint if hint else ''}",
        stacklevel=4,
    )


def _filter_segment(rows, out_rows, group, start, stop, design, pad, workers, verbose):
    n_seg = stop - start
    n_pad = design.support
    n_fft = sfft.next_fast_len(n_seg + 2 * n_pad, real=True)
    spec = design.spectrum(n_fft)
    spec = spec.astype(np.float32 if spec.dtype.kind == "f" else np.complex64) if rows.dtype == np.float32 else spec
    row_bytes = 2 * n_fft * rows.itemsize
    budget = max(_MIN_BLOCK_BYTES, _BLOCK_FRACTION * rows.nbytes)
    per_block = max(1, int(budget // row_bytes))
    blocks = [group[i : i + per_block] for i in range(0, group.size, per_block)]
    for block in _progress(blocks, verbose):
        padded = np.pad(rows[block, start:stop], ((0, 0), (n_pad, n_pad)), mode=pad)
        spectrum = sfft.rfft(padded, n=n_fft, axis=-1, workers=workers)
        spectrum *= spec
        out_rows[block, start:stop] = sfft.irfft(spectrum, n=n_fft, axis=-1, workers=workers)[
            :, n_pad : n_pad + n_seg
        ]


def _progress(blocks, verbose):
    show = verbose is True or (verbose is None and len(blocks) > 16)
    if not show:
        return blocks
    from tqdm.auto import tqdm

    return tqdm(blocks, desc="filtering", unit="block", leave=False)
