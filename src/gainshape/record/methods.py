"""The methods paragraph: a recording's filter steps as sentences a paper can print."""

from __future__ import annotations

import numpy as np

from .._checks import check_option
from .._types import Recording
from ..shaping.measure import passband_edges
from ..shaping.words import (
    held_words, hz_words, notch_centre, phase_label, round_down, seconds_words, stop_band_words,
    timing_words, two_rates_sentence,
)
from .steps import curve_words, history, step_phase_words


METHODS_DETAIL = ("brief", "full")  # the lengths of methods_text


def methods_text(inst: Recording, detail: str = "brief") -> str:
    """A methods-section paragraph describing every filter step in order.

    The brief form (default) gives each step the two or three sentences a
    journal's methods section has room for, covering once each item of the
    reporting checklist of Widmann, Schroeger & Maess (2015): filter type
    and family, each cutoff with its definition, roll-off, kernel length,
    passband ripple and stop-band attenuation (each with the range where it
    holds), causality and delay, and direction (zero-phase or causal);
    notches are summarised in one clause, time behaviour in another. The
    full form lists every stop band and each edge's time behaviour, the
    padding and how a filter in two rates ran.

    Parameters
    ----------
    inst : mne.io.Raw | mne.Epochs | mne.Evoked
        Data filtered by :func:`gainshape.apply` (the record is in
        ``info["description"]`` and survives saving to FIF).
    detail : "brief" | "full"
        The paragraph's length.

    Returns
    -------
    str
        The paragraph (or a sentence saying no filter was applied).

    See Also
    --------
    history, bids_filters

    References
    ----------
    Widmann A, Schroeger E, Maess B (2015). Digital filter design for
    electrophysiological data - a practical approach. J Neurosci Methods
    250:34-46.

    Examples
    --------
    >>> import mne, numpy as np, gainshape as gs
    >>> raw = mne.io.RawArray(np.zeros((1, 2500)), mne.create_info(["Cz"], 250.0, "eeg"),
    ...                       verbose=False)
    >>> filtered = gs.apply(raw, gs.lowpass(30.0))
    >>> gs.methods_text(filtered).startswith("Data were filtered with gainshape")
    True
    """
    detail = check_option("detail", detail, METHODS_DETAIL)
    steps = history(inst)
    if not steps:
        return "No gainshape filter has been applied to these data."
    sw = steps[-1].get("software", {})
    opening = (
        f"Data were filtered with gainshape {sw.get('gainshape', '?')} "
        f"(NumPy {sw.get('numpy', '?')}, SciPy {sw.get('scipy', '?')}, "
        f"MNE-Python {sw.get('mne', '?')})"
    )
    def sentences(step) -> str:
        said = (_brief_sentences if detail == "brief" else _step_sentences)(step)
        choice = step.get("application", {}).get("chosen_after_comparison")
        return f"{said} {_choice_sentence(choice)}" if choice else said

    if len(steps) == 1:
        return f"{opening}. {sentences(steps[0])}"
    parts = [f"({i + 1}) {sentences(s)}" for i, s in enumerate(steps)]
    return f"{opening} in {len(steps)} steps, applied in this order. " + " ".join(parts)


def _choice_sentence(choice: dict) -> str:
    """The comparison a filter was chosen after, in one sentence.

    >>> _choice_sentence({"candidates": {"a": "x", "b": "y"}, "data": "the averages",
    ...     "reference": "the candidate 'a', as asked", "components": {"P3": [0.3, 0.6, "+"]}})
    "The filter was chosen after comparing 2 candidates (a; b), filtered on the averages and \
measured against the candidate 'a', as asked, on the component P3 (300-600 ms, positive)."
    """
    named = [f"{name} ({1000 * start:.0f}-{1000 * stop:.0f} ms, "
             f"{'positive' if polarity == '+' else 'negative'})"
             for name, (start, stop, polarity) in choice.get("components", {}).items()]
    on = (f", on the component{'s' if len(named) > 1 else ''} {', '.join(named)}"
          if named else "")
    return (f"The filter was chosen after comparing {len(choice.get('candidates', {}))} "
            f"candidates ({'; '.join(choice.get('candidates', {}))}), filtered on "
            f"{choice.get('data', '?')} and measured against {choice.get('reference', '?')}{on}.")


