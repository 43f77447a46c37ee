"""Array in, array out: pad, FFT, multiply by the response, transform back.

Vocabulary: *rows* are everything but the last axis (channels, epochs); a
*segment* is a run of samples ``[start, stop)`` filtered on its own (between
discontinuities or NaN runs); *support* is the kernel's reach in samples, and
every segment is padded by at least that much on each side. This module knows
nothing of MNE; ``design`` is any object with ``support``, ``sfreq``,
``kernel`` and ``spectrum(n_fft, dtype)`` (a :class:`gainshape.design.FilterDesign`).
"""

from __future__ import annotations

import os
import platform
from contextlib import contextmanager
from dataclasses import dataclass

import numpy as np
import scipy.fft as sfft

from . import _compat
from ._checks import check_int, check_option, warn
from .rates import KernelPart

__all__ = ["Progress", "check_samples", "filter_array", "check_finite", "filter_span", "edge_pads", "block_plan", "PAD_MODES",
           "convolve_rows", "spectrum_buffer", "fft_workers", "full_rate_part",
           "pads_and_slow_output"]

LOCAL_PAD_MODES = ("reflect", "symmetric", "edge", "constant")  # need only the ends
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
_MIN_BLOCK_BYTES = 8 * 2**20
_BLOCK_FRACTION = 0.1  # working memory per block, as a fraction of the data
_SEGMENT_KERNELS = 3  # a segment shorter than this many kernels gets a warning
_LONG_WORK_ROW_SAMPLES = 10_000_000  # bars for verbose=None only above this much work
_GLIBC = platform.libc_ver()[0] == "glibc"  # the heap trick below is glibc's behaviour
_SIMD_BYTES = 16  # pocketfft's vector width in scipy's wheels (SSE2)
_SLOW_ROWS = 8  # rows whose wide padding for a slow part is built at a time


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
    >>> from gainshape.design import design
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
                filter_rows = _filter_periodic if periodic else _filter_segment
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
    n_kernel, sfreq = design.kernel.size, design.sfreq
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
    _filter_segment(rows, out_rows, group, start, stop, folded, pad, workers, advance)


def _folded(design, period: int) -> KernelPart:
    """The kernel folded onto ``period`` samples, centred.

    >>> from types import SimpleNamespace
    >>> k = SimpleNamespace(kernel=np.array([1.0, 2.0, 3.0]), offset=1, sfreq=10.0)
    >>> _folded(k, 2).kernel.tolist()  # t = -1 and 1 fall on the same sample
    [4.0, 2.0]
    """
    half = period // 2
    at = (np.arange(design.kernel.size) - design.offset + half) % period
    return KernelPart(np.bincount(at, weights=design.kernel, minlength=period), half, design.sfreq)


def _filter_segment(rows, out_rows, group, start, stop, design, pad, workers, advance):
    """Filter ``rows[group, start:stop]`` into ``out_rows``, in blocks of rows
    and, for long segments, in overlapping blocks of time (overlap-save).

    A design in two rates (``design.rates``) runs its fast part in these
    blocks and subtracts its slow part, made once per block of rows at the
    reduced rate from padding as wide as the whole design needs.
    """
    n_seg = stop - start
    rates, fast = getattr(design, "rates", None), full_rate_part(design)
    n_fft, step = block_plan(n_seg, fast.support, whole=getattr(design, "exact", False))
    per_block = _rows_per_block(rows, n_fft, group.size, workers)
    blocks = [group[i : i + per_block] for i in range(0, group.size, per_block)]
    buf = np.zeros((per_block, n_fft), dtype=rows.dtype)
    spec = spectrum_buffer(buf)
    _keep_scratch_on_heap(2 * _SIMD_BYTES * n_fft)  # room for 32-byte SIMD builds too
    in_place = np.shares_memory(out_rows, rows)
    for block in blocks:
        sel = _as_index(block)
        seg = rows[sel, start:stop]
        edges, slow, n_pad = pads_and_slow_output(seg, design, pad, rows_at_once=_SLOW_ROWS)
        carry = None
        for a in range(0, n_seg, step):
            b = min(a + step, n_seg)
            filtered = filter_span(seg, edges, (a, b), fast, buf[: block.size], workers=workers,
                                   carry=carry, spec=spec[: block.size])
            if slow is not None:
                filtered -= rates.interpolated(slow, n_pad + a, b - a)
            if in_place and b < n_seg:  # the next block's left context, before it is overwritten
                carry = np.array(seg[:, b - fast.support : b])
            out_rows[sel, start + a : start + b] = filtered
            advance(block.size * (b - a))


def full_rate_part(design):
    """What runs at the full rate: the design itself, or its fast part."""
    rates = getattr(design, "rates", None)
    return design if rates is None else rates.fast


