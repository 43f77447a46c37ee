"""The notch comb for the lines found in a recording: which lines it removes, which it
leaves and why, in words a methods section can keep."""

from __future__ import annotations

import numpy as np
import xarray as xr

from .._checks import check_positive
from ..shaping.curves import GainCurve
from ..shaping.shapes import comb
from .causes import CAUSES


NOTCH_ABOVE = 45.0  # Hz: scalp EEG rhythms are measured up to the low gamma band below it


def suggest_notches(found: xr.Dataset, *, margin: float = 2.0, min_width: float = 0.5,
                    rolloff: float = 24.0, notch_above: float = NOTCH_ABOVE,
                    include: tuple | list = ()) -> GainCurve:
    """The notch comb that removes mains and the lines no EEG measure needs, and only them.

    By default it notches mains and its harmonics (``cause`` "mains" and
    "mains harmonic" of :func:`find_lines`), and the other narrow lines
    above ``notch_above`` that are not stimulus-locked. It leaves alone
    stimulus-locked lines (they are the response, repeated), and lines
    below ``notch_above`` that are not mains: scalp EEG rhythms are measured
    up to the low gamma band (about 45 Hz; common practice), and a narrow
    steady rhythm there is brain signal, not interference. Those are listed
    in ``reasons`` as "not notched: ..." and are notched only when asked
    for in ``include``.

    Parameters
    ----------
    found : xarray.Dataset
        What :func:`find_lines` returned (edit it first to drop a line).
    margin : float
        Each notch's width (between its half-amplitude points) is this many
        times the line's width, and at least ``min_width``.
    min_width : float
        The narrowest notch, in Hz (narrower notches need longer kernels).
    rolloff : float
        Steepness of each notch's sides (dB/octave); at 24 the gain stays
        below 0.1 (-20 dB) over the middle 64 % of the notch's width.
    notch_above : float
        Lines above this frequency (Hz) are notched whatever their cause,
        stimulus-locked lines excepted.
    include : sequence of float or str
        Lines to notch besides: frequencies (Hz; the nearest line found,
        within its width or 0.5 Hz) or causes ("stimulus-locked",
        "harmonic", "unexplained").

    Returns
    -------
    GainCurve
        One notch per line chosen. Its ``reasons`` say why each notch is
        there, why each other line is not, and whether ``info["line_freq"]``
        is missing or disagrees with the lines; its recipe records the
        detection settings, so the filter's history says where the notches
        came from.

    Raises
    ------
    ValueError
        If no line was found or none is chosen, or ``include`` names a line
        that was not found.

    See Also
    --------
    find_lines, notch

    Examples
    --------
    >>> import numpy as np, gainshape as gs
    >>> t = np.arange(60 * 250) / 250.0
    >>> x = np.random.default_rng(0).standard_normal((4, t.size)) + np.sin(2 * np.pi * 50 * t)
    >>> comb = gs.suggest_notches(gs.find_lines(x, sfreq=250.0))
    >>> print(comb.reasons[0][:46])
    notch at 50.00 Hz, 0.5 Hz wide: a line 26.3 dB
    """
    margin = check_positive("margin", margin)
    min_width = check_positive("min_width", min_width)
    rolloff = check_positive("rolloff", rolloff)
    notch_above = check_positive("notch_above", notch_above)
    if not isinstance(found, xr.Dataset) or "height_db" not in found:
        raise TypeError("The 'found' parameter takes what gainshape.find_lines returned; "
                        f"a {type(found).__name__} was given.")
    if found.sizes["line"] == 0:
        raise ValueError("No line was found, so there is nothing to notch; lower "
                         "'min_height_db' in find_lines to look for weaker lines.")
    asked = _included(found, include)
    chosen, reasons, skipped = [], [], []
    for i in range(found.sizes["line"]):
        why_not = None if i in asked else _left_alone(found, i, notch_above)
        width = max(min_width, margin * float(found.width[i]))
        if why_not is None:
            chosen.append((float(found.line_frequency[i]), width))
            reasons.append(_reason(found, i, width))
        else:
            skipped.append(f"not notched: {float(found.line_frequency[i]):.2f} Hz, {why_not}; "
                           f"include=[{float(found.line_frequency[i]):.4g}] notches it")
    if not chosen:
        raise ValueError("None of the lines found is one to notch by default ("
                         + "; ".join(skipped) + "). Name the ones to notch in 'include'.")
    reasons += skipped + [_line_freq_note(found)]
    origin = {"found_by": "gainshape.find_lines", "settings": _plain(found.attrs),
              "reasons": reasons}
    return comb([f for f, _ in chosen], [w for _, w in chosen], rolloff=rolloff, origin=origin)


