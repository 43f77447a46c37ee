"""A record of every filter, kept with the data, and what it turns into.

Vocabulary: a *step* is the JSON-serializable record of one application of a
filter; the *history* is the ordered list of steps on an object. Steps are
stored in ``info["description"]`` below a marker line, one JSON object per
line, after whatever text the user had there, because MNE keeps that field
through ``copy``, ``crop``, ``pick``, epoching, averaging, concatenation and
FIF saving. A *fingerprint* is an XXH3-128 hash of the filtered channels' data.
"""

from __future__ import annotations

import datetime as _dt
import html
import json
import platform
import uuid
from pathlib import Path

import numpy as np
import xxhash

from ._checks import check_option, missing_modules, warn
from ._files import atomic_output, atomic_outputs
from .design import phase_words
from .measure import (held_words, hz_range, hz_words, notch_centre, passband_edges, removed_bands,
                      seconds_words, stop_band_words, timing_words)

__all__ = [
    "History",
    "usable_steps",
    "bids_filters",
    "export",
    "fingerprint",
    "history",
    "make_step",
    "methods_text",
    "store_step",
    "write_bids_filters",
]

_BEGIN = "[gainshape history v1: one JSON step per line below; do not edit]"
_END = "[end of gainshape history]"
_STEP_FORMAT = "gainshape.step"
STEP_FORMAT_VERSION = 1  # step.schema.json; steps without it (version 0) are read alike


class History(list):
    """The ordered steps on an object: a list of dicts with a table view.

    Examples
    --------
    >>> History([]).__repr__()
    'History(0 steps)'
    """

    def __repr__(self):
        lines = [f"History({len(self)} step{'s' if len(self) != 1 else ''})"]
        lines += [f"  {i + 1}. {_one_line(step)}" for i, step in enumerate(self)]
        return "\n".join(lines)

    def _repr_html_(self):
        head = "".join(f"<th>{h}</th>" for h in
                       ("#", "time (UTC)", "filter", "cutoffs, -6 dB (Hz)", "roll-off (dB/oct)",
                        "notches and band-stops (Hz)", "kernel", "channels"))
        rows = []
        for i, step in enumerate(self):
            r = step.get("realized", {})
            chans = step.get("channels", [])
            passband, stops = passband_edges(r), removed_bands(r)
            cells = (
                str(i + 1),
                step.get("time", "?")[:19].replace("T", " "),
                r.get("kind", "?") + (" (interrupted)" if step["application"].get("interrupted")
                                      else ""),
                ", ".join(f"{hz:.3g}" for _, hz, _, _ in passband),
                ", ".join(f"{slope:.1f}" for _, _, _, slope in passband if slope is not None),
                ", ".join(hz_range(lo, hi) for lo, hi, _ in stops),
                _kernel_words(step),
                f"{len(chans)} ({', '.join(chans[:3])}{', ...' if len(chans) > 3 else ''})",
            )
            rows.append("<tr>" + "".join(f"<td>{html.escape(c)}</td>" for c in cells) + "</tr>")
        return f"<table><tr>{head}</tr>{''.join(rows)}</table>"


RATE_PPM = 10.0  # a design applies to data whose rate differs by at most this many ppm


def same_rate(a: float, b: float) -> bool:
    """Rates equal to within :data:`RATE_PPM` parts per million.

    >>> same_rate(1000.0000283, 1000.0046), same_rate(1000.0, 1000.1)
    (True, False)
    """
    return abs(a - b) <= RATE_PPM * 1e-6 * abs(b)


