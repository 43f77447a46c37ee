"""The BIDS entry of a filtered recording (SoftwareFilters), written into its sidecar, and
the export of a filtered recording with its record."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

from .._checks import missing_modules
from .._files import atomic_output, atomic_outputs
from .._types import PathLike, Recording
from ..shaping.measure import passband_edges
from ..shaping.words import round_down, round_sig, round_sig_toward, rounded_all
from .methods import methods_text
from .steps import history, step_phase_words


def bids_filters(inst: Recording) -> dict | str:
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
            edges[f"{name} half-amplitude cutoff (Hz)"] = round_sig(hz, 4)
            edges[f"{name} half-power cutoff (Hz)"] = round_sig(half_power, 4)
            edges[f"{name} roll-off (dB/octave)"] = round_sig(slope, 3)
        for t in r.get("edge_timing", []):
            edges.update(_bids_timing(t))
        if r.get("stop_bands"):
            edges["stop bands"] = [_bids_stop_band(b) for b in r["stop_bands"]]
        if isinstance(d.get("two_rates"), dict):
            two = d["two_rates"]
            edges["slow part below (Hz)"] = round_sig(two.get("split_hz"), 4)
            edges["slow part's reduced sampling frequency (Hz)"] = round_sig(
                two.get("reduced_rate_hz"), 6)
            edges["aliasing bound (gain)"] = round_sig(two.get("aliasing_bound"), 2)
        status = {"status": "interrupted: data partly filtered"} if step["application"].get(
            "interrupted") else {}
        out[f"gainshape step {i}: {r.get('kind', 'filter')}"] = {
            **status,
            **edges,
            "passband ripple (dB)": round_sig(r.get("passband_ripple_db"), 3),
            "least stop-band attenuation, over each band's stated range (dB)": round_down(
                r.get("stop_band_attenuation_db"), 1),
            "phase response": step_phase_words(step),
            "group delay (s)": round_sig(r.get("group_delay"), 3),
            "kernel length (s)": round_sig(r.get("length"), 4),
            "sampling frequency (Hz)": d.get("sfreq", "n/a"),
            "design": "frequency-sampled FIR from a gain curve, tapered truncation",
            "software": f"gainshape {step.get('software', {}).get('gainshape', '?')}",
        }
    return out


def _bids_timing(t: dict) -> dict:
    """One edge's time figures as BIDS keys (units in the keys)."""
    if t["edge"] != "high-pass":
        return {"low-pass impulse decay time to 1 % (s)": round_sig(t["decay_s"], 3),
                "low-pass step overshoot (%)": round_sig(t["overshoot_pct"], 3)}
    out = {"high-pass step settling time to 1 % (s)": round_sig(t["settling_s"], 3)}
    if "undershoot_pct" not in t:  # recorded before undershoot and pre-response were apart
        out["high-pass opposite-polarity excursion, before and after the step (%)"] = round_sig(
            t.get("opposite_pct"), 3)
        return out
    out["high-pass step undershoot after the step (% of step)"] = round_sig(t["undershoot_pct"], 3)
    out["high-pass time of deepest undershoot (s after the step)"] = round_sig(t["undershoot_s"], 3)
    if t.get("pre_response_pct") is not None:
        out["high-pass pre-response before the step (% of step)"] = round_sig(
            t["pre_response_pct"], 3)
        out["high-pass pre-response onset (s before the step)"] = round_sig(t["pre_response_s"], 3)
    return out


def _bids_stop_band(b: dict) -> dict:
    """One stop band as a BIDS object: where its attenuation holds (rounded inward) and how much."""
    out = {"kind": b["kind"], "half-amplitude limits (Hz)": rounded_all([b["low"], b["high"]], 4)}
    if "attenuated_low" in b:
        out["attenuation holds over (Hz)"] = [round_sig_toward(b["attenuated_low"], 4, "up"),
                                              round_sig_toward(b["attenuated_high"], 4, "down")]
    out["least attenuation (dB)"] = round_down(b["attenuation_db"], 1)
    return out


def write_bids_filters(bids_path: Any, inst: Recording) -> None:
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


def export(inst: Recording, fname: PathLike, *, overwrite: bool = False,
           **export_options: Any) -> list:
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
