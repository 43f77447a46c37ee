"""The look every figure shares: colours and styles, dB conversions, titles and axes.

The figures themselves are in :mod:`.filter_plots`, :mod:`.spectrum_plots` and
:mod:`.waveform_plots`; matplotlib is imported inside the functions, so that
importing gainshape never imports it.

Layout vocabulary: the *gain panels* show the requested gain as a light filled
area and the realized gain as a line over it, against a log-frequency axis,
linear (0..1) and in dB; the *deviation panel* shows realized minus requested
with the tolerance band; the *time panels* show the kernel (impulse response)
and its running sum (step response).
"""

from __future__ import annotations

import numpy as np

LABEL_PCT = 5.0  # opposite deflections smaller than this are not labelled
MAP_LIMIT_DB = 20.0  # colour scale of band-change maps saturates beyond +-20 dB
REQUESTED_FILL = dict(color="C1", alpha=0.22, linewidth=0)
REALIZED_STYLE = dict(color="C0", linewidth=1.5, label="realized")


def unlabelled_minor_ticks(ax):
    """No labels on a log axis's minor ticks (our ranges span decades, where
    matplotlib shows none anyway): measuring their empty text took a third
    of the time to draw a design figure."""
    from matplotlib.ticker import NullFormatter

    ax.xaxis.set_minor_formatter(NullFormatter())


def title_of(fig, text, width=110):
    """The figure's title, wrapped so that long filter descriptions stay inside it."""
    import textwrap

    fig.suptitle(textwrap.fill(text, width, break_on_hyphens=False), fontsize="medium")


def check_result(value, name, needed, made_by):
    """TypeError naming the parameter unless ``value`` has the ``needed`` parts."""
    if not all(hasattr(value, part) for part in needed):
        raise TypeError(
            f"The '{name}' parameter takes the result of {made_by}; a "
            f"{type(value).__name__} was given."
        )


def power_db(power):
    return 10 * np.log10(np.maximum(power, 1e-300))


def to_db(gain):
    return 20 * np.log10(np.maximum(np.abs(gain), 1e-12))