def pads_and_slow_output(seg, design, pad, rows_at_once=None):
    """The padding of ``seg`` for the full-rate kernel and, for a design in
    two rates, the slow part's output: ((left, right), slow or None, width of
    the padding the slow output was made with, 0 without one).

    For two rates the padding is whole frames of the reduced rate as wide as
    the whole design reaches (it may be wider than the segment), built and
    decimated ``rows_at_once`` rows at a time (None: all, for a ``seg`` read
    from a file); the full-rate kernel's share of it is kept.
    """
    rates = getattr(design, "rates", None)
    if rates is None:
        return edge_pads(seg, design.support, pad), None, 0
    n_pad = -(-design.support // rates.factor) * rates.factor
    reach = rates.fast.support
    step = rows_at_once or seg.shape[0]
    groups = [seg] if step >= seg.shape[0] else [seg[g : g + step] for g in range(0, seg.shape[0], step)]
    slow, left_edges, right_edges = [], [], []
    for rows in groups:
        left, right = edge_pads(rows, n_pad, pad)
        slow.append(rates.slow_output(left, rows, right))
        left_edges.append(left[:, n_pad - reach :])
        right_edges.append(right[:, :reach])
    # copies: the wide padding is not kept
    edges = np.concatenate(left_edges), np.concatenate(right_edges)
    return edges, np.concatenate(slow), n_pad


def block_plan(n_seg: int, n_pad: int, whole: bool = False, compact: bool = False) -> tuple[int, int]:
    """FFT size and output samples per block for a segment of ``n_seg`` samples.

    One FFT over the whole padded segment when it is short or ``whole`` is
    asked for (a design applied exactly on the record's grid); otherwise blocks
    of a power of two about 8 x the overlap (``2 n_pad``), at least 2**12 and
    at most 2**18 unless the overlap needs more: such FFTs stay in cache and
    run about twice as fast per sample as one FFT of a long recording. The blocks are
    then evened out so that the last is not mostly padding. ``compact``
    takes the smallest block with at most half of it overlap (for reading
    from disk with little memory).

    Examples
    --------
    >>> block_plan(1000, 100)
    (1200, 1000)
    >>> block_plan(600_000, 22_200)
    (245760, 200000)
    """
    n_whole = sfft.next_fast_len(n_seg + 2 * n_pad, real=True)
    n_fft = max(2**12, min(2**18, 1 << int(np.ceil(np.log2(8 * max(n_pad, 1))))))
    if compact:
        n_fft = 2**12
    n_fft = max(n_fft, 1 << int(np.ceil(np.log2(4 * max(n_pad, 1)))))
    if whole or n_whole <= n_fft:
        return n_whole, n_seg
    n_blocks = -(-n_seg // (n_fft - 2 * n_pad))
    step = -(-n_seg // n_blocks)  # equal blocks: no short, wasteful last one
    return sfft.next_fast_len(step + 2 * n_pad, real=True), step


def _rows_per_block(rows, n_fft, n_rows, workers=1) -> int:
    """Rows per block so that the input/output and spectrum buffers fit the budget.

    Rounded down to a multiple of the rows one SIMD register holds (16 bytes:
    4 float32, 2 float64) times ``workers`` when possible, because pocketfft
    transforms that many rows together (measurements: benchmarks/README.md).
    The budget does not grow with ``workers``: the memory bound holds for
    any ``n_jobs``.

    Examples
    --------
    >>> import numpy as np
    >>> rows = np.zeros((64, 800_000), dtype=np.float32)
    >>> _rows_per_block(rows, 245_760, 64), _rows_per_block(rows, 245_760, 64, workers=2)
    (8, 8)
    >>> _rows_per_block(rows, 245_760, 64, workers=4)  # no room for 16: groups of 4
    8
    """
    budget = max(_MIN_BLOCK_BYTES, _BLOCK_FRACTION * rows.nbytes)
    fits = int(max(1, budget // (2 * n_fft * rows.itemsize)))
    lanes = _SIMD_BYTES // rows.itemsize
    for group in (lanes * workers, lanes):
        if fits >= group:
            fits -= fits % group
            break
    return min(fits, n_rows)


def _as_index(block: np.ndarray):
    """A slice for consecutive row numbers (a view, no copy), else the array."""
    if block.size and np.all(np.diff(block) == 1):
        return slice(int(block[0]), int(block[-1]) + 1)
    return block


def edge_pads(seg, n_pad: int, mode: str):
    """(left, right) padding of each row, as ``numpy.pad(row, n_pad, mode)`` adds.

    ``seg`` is any 2-D array-like supporting ``seg[:, lo:hi]`` slices with a
    ``shape``; for the local modes only its first and last ``n_pad + 1``
    samples are read, so it may be a lazy view of a file.
    """
    k, n = seg.shape
    if n_pad == 0:
        empty = np.zeros((k, 0))
        return empty, empty
    if mode in LOCAL_PAD_MODES and n_pad < n:
        head = np.asarray(seg[:, : n_pad + 1])
        tail = np.asarray(seg[:, n - n_pad - 1 :])
        if mode == "reflect":
            return head[:, n_pad:0:-1], tail[:, -2::-1]
        if mode == "symmetric":
            return head[:, n_pad - 1 :: -1], tail[:, :0:-1]
        if mode == "edge":
            return np.repeat(head[:, :1], n_pad, 1), np.repeat(tail[:, -1:], n_pad, 1)
        zeros = np.zeros((k, n_pad), dtype=head.dtype)
        return zeros, zeros
    padded = np.pad(np.asarray(seg[:, :]), ((0, 0), (n_pad, n_pad)), mode=mode)  # row by row
    return padded[:, :n_pad], padded[:, n_pad + n :]


def filter_span(seg, edges, span, design, buf, *, workers=1, carry=None, spec=None) -> np.ndarray:
    """Filtered samples ``span = (a, b)`` of a padded segment (overlap-save block).

    ``seg[:, lo:hi]`` gives the segment's samples, ``edges`` its padding
    (from :func:`edge_pads`); ``buf`` is a (rows, n_fft) work array and
    ``spec`` an optional one from :func:`spectrum_buffer`. The result is a
    view into ``buf``, valid until its next use.
    ``carry``, if given, replaces the first ``support`` samples of the block's
    input (the previous block's end, saved before filtering in place).
    """
    (a, b), n_fft = span, buf.shape[-1]
    n_pad, n = design.support, seg.shape[1]
    lo, hi = a - n_pad, b + n_pad  # segment coordinates, padding outside [0, n)
    left, right = edges
    buf[:, hi - lo :] = 0.0
    pos = 0
    if carry is not None and lo >= 0:
        buf[:, :n_pad] = carry
        lo, pos = lo + n_pad, n_pad
    if lo < 0:
        take = min(-lo, hi - lo)
        buf[:, :take] = left[:, n_pad + lo : n_pad + lo + take]
        pos = take
    d_lo, d_hi = max(lo, 0), min(hi, n)
    if d_hi > d_lo:
        buf[:, pos : pos + d_hi - d_lo] = seg[:, d_lo:d_hi]
        pos += d_hi - d_lo
    if hi > n:
        r_lo = max(lo - n, 0)
        buf[:, pos : pos + hi - n - r_lo] = right[:, r_lo : hi - n]
    convolve_rows(buf, design.spectrum(n_fft, buf.dtype), workers, spec)
    return buf[:, n_pad : n_pad + b - a]


def convolve_rows(buf: np.ndarray, response: np.ndarray, workers: int = 1, spec=None) -> np.ndarray:
    """Replace each row of ``buf`` by ``irfft(rfft(row) * response)``, in place.

    ``spec`` is an optional reusable complex array of shape
    ``(rows, n_fft // 2 + 1)``. With it, the transforms write into ``spec``
    and ``buf`` through scipy.fft's own pocketfft binding (``scipy.fft.rfft``
    has no ``out`` argument): fresh temporaries for every block are mapped
    anew by the operating system, which cost about as much as the FFTs on
    the benchmark machine (see benchmarks/README.md).

    Examples
    --------
    >>> import numpy as np
    >>> x = np.array([[1.0, 2.0, 3.0, 4.0]])
    >>> convolve_rows(x, np.ones(3))
    array([[1., 2., 3., 4.]])
    """
    n_fft = buf.shape[-1]
    if spec is None or _compat.POCKETFFT is None:
        result = sfft.rfft(buf, axis=-1, workers=workers)
        result *= response
        buf[...] = sfft.irfft(result, n=n_fft, axis=-1, workers=workers, overwrite_x=True)
        return buf
    _compat.forward_real(buf, spec, workers)
    spec *= response
    _compat.backward_real(spec, n_fft, buf, workers)
    return buf


def _keep_scratch_on_heap(nbytes: int) -> None:
    """Allocate and free ``nbytes`` once, so that glibc keeps pocketfft's
    per-transform scratch on its heap instead of mapping it afresh for every
    block (why and how much: benchmarks/README.md). Elsewhere it costs one
    untouched allocation.
    """
    if _GLIBC:
        np.empty(nbytes, dtype=np.uint8)


def spectrum_buffer(buf: np.ndarray) -> np.ndarray:
    """A complex work array matching ``buf`` (rows, n_fft) for :func:`convolve_rows`."""
    dtype = np.complex64 if buf.dtype == np.float32 else np.complex128
    return np.empty((buf.shape[0], buf.shape[-1] // 2 + 1), dtype=dtype)
