"""The figures of a design in words: frequency ranges, attenuation held over a range, time
behaviour, the phase label and the two-rate description (one home each)."""

from __future__ import annotations

import numpy as np


def hz_range(low: float, high: float, *, inward: bool = False) -> str:
    """Two frequencies joined, with enough decimals for at least four steps
    between them; ``inward`` rounds each end towards the other, so that a
    figure stated over the printed range holds over all of it.

    >>> hz_range(149.797, 150.204), hz_range(40.0, 250.0), hz_range(99.864, 100.136)
    ('149.8-150.2', '40-250', '99.86-100.14')
    >>> hz_range(49.93008, 50.07009, inward=True)
    '49.94-50.07'
    """
    width = max(high - low, 1e-9)
    decimals = int(min(9, max(0, np.ceil(np.log10(4 / width)))))
    scale = 10.0**decimals
    if inward:
        low, high = np.ceil(low * scale - 1e-9) / scale, np.floor(high * scale + 1e-9) / scale
    return f"{low:.{decimals}f}-{high:.{decimals}f}"


def hz_words(hz: float, digits: int = 4, rounding: str = "nearest") -> str:
    """A frequency to ``digits`` significant digits, never in exponent form,
    rounded to the nearest, "up" or "down".

    >>> hz_words(0.0041166), hz_words(0.0041166, rounding="down"), hz_words(235.97, 3, "up")
    ('0.004117', '0.004116', '236')
    """
    if hz == 0:
        return "0"
    decimals = int(digits - 1 - np.floor(np.log10(abs(hz))))
    scale = 10.0**decimals
    value = {"up": np.ceil, "down": np.floor}.get(rounding, np.round)(hz * scale) / scale
    text = f"{value:.{max(decimals, 0)}f}"
    return text.rstrip("0").rstrip(".") if "." in text else text


def notch_centre(band: dict) -> float:
    """Where a notch or band-stop is deepest: the middle of the range where
    its attenuation holds (of its half-amplitude limits in older records).

    >>> notch_centre({"low": 49.0, "high": 51.0, "attenuated_low": 49.96, "attenuated_high": 50.04})
    50.0
    """
    low, high = band.get("attenuated_low", band["low"]), band.get("attenuated_high", band["high"])
    return (low + high) / 2


def stop_band_words(band: dict) -> str:
    """One stop band in words: where its attenuation holds, and how much.

    The skirts beyond the pass band are stated from where the attenuation
    is reached (the roll-off describes the way there); notches and
    band-stops by their half-amplitude limits and the range of the figure.
    Records written before the range was measured say so.

    >>> stop_band_words({"low": 40.0, "high": 250.0, "attenuation_db": 35.51,
    ...                  "kind": "above the low-pass edge", "attenuated_low": 236.0,
    ...                  "attenuated_high": 250.0})
    'above 236 Hz (beyond the low-pass edge): at least 35.5 dB down'
    >>> stop_band_words({"low": 49.0, "high": 51.0, "attenuation_db": 63.4, "kind": "notch",
    ...                  "attenuated_low": 49.96, "attenuated_high": 50.04})
    'notch at 50 Hz (49.0-51.0 Hz at half amplitude): at least 63.4 dB down over 49.96-50.04 Hz'
    """
    kind, att = band["kind"], f"at least {db_floor(band['attenuation_db'])} dB down"
    if "attenuated_low" not in band:
        return (f"{hz_range(band['low'], band['high'])} Hz ({kind}), {att} at its floor "
                "(recorded before the range where this holds was measured)")
    where = held_words(band)
    if kind == "below the high-pass edge":
        return f"{where} (beneath the high-pass edge): {att}"
    if kind == "above the low-pass edge":
        return f"{where} (beyond the low-pass edge): {att}"
    limits = hz_range(band["low"], band["high"])
    if kind == "band-stop":
        return f"band-stop {limits} Hz (half amplitude): {att} {where}"
    beside = (" inside the stop band", "at half the gain beside it") if kind != "notch" else (
        "", "at half amplitude")
    return (f"notch at {hz_words(notch_centre(band), 4)} Hz{beside[0]} ({limits} Hz {beside[1]}): "
            f"{att} {where}")


def db_floor(db: float) -> str:
    """An attenuation to 0.1 dB, rounded down so that it still holds.

    >>> db_floor(35.498), db_floor(60.0)
    ('35.4', '60.0')
    """
    return f"{np.floor(db * 10 + 1e-9) / 10:.1f}"


def held_words(band: dict) -> str:
    """Where a stop band's attenuation holds, its ends rounded inward: "below
    0.00411 Hz" and "above 236 Hz" for skirts reaching 0 Hz or Nyquist,
    else "over a-b Hz".

    >>> held_words({"low": 40.0, "high": 250.0, "kind": "above the low-pass edge",
    ...             "attenuated_low": 235.97, "attenuated_high": 250.0})
    'above 236 Hz'
    """
    low, high = band["attenuated_low"], band["attenuated_high"]
    if band["kind"] == "below the high-pass edge" and low == 0.0:
        return f"below {hz_words(high, 3, 'down')} Hz"
    if band["kind"] == "above the low-pass edge" and high == band["high"]:
        return f"above {hz_words(low, 3, 'up')} Hz"
    return f"over {hz_range(low, high, inward=True)} Hz"