def make_step(design, *, channels, pad, nan, segments, dtype, before, after,
              data_sfreq=None, also=None) -> dict:
    """The record of one application (see :func:`gainshape.apply`), the one
    place a step is built; its format is ``step.schema.json`` (shipped with
    the package, version :data:`STEP_FORMAT_VERSION`).

    Parameters
    ----------
    design : FilterDesign
    channels : list of str
        Names of the filtered channels (rows, for arrays).
    pad, nan : str
        The padding mode and non-finite handling used.
    segments : list of (float, float)
        Segment starts and stops in seconds (None: whole records).
    dtype : str
        The data's dtype.
    before, after : str
        Fingerprints of the filtered channels before and after.
    data_sfreq : float | None
        The data's sampling rate, when it differs slightly from the
        design's: the step then records how far each cutoff moved (a
        kernel's frequencies scale with the rate it runs at).
    also : dict | None
        More about the application: "lazy" (filtered as read), "interrupted"
        (in place, stopped partway) or "rows" (an array's filtered rows).
    """
    curve = design.curve
    try:
        curve_record = curve.to_dict()
    except ValueError:
        curve_record = {"reproducible": False, "description": curve.describe(),
                        "reason": "built from a callable"}
    return {
        "format": _STEP_FORMAT,
        "format_version": STEP_FORMAT_VERSION,
        "id": uuid.uuid4().hex,
        "time": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "software": software_versions(),
        "curve": curve_record,
        "design": {
            "sfreq": design.sfreq,
            "causal": design.causal,
            "kernel": design.kernel_request,
            "tolerance": design.tolerance,
            "kernel_samples": int(design.kernel.size),
            "two_rates": design.rates.to_dict() if design.rates else None,
            "notes": list(design.notes),
        },
        "realized": design.characteristics.to_dict(),
        "application": {"pad": pad, "nan": nan, "segments": segments, "dtype": dtype,
                        **_rate_shift(design, data_sfreq), **(also or {})},
        "channels": list(channels),
        "fingerprint_before": before,
        "fingerprint_after": after,
    }


def _rate_shift(design, data_sfreq) -> dict:
    """The data's rate and each half-amplitude cutoff's shift (Hz), if the rates differ."""
    if data_sfreq is None or data_sfreq == design.sfreq:
        return {}
    scale = data_sfreq / design.sfreq - 1.0
    return {"data_sfreq": float(data_sfreq),
            "cutoff_shift_hz": [float(e) * scale for e in design.characteristics.half_amplitude]}


def software_versions() -> dict:
    """Versions of gainshape, NumPy, SciPy, MNE-Python and Python."""
    import mne
    import scipy

    from . import __version__

    return {"gainshape": __version__, "numpy": np.__version__, "scipy": scipy.__version__,
            "mne": mne.__version__, "python": platform.python_version()}


def fingerprint(rows: np.ndarray, picked) -> str:
    """XXH3-128 hash of the picked rows (of a 2-D view), their dtype and shape.

    A fast non-cryptographic hash (about 10 GB/s): it identifies data, it
    does not protect them.

    Examples
    --------
    >>> x = np.zeros((2, 4))
    >>> fingerprint(x, [0]) == fingerprint(x.copy(), [0])
    True
    """
    h = xxhash.xxh3_128(f"{rows.dtype.str}|{len(picked)}x{rows.shape[-1]}".encode())
    for r in picked:
        h.update(memoryview(np.ascontiguousarray(rows[r])))
    return "xxh3_128:" + h.hexdigest()


def store_step(info, step: dict) -> None:
    """Append ``step`` to the history kept in ``info["description"]``."""
    user_text, lines = _split_description(info.get("description"))
    lines.append(json.dumps(step, separators=(",", ":")))
    block = "\n".join([_BEGIN, *lines, _END])
    info["description"] = f"{user_text}\n\n{block}" if user_text else block


