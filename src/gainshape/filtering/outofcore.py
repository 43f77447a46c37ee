"""Recordings larger than memory: a Raw filtered block by block as it is read.

A layer on top of ``engine`` for ``gainshape.apply`` on a Raw read with
``preload=False``: the result is an ``mne.io.BaseRaw`` whose reader filters
each requested block (overlap-save, reading the kernel's support around it),
so MNE's ``get_data`` and ``save`` stream it with memory bounded by the
block, not the recording.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from .._compat import reader_raw_arguments, reader_raw_class, unlocked
from .._checks import LOCAL_PAD_MODES
from .._files import atomic_output
from ..shaping.filter_design import FilterDesign
from .blocks import (
    block_plan, filter_span, full_rate_part, pads_and_slow_output,
    spectrum_buffer,
)
from .engine import check_finite, fft_workers

__all__ = ["check_request", "filtered_raw"]

_ROWS_PER_FFT = 8  # rows transformed together: small buffers, whole SIMD groups


def check_request(filt, kernel, pad, nan, copy):
    """What a Raw that is not loaded cannot do, said before any work."""
    exact = filt.exact if isinstance(filt, FilterDesign) else kernel == "exact"
    problems = [
        (exact, "kernel='exact' applies the gain on the whole record's grid and needs "
                "the record in memory; use kernel='shortest' or a length in seconds"),
        (pad not in LOCAL_PAD_MODES, f"the 'pad' parameter takes "
                                     f"{', '.join(repr(m) for m in LOCAL_PAD_MODES)} here; "
                                     f"{pad!r} was given"),
        (nan != "raise", f"the 'nan' parameter takes only 'raise' here; {nan!r} was given"),
        (not copy, "the 'copy' parameter is False, but a file cannot be filtered in "
                   "place; leave copy=True"),
    ]
    for failed, message in problems:
        if failed:
            raise ValueError(
                f"This Raw is not loaded, so gainshape filters it lazily as it is read: "
                f"{message}. Or call raw.load_data() first."
            )


class FilteredRaw(reader_raw_class()):  # type: ignore[misc]  # MNE's reader class, by version
    """A Raw whose samples are filtered as they are read (see :func:`filtered_raw`);
    defined at module level so that it pickles like any Raw."""

    def save(self, fname, *args, **kwargs):
        """MNE's ``Raw.save``, written whole or not at all (see ``_files``)."""
        fname = Path(fname)
        if fname.exists() and not kwargs.get("overwrite", False):
            raise FileExistsError(
                f"{fname} exists; pass overwrite=True to replace it (nothing was written)."
            )
        with atomic_output(fname) as staged:
            written = super().save(staged, *args, **kwargs)
        return None if written is None else [fname.parent / Path(p).name for p in written]


def filtered_raw(raw, filt, idx, pad, n_jobs, segments):
    """A Raw that filters channels ``idx`` of ``raw`` (not loaded) block by
    block as it is read; ``segments`` are the (start, stop) sample runs
    filtered independently (between discontinuities)."""
    info = raw.info.copy()
    with unlocked(info):
        for ch in info["chs"]:  # the reader returns calibrated data already
            ch["cal"], ch["range"] = 1.0, 1.0

    reader = _BlockReader(raw, filt, idx, pad, n_jobs, segments)
    out = FilteredRaw(info, **reader_raw_arguments(reader, raw.first_samp, raw.last_samp))
    out.set_annotations(raw.annotations)
    return out