def _step_sentences(step) -> str:
    r, d, a = step.get("realized", {}), step.get("design", {}), step.get("application", {})
    channels = step.get("channels", [])
    curve = step.get("curve", {})
    request = (
        "drawn as a gain curve from a function" if curve.get("reproducible") is False
        else f"requested as the gain curve '{curve_words(curve)}'"
    )
    if a.get("interrupted"):
        return (f"An application of a {r.get('kind', 'custom-shape')} filter to "
                f"{len(channels)} channels in place was interrupted: the data are partly "
                "filtered and should be reloaded; no figure of this step describes them.")
    text = [
        f"A {r.get('kind', 'custom-shape')} FIR filter, {step_phase_words(step)}, {request}, "
        "was applied to "
        f"{len(channels)} channel{'s' if len(channels) != 1 else ''} by multiplying the "
        "Fourier transform of the padded data by the filter's frequency response.",
        _edge_sentence(r),
        *([_timing_sentence(r)] if r.get("edge_timing") else []),
    ]
    details = [f"passband ripple {r.get('passband_ripple_db', float('nan')):.2g} dB"]
    if np.isfinite(r.get("stop_band_attenuation_db", float("nan"))):
        details.append(f"at least {round_down(r['stop_band_attenuation_db'], 0):.0f} dB "
                       "attenuation in every stop band over the range stated for it")
    details.append(f"a largest gain deviation from the request of {r.get('max_deviation', 0):.2g}")
    text.append("It had " + ", ".join(details) + ".")
    length = (
        "The filter was applied exactly on each record's frequency grid (no kernel "
        f"truncation; impulse response support {r.get('length', 0):.3g} s)"
        if d.get("kernel") == "exact" else
        f"The kernel was {r.get('length', 0):.3g} s long ({d.get('kernel_samples', 0)} "
        f"samples at {d.get('sfreq', float('nan')):g} Hz)"
    )
    text.append(f"{length}.")
    if isinstance(d.get("two_rates"), dict):
        text.append(two_rates_sentence(d["two_rates"]))
    text.append(f"Each continuous segment was padded at both ends ({a.get('pad', 'reflect')} "
                "mode of numpy.pad) by at least the kernel's half-length.")
    return " ".join(text)


def _brief_sentences(step) -> str:
    """One step in the two or three sentences a methods section has room for."""
    r, d, a = step.get("realized", {}), step.get("design", {}), step.get("application", {})
    if a.get("interrupted"):
        return _step_sentences(step)
    n = len(step.get("channels", []))
    causal = bool(d.get("causal"))
    direction = (f"causal ({phase_label(True)}, one pass, group delay "
                 f"{1000 * r.get('group_delay', 0.0):.3g} ms)" if causal else
                 f"{phase_label(False)} (non-causal, no delay)")
    if d.get("kernel") == "exact":
        kernel = "the gain curve applied exactly on each record's frequency grid (no truncation)"
    else:
        kernel = (f"a {r.get('length', 0):.3g} s, {d.get('kernel_samples', 0):,}-sample kernel at "
                  f"{d.get('sfreq', float('nan')):g} Hz, frequency-sampled from a gain curve")
    kind = r.get("kind", "custom-shape").replace(" + ", " and ")
    text = [f"A {direction} FIR {kind} filter ({kernel}) was applied to "
            f"{n} channel{'s' if n != 1 else ''} by FFT of the {a.get('pad', 'reflect')}-padded data."]
    figures = _brief_edges(r)
    figures.append(f"passband ripple {r.get('passband_ripple_db', float('nan')):.2g} dB")
    skirts = [b for b in r.get("stop_bands", []) if "edge" in b["kind"]]
    if skirts and all("attenuated_low" in b for b in skirts):
        figures.append("stop-band attenuation at least " + " and ".join(
            f"{round_down(b['attenuation_db'], 1):g} dB {held_words(b)}" for b in skirts))
    elif skirts:
        figures.append("; ".join(stop_band_words(b) for b in skirts))
    text.append(_sentence(figures))
    removed = [b for b in r.get("stop_bands", []) if "edge" not in b["kind"]]
    if removed:
        text.append(_brief_removed(removed, _found_in_data(step.get("curve", {}))))
    if r.get("edge_timing"):
        text.append(_brief_timing(r["edge_timing"]))
    if isinstance(d.get("two_rates"), dict):
        two = d["two_rates"]
        text.append(f"Below {two['split_hz']:.3g} Hz it ran at a reduced rate of "
                    f"{two['reduced_rate_hz']:.4g} Hz (aliasing at most {two['aliasing_bound']:.2g}).")
    return " ".join(text)


def _sentence(clauses) -> str:
    """Clauses joined into one sentence, its first letter capitalised."""
    text = "; ".join(c for c in clauses if c)
    return text[:1].upper() + text[1:] + "."


