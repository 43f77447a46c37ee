"""Names for the types gainshape's public functions take, where no library gives one.

MNE-Python has no type information, so a recording is ``Any`` to a type checker;
the names still say, in signatures and in the API reference, what is expected.
"""

from __future__ import annotations

import os
from typing import Any, Literal, TypeAlias

Recording: TypeAlias = Any
"""An MNE Raw, Epochs or Evoked (or, where a function says so, an array with ``sfreq``)."""

Filtered: TypeAlias = Any
"""What :func:`gainshape.apply` returns: data of the type it was given, or (data, step)."""

Picks: TypeAlias = str | list[str] | list[int] | slice | None
"""Channels as MNE picks them: a type ("eeg"), names, indices, or None for the data channels."""

PathLike: TypeAlias = str | os.PathLike[str]
"""A file or folder name."""

KernelRequest: TypeAlias = Literal["shortest", "exact"] | float
"""The kernel asked of :func:`gainshape.design`: "shortest", "exact" or seconds."""

Verbosity: TypeAlias = bool | str | int | None
"""Whether to show progress (None: for long work only), as MNE's ``verbose``."""

__all__ = ["Filtered", "KernelRequest", "PathLike", "Picks", "Recording", "Verbosity"]