def timing_words(timing: dict) -> str:
    """One edge's time behaviour in words (see :class:`EdgeTiming`).

    >>> timing_words({"edge": "low-pass", "cutoff": 40.0, "settling_s": None,
    ...               "decay_s": 0.028, "overshoot_pct": 8.91})
    'low-pass edge (40 Hz): impulse response below 1 % of its peak after 28 ms, step overshoot 8.9 %'
    >>> timing_words({"edge": "high-pass", "cutoff": 0.1, "settling_s": 4.1,
    ...               "pre_response_pct": 50.0, "pre_response_s": 4.1, "undershoot_pct": 0.0,
    ...               "undershoot_s": None})
    'high-pass edge (0.1 Hz): no undershoot after the step (under 0.01 %), within 1 % of its final value after 4.1 s; before the step, a pre-response of 50 % of the step over 4.1 s (zero phase)'
    """
    head = f"{timing['edge']} edge ({timing['cutoff']:.3g} Hz): "
    if timing["edge"] != "high-pass":
        return (head + f"impulse response below 1 % of its peak after "
                f"{seconds_words(timing['decay_s'])}, step overshoot {timing['overshoot_pct']:.1f} %")
    settle = f"within 1 % of its final value after {seconds_words(timing['settling_s'])}"
    if "undershoot_pct" not in timing:  # recorded before the two were told apart
        return (head + f"step response {settle}, largest opposite-polarity excursion "
                f"{timing['opposite_pct']:.1f} % of the step (before and after it)")
    return head + f"{undershoot_words(timing)}, {settle}" + (
        "" if timing.get("pre_response_pct") is None else
        f"; before the step, a pre-response of {timing['pre_response_pct']:.3g} % of the step over "
        f"{seconds_words(timing['pre_response_s'])} (zero phase)")


def undershoot_words(timing: dict) -> str:
    """A high-pass edge's undershoot after the step, in words.

    >>> undershoot_words({"undershoot_pct": 3.42, "undershoot_s": 1.5})
    'step undershoot 3.4 % (deepest 1.5 s after the step)'
    """
    if timing["undershoot_pct"] < 0.01:
        return "no undershoot after the step (under 0.01 %)"
    return (f"step undershoot {timing['undershoot_pct']:.2g} % (deepest "
            f"{seconds_words(timing['undershoot_s'])} after the step)")


def seconds_words(seconds: float) -> str:
    """Seconds in words: milliseconds below one second.

    >>> seconds_words(0.028), seconds_words(4.1)
    ('28 ms', '4.1 s')
    """
    return f"{seconds * 1000:.3g} ms" if seconds < 1 else f"{seconds:.3g} s"


def rate_words(two_rates: dict) -> str:
    """How a filter in two rates ran, in words (from :meth:`TwoRates.to_dict`).

    Examples
    --------
    >>> rate_words({"split_hz": 2.0, "reduced_rate_hz": 16.13, "factor": 62,
    ...             "full_rate_kernel_samples": 203, "aliasing_bound": 1.6e-05})[:44]
    'two: below 2 Hz at 16.13 Hz (decimated by 62'
    """
    r = two_rates
    return (f"two: below {r['split_hz']:.3g} Hz at {r['reduced_rate_hz']:.4g} Hz (decimated by "
            f"{r['factor']} after a triangular anti-aliasing filter, interpolated back "
            f"linearly), the rest by a {r['full_rate_kernel_samples']}-sample kernel at the full "
            f"rate; aliasing at most {r['aliasing_bound']:.2g}")


def phase_words(causal: bool, group_delay: float) -> str:
    """The phase response in the words of the methods text and the tables.

    >>> phase_words(False, 0.0)
    'zero-phase (symmetric kernel, no delay)'
    >>> phase_words(True, 0.0123)
    'minimum-phase (causal kernel, delay 12.3 ms)'
    """
    if not causal:
        return f"{phase_label(False)} (symmetric kernel, no delay)"
    return f"{phase_label(True)} (causal kernel, delay {1000 * group_delay:.3g} ms)"


def phase_label(causal: bool) -> str:
    """The short label of a phase response, for tables and one-line descriptions.

    >>> phase_label(False), phase_label(True)
    ('zero-phase', 'minimum-phase')
    """
    return "minimum-phase" if causal else "zero-phase"


def round_sig(value, digits):
    if value is None or not np.isfinite(value):
        return "n/a"
    return float(f"{value:.{digits}g}")


def rounded_all(values, digits):
    return [round_sig(v, digits) for v in values]


def round_down(value, decimals):
    """An attenuation rounded down (so the stated figure still holds).

    >>> round_down(35.498, 1), round_down(None, 1)
    (35.4, 'n/a')
    """
    if value is None or not np.isfinite(value):
        return "n/a"
    return float(np.floor(value * 10**decimals) / 10**decimals)


def round_sig_toward(value, digits, rounding):
    """``value`` to ``digits`` significant digits, rounded "up" or "down".

    >>> round_sig_toward(235.965, 4, "up"), round_sig_toward(0.0041166, 4, "down")
    (236.0, 0.004116)
    """
    return float(hz_words(value, digits, rounding))


def two_rates_sentence(r: dict) -> str:
    """How a kernel ran in two rates, as a methods sentence (:func:`rate_words` is the
    table's short form; both read :meth:`TwoRates.to_dict`)."""
    return (f"It ran in two parts whose sum is that kernel: frequencies below "
            f"{r['split_hz']:.3g} Hz were filtered at a reduced rate of "
            f"{r['reduced_rate_hz']:.4g} Hz (decimation by {r['factor']} after a triangular "
            "anti-aliasing filter, linear interpolation back) and subtracted from the output of "
            f"a {r['full_rate_kernel_samples']}-sample kernel at the full rate; the rate change "
            f"leaked at most {r['aliasing_bound']:.2g} of any frequency into others.")
