"""Constructors meet their analytic definitions.

References: the half-amplitude point is where gain = 0.5 (-6.02 dB), common
practice (no source); asymptotic slope of an order-n Butterworth-like
magnitude is 20*log10(2)*n = 6.02*n dB/octave (handbook fact, e.g. Williams &
Taylor, Electronic Filter Design Handbook, ch. 2).
"""

import numpy as np
import pytest

import gainshape as gs

ROLLOFFS = [6.0, 9.5, 12.0, 24.0, 48.0]


@pytest.mark.parametrize("rolloff", ROLLOFFS)
def test_lowpass_half_amplitude_and_slope(rolloff):
    g = gs.lowpass(30.0, rolloff=rolloff)
    assert g(30.0) == pytest.approx(0.5, abs=1e-12)
    far = 30.0 * 2.0 ** np.array([8.0, 9.0])
    slope = 20 * np.log10(g(far[0]) / g(far[1]))
    assert slope == pytest.approx(rolloff, rel=1e-3)


@pytest.mark.parametrize("rolloff", ROLLOFFS)
def test_highpass_half_amplitude_and_slope(rolloff):
    g = gs.highpass(0.5, rolloff=rolloff)
    assert g(0.5) == pytest.approx(0.5, abs=1e-12)
    far = 0.5 / 2.0 ** np.array([9.0, 8.0])
    slope = 20 * np.log10(g(far[1]) / g(far[0]))
    assert slope == pytest.approx(rolloff, rel=1e-3)


def test_bandpass_edges():
    g = gs.bandpass(0.1, 30.0)
    # the two factors overlap by less than 1e-6 at each other's cutoff
    np.testing.assert_allclose(g([0.1, 30.0]), 0.5, rtol=1e-6)


def test_bandstop_edges_and_null():
    g = gs.bandstop(8.0, 12.0, rolloff=18.0)
    np.testing.assert_allclose(g([8.0, 12.0]), 0.5, rtol=1e-12)
    assert g(np.sqrt(96.0)) == pytest.approx(0.0, abs=1e-12)
    assert g(0.0) == 1.0 and g(1e5) == pytest.approx(1.0, abs=1e-9)


@pytest.mark.parametrize("rolloff", [6.0, 12.0, 24.0])
def test_realized_design_matches_analytic_edges(rolloff):
    c = gs.design(gs.lowpass(20.0, rolloff=rolloff), 500.0).characteristics
    assert float(c.half_amplitude[0]) == pytest.approx(20.0, rel=5e-3)
    # half-power point of 1/sqrt(1 + 3 x^(2n)) is at x = 3^(-1/(2n))
    n = rolloff / (20 * np.log10(2))
    assert float(c.half_power[0]) == pytest.approx(20.0 * 3 ** (-1 / (2 * n)), rel=5e-3)
    assert c.rolloff[0] == pytest.approx(rolloff, rel=0.05)
