"""Bad input: a clear error naming the parameter, raised before any work, input unchanged.

The rules (name the parameter, show the value, say what is accepted, before
any work, input untouched) are common practice (no source).
"""

import copy

import numpy as np
import pytest

import gainshape as gs
from gainshape import GainCurve


def _array():
    return np.random.default_rng(0).standard_normal((2, 2000))


def _nan_array():
    x = _array()
    x[1, 50] = np.nan
    return x


def _raw_with_nan(make_raw):
    raw = make_raw()
    raw._data[2, 500] = np.nan
    return raw


def _lazy_raw(make_raw):
    """A Raw read from a FIF file without loading its data."""
    import tempfile
    from pathlib import Path

    import mne

    fname = Path(tempfile.mkdtemp()) / "lazy_raw.fif"
    make_raw().save(fname)
    return mne.io.read_raw_fif(fname, preload=False)


# (id, builds the input, calls with the input, exception type, message fragment)
CASES = [
    ("negative gain", lambda mk: [[1.0, 2.0], [0.5, -0.1]],
     lambda a: GainCurve.from_points(*a), ValueError, r"'gains'.*>= 0"),
    ("nan gain", lambda mk: [[1.0, 2.0], [0.5, np.nan]],
     lambda a: GainCurve.from_points(*a), ValueError, r"'gains'.*finite"),
    ("unsorted freqs", lambda mk: [[1.0, 3.0, 2.0], [1.0, 1.0, 0.0]],
     lambda a: GainCurve.from_points(*a), ValueError, "strictly increasing"),
    ("unequal lengths", lambda mk: [[1.0, 2.0, 3.0], [1.0, 0.0]],
     lambda a: GainCurve.from_points(*a), ValueError, "equal lengths"),
    ("one point", lambda mk: [[1.0], [1.0]],
     lambda a: GainCurve.from_points(*a), ValueError, "at least 2 points"),
    ("zero freq on log scale", lambda mk: [[0.0, 2.0], [1.0, 0.0]],
     lambda a: GainCurve.from_points(*a, freq_scale="log"), ValueError, "freq_scale='log'"),
    ("unknown gain scale", lambda mk: [[1.0, 2.0], [1.0, 0.0]],
     lambda a: GainCurve.from_points(*a, gain_scale="power"), ValueError, "'gain_scale'"),
    ("non-positive cutoff", lambda mk: None,
     lambda a: gs.lowpass(0.0), ValueError, r"'cutoff'.*> 0"),
    ("nan cutoff", lambda mk: None,
     lambda a: gs.highpass(np.nan), ValueError, r"'cutoff'.*finite"),
    ("cutoff as string", lambda mk: None,
     lambda a: gs.lowpass("30"), TypeError, r"'cutoff'.*real number"),
    ("non-positive rolloff", lambda mk: None,
     lambda a: gs.lowpass(30.0, rolloff=-6.0), ValueError, "'rolloff'"),
    ("non-positive width", lambda mk: None,
     lambda a: gs.notch(50.0, width=0.0), ValueError, "'width'"),
    ("harmonics zero", lambda mk: None,
     lambda a: gs.notch(50.0, harmonics=0), ValueError, "'harmonics'"),
    ("harmonics float", lambda mk: None,
     lambda a: gs.notch(50.0, harmonics=2.5), TypeError, "'harmonics'"),
    ("band edges reversed", lambda mk: None,
     lambda a: gs.bandpass(30.0, 1.0), ValueError, "'high'"),
    ("not a callable", lambda mk: None,
     lambda a: GainCurve(5), TypeError, "'func'"),
    ("cutoff at Nyquist", lambda mk: None,
     lambda a: gs.design(gs.lowpass(125.0), 250.0), ValueError, "Nyquist"),
    ("causal not a switch", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, causal="minimum"), TypeError, "'causal'"),
    ("kernel None", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, kernel=None), ValueError, "'exact'"),
    ("tolerance of 1", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, tolerance=1.0), ValueError, "'tolerance'"),
    ("unknown length word", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, kernel="long"), ValueError, "'kernel'"),
    ("curve returns negative gain", lambda mk: None,
     lambda a: gs.design(GainCurve(lambda f: -np.ones_like(f)), 250.0), ValueError, "finite and >= 0"),
    ("nan in array", lambda mk: _nan_array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0), ValueError, r"row 1 \(first at sample 50\)"),
    ("nan in raw", _raw_with_nan,
     lambda a: gs.apply(a, gs.lowpass(30.0)), ValueError, r"Pz \(first at 2.000 s, sample 500\)"),
    ("unknown pad mode", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, pad="mirror"), ValueError, "'pad'"),
    ("unknown nan mode", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, nan="drop"), ValueError, "'nan'"),
    ("stim channel picked", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks=["Fz", "Trigger"]), ValueError, "stim"),
    ("unknown channel name", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks=["Fz", "Fzz"]), ValueError, r"'picks'.*Fzz"),
    ("array row out of range", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, picks=[0, 5]), ValueError,
     r"'picks'.*2 rows"),
    ("array without sfreq", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0)), ValueError, "'sfreq'"),
    ("sfreq disagrees with info", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=500.0), ValueError, "'sfreq'"),
    ("design at other rate", lambda mk: mk(),
     lambda a: gs.apply(a, gs.design(gs.lowpass(30.0), 500.0)), ValueError, "500 Hz"),
    ("integer array", lambda mk: np.ones((2, 100), dtype=int),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0), TypeError, "float32 or float64"),
    ("filter given as string", lambda mk: _array(),
     lambda a: gs.apply(a, "lowpass", sfreq=250.0), TypeError, "'filt'"),
    ("list instead of data", lambda mk: [[0.0, 1.0]],
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0), TypeError, "'inst'"),
    ("replay arguments swapped", lambda mk: mk(),
     lambda a: gs.replay(a, gs.apply(a, gs.lowpass(30.0))), TypeError, "'steps'"),
    ("file not loaded, copy=False", _lazy_raw,
     lambda a: gs.apply(a, gs.lowpass(30.0), copy=False), ValueError, r"'copy'.*load_data"),
    ("file not loaded, global pad mode", _lazy_raw,
     lambda a: gs.apply(a, gs.lowpass(30.0), pad="wrap"), ValueError, r"'pad'.*'wrap'"),
    ("file not loaded, nan split", _lazy_raw,
     lambda a: gs.apply(a, gs.lowpass(30.0), nan="split"), ValueError, r"'nan'.*'split'"),
    ("file not loaded, exact length", _lazy_raw,
     lambda a: gs.apply(a, gs.lowpass(30.0), kernel="exact"), ValueError, r"kernel='exact'.*in memory"),
    ("file not loaded, n_jobs zero", _lazy_raw,
     lambda a: gs.apply(a, gs.lowpass(30.0), n_jobs=0), ValueError, "'n_jobs'"),
    ("n_jobs zero", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, n_jobs=0), ValueError, "'n_jobs'"),
]


def _snapshot(obj):
    if hasattr(obj, "get_data"):
        return obj.get_data().copy(), copy.deepcopy(dict(obj.info))
    return copy.deepcopy(obj)


def _unchanged(obj, snap):
    if hasattr(obj, "get_data"):
        data, info = snap
        np.testing.assert_array_equal(obj.get_data(), data)
        assert obj.info["highpass"] == info["highpass"] and obj.info["lowpass"] == info["lowpass"]
    elif isinstance(obj, np.ndarray):
        np.testing.assert_array_equal(obj, snap)
    else:
        assert repr(obj) == repr(snap)


@pytest.mark.parametrize(("build", "call", "error", "fragment"),
                         [c[1:] for c in CASES], ids=[c[0] for c in CASES])
def test_invalid_args(build, call, error, fragment, make_raw):
    obj = build(make_raw)
    snap = _snapshot(obj)
    with pytest.raises(error, match=fragment):
        call(obj)
    _unchanged(obj, snap)


def test_table_covers_at_least_fifteen_distinct_inputs():
    assert len({c[0] for c in CASES}) >= 15
