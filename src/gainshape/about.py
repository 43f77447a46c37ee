"""What a bug report needs: versions, platform, optional features and the shims in use.

    gainshape about            (the command line)
    print(gs.about())          (in Python)
"""

from __future__ import annotations

import importlib.metadata
import platform
import sys

from ._checks import missing_modules

__all__ = ["about"]

# distribution name -> what gainshape uses it for
_PACKAGES = {"mne": "MNE-Python", "numpy": "NumPy", "scipy": "SciPy", "xarray": "xarray",
             "matplotlib": "matplotlib", "dask": "Dask", "distributed": "Dask distributed",
             "anywidget": "anywidget", "mne-bids": "mne-bids", "pybv": "pybv",
             "edfio": "edfio", "eeglabio": "eeglabio"}
# feature -> (modules it needs, the extra that brings them)
_FEATURES = {
    "run_study and `gainshape run`": (("distributed", "pandas"), "dask"),
    "BIDS roots in run_study": (("mne_bids",), "bids"),
    "draw (the curve editor)": (("anywidget",), None),
    "export to BrainVision (.vhdr)": (("pybv",), "export"),
    "export to EDF/BDF (.edf, .bdf)": (("edfio",), "export"),
    "export to EEGLAB (.set)": (("eeglabio",), "export"),
}


def about() -> str:
    """Versions of gainshape and what it runs on, the optional features
    available (and, for a missing one, the command that brings it), and
    which private SciPy/MNE interfaces gainshape is using.

    Returns
    -------
    str
        The report, one item a line, to paste into a bug report.

    Examples
    --------
    >>> print(about())  # doctest: +ELLIPSIS
    gainshape ...
    Python ...
    """
    from ._version import __version__
    from ._compat import shims_in_use

    lines = [f"gainshape {__version__}", f"Python {platform.python_version()} "
             f"({sys.executable})", f"platform {platform.platform()}"]
    for distribution, name in _PACKAGES.items():
        try:
            lines.append(f"{name} {importlib.metadata.version(distribution)}")
        except importlib.metadata.PackageNotFoundError:
            lines.append(f"{name}: not installed")
    lines.append("features:")
    for feature, (modules, extra) in _FEATURES.items():
        missing = missing_modules(*modules)
        if not missing:
            lines.append(f"  {feature}: available")
        else:
            how = (f'pip install "gainshape[{extra}]"' if extra
                   else f"pip install {' '.join(missing)}")
            lines.append(f"  {feature}: not available ({', '.join(missing)} missing: {how})")
    lines.append("private interfaces in use (gainshape._compat):")
    lines += [f"  {shim}" for shim in shims_in_use()]
    return "\n".join(lines)
