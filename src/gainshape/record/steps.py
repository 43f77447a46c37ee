"""A record of every filter, kept with the data, and what it turns into.

Vocabulary: a *step* is the JSON-serializable record of one application of a
filter; the *history* is the ordered list of steps on an object. Steps are
stored in ``info["description"]`` below a marker line, one JSON object per
line, after whatever text the user had there, because MNE keeps that field
through ``copy``, ``crop``, ``pick``, epoching, averaging, concatenation and
FIF saving. A *fingerprint* is an XXH3-128 hash of the filtered channels' data.
"""

from __future__ import annotations

import html
import json
import platform
import uuid
from typing import Any, TypedDict

import datetime as _dt
import numpy as np
import xxhash

from .._checks import warn
from .._types import Recording
from ..shaping.curves import GainCurve
from ..shaping.filter_design import FilterDesign
from ..shaping.measure import passband_edges, removed_bands
from ..shaping.words import hz_range, phase_label, phase_words

__all__ = ["History", "fingerprint", "history", "make_step", "store_step", "usable_steps"]

_BEGIN = "[gainshape history v1: one JSON step per line below; do not edit]"
_END = "[end of gainshape history]"
_STEP_FORMAT = "gainshape.step"
STEP_FORMAT_VERSION = 2  # step.schema.json; older steps (versions 0 and 1) are read alike
_RENAMED_IN_2 = {"stopband_attenuation_db": "stop_band_attenuation_db"}  # realized figures


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
                phase_label_of(step),
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


class StepDesign(TypedDict):
    """A step's ``design`` part: what was asked of :func:`gainshape.design` and its kernel."""

    sfreq: float
    causal: bool
    kernel: str | float
    tolerance: float
    kernel_samples: int
    two_rates: dict | None
    notes: list[str]


class Step(TypedDict):
    """One step record, as :func:`make_step` builds it and ``step.schema.json`` writes it down
    (``tests/test_step_schema.py`` holds the two to the same keys)."""

    format: str
    format_version: int
    id: str
    time: str
    software: dict[str, str]
    curve: dict
    design: StepDesign
    realized: dict
    application: dict
    channels: list[str]
    fingerprint_before: str
    fingerprint_after: str


def make_step(design: FilterDesign, *, channels: list[str], pad: str, nan: str,
              segments: list | None, dtype: str, before: str, after: str,
              data_sfreq: float | None = None, also: dict | None = None) -> Step:
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
    return Step({
        "format": _STEP_FORMAT,
        "format_version": STEP_FORMAT_VERSION,
        "id": uuid.uuid4().hex,
        "time": _dt.datetime.now(_dt.timezone.utc).isoformat(timespec="seconds"),
        "software": software_versions(),
        "curve": curve_record,
        "design": StepDesign({
            "sfreq": design.sfreq,
            "causal": design.causal,
            "kernel": design.kernel_request,
            "tolerance": design.tolerance,
            "kernel_samples": int(design.taps.size),
            "two_rates": design.rates.to_dict() if design.rates else None,
            "notes": list(design.notes),
        }),
        "realized": design.characteristics.to_dict(),
        "application": {"pad": pad, "nan": nan, "segments": segments, "dtype": dtype,
                        **_rate_shift(design, data_sfreq), **(also or {})},
        "channels": list(channels),
        "fingerprint_before": before,
        "fingerprint_after": after,
    })


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

    from .._version import __version__

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
        h.update(np.ascontiguousarray(rows[r]).tobytes())
    return "xxh3_128:" + h.hexdigest()


def store_step(info, step: dict) -> None:
    """Append ``step`` to the history kept in ``info["description"]``."""
    user_text, lines = split_description(info.get("description"))
    lines.append(json.dumps(step, separators=(",", ":")))
    block = "\n".join([_BEGIN, *lines, _END])
    info["description"] = f"{user_text}\n\n{block}" if user_text else block


def history(inst: Recording) -> History:
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
    _, lines = split_description(info.get("description"))
    steps, damaged = History(), []
    for number, line in enumerate(lines, start=1):
        try:
            step = json.loads(line)
        except ValueError as err:
            damaged.append(f"line {number} ({err}): {line[:60]!r}")
            continue
        problem = step_problem(step)
        if problem:
            damaged.append(f"line {number} ({problem}): {line[:60]!r}")
            continue
        steps.append(current_step(step))
    if damaged:
        warn(f"Skipped damaged history {'; '.join(damaged)}. The other steps are read; "
             "the damaged ones are left in info['description'] as they are.")
    return steps


