"""Every use of another library's private interface, behind one small function each.

Each function says what it relies on and what happens without it. All of
them pass tests/test_compat.py with the oldest versions gainshape declares
(SciPy 1.11.4, MNE-Python 1.6.0: ``make test-oldest``) and the newest
(SciPy 1.17.1, MNE-Python 1.13.2). Nothing
else in gainshape imports a private name of SciPy or MNE.
"""

from __future__ import annotations

import threading

import numpy as np
import scipy.fft as sfft

__all__ = ["levels_to_caller_outside", "picks_to_indices", "channel_type_words", "unlocked",
           "calibrate_into", "data_of", "copy_with_empty_data", "reader_raw_class",
           "reader_raw_arguments", "shims_in_use", "pocketfft_with_out", "forward_real",
           "backward_real"]

# pocketfft's r2c/c2r take (input, axes, forward, normalization, output, workers);
# normalization 0 is none, 2 is 1/n (the inverse of scipy.fft.irfft's default).
_NO_SCALING, _SCALE_BY_N = 0, 2
_LAST_AXIS = (1,)
_PICKS_LOCK = threading.Lock()


def levels_to_caller_outside(folder: str) -> int:
    """``warnings.warn`` stack level of the first caller whose file is not in ``folder``,
    as seen from the function that calls this one (``warnings.warn``'s caller).

    Relies on ``sys._getframe`` (CPython; documented as an implementation
    detail). Elsewhere warnings point at gainshape's own line instead.
    """
    import os
    import sys
    import types

    if not hasattr(sys, "_getframe"):
        return 2
    frame: types.FrameType | None = sys._getframe(2)
    level = 2
    while frame is not None and os.path.abspath(frame.f_code.co_filename).startswith(folder):
        frame, level = frame.f_back, level + 1
    return level


def picks_to_indices(info, picks, *, none="data", allow_empty=False) -> np.ndarray:
    """Channel indices for MNE-style ``picks`` (names, types, indices, "data", "all").

    Relies on ``mne._fiff.pick._picks_to_idx`` (MNE's own reading of picks,
    bad channels included). No public equivalent takes an ``info``; without
    it gainshape cannot read picks.
    """
    from mne._fiff.pick import _picks_to_idx

    with _PICKS_LOCK:  # MNE 1.6 checks an Info by writing to it: two threads reading one race
        return _picks_to_idx(info, picks, none=none, exclude=(), allow_empty=allow_empty)


def channel_type_words() -> set:
    """Channel-type words MNE accepts in ``picks`` (to tell a misspelt name from a type).

    Relies on ``mne._fiff.pick.get_channel_type_constants``; the generic
    words are added by hand.
    """
    from mne._fiff.pick import get_channel_type_constants

    return set(get_channel_type_constants()) | {"all", "data", "data_or_ica", "meg", "fnirs"}


def unlocked(info):
    """A context in which ``info``'s protected entries (highpass, lowpass, chs) can be set.

    Relies on ``Info._unlock()`` (MNE >= 1.0), the way MNE's own filters
    update ``info["highpass"]``.
    """
    return info._unlock()


def calibrate_into(data, block, idx, cals, mult) -> None:
    """Write ``block`` into ``data`` the way a Raw reader must (picks, calibration, projection).

    Relies on ``mne._fiff.utils._mult_cal_one``, which MNE's own readers call
    from ``_read_segment_file``.
    """
    if mult is None and np.all(cals == 1.0):  # calibrated already, nothing projected: a copy
        data[...] = block[idx]
        return
    from mne._fiff.utils import _mult_cal_one

    _mult_cal_one(data, block, idx, cals, mult)


def data_of(inst) -> np.ndarray:
    """The data array of a loaded Raw or Epochs itself (not a copy), which
    gainshape reads and, with ``copy=False``, writes in place.

    Relies on the ``_data`` attribute (MNE 1.6 and 1.13 checked by tests/test_compat.py); MNE's
    public ``get_data`` returns a copy, and ``apply_function`` runs a
    function per channel, neither of which can fill a preallocated output.
    """
    return inst._data


def copy_with_empty_data(inst):
    """``inst.copy()`` whose data array is new and unfilled (the engine writes
    every sample of it), sparing a copy of data about to be replaced.

    Relies on the ``_data`` attribute (MNE 1.6 and 1.13 checked by tests/test_compat.py): the data
    array is left out of the copy through deepcopy's memo, so ``inst``
    itself is never touched (safe under threads and interruption).
    """
    from copy import deepcopy

    data = inst._data
    out = deepcopy(inst, {id(data): np.empty(data.shape[:-1] + (0,), dtype=data.dtype)})
    out._data = np.empty_like(data)
    return out


