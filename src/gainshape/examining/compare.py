"""Candidate filters side by side on the user's own averaged ERP: what each one does to
each component (peak, latency, mean, onset, and the deflections of opposite polarity
it adds), measured against a stated reference, with cautions from published findings.

Vocabulary (see :mod:`.components`): a *candidate* is a labelled curve or design;
the *reference* is what changes are measured against (by default the
least-filtered candidate); *filtered on* says whether the filters ran on the
continuous recording, on the epochs, or on the averages, which differ at the
edges of each record (each is padded on its own).
"""

from __future__ import annotations

import json
import warnings
from collections.abc import Mapping, Sequence

import numpy as np
import xarray as xr

from .._checks import GainshapeWarning, check_positive, warn
from .._types import Picks, Recording
from ..filtering.adapters import apply
from ..record.steps import same_rate
from ..shaping.curves import GainCurve
from ..shaping.design import check_filter, design
from ..shaping.filter_design import FilterDesign
from ..shaping.measure import passband_edges
from .cautions import DEFLECTION_SHARE, SOURCES, candidate_notes
from .components import ONSET_FRACTION, checked_components, component_figures, proposed_components
from .summaries import band_change

__all__ = ["compare_filters"]

_LEAST_FROM_HZ = 0.01  # the least-filtered candidate: (1 - gain)^2 averaged from here
_FIGURES = ("peak", "latency", "mean", "onset", "before", "after")


