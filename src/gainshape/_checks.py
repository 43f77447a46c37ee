"""Argument checks shared by every layer, and gainshape's own warning class.

Vocabulary: a *parameter* is the name the user typed, a *value* what they
passed. Every failure is one sentence that names the parameter, shows the
value and says what is accepted.
"""

from __future__ import annotations

import numbers
import os
import warnings

import numpy as np

from ._compat import levels_to_caller_outside


class GainshapeWarning(UserWarning):
    """Warning issued by gainshape (filter with ``warnings.filterwarnings``).

    Raised for what the user should know but can go on with: a tolerance
    not met, a segment shorter than three kernels, a band too narrow for the
    data, a damaged history line skipped.

    See Also
    --------
    warnings.filterwarnings

    Examples
    --------
    >>> import warnings
    >>> with warnings.catch_warnings():
    ...     warnings.simplefilter("ignore", GainshapeWarning)
    ...     warnings.warn("not shown", GainshapeWarning)
    """


def warn(message: str, stacklevel: int | None = None) -> None:
    """Issue a :class:`GainshapeWarning` pointing at the user's line: the first
    caller outside the gainshape package (or ``stacklevel`` when given)."""
    if stacklevel is None:
        stacklevel = levels_to_caller_outside(os.path.dirname(os.path.abspath(__file__)))
    warnings.warn(message, GainshapeWarning, stacklevel=stacklevel)


def check_option(name: str, value, allowed) -> str:
    """Return ``value`` if it is one of ``allowed``, else raise ValueError.

    >>> check_option("nan", "split", ("raise", "split"))
    'split'
    >>> check_option("nan", "skip", ("raise", "split"))
    Traceback (most recent call last):
    ...
    ValueError: 'skip' is not a choice for 'nan': use one of 'raise', 'split'.
    """
    if not isinstance(value, str) or value not in allowed:
        listed = ", ".join(repr(a) for a in allowed)
        raise ValueError(f"{value!r} is not a choice for '{name}': use one of {listed}.")
    return value


def check_bool(name: str, value) -> bool:
    """Return ``value`` if it is True or False (NumPy booleans too), else raise TypeError.

    >>> check_bool("causal", True)
    True
    """
    if not isinstance(value, (bool, np.bool_)):
        raise TypeError(
            f"The '{name}' parameter is a yes/no switch: pass True or False, not "
            f"{type(value).__name__} ({value!r})."
        )
    return bool(value)


def missing_modules(*names: str) -> list:
    """The modules among ``names`` that cannot be imported (an optional
    dependency not installed), in order.

    >>> missing_modules("json", "no_such_module_here")
    ['no_such_module_here']
    """
    import importlib

    missing = []
    for name in names:
        try:
            importlib.import_module(name)
        except ImportError:
            missing.append(name)
    return missing


LOCAL_PAD_MODES = ("reflect", "symmetric", "edge", "constant")  # numpy.pad modes needing only the ends
PAD_MODES = (*LOCAL_PAD_MODES, "linear_ramp", "maximum", "mean", "median", "minimum", "wrap")
DEFAULT_TOLERANCE = 0.001  # largest gain error a design accepts by default (-60 dB of full gain)
_TOLERANCE_BELOW = 1.0  # a tolerance of the whole gain range would accept any kernel


def check_tolerance(value) -> float:
    """The ``tolerance`` option checked: a number > 0 and below 1 (one home for its limits).

    >>> check_tolerance(DEFAULT_TOLERANCE)
    0.001
    """
    return check_positive("tolerance", value, below=_TOLERANCE_BELOW)


def check_positive(name: str, value, *, below: float | None = None) -> float:
    """Return ``value`` as a float if it is a finite real number > 0.

    ``below`` adds an exclusive upper bound (for example the Nyquist
    frequency).

    >>> check_positive("cutoff", 30)
    30.0
    """
    if isinstance(value, bool) or not isinstance(value, numbers.Real):
        raise TypeError(
            f"The '{name}' parameter takes a real number; "
            f"{type(value).__name__} ({value!r}) was given."
        )
    value = float(value)
    if not np.isfinite(value) or value <= 0:
        raise ValueError(
            f"The '{name}' parameter takes a finite number > 0; {value!r} was given."
        )
    if below is not None and value >= below:
        raise ValueError(
            f"The '{name}' parameter must stay below {below:g}; {value:g} was given."
        )
    return value


def check_int(name: str, value, *, minimum: int) -> int:
    """Return ``value`` if it is an integer >= ``minimum``.

    >>> check_int("harmonics", 3, minimum=1)
    3
    """
    if isinstance(value, bool) or not isinstance(value, numbers.Integral):
        raise TypeError(
            f"The '{name}' parameter takes an integer; "
            f"{type(value).__name__} ({value!r}) was given."
        )
    if value < minimum:
        raise ValueError(
            f"The '{name}' parameter takes an integer >= {minimum}; {value!r} was given."
        )
    return int(value)


def check_fraction(name: str, value: float) -> float:
    """``value`` as a float in (0, 1], else a ValueError naming ``name``.

    >>> check_fraction("presence", 0.5)
    0.5
    """
    value = check_positive(name, value)
    if value > 1:
        raise ValueError(f"The '{name}' parameter takes a fraction between 0 and 1; "
                         f"{value!r} was given.")
    return value