class _BlockReader:
    """Filtered samples of a source Raw, computed one block at a time.

    Each request is served from the last block when it lies inside it;
    otherwise a new block starting at the request is filtered (overlap-save
    with the kernel's support read around it). Memory is bounded by the
    block length, independent of the recording's length.
    """

    def __init__(self, raw, filt, rows, pad, n_jobs, segments):
        self.raw, self.filt, self.rows, self.pad = raw, filt, rows, pad
        self.workers = fft_workers(n_jobs)
        self.segments = segments
        self.names = [raw.ch_names[i] for i in rows]
        self.cache = (0, 0, None)
        self.edges = {}

    def read(self, start, stop):
        """All channels, samples [start, stop) in the source's file samples."""
        start, stop = start - self.raw.first_samp, stop - self.raw.first_samp
        c_start, c_stop, block = self.cache
        if not (c_start <= start and stop <= c_stop):
            _, step = self._plan((0, self.raw.n_times))
            c_start, c_stop = start, min(self.raw.n_times, max(stop, start + step))
            block = self._filtered(c_start, c_stop)
            self.cache = (c_start, c_stop, block)
        return block[:, start - c_start : stop - c_start]

    def _plan(self, segment):
        s, e = segment
        return block_plan(e - s, full_rate_part(self.filt).support, compact=True)

    def _filtered(self, start, stop):
        out = np.empty((len(self.raw.ch_names), stop - start))
        others = np.setdiff1d(np.arange(len(self.raw.ch_names)), self.rows)
        if others.size:  # the channels not filtered, read as they are
            out[others] = self.raw.get_data(picks=others, start=start, stop=stop)
        for s, e in self.segments:
            a, b = max(start, s), min(stop, e)
            if a >= b:
                continue
            view = _SegmentView(self.raw, self.rows, s, e, self.names)
            if (s, e) not in self.edges:
                self.edges = {(s, e): pads_and_slow_output(view, self.filt, self.pad)}
            (left, right), slow, n_pad = self.edges[(s, e)]
            n_fft, step = self._plan((s, e))
            fast = full_rate_part(self.filt)
            view.keep(max(a - s - fast.support, 0), min(b - s + fast.support, e - s))  # one read
            buf = np.zeros((min(_ROWS_PER_FFT, len(self.rows)), n_fft))
            spec = spectrum_buffer(buf)
            for lo in range(a - s, b - s, step):
                hi = min(lo + step, b - s)
                for g in range(0, len(self.rows), _ROWS_PER_FFT):  # all rows read once
                    group = slice(g, g + _ROWS_PER_FFT)
                    k = len(self.rows[group])
                    filtered = filter_span(
                        _RowGroup(view, group, k), (left[group], right[group]), (lo, hi),
                        fast, buf[:k], workers=self.workers, spec=spec[:k])
                    if slow is not None:
                        filtered -= self.filt.rates.interpolated(slow[group], n_pad + lo, hi - lo)
                    out[self.rows[group], s + lo - start : s + hi - start] = filtered
        return out


class _SegmentView:
    """``view[:, lo:hi]`` reads rows of a Raw segment from disk, checking for
    NaN; the last read is kept and serves every slice inside it, so that
    groups of rows and the blocks of one request share one read."""

    def __init__(self, raw, rows, start, stop, names):
        self.raw, self.rows, self.start, self.names = raw, rows, start, names
        self.shape = (len(rows), stop - start)
        self._last = (None, None, None)

    def keep(self, lo: int, hi: int) -> None:
        """Read samples ``[lo, hi)`` now, for the slices inside them that follow."""
        self[:, lo:hi]

    def __getitem__(self, key):
        _, sl = key
        lo, hi, _ = sl.indices(self.shape[1])
        kept_lo, kept_hi, kept = self._last
        if kept is None or not kept_lo <= lo <= hi <= kept_hi:
            kept = self.raw.get_data(picks=self.rows, start=self.start + lo, stop=self.start + hi)
            check_finite(kept, self.names, self.raw.info["sfreq"], first_sample=self.start + lo)
            kept_lo, kept_hi = lo, hi
            self._last = (lo, hi, kept)
        return kept[:, lo - kept_lo : hi - kept_lo]


class _RowGroup:
    """Rows ``group`` (a slice) of a :class:`_SegmentView`, ``k`` of them."""

    def __init__(self, view, group, k):
        self.view, self.group, self.shape = view, group, (k, view.shape[1])

    def __getitem__(self, key):
        return self.view[key][self.group]
