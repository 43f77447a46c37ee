"""measure: the refined maxima behind deviation and attenuation, and edge timing
of single-edge kernels."""

import numpy as np
import pytest
from scipy.signal import freqz

import gainshape as gs
from gainshape.shaping.measure import max_deviation
from gainshape.shaping.stopbands import refined_max
from gainshape.shaping.realize import KernelResponse


def test_refined_max_finds_a_peak_between_grid_points():
    # reference: calculus; sin(x) peaks at 1 for x = pi / 2, which no grid point hits
    grid = np.linspace(0.0, 3.0, 7)
    assert refined_max(grid, np.sin(grid), np.sin) == pytest.approx(1.0, abs=1e-12)


def test_refined_max_respects_where_it_counts():
    grid = np.linspace(0.0, 3.0, 31)
    best = refined_max(grid, np.where(grid <= 1.0, np.sin(grid), 0.0), np.sin,
                        allowed=lambda f: f <= 1.0)
    assert best == pytest.approx(np.sin(1.0), abs=1e-6)


def test_max_deviation_equals_a_dense_scan():
    # reference: scipy.signal.freqz of the kernel on 2**20 points
    f = gs.design(gs.bandpass(1.0, 40.0), 250.0)
    freqs, h = freqz(f.taps, worN=2**20, fs=250.0)
    dense = np.max(np.abs(np.abs(h) - f.requested_gain(freqs)))
    measured = max_deviation(f.curve, KernelResponse(f.taps, f.offset, 250.0, False))
    assert measured == pytest.approx(dense, rel=1e-4)
    assert f.characteristics.max_deviation == pytest.approx(dense, rel=1e-4)


@pytest.mark.parametrize("curve", [gs.highpass(0.5), gs.lowpass(30.0, rolloff=24.0)])
def test_causal_single_edge_is_timed_from_its_own_kernel(curve):
    # reference: definition; a causal kernel's unit step response is its cumulative sum
    f = gs.design(curve, 250.0, causal=True)
    timing, = f.characteristics.edge_timing
    step = np.cumsum(f.taps)
    if timing.edge == "high-pass":
        late = np.flatnonzero(np.abs(step - step[-1]) > 0.01)
        assert timing.settling_s == pytest.approx(late[-1] / 250.0)
        assert timing.undershoot_pct == pytest.approx(-100 * step.min())
        assert timing.pre_response_pct is None  # causal: nothing before the step
    else:
        assert timing.overshoot_pct == pytest.approx(100 * (step.max() - step[-1]))


def test_a_stop_band_peak_between_grid_points_is_found():
    # analytic: a floor gain 0.01 * (1 + 0.5 cos^2(pi (f - 10.37) / 0.8)) peaks at
    # 10.37 Hz (0.015, -36.48 dB), between the grid's points at 10.25 and 10.5 Hz;
    # the floor (request at its lowest) spans 9-12 Hz, the band 8-13 Hz
    from gainshape.shaping.stopbands import _attenuated_range, _floor_top

    def gain(f):
        f = np.asarray(f, dtype=float)
        inside = (f >= 8.5) & (f <= 12.5)
        return np.where(inside, 0.01 * (1 + 0.5 * np.cos(np.pi * (f - 10.37) / 0.8) ** 2), 0.9)

    def request(f):
        f = np.asarray(f, dtype=float)
        return np.where((f >= 9.0) & (f <= 12.0), 0.01, 0.5)

    freqs = np.arange(0.0, 20.0, 0.25)
    realized, floor = gain(freqs), (freqs >= 9.0) & (freqs <= 12.0)
    top = _floor_top(freqs, realized, floor, (8.0, 13.0), 0.0101, request, gain)
    assert top == pytest.approx(0.015, rel=1e-6)
    low, high, highest = _attenuated_range(freqs, realized, (8.0, 13.0), floor, top, gain)
    assert highest == pytest.approx(0.015, rel=1e-6)
    assert low == pytest.approx(8.5) and high == pytest.approx(12.5)  # where the gain jumps
    low, high, highest = _attenuated_range(freqs, realized, (8.0, 13.0), floor, 0.0149, gain)
    assert highest == pytest.approx(0.015, rel=1e-6)  # a peak above the level inside the range
