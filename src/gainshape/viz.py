"""All of gainshape's matplotlib code.

Layout vocabulary: the *gain panels* show requested (dashed) and realized
(solid) gain against a log-frequency axis, linear (0..1) and in dB; the
*time panels* show the kernel (impulse response) and its running sum (step
response).
"""

from __future__ import annotations

import numpy as np

__all__ = ["plot_design", "plot_spectrum_pair", "plot_erp_pair"]

_REQUESTED_STYLE = dict(color="0.35", linestyle="--", linewidth=1.2, label="requested")
_REALIZED_STYLE = dict(color="C0", linewidth=1.8, label="realized")


def plot_design(design, *, fmin=None, show=True):
    """Four panels: gain (linear, dB) requested vs realized, impulse, step.

    Parameters
    ----------
    design : FilterDesign
    fmin : float | None
        Lowest frequency shown (Hz); default a decade below the lowest
        half-amplitude edge, or 0.1 Hz.
    show : bool
        Call ``plt.show()`` (a no-op on non-interactive backends).

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import gainshape as gs
    >>> fig = plot_design(gs.design(gs.lowpass(30.0), 250.0), show=False)
    >>> [ax.get_ylabel() for ax in fig.axes][:2]
    ['gain', 'gain (dB)']
    """
    import matplotlib.pyplot as plt

    freqs = design_frequencies(design, fmin)
    requested = design.requested_gain(freqs)
    realized = design.realized_gain(freqs)
    fig, axes = plt.subplots(2, 2, figsize=(10, 6.5), layout="constrained")
    ax_lin, ax_db, ax_imp, ax_step = axes.ravel()

    for ax, to_y in ((ax_lin, lambda g: g), (ax_db, _to_db)):
        ax.semilogx(freqs, to_y(realized), **_REALIZED_STYLE)
        ax.semilogx(freqs, to_y(requested), **_REQUESTED_STYLE)
        for edge in design.characteristics.half_amplitude:
            ax.axvline(float(edge), color="C3", linewidth=0.8, alpha=0.6)
        ax.set_xlabel("frequency (Hz)")
        ax.grid(True, which="both", alpha=0.3)
    ax_lin.set_ylabel("gain")
    ax_lin.axhline(0.5, color="C3", linewidth=0.8, linestyle=":")
    ax_lin.legend(loc="best", fontsize="small")
    ax_db.set_ylabel("gain (dB)")
    floor = 20 * np.log10(design.tolerance) - 30
    ax_db.set_ylim(max(floor, _to_db(realized).min() - 5), 5)

    times, kernel = design.times, design.kernel
    ax_imp.plot(times, kernel, color="C0", linewidth=1.0)
    ax_imp.set_xlabel("time (s)")
    ax_imp.set_ylabel("impulse response")
    span = max(1.5 * design.characteristics.ringing, 20 / design.sfreq)
    ax_imp.set_xlim(-span if design.phase == "zero" else -span / 10, span)
    ax_step.plot(times, np.cumsum(kernel), color="C2", linewidth=1.2)
    ax_step.set_xlabel("time (s)")
    ax_step.set_ylabel("step response")
    for ax in (ax_imp, ax_step):
        ax.axvline(0.0, color="0.5", linewidth=0.8)
        ax.grid(True, alpha=0.3)
    fig.suptitle(design.describe(), fontsize="medium")
    if show:
        plt.show()
    return fig


def plot_spectrum_pair(freqs, before, after, *, show=True):
    """Power spectra before and after filtering, in dB, on a log-frequency axis.

    Examples
    --------
    >>> import numpy as np
    >>> f = np.linspace(0.25, 125, 500)
    >>> fig = plot_spectrum_pair(f, 1 / f, 0.5 / f, show=False)
    >>> fig.axes[0].get_xscale()
    'log'
    """
    import matplotlib.pyplot as plt

    keep = freqs > 0
    fig, ax = plt.subplots(figsize=(8, 4), layout="constrained")
    ax.semilogx(freqs[keep], _power_db(before[keep]), color="0.45", label="before")
    ax.semilogx(freqs[keep], _power_db(after[keep]), color="C0", label="after")
    ax.set_xlabel("frequency (Hz)")
    ax.set_ylabel("power (dB re 1 V²/Hz)")
    ax.grid(True, which="both", alpha=0.3)
    ax.legend(loc="best", fontsize="small")
    if show:
        plt.show()
    return fig


def plot_erp_pair(times, before, after, *, label="amplitude", show=True):
    """One channel's average waveform before and after filtering.

    Examples
    --------
    >>> import numpy as np
    >>> t = np.linspace(-0.2, 0.8, 300)
    >>> fig = plot_erp_pair(t, np.sin(t), 0.9 * np.sin(t), show=False)
    >>> len(fig.axes[0].get_lines()) >= 2
    True
    """
    import matplotlib.pyplot as plt

    fig, ax = plt.subplots(figsize=(8, 4), layout="constrained")
    ax.plot(times, before, color="0.45", label="before")
    ax.plot(times, after, color="C0", label="after")
    ax.axvline(0.0, color="0.5", linewidth=0.8)
    ax.axhline(0.0, color="0.5", linewidth=0.8)
    ax.set_xlabel("time (s)")
    ax.set_ylabel(label)
    ax.grid(True, alpha=0.3)
    ax.legend(loc="best", fontsize="small")
    if show:
        plt.show()
    return fig


def design_frequencies(design, fmin=None) -> np.ndarray:
    """Log-spaced frequencies from ``fmin`` to Nyquist for gain plots."""
    edges = [float(e) for e in design.characteristics.half_amplitude]
    if fmin is None:
        fmin = min(edges) / 10 if edges else 0.1
    return np.geomspace(fmin, design.sfreq / 2.0, 2000)


def _power_db(power):
    return 10 * np.log10(np.maximum(power, 1e-300))


def _to_db(gain):
    return 20 * np.log10(np.maximum(np.abs(gain), 1e-12))
