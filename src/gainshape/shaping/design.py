"""A gain curve realized at a sampling rate: the FilterDesign users hold.

Vocabulary: the *request* is the gain curve; the *kernel* is the finite
impulse response that runs (made in :mod:`gainshape.shaping.realize`); the
*realized gain* is the kernel's magnitude response, measured in
:mod:`gainshape.shaping.measure`; *support* is the number of samples the kernel
reaches on each side of t = 0, which is how much padding the engine needs.
"""

from __future__ import annotations

import threading
from collections import OrderedDict

import numpy as np

from .._checks import check_bool, check_positive, check_tolerance, DEFAULT_TOLERANCE, warn
from .._types import KernelRequest
from .curves import GainCurve
from .filter_design import FilterDesign
from .lengths import long_kernel_cause
from .measure import characterize, max_deviation
from .rates import two_rates
from .realize import KernelResponse, Realizer, requested_taps, validated_gain

__all__ = ["design", "FilterDesign"]

KERNEL_WORDS = ("shortest", "exact")  # the words design's ``kernel`` accepts besides seconds
_LONG_KERNEL_SECONDS = 60.0  # longer kernels get a note
_KEPT_DESIGNS = 32  # designs kept for reuse, the most recently used first ...
_KEPT_KERNEL_BYTES = 64 * 2**20  # ... while their kernels take at most this much


def design(
    curve: GainCurve,
    sfreq: float,
    *,
    causal: bool = False,
    kernel: KernelRequest = "shortest",
    tolerance: float = DEFAULT_TOLERANCE,
) -> FilterDesign:
    """Realize ``curve`` at ``sfreq`` as a finite kernel and characterize it.

    Parameters
    ----------
    curve : GainCurve
        The requested gain.
    sfreq : float
        Sampling rate in Hz.
    causal : bool
        False: a real, symmetric kernel centred on t = 0 (zero-phase, no
        delay). True: a kernel that is zero before t = 0, with the same
        magnitude (cepstral method) and the smallest possible delay
        (minimum-phase); its group delay is reported.
    kernel : "shortest" | float | "exact"
        "shortest": the shortest kernel (to 1 % in length) whose realized
        gain is within ``tolerance`` of the request. A number: the kernel
        length in seconds (honoured; a warning says if it misses the
        tolerance). "exact": no truncation; the request is applied exactly
        on each record's own frequency grid, padded by the decay of the
        ideal impulse response.
    tolerance : float
        Largest accepted absolute gain difference (0.001 is -60 dB in the
        stopband and 0.1 % in the passband).

    Returns
    -------
    FilterDesign
        The kernel and its measured characteristics.

    Raises
    ------
    ValueError
        If the request cannot be realized within ``tolerance`` by any kernel
        the design allows, or removes everything.

    See Also
    --------
    apply, GainCurve

    References
    ----------
    Oppenheim AV, Schafer RW (2010). Discrete-Time Signal Processing, 3rd
    ed. Pearson: the minimum-phase kernel through the real cepstrum.

    Widmann A, Schroeger E, Maess B (2015). Digital filter design for
    electrophysiological data - a practical approach. J Neurosci Methods
    250:34-46.

    Examples
    --------
    >>> from gainshape import lowpass
    >>> f = design(lowpass(30.0, rolloff=24.0), 500.0)
    >>> round(float(f.characteristics.half_amplitude[0]), 1)
    30.0
    """
    if not isinstance(curve, GainCurve):
        raise TypeError(
            "The 'curve' parameter takes a GainCurve (see gainshape.lowpass, "
            f"GainCurve.from_points); a {type(curve).__name__} was given."
        )
    sfreq = check_positive("sfreq", sfreq)
    causal = check_bool("causal", causal)
    tolerance = check_tolerance(tolerance)
    kernel_request = check_kernel_request(kernel)
    # curves with a recipe are equal (and hash alike) when their recipes are
    key = None if curve.recipe is None else (curve, sfreq, causal, kernel_request, tolerance)
    kept = _DESIGNS.get(key)
    if kept is None:
        kept = _realized(curve, sfreq, causal, kernel_request, tolerance)
        _DESIGNS.put(key, kept)
    realized, said = kept
    for message in said:  # a reused design says again what it said when it was made
        warn(message)
    return realized


def _realized(curve, sfreq, causal, kernel_request, tolerance) -> tuple:
    """The design of a checked request and the warnings it has for the user."""
    said = []
    exact = kernel_request == "exact"
    curve, notes = curve.below_nyquist(sfreq / 2.0)
    said += _not_flat(curve, sfreq)

    fixed = not isinstance(kernel_request, str)
    rates = None if (fixed or exact or causal) else two_rates(curve, sfreq, tolerance)
    if rates is not None:
        taps, offset = rates.equivalent_kernel()
        response = KernelResponse(taps, offset, sfreq, causal)
        deviation = max_deviation(curve, response)
        if deviation + rates.aliasing > tolerance:
            rates = None  # the split does not meet the request: one rate
    if rates is None:
        taps, offset, response, deviation = _one_rate(curve, sfreq, causal, kernel_request,
                                                      tolerance)
    chars = characterize(curve, response, tolerance, exact, deviation)
    taps.setflags(write=False)
    if not fixed and chars.max_deviation > tolerance:
        said.append(
            f"The longest kernel this design allows ({taps.size / sfreq:.4g} s) realizes the "
            f"request only to within {chars.max_deviation:.3g} (tolerance {tolerance:g}); "
            f"pass tolerance={_round_up(chars.max_deviation)} to accept it, or use a gentler "
            "roll-off or a wider notch."
        )
    if fixed and chars.max_deviation > tolerance:
        try:
            shortest = Realizer(curve, sfreq, causal, tolerance).shortest()[0]
            fix = f"use kernel='shortest' ({shortest.size / sfreq:.3g} s) to meet it."
        except ValueError:
            fix = "no kernel length meets it: the request has a jump or a kink."
        said.append(
            f"A kernel of {taps.size / sfreq:.3g} s realizes the request only to "
            f"within {chars.max_deviation:.3g} (tolerance {tolerance:g}); {fix}"
        )
    if chars.length > _LONG_KERNEL_SECONDS:
        cause = long_kernel_cause(curve, chars, sfreq)
        why = f", because of {cause.what}" if cause else ""
        notes += (f"the kernel is {chars.length:.0f} s long (over {_LONG_KERNEL_SECONDS:g} s)"
                  f"{why}: records shorter than a few times that are mostly padding where it "
                  f"reaches; {cause.remedy if cause else 'a gentler request shortens it'}",)
    realized = FilterDesign(curve, sfreq, causal, kernel_request, tolerance, taps, offset, chars,
                            notes, rates)
    return realized, tuple(said)


