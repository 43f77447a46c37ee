"""A filter recipe as a small JSON file: the curve and the options of :func:`gainshape.apply`.

Vocabulary: a *recipe* is what a study applies to every recording: the gain
curve's own recipe (see :meth:`GainCurve.to_dict`) plus ``causal``,
``kernel``, ``tolerance``, ``pad`` and ``picks``. Read back, it is a dict of
:func:`gainshape.apply`'s keyword arguments, so ``gs.apply(raw, **recipe)``
repeats the recorded call.
"""

from __future__ import annotations

import json
from pathlib import Path

from .._checks import check_bool, check_option, check_positive, DEFAULT_TOLERANCE, PAD_MODES
from .._files import atomic_output
from .._types import KernelRequest, PathLike, Picks
from ..shaping.curves import GainCurve
from ..shaping.design import check_filter, check_kernel_request, design
from ..shaping.filter_design import FilterDesign

__all__ = ["read_recipe", "write_recipe", "recipe_content", "recipe_from_content", "recipe_design"]

_FORMAT, _VERSION = "gainshape.recipe", 1
_KEYS = ("format", "version", "curve", "causal", "kernel", "tolerance", "pad", "picks")


def write_recipe(path: PathLike, filt: GainCurve | FilterDesign, *, causal: bool = False,
                 kernel: KernelRequest = "shortest",
                 tolerance: float = DEFAULT_TOLERANCE,
                 pad: str = "reflect", picks: Picks = None) -> Path:
    """Write a filter recipe to a JSON file, whole or not at all.

    Parameters
    ----------
    path : str | Path
        The file to write (replaced if it exists).
    filt : GainCurve | FilterDesign
        The filter; a design is recorded by its curve and its own
        ``causal``, ``kernel`` and ``tolerance`` (the recipe is rate-free).
    causal, kernel, tolerance : bool, str or float, float
        As for :func:`gainshape.design` (ignored for a design).
    pad : str
        As for :func:`gainshape.apply`.
    picks : str | list of str or int | None
        As for :func:`gainshape.apply`; names keep best across recordings.

    Returns
    -------
    Path
        The file written.

    Raises
    ------
    ValueError
        For a curve built from a bare callable (it has no recipe) or an
        option :func:`gainshape.apply` would refuse; nothing is written.

    See Also
    --------
    read_recipe, apply

    Examples
    --------
    >>> import tempfile, pathlib, gainshape as gs
    >>> path = pathlib.Path(tempfile.mkdtemp()) / "filter.json"
    >>> _ = gs.write_recipe(path, gs.bandpass(0.1, 40.0), picks="eeg")
    >>> gs.read_recipe(path)["picks"]
    'eeg'
    """
    content = recipe_content(filt, causal=causal, kernel=kernel, tolerance=tolerance, pad=pad,
                             picks=picks)
    path = Path(path)
    with atomic_output(path) as staged:
        staged.write_text(json.dumps(content, indent=2) + "\n", encoding="utf-8")
    return path


def read_recipe(path: PathLike) -> dict:
    """Read a filter recipe written by :func:`write_recipe`.

    Parameters
    ----------
    path : str | Path
        The JSON file.

    Returns
    -------
    dict
        :func:`gainshape.apply`'s keyword arguments: ``filt`` (a
        GainCurve), ``causal``, ``kernel``, ``tolerance``, ``pad``, ``picks``.

    Raises
    ------
    ValueError
        If the file is not JSON, is not a gainshape recipe, has another
        version, lacks or adds keys, or holds an option apply would refuse.

    See Also
    --------
    write_recipe, apply

    Examples
    --------
    >>> import tempfile, pathlib, gainshape as gs
    >>> path = gs.write_recipe(pathlib.Path(tempfile.mkdtemp()) / "f.json", gs.lowpass(30.0))
    >>> recipe = gs.read_recipe(path)
    >>> recipe["filt"].describe(), recipe["kernel"]
    ('low-pass 30 Hz, 12 dB/octave', 'shortest')
    """
    path = Path(path)
    try:
        content = json.loads(path.read_text(encoding="utf-8"))
    except ValueError as err:
        raise ValueError(f"{path} is not a JSON file ({err}); a recipe is written by "
                         "gainshape.write_recipe.") from None
    return recipe_from_content(content, path)


