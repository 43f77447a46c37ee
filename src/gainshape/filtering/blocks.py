"""Long arrays a block at a time: the plan of row blocks that fit the cache and memory,
a span filtered with its edge pads, the kernel convolved along rows, and the slow part
of a two-rate design."""

from __future__ import annotations

import platform

import numpy as np
import scipy.fft as sfft

from .. import _compat
from .._checks import LOCAL_PAD_MODES

_MIN_BLOCK_BYTES = 8 * 2**20
_BLOCK_FRACTION = 0.1  # working memory per block, as a fraction of the data
_GLIBC = platform.libc_ver()[0] == "glibc"  # the heap trick below is glibc's behaviour
_SIMD_BYTES = 16  # pocketfft's vector width in scipy's wheels (SSE2)
_SLOW_ROWS = 8  # rows whose wide padding for a slow part is built at a time


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
    padded = np.pad(np.asarray(seg[:, :]), ((0, 0), (n_pad, n_pad)), mode=mode)  # type: ignore[call-overload]  # one of PAD_MODES
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


def filter_segment(rows, out_rows, group, start, stop, design, pad, workers, advance):
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
