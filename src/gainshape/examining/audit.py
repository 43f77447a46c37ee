"""What a filter does to waveforms: peaks, latencies, onsets, artefactual deflections.

Vocabulary: a *waveform* is a test signal (step, pulse, simulated ERP, or the
user's); a *component* is one bump of it with a polarity; *onset* and
*offset* are the first and last times a component reaches 10 % of its own
peak; its *pre-response* and *undershoot* are the largest excursions
against the component's polarity that filtering adds (beyond any the
original had) before its onset and after its offset.
Because filtering is linear, each component of the simulated ERP is filtered
on its own, so one component's artefacts are not mistaken for another's.
"""

from __future__ import annotations

import warnings

import numpy as np
import xarray as xr

from .._checks import check_positive, GainshapeWarning, warn
from .._types import Recording
from ..filtering.engine import filter_array
from ..filtering.signals import as_arrays
from ..shaping.curves import GainCurve
from ..shaping.design import check_filter, design
from ..shaping.filter_design import FilterDesign
from ..shaping.measure import passband_edges

__all__ = ["audit"]

_LEVEL = 0.10  # onset/offset threshold, fraction of the component's peak
_END_LEVEL = 0.05  # ends further from zero than this fraction of the peak are levelled
_RING_LEVEL = 0.01  # ringing lasts while |filtered - original| > 1 % of the peak
_STEP_SECONDS = 1.0  # the step goes up at 0 s and back down after this long
# Our own test shapes (arbitrary units): (name, waveform, latency s, width s, amplitude)
_ERP_COMPONENTS = (("erp early", "erp", 0.100, 0.015, -5.0), ("erp late", "erp", 0.450, 0.120, 5.0))


def audit(filt: GainCurve | FilterDesign, *, sfreq: float | None = None,
          waveform: Recording | np.ndarray | None = None) -> xr.Dataset:
    """Measure what ``filt`` does to test waveforms or to the user's waveform.

    Parameters
    ----------
    filt : GainCurve | FilterDesign
        The filter (a curve is designed with default settings).
    sfreq : float
        Sampling rate in Hz (taken from the design or the Evoked if omitted).
    waveform : None | mne.Evoked | ndarray
        None: a step (up at 0 s, back down at 1 s, so its undershoot after
        a high-pass can be measured), a 10 ms pulse, and a simulated ERP with
        an early sharp negativity (100 ms) and a late slow positivity (450 ms). An Evoked:
        its channel with the largest absolute peak (to choose one, pass
        ``evoked.copy().pick(["Cz"])``). A 1-D array: one waveform
        with t = 0 at its first sample. A given waveform is treated as
        isolated: it is extended with zeros by the kernel's reach on both
        sides, so the time axis shows what the filter spreads outside it.

    Returns
    -------
    xarray.Dataset
        Per ``component``: ``peak_change_pct``, ``latency_shift_ms``,
        ``onset_shift_ms``, ``pre_response`` and ``undershoot`` (the
        largest added excursion against the component's polarity before its
        onset and after its offset, in data units; ``_pct`` of the peak,
        ``_time_ms`` when), ``ringing_s`` (from the offset until
        ``|filtered - original|`` last exceeds 1 % of the peak); per ``waveform``
        and ``time``: ``original`` and ``filtered``; per ``component`` and
        ``time``: ``component_filtered`` (each component filtered alone).

    See Also
    --------
    plot_audit, FilterDesign.plot

    References
    ----------
    Acunzo DJ, MacKenzie G, van Rossum MCW (2012). Systematic biases in early
    ERP and ERF components as a result of high-pass filtering. J Neurosci
    Methods 209:212-218.

    Tanner D, Morgan-Short K, Luck SJ (2015). How inappropriate high-pass
    filters can produce artifactual effects and incorrect conclusions in ERP
    studies of language and cognition. Psychophysiology 52:997-1009.

    Examples
    --------
    >>> import gainshape as gs
    >>> ds = audit(gs.lowpass(30.0), sfreq=500.0)
    >>> ds.component.values.tolist()
    ['step', 'pulse', 'erp early', 'erp late']
    """
    filt, sfreq = _design(filt, sfreq, waveform)
    components, times, unit, prepared = _components(filt, sfreq, waveform)
    with warnings.catch_warnings():  # the waveforms sit in zeros: zero padding is exact
        warnings.filterwarnings("ignore", "The segment .* shorter than", GainshapeWarning)
        filtered = {name: filter_array(x[None, :], filt, pad="constant")[0]
                    for name, (_, x) in components.items()}
    rows = {name: _metrics(times, x, filtered[name], sfreq) for name, (_, x) in components.items()}
    wave_names = list(dict.fromkeys(w for w, _ in components.values()))
    original = np.array([sum(x for w, x in components.values() if w == n) for n in wave_names])
    after = np.array([sum(filtered[c] for c, (w, _) in components.items() if w == n)
                      for n in wave_names])
    metrics = {key: ("component", np.array([rows[c][key] for c in components]))
               for key in next(iter(rows.values()))}
    notes = _literature_notes(filt)
    for note in notes:
        warn(note)
    notes += prepared
    ds = xr.Dataset(
        {**metrics,
         "original": (("waveform", "time"), original, {"units": unit}),
         "filtered": (("waveform", "time"), after, {"units": unit}),
         "component_filtered": (("component", "time"), np.array(list(filtered.values())),
                                {"units": unit, "long_name": "each component filtered alone"})},
        coords={"component": list(components), "waveform": wave_names,
                "component_waveform": ("component", [w for w, _ in components.values()]),
                "time": ("time", times, {"units": "s"})},
        attrs={"sfreq": sfreq, "filter": filt.describe(), "units": unit,
               "onset_level": _LEVEL, "ringing_level": _RING_LEVEL, "notes": " ".join(notes)},
    )
    for key, units in (("peak_change_pct", "%"), ("latency_shift_ms", "ms"),
                       ("onset_shift_ms", "ms"), ("pre_response", unit),
                       ("undershoot", unit), ("pre_response_pct", "%"),
                       ("undershoot_pct", "%"), ("ringing_s", "s"), ("peak", unit),
                       ("peak_latency_ms", "ms"), ("pre_response_time_ms", "ms"),
                       ("undershoot_time_ms", "ms")):
        ds[key].attrs["units"] = units
    return ds