def compare_filters(candidates: Mapping[str, GainCurve | FilterDesign] | Sequence,
                    data: Recording | list, *, components: Mapping | None = None,
                    reference: str | None = None, picks: Picks = None,
                    epoching: dict | None = None,
                    deflection_share: float = DEFLECTION_SHARE) -> xr.Dataset:
    """Run candidate filters on the same data and measure what each does to each component.

    Parameters
    ----------
    candidates : dict of str to GainCurve or FilterDesign, or a list of them
        The filters to compare; a list is labelled by each one's description.
    data : mne.Evoked | list of mne.Evoked | mne.Epochs | mne.io.Raw
        Averages (a list: one per condition), epochs (averaged per event type
        after filtering), or a continuous recording with ``epoching``.
    components : dict | None
        ``{name: (start s, stop s, "+" or "-")}``, e.g. ``{"N1": (0.08, 0.15,
        "-")}``. None: the largest peaks after 0 s of the reference averaged over
        channels and conditions are proposed (listed in ``attrs``).
    reference : str | None
        What changes are measured against: None for the least-filtered
        candidate (the smallest mean of (1 - gain)² on a log-frequency grid
        from 0.01 Hz to Nyquist), ``"detrended"`` for the data with no filter,
        less the straight line through each record's first and last samples
        (each epoch's, or each average's), or a candidate's label.
    picks : str | list | None
        Channels to measure (None: the data channels).
    epoching : dict | None
        With a Raw: keyword arguments of ``mne.Epochs`` (``events``,
        ``event_id``, ``tmin``, ``tmax``, ``baseline``...). The filters then run
        on the continuous recording before epoching.
    deflection_share : float
        A deflection larger than this share of a component's peak gets a note.

    Returns
    -------
    xarray.Dataset
        Dims ``candidate``, ``channel``, ``component``, ``condition`` (and
        ``time``, ``frequency``, ``band``, ``contrast`` where they apply): each
        component's ``peak``, ``latency_ms``, ``mean``, ``onset_ms`` and their
        changes against the reference (``peak_change_pct`` and
        ``mean_change_pct`` in the component's own polarity, negative when
        it shrinks; ``latency_shift_ms``, ``onset_shift_ms``), the
        deflections of opposite polarity on candidate minus reference
        (``deflection_before``, ``deflection_after`` and their ``_pct`` of the
        reference's peak, ``reference_peak``), for two or more conditions the difference wave's
        peak and its change; per candidate its realized cutoffs, roll-off,
        kernel length, pre-response and undershoot, ``band_change_db`` (median
        over channels), ``gain``, ``notes`` (cautions) and ``filtering_said``
        (what filtering warned of, e.g. records shorter than the kernel); the
        waveforms; and in
        ``attrs`` the reference, what the filters ran on, the onset rule, the
        components and the sources of the cautions.

    See Also
    --------
    audit, plot_comparison

    References
    ----------
    Tanner D, Morgan-Short K, Luck SJ (2015). How inappropriate high-pass
    filters can produce artifactual effects and incorrect conclusions in ERP
    studies of language and cognition. Psychophysiology 52:997-1009.
    Acunzo DJ, MacKenzie G, van Rossum MCW (2012). Systematic biases in early
    ERP and ERF components as a result of high-pass filtering. J Neurosci
    Methods 209:212-218.
    Rousselet GA (2012). Does filtering preclude us from studying ERP
    time-courses? Front Psychol 3:131.
    Kiesel A, Miller J, Jolicœur P, Brisson B (2008). Measurement of ERP
    latency differences: a comparison of single-participant and
    jackknife-based scoring methods. Psychophysiology 45:250-274 (fractional
    peak latency, the onset rule used here).

    Examples
    --------
    >>> import mne, numpy as np, gainshape as gs
    >>> t = np.arange(-100, 700) / 500
    >>> wave = 5e-6 * np.exp(-((t - 0.4) / 0.1) ** 2)
    >>> evoked = mne.EvokedArray(np.tile(wave, (2, 1)), mne.create_info(["Cz", "Pz"], 500.0,
    ...                          "eeg"), tmin=-0.2, verbose=False)
    >>> ds = gs.compare_filters([gs.highpass(0.1), gs.highpass(1.0)], evoked,
    ...                         components={"P3": (0.3, 0.5, "+")})
    >>> bool(ds["peak_change_pct"].sel(component="P3").isel(candidate=1).max() < -5)
    True
    """
    labelled = _labelled(candidates)
    deflection_share = check_positive("deflection_share", deflection_share)
    sfreq, times = _rate_and_times(data, epoching)
    if reference not in (None, "detrended") and reference not in labelled:
        raise ValueError(f"The 'reference' parameter takes None, 'detrended' or one of the "
                         f"labels {sorted(labelled)}; {reference!r} was given.")
    given = None if components is None else checked_components(components, times[0], times[-1])
    for label, filt in labelled.items():
        if isinstance(filt, FilterDesign) and not same_rate(filt.sfreq, sfreq):
            raise ValueError(f"The candidate {label!r} was designed at {filt.sfreq:g} Hz; the "
                             f"data are sampled at {sfreq:g} Hz. Design it at the data's rate, "
                             f"or pass its curve.")
    designs = {label: filt if isinstance(filt, FilterDesign) else design(filt, sfreq)
               for label, filt in labelled.items()}
    runs, said = _filtered_runs(designs, data, picks, epoching)
    ref_label, ref_run, stated = _reference(reference, designs, runs, data, picks, epoching)
    chosen = given or proposed_components(times, ref_run["averages"].mean(axis=(0, 1)))
    ds = _measured(runs, ref_run, chosen, times, ref_run["scale"])
    ds = ds.merge(_characteristics(designs, sfreq)).merge(_band_changes(runs, ref_run))
    ds["notes"] = ("candidate", [candidate_notes(ds.sel(candidate=label), designs[label],
                                                 deflection_share) for label in designs])
    ds["filtering_said"] = ("candidate", [said[label] for label in designs])
    if any(said.values()):
        warn(f"Filtering said something of {sum(map(bool, said.values()))} of the "
             f"{len(said)} candidates (records shorter than their kernels, for one); each "
             "one's words are in the result's 'filtering_said'.")
    ds.attrs.update({
        "reference": stated, "reference_label": ref_label or "", "filtered_on": ref_run["on"],
        "onset_rule": f"going back from the peak, the time the waveform last reached "
                      f"{100 * ONSET_FRACTION:g} % of the reference's peak (a fractional peak "
                      "latency at one level for every candidate), interpolated linearly",
        "components": json.dumps(chosen),
        "components_from": "given" if given else "proposed: the largest peaks after 0 s of "
                           "the reference, averaged over channels and conditions",
        "deflection_share": deflection_share, "units": ref_run["unit"], "sfreq": sfreq,
        "sources": json.dumps(SOURCES),
        "record": json.dumps({"candidates": {label: d.describe() for label, d in designs.items()},
                              "data": ref_run["on"], "reference": stated,
                              "components": chosen}),
    })
    return ds


def _filtered_runs(designs: dict, data, picks, epoching) -> tuple[dict, dict]:
    """Each candidate's averages, and what filtering warned of for each (its words)."""
    runs, said = {}, {}
    for label, d in designs.items():
        with warnings.catch_warnings(record=True) as caught:
            warnings.simplefilter("always", GainshapeWarning)
            runs[label] = _averaged(data, d, picks, epoching)
        said[label] = " ".join(dict.fromkeys(str(w.message) for w in caught))
    return runs, said