def _brief_edges(r) -> list:
    """The pass band's cutoffs, with their definitions, and the roll-off, as clauses."""
    edges = passband_edges(r)
    if not edges:
        return ["the realized gain did not cross 0.5 (no half-amplitude cutoff)"]
    cut = " and ".join(f"{hz:.3g}" for _, hz, _, _ in edges)
    half_power = [hp for _, _, hp, _ in edges if hp is not None]
    hp = (f" (-3 dB: {' and '.join(f'{v:.3g}' for v in half_power)} Hz)"
          if len(half_power) == len(edges) else "")
    slopes = list(dict.fromkeys(f"{s:.3g}" for _, _, _, s in edges if s is not None))
    plural = "s" if len(edges) > 1 else ""
    out = [f"half-amplitude (-6 dB) cutoff{plural} {cut} Hz{hp}"]
    if slopes:
        out.append(f"roll-off {' and '.join(slopes)} dB/octave")
    return out


def _found_in_data(record) -> bool:
    """Whether a curve record holds notches proposed from lines found in the data.

    >>> _found_in_data({"curve": {"factors": [{"origin": {"found_by": "gainshape.find_lines"}}]}})
    True
    """
    if isinstance(record, dict):
        if isinstance(record.get("origin"), dict) and "found_by" in record["origin"]:
            return True
        return any(_found_in_data(v) for v in record.values())
    return isinstance(record, list) and any(_found_in_data(v) for v in record)


def _brief_removed(bands, found: bool = False) -> str:
    """Notches and band-stops in one sentence: where, how wide, the least attenuation;
    ``found``: the notches were proposed from lines found in the data."""
    notches = [b for b in bands if "notch" in b["kind"]]
    stops = [b for b in bands if "notch" not in b["kind"]]
    parts = []
    if notches:
        centres = [hz_words(notch_centre(b), 4) for b in notches]
        widths = [b["high"] - b["low"] for b in notches]
        width = (f"{min(widths):.2g} Hz" if f"{min(widths):.2g}" == f"{max(widths):.2g}" else
                 f"{min(widths):.2g}-{max(widths):.2g} Hz")
        least = min(b["attenuation_db"] for b in notches)
        parts.append(f"notch{'es' if len(notches) > 1 else ''} at {_listed(centres)} Hz "
                     f"({'lines found in the data; ' if found else ''}-6 dB width {width}) at least {round_down(least, 1):g} dB down"
                     + _held_words(notches))
    for b in stops:
        parts.append(stop_band_words(b).replace(" (half amplitude):", " (-6 dB),"))
    return _sentence(parts)


def _held_words(notches) -> str:
    """Over how much of each notch its least attenuation holds (the narrowest)."""
    if not all("attenuated_low" in b for b in notches):
        return " at their deepest"
    # around each centre as printed, so that the stated range lies inside every notch's own
    half = min(min(c - b["attenuated_low"], b["attenuated_high"] - c)
               for b in notches for c in [float(hz_words(notch_centre(b), 4))])
    return f" within \u00b1{hz_words(half, 2, 'down')} Hz"


def _listed(items) -> str:
    """'a', 'a and b', 'a, b and c'."""
    return items[0] if len(items) == 1 else ", ".join(items[:-1]) + " and " + items[-1]


def _brief_timing(timings) -> str:
    """The pass-band edges' step responses in one short sentence."""
    parts = []
    for t in timings:
        if t["edge"] == "high-pass":
            if "undershoot_pct" in t:
                under = ("no undershoot" if t["undershoot_pct"] < 0.01 else
                         f"undershoot {t['undershoot_pct']:.2g} %")
            else:  # a record written before undershoot and pre-response were told apart
                under = f"opposite-polarity excursion {t['opposite_pct']:.3g} %"
            parts.append(f"high-pass {under}, settling to 1 % in {seconds_words(t['settling_s'])}")
        else:
            parts.append(f"low-pass overshoot {t['overshoot_pct']:.2g} %")
    return "Step response: " + "; ".join(parts) + "." if parts else ""


def _edge_sentence(r) -> str:
    """Cutoffs of the pass-band edges (with roll-off) and every stop band."""
    passband, stops = passband_edges(r), r.get("stop_bands", [])
    if not passband and not stops:
        return "The realized gain did not cross 0.5 (no half-amplitude cutoff)."
    parts = []
    for name, hz, half_power, slope in passband:
        hp = f", half-power {half_power:.3g} Hz" if half_power is not None else ""
        sl = f", roll-off {slope:.1f} dB/octave" if slope is not None else ""
        parts.append(f"{name} half-amplitude (-6 dB) cutoff {hz:.3g} Hz{hp}{sl}")
    text = "The realized filter had " + "; ".join(parts) + "." if parts else ""
    if stops:
        text += (f" Its stop band{'s were' if len(stops) > 1 else ' was'}: "
                 + "; ".join(stop_band_words(b) for b in stops) + ".")
    return text.strip()


def _timing_sentence(r) -> str:
    """The pass-band edges' time behaviour (see gainshape.shaping.timing.EdgeTiming)."""
    return "In time, its " + "; its ".join(timing_words(t) for t in r["edge_timing"]) + "."