def _left_alone(found, i, notch_above) -> str | None:
    """Why line ``i`` is not notched by default, or None if it is."""
    cause, freq = str(found.cause.values[i]), float(found.line_frequency[i])
    if cause.startswith("mains"):
        return None
    if cause == "stimulus-locked":
        return (f"stimulus-locked (a multiple of the {found.attrs['stimulus_rate']:.4g} Hz "
                "stimulus rate): the response itself, repeated")
    if freq < notch_above:
        return (f"below {notch_above:g} Hz, where EEG rhythms are measured (a narrow steady "
                "rhythm is brain signal), and not mains")
    return None


def _included(found, include) -> set:
    """Indices of the lines ``include`` asks for (frequencies or causes)."""
    if isinstance(include, (str, float, int)):
        include = [include]
    chosen = set()
    for item in include:
        if isinstance(item, str):
            if item not in CAUSES:
                raise ValueError(f"{item!r} is not a cause 'include' knows: use a frequency in "
                                 f"Hz or one of {', '.join(map(repr, CAUSES))}.")
            chosen |= {i for i, c in enumerate(found.cause.values) if c == item}
            continue
        distance = np.abs(found.line_frequency.values - float(item))
        i = int(np.argmin(distance))
        if distance[i] > max(0.5, float(found.width[i])):
            raise ValueError(f"The 'include' list asks for {float(item):g} Hz, but there is no "
                             f"line found near {float(item):g} Hz (lines: "
                             f"{', '.join(f'{f:.2f}' for f in found.line_frequency.values)} Hz).")
        chosen.add(i)
    return chosen


def _reason(found, i, notch_width) -> str:
    line = found.isel(line=i)
    harmonic, cause = float(line.harmonic_of), str(line.cause.values)
    of = ""
    if cause == "mains":
        of = ", mains"
    elif cause == "mains harmonic":
        of = f", harmonic {round(float(line.line_frequency) / harmonic)} of mains"
    elif cause == "harmonic":
        of = f", harmonic of the {harmonic:.2f} Hz line"
    elif cause == "stimulus-locked":
        of = ", stimulus-locked (asked for)"
    return (f"notch at {float(line.line_frequency):.2f} Hz, {notch_width:.2g} Hz wide: a line "
            f"{float(line.height_db):.1f} dB above the background, {float(line.width):.2g} Hz "
            f"wide, in {int(line.n_channels)} of {found.sizes['channel']} channels{of}")


def _line_freq_note(found) -> str:
    """Whether ``info["line_freq"]`` agrees with the lines found."""
    stated = found.attrs["line_freq"]
    near = [(float(h), float(f)) for f, h in zip(found.line_frequency.values, found.height_db.values)
            if min(abs(f - 50), abs(f - 60)) <= 0.5]
    mains = [max(near)[1]] if near else []  # the strongest line at 50 or 60 Hz
    seen = f"mains at {mains[0]:.2f} Hz" if mains else "no line at 50 or 60 Hz"
    if not np.isfinite(stated):
        return f"info['line_freq'] is missing; the data show {seen}"
    if mains and abs(mains[0] - stated) <= 0.5:
        return f"info['line_freq'] ({stated:g} Hz) agrees with the lines found"
    return f"info['line_freq'] says {stated:g} Hz, but the data show {seen}"


def _plain(attrs) -> dict:
    """Dataset attrs as JSON-ready values (NaN as None)."""
    out = {}
    for key, value in attrs.items():
        value = value.tolist() if hasattr(value, "tolist") else value
        out[key] = None if isinstance(value, float) and not np.isfinite(value) else value
    return out