def history(inst) -> History:
    """The filter steps recorded on an MNE object, oldest first.

    Damaged or hand-edited lines are skipped with a warning.

    Parameters
    ----------
    inst : mne.io.Raw | mne.Epochs | mne.Evoked
        Data filtered by :func:`gainshape.apply` (the record is in
        ``info["description"]`` and survives saving to FIF).

    Returns
    -------
    History
        A list of step records (dicts: request, design, realized
        characteristics, application, software versions).

    See Also
    --------
    methods_text, bids_filters, replay

    Examples
    --------
    >>> import mne
    >>> info = mne.create_info(["Cz"], 250.0, "eeg")
    >>> raw = mne.io.RawArray(np.zeros((1, 500)), info, verbose=False)
    >>> history(raw)
    History(0 steps)
    """
    info = getattr(inst, "info", None)
    if info is None:
        raise TypeError(
            f"The 'inst' parameter is a {type(inst).__name__}, which carries no history; "
            "for arrays, call gainshape.apply(..., return_step=True) to get the step record."
        )
    _, lines = _split_description(info.get("description"))
    steps, damaged = History(), []
    for number, line in enumerate(lines, start=1):
        try:
            step = json.loads(line)
        except ValueError as err:
            damaged.append(f"line {number} ({err}): {line[:60]!r}")
            continue
        problem = _step_problem(step)
        if problem:
            damaged.append(f"line {number} ({problem}): {line[:60]!r}")
            continue
        steps.append(step)
    if damaged:
        warn(f"Skipped damaged history {'; '.join(damaged)}. The other steps are read; "
             "the damaged ones are left in info['description'] as they are.")
    return steps


METHODS_DETAIL = ("brief", "full")  # the lengths of methods_text


def methods_text(inst, detail: str = "brief") -> str:
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
    sentences = _brief_sentences if detail == "brief" else _step_sentences
    if len(steps) == 1:
        return f"{opening}. {sentences(steps[0])}"
    parts = [f"({i + 1}) {sentences(s)}" for i, s in enumerate(steps)]
    return f"{opening} in {len(steps)} steps, applied in this order. " + " ".join(parts)


def bids_filters(inst) -> dict | str:
    """The BIDS EEG sidecar ``SoftwareFilters`` object for the recorded steps.

    An object of objects (filter name -> parameters, units in the keys), or
    "n/a" when no filter was applied, as the BIDS specification allows.

    Parameters
    ----------
    inst : mne.io.Raw | mne.Epochs | mne.Evoked
        Data filtered by :func:`gainshape.apply` (the record is in
        ``info["description"]`` and survives saving to FIF).

    Returns
    -------
    dict | str
        The ``SoftwareFilters`` value.

    See Also
    --------
    write_bids_filters, methods_text

    Examples
    --------
    >>> import mne, numpy as np, gainshape as gs
    >>> raw = mne.io.RawArray(np.zeros((1, 2500)), mne.create_info(["Cz"], 250.0, "eeg"),
    ...                       verbose=False)
    >>> filtered = gs.apply(raw, gs.lowpass(30.0))
    >>> entry, = gs.bids_filters(filtered).values()
    >>> round(entry["low-pass half-amplitude cutoff (Hz)"], 1)
    30.0
    """
    steps = history(inst)
    if not steps:
        return "n/a"
    out = {}
    for i, step in enumerate(steps, start=1):
        r, d = step.get("realized", {}), step.get("design", {})
        edges = {}
        for name, hz, half_power, slope in passband_edges(r):
            edges[f"{name} half-amplitude cutoff (Hz)"] = _round_sig(hz, 4)
            edges[f"{name} half-power cutoff (Hz)"] = _round_sig(half_power, 4)
            edges[f"{name} roll-off (dB/octave)"] = _round_sig(slope, 3)
        for t in r.get("edge_timing", []):
            edges.update(_bids_timing(t))
        if r.get("stop_bands"):
            edges["stop bands"] = [_bids_stop_band(b) for b in r["stop_bands"]]
        if isinstance(d.get("two_rates"), dict):
            two = d["two_rates"]
            edges["slow part below (Hz)"] = _round_sig(two.get("split_hz"), 4)
            edges["slow part's reduced sampling frequency (Hz)"] = _round_sig(
                two.get("reduced_rate_hz"), 6)
            edges["aliasing bound (gain)"] = _round_sig(two.get("aliasing_bound"), 2)
        status = {"status": "interrupted: data partly filtered"} if step["application"].get(
            "interrupted") else {}
        out[f"gainshape step {i}: {r.get('kind', 'filter')}"] = {
            **status,
            **edges,
            "passband ripple (dB)": _round_sig(r.get("passband_ripple_db"), 3),
            "least stop-band attenuation, over each band's stated range (dB)": _round_down(
                r.get("stopband_attenuation_db"), 1),
            "phase response": _phase_words(step),
            "group delay (s)": _round_sig(r.get("group_delay"), 3),
            "kernel length (s)": _round_sig(r.get("length"), 4),
            "sampling frequency (Hz)": d.get("sfreq", "n/a"),
            "design": "frequency-sampled FIR from a gain curve, tapered truncation",
            "software": f"gainshape {step.get('software', {}).get('gainshape', '?')}",
        }
    return out


