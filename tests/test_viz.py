"""What the design plot draws equals the design's own numbers."""

import matplotlib

matplotlib.use("Agg")

import matplotlib.pyplot as plt  # noqa: E402
import numpy as np  # noqa: E402
import pytest  # noqa: E402

import gainshape as gs  # noqa: E402


@pytest.fixture
def design():
    return gs.design(gs.bandpass(0.5, 30.0) * gs.notch(50.0), 250.0)


def _line(ax, label):
    return next(line for line in ax.get_lines() if line.get_label() == label)


def test_gain_panels_show_realized_and_requested(design):
    fig = design.plot(show=False)
    ax_lin, ax_db = fig.axes[:2]
    realized = _line(ax_lin, "realized")
    f = realized.get_xdata()
    np.testing.assert_allclose(realized.get_ydata(), design.realized_gain(f))
    np.testing.assert_allclose(_line(ax_lin, "requested").get_ydata(), design.requested_gain(f))
    db = _line(ax_db, "realized").get_ydata()
    np.testing.assert_allclose(db, 20 * np.log10(np.maximum(design.realized_gain(f), 1e-12)))
    assert ax_lin.get_xscale() == "log"
    plt.close(fig)


def test_time_panels_show_kernel_and_step(design):
    fig = design.plot(show=False)
    ax_imp, ax_step = fig.axes[2:4]
    np.testing.assert_array_equal(ax_imp.get_lines()[0].get_ydata(), design.kernel)
    np.testing.assert_allclose(ax_step.get_lines()[0].get_ydata(), np.cumsum(design.kernel))
    plt.close(fig)


def test_title_states_the_design(design):
    fig = design.plot(show=False)
    assert fig._suptitle.get_text() == design.describe()
    plt.close(fig)