def _reference(reference, designs: dict, runs: dict, data, picks, epoching) -> tuple:
    """(label or None, the reference's averages, the reference in words)."""
    if reference == "detrended":
        return None, _averaged(data, None, picks, epoching), (
            "the data with no filter, less the straight line through each record's first and "
            "last samples")
    label = reference or _least_filtered(designs)
    stated = (f"the candidate {label!r}, as asked" if reference else
              f"the least-filtered candidate, {label!r} (smallest mean of (1 - gain)^2 from "
              f"{_LEAST_FROM_HZ:g} Hz to Nyquist on a log-frequency grid)")
    return label, runs[label], stated


def _labelled(candidates) -> dict:
    """Candidates as an ordered dict label -> filter, checked before any work."""
    if isinstance(candidates, Mapping):
        items = [(str(label), filt) for label, filt in candidates.items()]
    elif isinstance(candidates, Sequence) and not isinstance(candidates, str):
        items = [(_label_of(filt), filt) for filt in candidates]
    else:
        raise TypeError("The 'candidates' parameter takes a dict of label: GainCurve or "
                        f"FilterDesign, or a list of them; a {type(candidates).__name__} was "
                        "given.")
    if len(items) < 2:
        raise ValueError(f"The 'candidates' parameter takes at least 2 filters to compare; "
                         f"{len(items)} was given.")
    out: dict = {}
    for label, filt in items:
        check_filter(filt)
        unique, n = label, 2
        while unique in out:
            unique, n = f"{label} ({n})", n + 1
        out[unique] = filt
    return out


def _label_of(filt) -> str:
    return filt.describe() if isinstance(filt, (GainCurve, FilterDesign)) else repr(filt)


def _rate_and_times(data, epoching) -> tuple[float, np.ndarray]:
    """The sampling rate and the averages' time axis (s), read before any filtering."""
    import mne

    if isinstance(data, (list, tuple)) and data and all(isinstance(e, mne.Evoked) for e in data):
        rates = {e.info["sfreq"] for e in data}
        if len(rates) > 1 or len({e.times.size for e in data}) > 1:
            raise ValueError("The 'data' parameter takes averages of one rate and one time "
                             f"axis; rates {sorted(rates)} Hz and lengths "
                             f"{sorted({e.times.size for e in data})} were given.")
        return float(data[0].info["sfreq"]), data[0].times
    if isinstance(data, (mne.Evoked, mne.BaseEpochs)):
        return float(data.info["sfreq"]), data.times
    if isinstance(data, mne.io.BaseRaw):
        if not isinstance(epoching, Mapping) or "events" not in epoching:
            raise ValueError("With a continuous recording, the 'epoching' parameter takes the "
                             "arguments of mne.Epochs (at least 'events'); "
                             f"{epoching!r} was given.")
        sfreq = float(data.info["sfreq"])
        tmin, tmax = float(epoching.get("tmin", -0.2)), float(epoching.get("tmax", 0.5))
        return sfreq, np.arange(round(tmin * sfreq), round(tmax * sfreq) + 1) / sfreq
    raise TypeError("The 'data' parameter takes an Evoked, a list of Evoked (one per "
                    "condition), Epochs, or a Raw with 'epoching'; a "
                    f"{type(data).__name__} was given.")


def _averaged(data, filt, picks, epoching) -> dict:
    """The averages after ``filt`` (None: no filter, each record detrended), as
    (condition, channel, time), with their names, scale to µV and what ran."""
    import mne

    def filtered(inst):
        if filt is not None:
            return apply(inst, filt, picks=picks)
        out = inst.copy()
        if isinstance(out, mne.Evoked):
            out.data = _end_to_end(out.data)
        return out

    if isinstance(data, mne.io.BaseRaw):
        whole = filtered(data)
        epochs, on = mne.Epochs(whole, **{**epoching, "preload": True, "verbose": False}), \
            "continuous"
    elif isinstance(data, mne.BaseEpochs):
        whole = epochs = filtered(data)
        on = "epochs"
    else:
        evokeds = [data] if isinstance(data, mne.Evoked) else list(data)
        averages = {e.comment or f"condition {i + 1}": filtered(e) for i, e in enumerate(evokeds)}
        whole, on = next(iter(averages.values())), "averages"
    if on != "averages":
        if filt is None:  # each epoch's end-to-end line removed, no filter
            epochs = mne.EpochsArray(_end_to_end(epochs.get_data()), epochs.info,
                                     events=epochs.events, tmin=epochs.tmin,
                                     event_id=epochs.event_id, verbose=False)
        averages = _epoch_averages(epochs)
    first = next(iter(averages.values())).copy().pick("data" if picks is None else picks)
    types = set(first.get_channel_types())
    volts = types <= {"eeg", "eog", "ecg", "emg", "seeg", "ecog", "dbs"}
    arrays = np.stack([e.copy().pick(first.ch_names).data for e in averages.values()])
    return {"averages": arrays, "conditions": list(averages), "channels": first.ch_names,
            "scale": 1e6 if volts else 1.0, "unit": "µV" if volts else "as stored by MNE",
            "on": {"continuous": "the continuous recording, then epoched and averaged",
                   "epochs": "the epochs, then averaged (each epoch padded on its own)",
                   "averages": "the averages (each padded on its own)"}[on],
            "object": whole}