# -- helpers --------------------------------------------------------------------
def split_description(description):
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


def current_step(step: dict) -> dict:
    """A step of any format version with the current version's names (a copy if renamed).

    Examples
    --------
    >>> old = {"format_version": 1, "realized": {"stopband_attenuation_db": 40.0}}
    >>> current_step(old)["realized"]
    {'stop_band_attenuation_db': 40.0}
    """
    realized = step.get("realized")
    if not isinstance(realized, dict) or not set(_RENAMED_IN_2) & set(realized):
        return step
    renamed = {_RENAMED_IN_2.get(key, key): value for key, value in realized.items()}
    return {**step, "realized": renamed}


def step_problem(step) -> str | None:
    """Why a parsed line is not a usable step, or None if it is."""
    if not isinstance(step, dict) or step.get("format") != _STEP_FORMAT:
        return "not a gainshape step"
    parts = {"design": dict, "realized": dict, "application": dict, "channels": list,
             "curve": dict}
    for key, kind in parts.items():
        if not isinstance(step.get(key), kind):
            return f"its {key!r} is not a {kind.__name__}"
    r, d = current_step(step)["realized"], step["design"]
    lists = ("half_amplitude", "half_power", "rolloff")
    if not all(isinstance(r.get(k, []), list) and all(_is_number(v) for v in r.get(k, []))
               for k in lists):
        return "its realized cutoffs are not lists of numbers"
    directions = r.get("half_amplitude_direction", [])
    if not isinstance(directions, list) or not set(directions) <= {"rising", "falling"} \
            or len(directions) != len(r.get("half_amplitude", [])):
        return "its edge directions do not match its cutoffs"
    numbers = ("passband_ripple_db", "stop_band_attenuation_db", "max_deviation",
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
        problem = step_problem(step)
        if problem:
            skipped.append(f"step {number} ({problem})")
        else:
            kept.append(current_step(step))
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
            f"{phase_label_of(step)}, "
            f"{len(step.get('channels', []))} channels")


def step_phase_words(step) -> str:
    """The step's phase response in words (see :func:`gainshape.shaping.words.phase_words`)."""
    return phase_words(bool(step.get("design", {}).get("causal")),
                       step.get("realized", {}).get("group_delay", 0.0))


def phase_label_of(step) -> str:
    """Short label of the kernel for tables: zero-phase or minimum-phase."""
    return phase_label(bool(step.get("design", {}).get("causal")))


def curve_words(record: dict) -> str:
    """A step's recorded curve in words: its recipe described, the description kept for a
    curve built from a callable, or "unreadable recipe" for a damaged one.

    >>> curve_words({"format": "gainshape.GainCurve", "version": 1,
    ...              "curve": {"kind": "lowpass", "cutoff": 30.0, "rolloff": 12.0}})
    'low-pass 30 Hz, 12 dB/octave'
    >>> curve_words({"reproducible": False, "description": "custom curve from callable f"})
    'custom curve from callable f'
    """
    if isinstance(record, dict) and "description" in record:
        return str(record["description"])
    try:
        return GainCurve.from_dict(record).describe()
    except (ValueError, KeyError, TypeError):
        return "unreadable recipe"


def chosen_after(comparison: Any) -> dict:
    """What a step keeps of the comparison its filter was chosen after (the settings
    :func:`gainshape.compare_filters` wrote in ``attrs["record"]``).

    >>> import xarray as xr
    >>> ds = xr.Dataset(attrs={"record": '{"candidates": {"a": "low-pass 30 Hz"}, '
    ...     '"data": "the averages", "reference": "the candidate a", "components": {}}'})
    >>> sorted(chosen_after(ds))
    ['candidates', 'components', 'data', 'reference']
    """
    try:
        record = json.loads(comparison.attrs["record"])
        assert {"candidates", "data", "reference", "components"} <= set(record)
    except (AttributeError, KeyError, TypeError, ValueError, AssertionError):
        raise TypeError("The 'comparison' parameter takes the Dataset gainshape.compare_filters "
                        f"returned; a {type(comparison).__name__} without its record was "
                        "given.") from None
    return record