def recipe_content(filt, *, causal=False, kernel="shortest", tolerance=DEFAULT_TOLERANCE,
                   pad="reflect",
                   picks=None) -> dict:
    """The JSON content of a recipe (what :func:`write_recipe` writes), checked.

    >>> from gainshape import lowpass
    >>> recipe_content(lowpass(30.0))["curve"]
    {'kind': 'lowpass', 'cutoff': 30.0, 'rolloff': 12.0}
    """
    check_filter(filt)
    if isinstance(filt, FilterDesign):
        filt, causal, kernel, tolerance = filt.curve, filt.causal, filt.kernel_request, filt.tolerance
    return {"format": _FORMAT, "version": _VERSION, "curve": filt.to_dict()["curve"],
            **_checked_options(causal, kernel, tolerance, pad, picks)}


def recipe_from_content(content, path="the recipe") -> dict:
    """Apply's keyword arguments from a recipe's JSON content; ``path`` names it in errors.

    >>> from gainshape import lowpass
    >>> recipe_from_content(recipe_content(lowpass(30.0)))["filt"] == lowpass(30.0)
    True
    """
    if not isinstance(content, dict) or content.get("format") != _FORMAT:
        raise ValueError(f"{path} is not a filter recipe: its 'format' should be {_FORMAT!r}.")
    if content.get("version") != _VERSION:
        raise ValueError(f"{path} is a recipe of version {content.get('version')!r}; this "
                         f"gainshape reads version {_VERSION}. Upgrade gainshape to read it.")
    unknown, missing = set(content) - set(_KEYS), set(_KEYS) - set(content)
    if unknown or missing:
        raise ValueError(f"{path} holds the keys {sorted(content)}: "
                         + "; ".join(filter(None, [
                             "unknown " + ", ".join(map(repr, sorted(unknown))) if unknown else "",
                             "missing " + ", ".join(map(repr, sorted(missing))) if missing else ""]))
                         + f". A recipe has exactly {', '.join(_KEYS)}.")
    curve = GainCurve.from_dict({"format": "gainshape.GainCurve", "version": 1,
                                 "curve": content["curve"]})
    return {"filt": curve, **_checked_options(content["causal"], content["kernel"],
                                              content["tolerance"], content["pad"],
                                              content["picks"])}


def recipe_design(recipe: dict, sfreq: float) -> FilterDesign:
    """The filter a recipe (:func:`read_recipe`'s dict) realizes at ``sfreq``.

    >>> from gainshape import lowpass
    >>> recipe_design(recipe_from_content(recipe_content(lowpass(30.0))), 250.0).sfreq
    250.0
    """
    return design(recipe["filt"], sfreq, causal=recipe["causal"], kernel=recipe["kernel"],
                  tolerance=recipe["tolerance"])


def _checked_options(causal, kernel, tolerance, pad, picks) -> dict:
    """The options as apply checks them, in plain JSON values."""
    if not (picks is None or isinstance(picks, str)
            or (isinstance(picks, list) and all(isinstance(p, (str, int)) and not isinstance(p, bool)
                                                for p in picks))):
        raise ValueError("The 'picks' of a recipe are None, a channel type or 'all', or a list "
                         f"of channel names or indices; {picks!r} was given.")
    return {"causal": check_bool("causal", causal), "kernel": check_kernel_request(kernel),
            "tolerance": check_positive("tolerance", tolerance, below=1.0),
            "pad": check_option("pad", pad, PAD_MODES), "picks": picks}