def _design(filt, sfreq, waveform):
    if isinstance(filt, np.ndarray) or hasattr(filt, "info"):
        raise TypeError(
            f"audit takes the filter first and a waveform by name; a {type(filt).__name__} "
            "was given as the filter. Pass it as waveform=, e.g. "
            "gs.audit(gs.highpass(0.1), waveform=evoked.copy().pick(['Cz']))."
        )
    check_filter(filt)
    if isinstance(filt, FilterDesign):
        if sfreq is not None and check_positive("sfreq", sfreq) != filt.sfreq:
            raise ValueError(
                f"The 'sfreq' parameter ({sfreq!r}) differs from the design's "
                f"({filt.sfreq:g} Hz); leave it out or design again."
            )
        return filt, filt.sfreq
    if sfreq is None and waveform is not None and not isinstance(waveform, (np.ndarray, list, tuple)):
        sfreq = as_arrays(waveform, name="waveform").sfreq
    if sfreq is None:
        raise ValueError("The 'sfreq' parameter is required with a GainCurve, e.g. sfreq=500.0.")
    return design(filt, sfreq), float(sfreq)


def _components(filt, sfreq, waveform):
    """name -> (waveform name, isolated component on a common time axis)."""
    if waveform is None:
        n_side = int(np.ceil(max(4.0, 1.5 * filt.support / sfreq + 1.0) * sfreq))
        times = np.arange(-n_side, n_side) / sfreq  # sample 0 exactly at 0 s
        out = {
            "step": ("step", ((times >= 0) & (times < _STEP_SECONDS)).astype(float)),
            "pulse": ("pulse", np.exp(-0.5 * (times / 0.005) ** 2)),
        }
        for name, wave, latency, width, amp in _ERP_COMPONENTS:
            out[name] = (wave, amp * np.exp(-0.5 * ((times - latency) / width) ** 2))
        return out, times, "a.u.", []
    if isinstance(waveform, (list, tuple)):
        waveform = np.asarray(waveform, dtype=float)
    signals = as_arrays(waveform, sfreq=sfreq, name="waveform")
    if signals.kind == "epochs" or (signals.kind == "array" and waveform.ndim != 1):
        raise ValueError(
            "The 'waveform' parameter takes an Evoked or a 1-D array (one waveform); "
            f"{'Epochs were' if signals.kind == 'epochs' else f'an array of shape {waveform.shape} was'} "
            "given. Average epochs first, or pass one row."
        )
    if not np.abs(signals.data).max() > 0:
        raise ValueError(
            "The 'waveform' parameter is zero everywhere: there is nothing whose distortion "
            "could be measured."
        )
    row = int(np.argmax(np.abs(signals.data).max(axis=-1)))
    name = signals.ch_names[row] if signals.kind != "array" else "waveform"
    wave, prepared = _level_ends(signals.data[row].astype(float), signals.unit)
    reach = filt.support  # isolated: zero for the kernel's reach on both sides
    wave = np.pad(wave, reach)
    times = signals.times[0] + (np.arange(wave.size) - reach) / sfreq
    return {name: (name, wave)}, times, signals.unit, prepared