def _end_to_end(data: np.ndarray) -> np.ndarray:
    """``data`` less the straight line through each record's first and last samples.

    >>> _end_to_end(np.array([[1.0, 5.0, 3.0]])).tolist()
    [[0.0, 3.0, 0.0]]
    """
    ramp = np.linspace(0.0, 1.0, data.shape[-1])
    return data - (data[..., :1] + (data[..., -1:] - data[..., :1]) * ramp)


def _epoch_averages(epochs) -> dict:
    """One average per event type present (all epochs when there is one type)."""
    names = [name for name in epochs.event_id if len(epochs[name])]
    if len(names) <= 1:
        return {names[0] if names else "all epochs": epochs.average()}
    return {name: epochs[name].average() for name in names}


def _least_filtered(designs: dict) -> str:
    """The label whose realized gain departs least from 1 (mean of (1 - gain)^2 on a
    log-frequency grid from 0.01 Hz to Nyquist)."""
    def departure(d: FilterDesign) -> float:
        grid = np.logspace(np.log10(_LEAST_FROM_HZ), np.log10(d.sfreq / 2), 400)
        return float(np.mean((1.0 - d.realized_gain(grid)) ** 2))

    return min(designs, key=lambda label: departure(designs[label]))


def _measured(runs: dict, ref_run: dict, chosen: dict, times: np.ndarray,
              scale: float) -> xr.Dataset:
    """Every component's figures for every candidate, channel and condition."""
    labels, names = list(runs), list(chosen)
    ref = ref_run["averages"] * scale
    shape = (len(labels), ref.shape[1], len(names), ref.shape[0])
    got = {key: np.full(shape, np.nan) for key in _FIGURES}
    base = {key: np.full(shape[1:], np.nan) for key in _FIGURES}
    for c, name in enumerate(names):
        for ch in range(ref.shape[1]):
            for k in range(ref.shape[0]):
                for key, value in component_figures(times, ref[k, ch], ref[k, ch],
                                                    chosen[name]).items():
                    base[key][ch, c, k] = value
                for i, label in enumerate(labels):
                    wave = runs[label]["averages"][k, ch] * scale
                    for key, value in component_figures(times, wave, ref[k, ch],
                                                        chosen[name]).items():
                        got[key][i, ch, c, k] = value
    dims = ("candidate", "channel", "component", "condition")
    size = np.abs(base["peak"])
    sign = np.array([1.0 if chosen[name][2] == "+" else -1.0 for name in names])[:, None]
    ds = xr.Dataset(
        {"peak": (dims, got["peak"]),
         "peak_change_pct": (dims, 100 * sign * (got["peak"] - base["peak"]) / size),
         "latency_ms": (dims, 1000 * got["latency"]),
         "latency_shift_ms": (dims, 1000 * (got["latency"] - base["latency"])),
         "mean": (dims, got["mean"]),
         "mean_change_pct": (dims, 100 * sign * (got["mean"] - base["mean"])
                             / np.abs(base["mean"])),
         "onset_ms": (dims, 1000 * got["onset"]),
         "onset_shift_ms": (dims, 1000 * (got["onset"] - base["onset"])),
         "deflection_before": (dims, got["before"]),
         "deflection_before_pct": (dims, 100 * np.abs(got["before"]) / size),
         "deflection_after": (dims, got["after"]),
         "deflection_after_pct": (dims, 100 * np.abs(got["after"]) / size),
         "waveform": (("candidate", "condition", "channel", "time"),
                      np.stack([runs[label]["averages"] * scale for label in labels])),
         "reference_waveform": (("condition", "channel", "time"), ref),
         "reference_peak": (dims[1:], base["peak"])},
        coords={"candidate": labels, "channel": ref_run["channels"], "component": names,
                "condition": ref_run["conditions"], "time": times})
    if ref.shape[0] >= 2:
        ds = ds.merge(_contrasts(ds, chosen, times))
    return ds