def _one_rate(curve, sfreq, causal, kernel_request, tolerance) -> tuple:
    """Kernel, offset, response and deviation of the request run at ``sfreq`` alone."""
    fixed, exact = not isinstance(kernel_request, str), kernel_request == "exact"
    n_taps = requested_taps(kernel_request, sfreq) if fixed else None
    realizer = Realizer(curve, sfreq, causal, tolerance, min_n=2 * (n_taps or 0))
    if n_taps is None:
        taps, offset = realizer.shortest()
    else:
        taps, offset = realizer.of_length(n_taps)
    response = KernelResponse(taps, offset, sfreq, causal)
    deviation = None if exact else max_deviation(curve, response)
    for attempt in range(3):
        if fixed or exact or deviation <= tolerance or taps.size >= realizer.n // 2:
            break
        # the search grid missed a peak the finer check found: lengthen a little,
        # and at the third attempt to the longest kernel the grid allows
        longer = int(taps.size * 1.05) + 2 if attempt < 2 else realizer.n // 2
        taps, offset = realizer.of_length(longer)
        response = KernelResponse(taps, offset, sfreq, causal)
        deviation = max_deviation(curve, response)
    return taps, offset, response, deviation


class _DesignStore:
    """The most recently used designs, by request, within a count and a size.

    >>> store = _DesignStore(count=2, kernel_bytes=10**6)
    >>> store.put(None, "never kept"); store.get(None) is None
    True
    """

    def __init__(self, count: int, kernel_bytes: int):
        self.count, self.kernel_bytes = count, kernel_bytes
        self.kept: OrderedDict = OrderedDict()
        self.lock = threading.Lock()

    def get(self, key):
        with self.lock:
            if key is None or key not in self.kept:
                return None
            self.kept.move_to_end(key)
            return self.kept[key]

    def put(self, key, value) -> None:
        if key is None:
            return
        with self.lock:
            self.kept[key] = value
            self.kept.move_to_end(key)
            while len(self.kept) > self.count or (
                    len(self.kept) > 1 and sum(v[0].taps.nbytes for v in self.kept.values())
                    > self.kernel_bytes):
                self.kept.popitem(last=False)


_DESIGNS = _DesignStore(_KEPT_DESIGNS, _KEPT_KERNEL_BYTES)


def _not_flat(curve, sfreq) -> list:
    """Refuse a request that removes everything; say so of one that only scales."""
    gain = validated_gain(curve, np.linspace(0.0, sfreq / 2.0, 4097))
    if gain.max() == 0.0:
        raise ValueError(
            f"The gain curve {curve!r} is 0 from 0 Hz to Nyquist ({sfreq / 2:g} Hz): it "
            "would remove everything. Draw gains above 0 where the signal should pass."
        )
    if np.ptp(gain) == 0.0:
        return [f"The gain curve {curve!r} is constant ({gain[0]:g}) from 0 Hz to Nyquist "
                f"({sfreq / 2:g} Hz) at this rate: the filter only scales the data. Are its "
                "features above Nyquist?"]
    return []


def _round_up(value: float) -> float:
    """``value`` rounded up to two significant digits (a tolerance to suggest).

    >>> _round_up(0.0010351)
    0.0011
    """
    scale = 10.0 ** (np.floor(np.log10(value)) - 1)
    return float(np.ceil(value / scale) * scale)


def check_filter(filt) -> None:
    """TypeError unless ``filt`` is a GainCurve or a FilterDesign (what apply and audit take).

    >>> check_filter("lowpass")
    Traceback (most recent call last):
    ...
    TypeError: The 'filt' parameter takes a GainCurve or a FilterDesign; a str was given.
    """
    if not isinstance(filt, (GainCurve, FilterDesign)):
        raise TypeError(
            f"The 'filt' parameter takes a GainCurve or a FilterDesign; a {type(filt).__name__} "
            "was given."
        )


def check_kernel_request(kernel):
    """The ``kernel`` option of :func:`design` checked: "shortest", "exact" or seconds > 0.

    >>> check_kernel_request("exact"), check_kernel_request(2)
    ('exact', 2.0)
    """
    if isinstance(kernel, str) and kernel in KERNEL_WORDS:
        return kernel
    if kernel is None or isinstance(kernel, str):
        raise ValueError(
            f"{kernel!r} is not a choice for 'kernel': use 'shortest' (the shortest "
            "kernel within tolerance), 'exact' (no truncation) or a length in seconds."
        )
    return check_positive("kernel", kernel)