def _bids_timing(t: dict) -> dict:
    """One edge's time figures as BIDS keys (units in the keys)."""
    if t["edge"] != "high-pass":
        return {"low-pass impulse decay time to 1 % (s)": _round_sig(t["decay_s"], 3),
                "low-pass step overshoot (%)": _round_sig(t["overshoot_pct"], 3)}
    out = {"high-pass step settling time to 1 % (s)": _round_sig(t["settling_s"], 3)}
    if "undershoot_pct" not in t:  # recorded before undershoot and pre-response were apart
        out["high-pass opposite-polarity excursion, before and after the step (%)"] = _round_sig(
            t.get("opposite_pct"), 3)
        return out
    out["high-pass step undershoot after the step (% of step)"] = _round_sig(t["undershoot_pct"], 3)
    out["high-pass time of deepest undershoot (s after the step)"] = _round_sig(t["undershoot_s"], 3)
    if t.get("pre_response_pct") is not None:
        out["high-pass pre-response before the step (% of step)"] = _round_sig(
            t["pre_response_pct"], 3)
        out["high-pass pre-response onset (s before the step)"] = _round_sig(t["pre_response_s"], 3)
    return out


def _bids_stop_band(b: dict) -> dict:
    """One stop band as a BIDS object: where its attenuation holds (rounded inward) and how much."""
    out = {"kind": b["kind"], "half-amplitude limits (Hz)": _rounded([b["low"], b["high"]], 4)}
    if "attenuated_low" in b:
        out["attenuation holds over (Hz)"] = [_round_sig_toward(b["attenuated_low"], 4, "up"),
                                              _round_sig_toward(b["attenuated_high"], 4, "down")]
    out["least attenuation (dB)"] = _round_down(b["attenuation_db"], 1)
    return out


def write_bids_filters(bids_path, inst) -> None:
    """Write :func:`bids_filters` into a BIDS dataset's ``*_eeg.json`` (needs mne-bids).

    The sidecar is rewritten whole or not at all; its other keys are kept.

    Parameters
    ----------
    bids_path : mne_bids.BIDSPath
        The recording in a BIDS dataset; its ``*_eeg.json`` sidecar must exist.
    inst : mne.io.Raw | mne.Epochs | mne.Evoked
        The filtered data whose record is written.

    Raises
    ------
    ValueError
        If the sidecar does not exist.

    See Also
    --------
    bids_filters

    Examples
    --------
    >>> from mne_bids import BIDSPath  # doctest: +SKIP
    >>> path = BIDSPath(subject="01", task="rest", datatype="eeg", root="bids")  # doctest: +SKIP
    >>> gs.write_bids_filters(path, filtered)  # doctest: +SKIP
    """
    try:
        from mne_bids import BIDSPath
    except ImportError:
        raise ImportError(
            "write_bids_filters needs mne-bids: pip install 'gainshape[bids]'."
        ) from None
    if not isinstance(bids_path, BIDSPath):
        raise TypeError(
            "The 'bids_path' parameter takes an mne_bids.BIDSPath of the recording; "
            f"{type(bids_path).__name__} ({bids_path!r}) was given. E.g. BIDSPath(subject='01', "
            "task='rest', datatype='eeg', root=...)."
        )
    filters = bids_filters(inst)
    sidecar = bids_path.copy().update(suffix=bids_path.datatype or "eeg", extension=".json")
    if not sidecar.fpath.exists():
        raise ValueError(f"The 'bids_path' sidecar {sidecar.fpath} does not exist.")
    content = json.loads(sidecar.fpath.read_text(encoding="utf-8"))
    content["SoftwareFilters"] = filters
    with atomic_output(sidecar.fpath) as staged:
        staged.write_text(json.dumps(content, indent=4) + "\n", encoding="utf-8")