def _contrasts(ds: xr.Dataset, chosen: dict, times: np.ndarray) -> xr.Dataset:
    """Each condition minus the first: the difference wave's largest value in each
    component's window (signed), and its change against the reference's."""
    conditions = list(ds["condition"].values)
    names = [f"{c} - {conditions[0]}" for c in conditions[1:]]
    peaks, base = [], []
    for name in chosen:
        start, stop, _ = chosen[name]
        inside = (times >= start) & (times <= stop)
        wave = ds["waveform"].isel(condition=slice(1, None)) - ds["waveform"].isel(condition=0)
        ref = ds["reference_waveform"].isel(condition=slice(1, None)) - \
            ds["reference_waveform"].isel(condition=0)
        peaks.append(_signed_extreme(wave.values[..., inside]))
        base.append(_signed_extreme(ref.values[..., inside]))
    got = np.moveaxis(np.stack(peaks), 0, -1)  # candidate, contrast, channel, component
    ref_peaks = np.moveaxis(np.stack(base), 0, -1)  # contrast, channel, component
    dims = ("candidate", "contrast", "channel", "component")
    return xr.Dataset({
        "difference_peak": (dims, got),
        "difference_peak_change_pct": (dims, 100 * (got - ref_peaks) / np.abs(ref_peaks))},
        coords={"contrast": names})


def _signed_extreme(values: np.ndarray) -> np.ndarray:
    """Along the last axis, the value of largest magnitude, with its sign."""
    k = np.argmax(np.abs(values), axis=-1)
    return np.take_along_axis(values, k[..., None], axis=-1)[..., 0]


def _characteristics(designs: dict, sfreq: float) -> xr.Dataset:
    """Each candidate's realized cutoffs, roll-off, kernel, time behaviour and gain."""
    rows: dict[str, list] = {key: [] for key in ("highpass_hz", "lowpass_hz", "highpass_rolloff",
                                "lowpass_rolloff", "kernel_s", "causal", "pre_response_pct",
                                "undershoot_pct", "overshoot_pct")}
    for d in designs.values():
        edges = {name: (hz, slope) for name, hz, _, slope in
                 passband_edges(d.characteristics.to_dict())}
        timing = {t.edge: t for t in d.characteristics.edge_timing}
        high, low = timing.get("high-pass"), timing.get("low-pass")
        for edge, key in (("high-pass", "highpass"), ("low-pass", "lowpass")):
            hz, slope = edges.get(edge, (np.nan, np.nan))
            rows[f"{key}_hz"].append(hz)
            rows[f"{key}_rolloff"].append(np.nan if slope is None else slope)
        rows["kernel_s"].append(d.characteristics.length)
        rows["causal"].append(d.causal)
        rows["pre_response_pct"].append(_figure(high, "pre_response_pct"))
        rows["undershoot_pct"].append(_figure(high, "undershoot_pct"))
        rows["overshoot_pct"].append(_figure(low, "overshoot_pct"))
    frequency = np.logspace(-2.0, np.log10(sfreq / 2), 400)
    gains = np.stack([d.realized_gain(frequency) for d in designs.values()])
    return xr.Dataset({**{key: ("candidate", np.asarray(values)) for key, values in rows.items()},
                       "gain": (("candidate", "frequency"), gains)},
                      coords={"candidate": list(designs), "frequency": frequency})


def _figure(timing, key: str) -> float:
    value = None if timing is None else getattr(timing, key)
    return float("nan") if value is None else float(value)


def _band_changes(runs: dict, ref_run: dict) -> xr.Dataset:
    """Each candidate's band-power change against the reference (median over channels),
    on what the filters ran on (the recording, the epochs, or the first average; epochs
    combined by their mean power); NaN for bands too slow for its length."""
    def change(run) -> xr.DataArray:
        found = band_change(ref_run["object"], run["object"]).sel(channel=ref_run["channels"])
        if "epoch" in found.dims:  # the epochs' mean power, before and after
            ratio = found["power_after"].mean("epoch") / found["power_before"].mean("epoch")
            return (10 * xr.apply_ufunc(np.log10, ratio)).median("channel")
        return found["change_db"].median("channel")

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")  # short records: slow bands are NaN, as stated
        changes = [change(run) for run in runs.values()]
    joined = xr.concat(changes, dim="candidate", coords="minimal", compat="override")
    kept = [c for c in joined.coords if c not in ("band", "band_low", "band_high", "band_resolved")]
    median = joined.drop_vars(kept).assign_coords(candidate=list(runs))
    median.attrs = {"units": "dB", "long_name": "band-power change against the reference, "
                    "median over channels (band_resolved: the data are long enough)"}
    return xr.Dataset({"band_change_db": median})