def _level_ends(wave, unit):
    """The waveform with its end-to-end straight line removed when its ends
    stand off zero by more than 5 % of its peak (embedded in zeros, such ends
    would be steps that the filter answers with deflections of their own),
    and a note saying so.

    >>> _level_ends(np.array([1.0, 3.0, 1.0]), "V")[0].tolist()
    [0.0, 2.0, 0.0]
    """
    peak = np.abs(wave).max()
    first, last = wave[0], wave[-1]
    if max(abs(first), abs(last)) <= _END_LEVEL * peak:
        return wave, []
    line = first + (last - first) * np.arange(wave.size) / max(wave.size - 1, 1)
    return wave - line, [
        f"The waveform's ends were {first:.3g} and {last:.3g} {unit} "
        f"({100 * max(abs(first), abs(last)) / peak:.0f} % of its peak); the straight line "
        "between them was removed before the audit, so that steps at its ends are not "
        "counted as the filter's deflections."]


def _metrics(t, x, y, sfreq) -> dict:
    """Distortion of one isolated component ``x`` filtered to ``y``."""
    sign = 1.0 if x.max() >= -x.min() else -1.0
    xs, ys = sign * x, sign * y
    i_peak = int(np.argmax(xs))
    i_onset, i_offset = _first_last(xs, _LEVEL * xs[i_peak])
    # the filtered peak: the largest value of the same polarity near the original one
    half = max(i_offset - i_onset, int(0.05 * sfreq))
    lo, hi = max(0, i_onset - half), min(t.size, i_offset + half + 1)
    j_peak = lo + int(np.argmax(ys[lo:hi]))
    j_onset, _ = _first_last(ys, _LEVEL * ys[j_peak])
    # how much further than the original the filtered waveform goes against
    # the component's polarity (the original's own opposite excursions, such
    # as baseline noise in an average, do not count)
    added = np.maximum(-ys, 0.0) - np.maximum(-xs, 0.0)
    k_before = int(np.argmax(added[:i_onset])) if i_onset > 0 else None
    k_after = i_offset + 1 + int(np.argmax(added[i_offset + 1 :])) if i_offset + 1 < t.size else None
    before = max(added[k_before], 0.0) if k_before is not None else 0.0
    after = max(added[k_after], 0.0) if k_after is not None else float("nan")
    peak = xs[i_peak]
    error = np.flatnonzero(np.abs(y - x) > _RING_LEVEL * peak)
    return {
        "peak": sign * peak,
        "peak_latency_ms": 1000 * t[i_peak],
        "peak_change_pct": 100 * (ys[j_peak] - peak) / peak,
        "latency_shift_ms": 1000 * (t[j_peak] - t[i_peak]),
        "onset_shift_ms": 1000 * (t[j_onset] - t[i_onset]),
        "pre_response": before,
        "pre_response_pct": 100 * before / peak,
        "pre_response_time_ms": 1000 * t[k_before] if k_before is not None else float("nan"),
        "undershoot": after,
        "undershoot_pct": 100 * after / peak,
        "undershoot_time_ms": 1000 * t[k_after] if k_after is not None else float("nan"),
        "ringing_s": float(t[error[-1]] - t[i_offset]) if error.size and error[-1] > i_offset else 0.0,
    }


def _first_last(values, level):
    above = np.flatnonzero(values >= level)
    return int(above[0]), int(above[-1])


def _literature_notes(filt) -> list:
    edges = {name: hz for name, hz, _, _ in passband_edges(filt.characteristics.to_dict())}
    if "high-pass" not in edges:
        return []
    cutoff = float(edges["high-pass"])
    notes = []
    if cutoff >= 0.3:
        notes.append(
            f"The high-pass half-amplitude cutoff is {cutoff:.2g} Hz: high-pass cutoffs of "
            "0.3 Hz and above produced artefactual opposite-polarity effects in ERP data "
            "(Tanner, Morgan-Short & Luck, 2015, Psychophysiology 52:997-1009)."
        )
    if float(f"{cutoff:.2g}") > 0.1:  # 0.1001 Hz realized from a 0.1 Hz request is 0.1
        notes.append(
            f"The high-pass half-amplitude cutoff is {cutoff:.2g} Hz, above the 0.1 Hz "
            "recommended as a maximum for ERP work (Acunzo, MacKenzie & van Rossum, 2012, "
            "J Neurosci Methods 209:212-218)."
        )
    return notes