def export(inst, fname, *, overwrite: bool = False, **export_options) -> list:
    """Export a filtered Raw to BrainVision, EDF or EEGLAB, keeping its filter record.

    ``mne.export.export_raw`` writes formats that have no place for
    gainshape's history: exporting with it directly loses the record. This
    writes the export and, beside it, ``<name>.gainshape.json`` holding the
    history, the BIDS ``SoftwareFilters`` object and the methods paragraph.
    Every file is written whole or not at all.

    Parameters
    ----------
    inst : mne.io.Raw
        The filtered recording.
    fname : str | Path
        The export's file name; its extension picks the format (``.vhdr``,
        ``.edf``, ``.set``), as in ``mne.export.export_raw``.
    overwrite : bool
        Replace existing files.
    **export_options
        Passed to ``mne.export.export_raw`` (e.g. ``physical_range``).

    Returns
    -------
    list of Path
        The sidecar's path, then the export's.

    See Also
    --------
    history, bids_filters

    Examples
    --------
    >>> import mne, numpy as np, tempfile, pathlib, gainshape as gs
    >>> raw = mne.io.RawArray(np.zeros((1, 1000)), mne.create_info(["Cz"], 250.0, "eeg"), verbose=False)
    >>> out = gs.apply(raw, gs.lowpass(30.0))
    >>> paths = export(out, pathlib.Path(tempfile.mkdtemp()) / "rec.vhdr")  # doctest: +SKIP
    """
    import mne

    if not isinstance(inst, mne.io.BaseRaw):
        raise TypeError(
            "The 'inst' parameter takes an mne.io.Raw (export epochs and evoked data "
            f"through MNE and write gs.history yourself); a {type(inst).__name__} was given."
        )
    fname = Path(fname)
    sidecar = fname.with_name(fname.stem + ".gainshape.json")
    existing = [p for p in (fname, sidecar) if p.exists()]
    if existing and not overwrite:
        raise FileExistsError(f"{existing[0]} exists; pass overwrite=True to replace it "
                              "(nothing was written).")
    _check_writer(fname)
    steps = history(inst)
    record = {"history": list(steps), "SoftwareFilters": bids_filters(inst),
              "methods": methods_text(inst), "methods_full": methods_text(inst, detail="full")}
    with atomic_outputs(fname, sidecar) as (staged_data, staged_sidecar):  # moved together
        mne.export.export_raw(staged_data, inst, overwrite=True, verbose=False, **export_options)
        staged_sidecar.write_text(json.dumps(record, indent=2) + "\n", encoding="utf-8")
    return [sidecar, fname]


# the package MNE's exporter needs for each format (mne.export.export_raw's documentation)
_WRITERS = {".vhdr": ("pybv", "BrainVision"), ".edf": ("edfio", "EDF"), ".bdf": ("edfio", "BDF"),
            ".set": ("eeglabio", "EEGLAB")}


def _check_writer(fname: Path) -> None:
    """ImportError naming the package to install, before anything is written.

    >>> _check_writer(Path("rec.txt"))
    Traceback (most recent call last):
    ...
    ValueError: export writes .bdf, .edf, .set, .vhdr files; rec.txt was given.
    """
    suffix = fname.suffix.lower()
    if suffix not in _WRITERS:
        raise ValueError(f"export writes {', '.join(sorted(_WRITERS))} files; {fname.name} was "
                         "given.")
    package, format_name = _WRITERS[suffix]
    if missing_modules(package):
        raise ImportError(f"Writing {format_name} ({fname.name}) needs the {package} package, "
                          f"which is not installed: pip install {package} (nothing was "
                          "written).")