def reader_raw_class():
    """A ``mne.io.BaseRaw`` subclass whose samples come from a reader object
    (``reader.read(start, stop)`` -> all channels, calibrated).

    Relies on MNE's reader protocol (MNE 1.6 and 1.13 checked by tests/test_compat.py): the
    ``_read_segment_file`` method every MNE file reader implements, the
    ``raw_extras`` constructor argument that carries per-file state to it,
    and :func:`calibrate_into`. There is no public way to make a Raw whose
    samples are computed when read.
    """
    from mne.io import BaseRaw

    class ReaderRaw(BaseRaw):
        """A Raw read through ``raw_extras[0]["gainshape_reader"]``."""

        def _read_segment_file(self, data, idx, fi, start, stop, cals, mult):
            reader = self._raw_extras[fi]["gainshape_reader"]
            calibrate_into(data, reader.read(start, stop), idx, cals, mult)

    return ReaderRaw


def reader_raw_arguments(reader, first_samp: int, last_samp: int) -> dict:
    """The private constructor arguments of :func:`reader_raw_class`'s class
    beside ``info`` (one "file", float64 samples, nothing preloaded)."""
    return dict(preload=False, first_samps=(first_samp,), last_samps=(last_samp,),
                filenames=(None,), raw_extras=({"gainshape_reader": reader},),
                orig_format="double", dtype=np.float64, verbose=False)


def shims_in_use() -> list:
    """The private SciPy and MNE interfaces gainshape is using here, one line each."""
    return [
        "mne._fiff.pick._picks_to_idx (reading picks)",
        "mne._fiff.pick.get_channel_type_constants (picks that are channel types)",
        "Info._unlock (setting info['highpass'] and ['lowpass'] after filtering)",
        "mne._fiff.utils._mult_cal_one (the lazily filtered Raw's reader)",
        "BaseRaw._read_segment_file and raw_extras (the lazily filtered Raw)",
        "Raw/Epochs ._data (filtering in place, copies without the old data)",
        "scipy.fft._pocketfft.pypocketfft (transforms into given arrays)" if POCKETFFT
        is not None else "scipy.fft public functions (the private pocketfft binding is "
        "not usable here)",
    ]


def pocketfft_with_out():
    """scipy.fft's pocketfft binding if it writes into given arrays as expected, else None.

    Relies on ``scipy.fft._pocketfft.pypocketfft`` (r2c/c2r with an output
    argument, which ``scipy.fft`` lacks); checked against ``scipy.fft.rfft``
    on import. Without it :func:`forward_real` and :func:`backward_real`
    fall back to the public functions (same results, more allocation).
    """
    try:
        from scipy.fft._pocketfft import pypocketfft

        x = np.arange(8.0).reshape(2, 4)
        spec = np.empty((2, 3), complex)
        pypocketfft.r2c(x, _LAST_AXIS, True, _NO_SCALING, spec, 1)
        back = np.empty_like(x)
        pypocketfft.c2r(spec, _LAST_AXIS, 4, False, _SCALE_BY_N, back, 1)
    except Exception:  # a SciPy without this private binding: the public API
        return None
    ok = np.allclose(spec, sfft.rfft(x)) and np.allclose(back, x)
    return pypocketfft if ok else None


POCKETFFT = pocketfft_with_out()


def forward_real(rows, out, workers, binding=POCKETFFT) -> np.ndarray:
    """``scipy.fft.rfft(rows, axis=-1)`` written into ``out``.

    >>> x = np.arange(8.0).reshape(2, 4)
    >>> bool(np.allclose(forward_real(x, np.empty((2, 3), complex), 1), sfft.rfft(x)))
    True
    """
    if binding is None:
        out[...] = sfft.rfft(rows, axis=-1, workers=workers)
        return out
    binding.r2c(rows, _LAST_AXIS, True, _NO_SCALING, out, workers)
    return out


def backward_real(spec, n, out, workers, binding=POCKETFFT) -> np.ndarray:
    """``scipy.fft.irfft(spec, n, axis=-1)`` written into ``out``.

    >>> x = np.arange(8.0).reshape(2, 4)
    >>> bool(np.allclose(backward_real(sfft.rfft(x), 4, np.empty((2, 4)), 1), x))
    True
    """
    if binding is None:
        out[...] = sfft.irfft(spec, n=n, axis=-1, workers=workers)
        return out
    binding.c2r(spec, _LAST_AXIS, n, False, _SCALE_BY_N, out, workers)
    return out
