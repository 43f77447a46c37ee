"""The one way up to the showing wing: a plot method of an object made below it.

``FilterDesign.plot`` lives in the shaping wing, which never imports the
showing wing (so designing never imports matplotlib, and the wings stay a
stack without a circle). It asks here for the plotting function by name, and
the showing wing is imported at that call. The layering test allows this one
module to import by name.
"""

from __future__ import annotations

import importlib
from collections.abc import Callable


def plotting_function(name: str) -> Callable:
    """The showing wing's public plotting function ``name``.

    Examples
    --------
    >>> plotting_function("plot_design").__name__
    'plot_design'
    """
    return getattr(importlib.import_module("gainshape.showing"), name)