# -- helpers --------------------------------------------------------------------
def _split_description(description):
    """(user text, step lines) of a description that may end with a history block.

    The block is always the last thing in the description, so the last
    marker line is the real one: a user's text that quotes the marker (in a
    note about the history, say) stays the user's.
    """
    text = description or ""
    body = text.rstrip()
    if not body.endswith(_END) or _BEGIN not in body:
        return text, []
    before, _, block = body[: -len(_END)].rpartition(_BEGIN)
    return before.strip("\n"), [line for line in block.split("\n") if line.strip()]


def _step_problem(step) -> str | None:
    """Why a parsed line is not a usable step, or None if it is."""
    if not isinstance(step, dict) or step.get("format") != _STEP_FORMAT:
        return "not a gainshape step"
    parts = {"design": dict, "realized": dict, "application": dict, "channels": list,
             "curve": dict}
    for key, kind in parts.items():
        if not isinstance(step.get(key), kind):
            return f"its {key!r} is not a {kind.__name__}"
    r, d = step["realized"], step["design"]
    lists = ("half_amplitude", "half_power", "rolloff")
    if not all(isinstance(r.get(k, []), list) and all(_is_number(v) for v in r.get(k, []))
               for k in lists):
        return "its realized cutoffs are not lists of numbers"
    directions = r.get("half_amplitude_direction", [])
    if not isinstance(directions, list) or not set(directions) <= {"rising", "falling"} \
            or len(directions) != len(r.get("half_amplitude", [])):
        return "its edge directions do not match its cutoffs"
    numbers = ("passband_ripple_db", "stopband_attenuation_db", "max_deviation",
               "group_delay", "length")
    if not all(_is_number(r.get(k, 0.0)) for k in numbers) or not _is_number(d.get("sfreq")):
        return "a realized figure or the sampling rate is not a number"
    if not isinstance(d.get("causal"), bool) or not all(isinstance(c, str) for c in step["channels"]):
        return "its 'causal' flag or channel names are of the wrong type"
    a = step["application"]
    if not isinstance(a.get("pad"), str) or not isinstance(a.get("nan"), str):
        return "its application lacks the padding mode or the non-finite handling"
    return None


def usable_steps(steps) -> list:
    """The steps of ``steps`` that are whole records; the others skipped with one warning.

    Examples
    --------
    >>> import warnings
    >>> with warnings.catch_warnings(record=True) as caught:
    ...     warnings.simplefilter("always")
    ...     kept = usable_steps([{"format": "gainshape.step"}])
    >>> kept, "Skipped step 1" in str(caught[0].message)
    ([], True)
    """
    kept, skipped = [], []
    for number, step in enumerate(steps, start=1):
        problem = _step_problem(step)
        if problem:
            skipped.append(f"step {number} ({problem})")
        else:
            kept.append(step)
    if skipped:
        warn(f"Skipped {'; '.join(skipped)}: not whole gainshape step records.")
    return kept


def _is_number(value) -> bool:
    return isinstance(value, (int, float)) and not isinstance(value, bool)


def _one_line(step) -> str:
    r = step.get("realized", {})
    cut = ", ".join([f"{hz:.3g}" for _, hz, _, _ in passband_edges(r)]
                    + [hz_range(lo, hi) for lo, hi, _ in removed_bands(r)])
    stopped = " INTERRUPTED, data partly filtered;" if step["application"].get("interrupted") else ""
    return (f"{step.get('time', '?')}{stopped} {r.get('kind', '?')} ({cut} Hz), "
            f"{_kernel_words(step)}, "
            f"{len(step.get('channels', []))} channels")


