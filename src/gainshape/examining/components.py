"""ERP components measured on averaged waveforms: peak, latency, mean, onset, and the
deflections of opposite polarity a filter adds before and after a component.

Vocabulary: a *component* is a named time window with an expected polarity
("+" or "-"); its *peak* is the waveform's extreme of that polarity inside
the window; its *onset* is the time, going back from the peak, at which the
waveform last reached half of the reference's peak (a fractional peak latency
at 50 %, at one level for every candidate so that a smaller peak does not read
as an earlier onset; linearly interpolated between samples); a *deflection* is
the largest value
of opposite polarity of a difference wave (filtered minus reference) in the
time before the window or after it.
"""

from __future__ import annotations

from collections.abc import Mapping

import numpy as np

__all__ = ["ONSET_FRACTION", "checked_components", "component_figures", "proposed_components"]

ONSET_FRACTION = 0.5  # the onset rule: the waveform reaches this fraction of the reference's peak
_PROPOSED_MAX = 3  # components proposed when none are given
_PROPOSED_APART_S = 0.08  # proposed peaks at least this far apart


def checked_components(components: Mapping, tmin: float, tmax: float) -> dict:
    """``{name: (start, stop, "+" or "-")}`` checked against the data's time span (s).

    >>> checked_components({"N1": (0.08, 0.15, "-")}, -0.2, 0.8)
    {'N1': (0.08, 0.15, '-')}
    """
    if not isinstance(components, Mapping) or not components:
        raise TypeError("The 'components' parameter takes a dict of name: (start s, stop s, "
                        f"'+' or '-'); {components!r} was given.")
    out = {}
    for name, window in components.items():
        try:
            start, stop, polarity = window
            start, stop = float(start), float(stop)
        except (TypeError, ValueError):
            raise TypeError(f"The component {name!r} takes (start s, stop s, '+' or '-'); "
                            f"{window!r} was given.") from None
        if polarity not in ("+", "-") or not tmin <= start < stop <= tmax:
            raise ValueError(f"The component {name!r} takes a window inside the data "
                             f"({tmin:g} to {tmax:g} s) with start < stop and a polarity '+' "
                             f"or '-'; {window!r} was given.")
        out[str(name)] = (start, stop, polarity)
    return out


def proposed_components(times: np.ndarray, wave: np.ndarray) -> dict:
    """The largest peaks of ``wave`` after time 0 as components, each window where the
    wave stays beyond half of its peak.

    >>> t = np.linspace(-0.1, 0.6, 701)
    >>> w = -np.exp(-((t - 0.1) / 0.02) ** 2) + 2 * np.exp(-((t - 0.35) / 0.06) ** 2)
    >>> {k: (round(a, 3), round(b, 3), p) for k, (a, b, p) in proposed_components(t, w).items()}
    {'P350': (0.301, 0.399, '+'), 'N100': (0.084, 0.116, '-')}
    """
    after = np.flatnonzero(times > 0)
    order = after[np.argsort(-np.abs(wave[after]))]
    chosen: list[int] = []
    for k in order:
        if len(chosen) == _PROPOSED_MAX:
            break
        is_extreme = (k == 0 or abs(wave[k]) >= abs(wave[k - 1])) and \
            (k == wave.size - 1 or abs(wave[k]) >= abs(wave[k + 1]))
        if is_extreme and all(abs(times[k] - times[j]) >= _PROPOSED_APART_S for j in chosen):
            chosen.append(int(k))
    out = {}
    for k in chosen:
        sign = np.sign(wave[k]) or 1.0
        beyond = sign * wave >= ONSET_FRACTION * abs(wave[k])
        start, stop = k, k
        while start > 0 and beyond[start - 1]:
            start -= 1
        while stop < wave.size - 1 and beyond[stop + 1]:
            stop += 1
        name = f"{'P' if sign > 0 else 'N'}{round(1000 * times[k])}"
        out[name] = (float(times[start]), float(times[stop]), "+" if sign > 0 else "-")
    return out


def component_figures(times: np.ndarray, wave: np.ndarray, reference: np.ndarray,
                      window: tuple[float, float, str]) -> dict:
    """Peak, latency, mean and onset of one component in ``wave`` (1-D), and the largest
    deflections of opposite polarity of ``wave - reference`` before and after the window.

    Deflections are signed (opposite to the component: negative for "+"), 0 where the
    difference never goes that way; the onset level is half of the reference's peak in
    the window, and onset is NaN when the wave does not cross it inside the window.

    >>> t = np.arange(-100, 500) / 1000
    >>> bump = np.exp(-((t - 0.2) / 0.05) ** 2)
    >>> f = component_figures(t, bump, bump, (0.1, 0.3, "+"))
    >>> round(f["peak"], 3), round(f["latency"], 3), round(f["onset"], 4), f["before"]
    (1.0, 0.2, 0.1584, 0.0)
    """
    start, stop, polarity = window
    sign = 1.0 if polarity == "+" else -1.0
    inside = np.flatnonzero((times >= start) & (times <= stop))
    k = int(inside[np.argmax(sign * wave[inside])])
    peak = float(wave[k])
    level = float(np.max(sign * reference[inside]))
    difference = wave - reference
    before, after = times < start, times > stop
    return {"peak": peak, "latency": float(times[k]), "mean": float(wave[inside].mean()),
            "onset": _onset(times, sign * wave, k, int(inside[0]), level),
            "before": _opposite(difference[before], sign),
            "after": _opposite(difference[after], sign)}


def _onset(times: np.ndarray, signed: np.ndarray, k: int, first: int, size: float) -> float:
    """Going back from the peak sample ``k`` (not before ``first``), the time at which
    ``signed`` last reached ``ONSET_FRACTION`` of ``size``, interpolated linearly."""
    level = ONSET_FRACTION * size
    if signed[k] < level:
        return float("nan")  # the peak itself stays below the level
    j = k
    while j > first and signed[j - 1] >= level:
        j -= 1
    if j == first:
        return float("nan")  # still beyond half the peak at the window's start
    low, high = signed[j - 1], signed[j]
    return float(times[j - 1] + (level - low) / (high - low) * (times[j] - times[j - 1]))


def _opposite(values: np.ndarray, sign: float) -> float:
    """The largest value of ``values`` against ``sign`` (signed; 0 when there is none)."""
    if values.size == 0:
        return 0.0
    largest = float(np.max(-sign * values))
    return -sign * largest if largest > 0 else 0.0
