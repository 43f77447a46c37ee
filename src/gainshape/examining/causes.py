"""What made a narrow line in a spectrum: the mains and its harmonics, a multiple of the
stimulus rate, or nothing known."""

from __future__ import annotations

import numpy as np

from ..filtering.signals import event_onsets


CAUSES = ("mains", "mains harmonic", "stimulus-locked", "harmonic", "unexplained")


_MAX_STIMULUS_HARMONIC = 40  # a repeated response's lines are sought up to this multiple


def mains_line(frequencies, heights, line_freq) -> float:
    """The mains frequency: as stated, else the strongest line within 0.5 Hz of 50 or 60 Hz, else NaN.

    >>> mains_line([10.0, 60.02], [9.0, 30.0], np.nan), mains_line([10.0, 60.02], [9.0, 30.0], 50.0)
    (60.02, 50.0)
    """
    if np.isfinite(line_freq):
        return float(line_freq)
    near = [(h, f) for f, h in zip(frequencies, heights) if min(abs(f - 50), abs(f - 60)) <= 0.5]
    return float(max(near)[1]) if near else float("nan")


def _multiple(f, fundamental, tolerance, most=None) -> int:
    """The whole multiple (1 or more) of ``fundamental`` that ``f`` is, else 0:
    within ``tolerance`` x the multiple (a drifting source's harmonics drift
    that much more), or, with ``most`` (a stimulus rate, known from the
    event times), within ``tolerance`` and up to the ``most``-th multiple.

    >>> _multiple(100.02, 50.0, 0.05), _multiple(131.0, 50.0, 0.05)
    (2, 0)
    >>> _multiple(30.0, 1.0, 0.05, most=20), _multiple(31.7, 1.0, 0.05, most=40)
    (0, 0)
    """
    if not np.isfinite(fundamental) or fundamental <= 0:
        return 0
    n = int(round(f / fundamental))
    if most is not None:
        return n if 1 <= n <= most and abs(f - n * fundamental) <= tolerance else 0
    return n if n >= 1 and abs(f - n * fundamental) <= tolerance * n else 0


def line_causes(frequencies, heights, mains, rate, tolerance) -> tuple[list, list]:
    """Each line's cause and the frequency it is a multiple of (NaN if none):
    mains first, then the stimulus rate, then the strongest lower line left
    that is not itself a harmonic.

    >>> line_causes([3.0, 10.0, 50.0, 150.0], [12.0, 9.0, 40.0, 30.0], 50.0, 1.0, 0.05)
    (['stimulus-locked', 'stimulus-locked', 'mains', 'mains harmonic'], [1.0, 1.0, nan, 50.0])
    """
    causes: list[str | None] = [None] * len(frequencies)
    of: list[float] = [np.nan] * len(frequencies)
    for i, f in enumerate(frequencies):
        if (n := _multiple(f, mains, tolerance)):
            causes[i], of[i] = ("mains", np.nan) if n == 1 else ("mains harmonic", mains)
        elif _multiple(f, rate, tolerance, most=_MAX_STIMULUS_HARMONIC):
            causes[i], of[i] = "stimulus-locked", float(rate)
    for i in [i for i, c in enumerate(causes) if c is None]:  # ascending frequency
        lower = [j for j in range(i) if causes[j] == "unexplained"
                 and _multiple(frequencies[i], frequencies[j], tolerance) >= 2]
        if lower:
            j = max(lower, key=lambda k: heights[k])  # the strongest fundamental
            causes[i], of[i] = "harmonic", float(frequencies[j])
        else:
            causes[i] = "unexplained"
    return causes, of


def stimulus_rate(inst, events, sfreq) -> float:
    """The rate (Hz) of a fixed-rate paradigm's onsets (see :func:`find_lines`'s
    ``events``), or NaN when there are none or they are not at a fixed rate.

    >>> stimulus_rate(None, np.arange(0, 1500, 250), 250.0)
    1.0
    """
    onsets = event_onsets(inst, events, sfreq)
    if onsets is None:
        return float("nan")
    intervals = np.diff(np.sort(onsets))
    intervals = intervals[intervals > 0]
    if intervals.size < 4:
        return float("nan")
    median = float(np.median(intervals))
    steady = np.abs(intervals - median) <= 0.01 * median
    return 1.0 / float(np.mean(intervals[steady])) if steady.mean() >= 0.9 else float("nan")