def _step_sentences(step) -> str:
    r, d, a = step.get("realized", {}), step.get("design", {}), step.get("application", {})
    channels = step.get("channels", [])
    curve = step.get("curve", {})
    request = (
        "drawn as a gain curve from a function" if curve.get("reproducible") is False
        else f"requested as the gain curve '{_curve_words(curve.get('curve', {}))}'"
    )
    if a.get("interrupted"):
        return (f"An application of a {r.get('kind', 'custom-shape')} filter to "
                f"{len(channels)} channels in place was interrupted: the data are partly "
                "filtered and should be reloaded; no figure of this step describes them.")
    text = [
        f"A {r.get('kind', 'custom-shape')} FIR filter, {_phase_words(step)}, {request}, "
        "was applied to "
        f"{len(channels)} channel{'s' if len(channels) != 1 else ''} by multiplying the "
        "Fourier transform of the padded data by the filter's frequency response.",
        _edge_sentence(r),
        *([_timing_sentence(r)] if r.get("edge_timing") else []),
    ]
    details = [f"passband ripple {r.get('passband_ripple_db', float('nan')):.2g} dB"]
    if np.isfinite(r.get("stopband_attenuation_db", float("nan"))):
        details.append(f"at least {_round_down(r['stopband_attenuation_db'], 0):.0f} dB "
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
        text.append(_two_rates_sentence(d["two_rates"]))
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
    direction = ("causal (minimum-phase, one pass, group delay "
                 f"{1000 * r.get('group_delay', 0.0):.3g} ms)" if causal else
                 "zero-phase (non-causal, no delay)")
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
            f"{_round_down(b['attenuation_db'], 1):g} dB {held_words(b)}" for b in skirts))
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
                     f"({'lines found in the data; ' if found else ''}-6 dB width {width}) at least {_round_down(least, 1):g} dB down"
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


def _two_rates_sentence(r) -> str:
    """How the kernel above ran in two rates (see gainshape.rates)."""
    return (f"It ran in two parts whose sum is that kernel: frequencies below "
            f"{r['split_hz']:.3g} Hz were filtered at a reduced rate of "
            f"{r['reduced_rate_hz']:.4g} Hz (decimation by {r['factor']} after a triangular "
            "anti-aliasing filter, linear interpolation back) and subtracted from the output of "
            f"a {r['full_rate_kernel_samples']}-sample kernel at the full rate; the rate change "
            f"leaked at most {r['aliasing_bound']:.2g} of any frequency into others.")


def _phase_words(step) -> str:
    """The step's phase response in words (see :func:`gainshape.design.phase_words`)."""
    return phase_words(bool(step.get("design", {}).get("causal")),
                       step.get("realized", {}).get("group_delay", 0.0))


def _kernel_words(step) -> str:
    """Short label of the kernel for tables: zero-phase or minimum-phase."""
    return "minimum-phase" if step.get("design", {}).get("causal") else "zero-phase"


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
    """The pass-band edges' time behaviour (see gainshape.measure.EdgeTiming)."""
    return "In time, its " + "; its ".join(timing_words(t) for t in r["edge_timing"]) + "."


def _curve_words(recipe) -> str:
    from .curves import GainCurve

    try:
        return GainCurve.from_dict({"format": "gainshape.GainCurve", "curve": recipe}).describe()
    except (ValueError, KeyError, TypeError):
        return "unreadable"


def _round_sig(value, digits):
    if value is None or not np.isfinite(value):
        return "n/a"
    return float(f"{value:.{digits}g}")


def _rounded(values, digits):
    return [_round_sig(v, digits) for v in values]


def _round_down(value, decimals):
    """An attenuation rounded down (so the stated figure still holds).

    >>> _round_down(35.498, 1), _round_down(None, 1)
    (35.4, 'n/a')
    """
    if value is None or not np.isfinite(value):
        return "n/a"
    return float(np.floor(value * 10**decimals) / 10**decimals)


def _round_sig_toward(value, digits, rounding):
    """``value`` to ``digits`` significant digits, rounded "up" or "down".

    >>> _round_sig_toward(235.965, 4, "up"), _round_sig_toward(0.0041166, 4, "down")
    (236.0, 0.004116)
    """
    return float(hz_words(value, digits, rounding))
