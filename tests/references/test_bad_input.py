"""Bad input: a clear error naming the parameter, raised before any work, input unchanged.

The rules (name the parameter, show the value, say what is accepted, before
any work, input untouched) are common practice (no source).
"""

import copy

import mne
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
    ("find_lines events of text", lambda mk: np.random.default_rng(0).standard_normal((2, 5000)),
     lambda a: gs.find_lines(a, sfreq=250.0, events=np.array(["a", "b"])), ValueError,
     "The 'events' parameter takes an MNE events array"),
    ("methods_text detail unknown", lambda mk: mk(),
     lambda a: gs.methods_text(a, detail="long"), ValueError, "'long' is not a choice for 'detail'"),
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
     lambda a: gs.apply(a, gs.design(gs.lowpass(30.0), 500.0)), ValueError, "made at 500.0 Hz"),
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
    # picks that select nothing, too much or nonsense
    ("picks empty list", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks=[]), ValueError, r"'picks' parameter \(\[\]\) selects no"),
    ("picks all-False mask", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks=np.zeros(7, bool)), ValueError, "'picks'.*selects no"),
    ("picks 'all' on trigger only", lambda mk: mk().pick(["Trigger"]),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks="all"), ValueError, "'picks'.*selects no"),
    ("picks index out of range", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks=[99]), ValueError, r"'picks'.*\[99\].*indices below 7"),
    ("picks a float", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks=3.5), ValueError, r"'picks' parameter \(3.5\)"),
    ("picks one name twice", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), picks=["Fz", "Fz"]), ValueError, "'picks'.*Fz more than once"),
    ("array picks empty", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, picks=[]), ValueError, "'picks'.*selects no"),
    ("array picks twice", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, picks=[0, 0]), ValueError, "row 0 more than once"),
    ("epochs all dropped", lambda mk: _all_dropped_epochs(mk),
     lambda a: gs.apply(a, gs.lowpass(30.0)), ValueError, "'inst'.*without any epochs"),
    # arrays of the wrong shape or kind
    ("empty array", lambda mk: np.zeros((2, 0)),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0), ValueError, r"'inst'.*shape \(2, 0\)"),
    ("zero-dimensional array", lambda mk: np.array(1.0),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0), ValueError, r"'inst'.*shape \(\)"),
    ("array without rows", lambda mk: np.zeros((0, 100)),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0), ValueError, r"'inst'.*shape \(0, 100\)"),
    ("complex array", lambda mk: np.zeros((2, 100), complex),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0), TypeError, "'inst'.*complex128"),
    ("byte-swapped array in place", lambda mk: _array().astype(">f8"),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, copy=False), ValueError, "'copy'.*byte order"),
    ("sfreq as text, array", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq="abc"), TypeError, r"'sfreq'.*str \('abc'\)"),
    ("sfreq as text, raw", lambda mk: mk(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq="abc"), TypeError, "'sfreq'.*'abc'"),
    ("sfreq zero, array", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=0.0), ValueError, "'sfreq'.*> 0"),
    # switches and options
    ("copy as text", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, copy="no"), TypeError, "'copy'.*'no'"),
    ("return_step as text", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, return_step="yes"), TypeError, "'return_step'"),
    ("causal asked of a ready design", lambda mk: _array(),
     lambda a: gs.apply(a, gs.design(gs.lowpass(30.0), 250.0), causal=True), ValueError,
     "ready design made with causal=False"),
    ("kernel asked of a ready design", lambda mk: _array(),
     lambda a: gs.apply(a, gs.design(gs.lowpass(30.0), 250.0), kernel=2.0), ValueError,
     "ready design made with kernel='shortest'"),
    ("kernel 'auto'", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, kernel="auto"), ValueError, "not a choice for 'kernel'"),
    ("kernel negative", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, kernel=-1.0), ValueError, "'kernel'.*> 0"),
    ("tolerance as text", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, tolerance="small"), TypeError, "'tolerance'"),
    ("sfreq infinite", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), np.inf), ValueError, "'sfreq'.*finite"),
    ("sfreq a bool", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), True), TypeError, "'sfreq'.*bool"),
    ("n_jobs as text", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, n_jobs="2"), TypeError, "'n_jobs'"),
    ("pad a number", lambda mk: _array(),
     lambda a: gs.apply(a, gs.lowpass(30.0), sfreq=250.0, pad=3), ValueError, "not a choice for 'pad'"),
    # curves and recipes
    ("all-zero curve", lambda mk: None,
     lambda a: gs.design(GainCurve.from_points([3.0, 5.0], [0.0, 0.0]), 250.0), ValueError,
     "is 0 from 0 Hz to Nyquist"),
    ("complex gain function", lambda mk: None,
     lambda a: gs.design(GainCurve(lambda f: np.ones_like(f) + 0j), 250.0), ValueError, "complex"),
    ("notch wider than its spacing", lambda mk: None,
     lambda a: gs.notch(50.0, width=60.0, harmonics=3), ValueError, "'width'.*below 'freq'"),
    ("kernel needed beyond 600 s", lambda mk: None,
     lambda a: gs.design(gs.highpass(0.002, rolloff=24.0), 250.0), ValueError,
     "any kernel up to 600 s.*'tolerance'"),
    ("kernel asked beyond 600 s", lambda mk: None,
     lambda a: gs.design(gs.lowpass(30.0), 250.0, kernel=700.0), ValueError, "'kernel'.*at most 600"),
    ("a billion harmonics", lambda mk: None,
     lambda a: gs.notch(50.0, harmonics=10**9), ValueError, "'harmonics'.*at most 1000"),
    ("recipe version 99", lambda mk: {**gs.lowpass(30.0).to_dict(), "version": 99},
     lambda a: GainCurve.from_dict(a), ValueError, "version 99"),
    ("recipe with unknown key", lambda mk: {**gs.lowpass(30.0).to_dict(), "extra": 1},
     lambda a: GainCurve.from_dict(a), ValueError, "'extra'"),
    ("recipe missing a parameter", lambda mk: _recipe({"kind": "lowpass", "rolloff": 12.0}),
     lambda a: GainCurve.from_dict(a), ValueError, "damaged.*'cutoff'"),
    ("recipe product of nothing", lambda mk: _recipe({"kind": "product", "factors": []}),
     lambda a: GainCurve.from_dict(a), ValueError, "damaged"),
    ("recipe kind a list", lambda mk: _recipe({"kind": ["lowpass"]}),
     lambda a: GainCurve.from_dict(a), ValueError, "'kind' takes one of"),
    ("recipe frequency a list", lambda mk: _recipe({"kind": "lowpass", "cutoff": [30], "rolloff": 12}),
     lambda a: GainCurve.from_dict(a), TypeError, "'cutoff'"),
    ("points 2-D", lambda mk: None,
     lambda a: GainCurve.from_points([[1.0, 2.0]], [[1.0, 0.0]]), ValueError, "'freqs'.*1-D"),
    # summaries, audit, plots, records
    ("band change of empty arrays", lambda mk: np.zeros((2, 0)),
     lambda a: gs.band_change(a, a, sfreq=250.0), ValueError, "'before'.*shape"),
    ("band change without channels", lambda mk: np.zeros((0, 100)),
     lambda a: gs.band_change(a, a, sfreq=250.0), ValueError, "'before'.*shape"),
    ("band change of one sample", lambda mk: np.zeros((2, 1)),
     lambda a: gs.band_change(a, a, sfreq=250.0), ValueError, "1 samples.*at least 16"),
    ("band change at sfreq 0", lambda mk: _array(),
     lambda a: gs.band_change(a, a, sfreq=0), ValueError, "'sfreq'"),
    ("observed gain of one sample", lambda mk: np.zeros((2, 1)),
     lambda a: gs.observed_gain(a, a, sfreq=250.0), ValueError, "at least 16"),
    ("observed gain at sfreq 0", lambda mk: _array(),
     lambda a: gs.observed_gain(a, a, sfreq=0), ValueError, "'sfreq'"),
    ("audit sfreq as text", lambda mk: None,
     lambda a: gs.audit(gs.lowpass(30.0), sfreq="abc"), TypeError, "'sfreq'"),
    ("audit empty waveform", lambda mk: np.zeros(0),
     lambda a: gs.audit(gs.lowpass(30.0), sfreq=250.0, waveform=a), ValueError, "'waveform'"),
    ("audit all-zero waveform", lambda mk: np.zeros(100),
     lambda a: gs.audit(gs.lowpass(30.0), sfreq=250.0, waveform=a), ValueError, "'waveform'.*zero"),
    ("audit 2-D waveform", lambda mk: _array(),
     lambda a: gs.audit(gs.lowpass(30.0), sfreq=250.0, waveform=a), ValueError, "'waveform'.*one row"),
    ("plot_audit of an array", lambda mk: _array(),
     lambda a: gs.plot_audit(a, show=False), TypeError, "'ds'.*gs.audit"),
    ("plot_band_change of an array", lambda mk: _array(),
     lambda a: gs.plot_band_change(a, show=False), TypeError, "'ds'.*gs.band_change"),
    ("plot_observed_gain of an array", lambda mk: _array(),
     lambda a: gs.plot_observed_gain(a, show=False), TypeError, "'da'.*gs.observed_gain"),
    ("history of a list", lambda mk: [1, 2],
     lambda a: gs.history(a), TypeError, "'inst'.*list"),
    ("BIDS sidecar path as text", lambda mk: mk(),
     lambda a: gs.write_bids_filters("x_eeg.json", a), TypeError, "'bids_path'.*BIDSPath"),
]


def _recipe(curve):
    return {"format": "gainshape.GainCurve", "version": 1, "curve": curve}


def _all_dropped_epochs(make_raw):
    raw = make_raw()
    events = mne.make_fixed_length_events(raw, duration=2.0)
    return mne.Epochs(raw, events, tmin=0.0, tmax=1.0, baseline=None, reject={"eeg": 1e-12},
                      preload=True, verbose=False)


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


def test_table_covers_at_least_eighty_distinct_inputs():
    assert len({c[0] for c in CASES}) == len(CASES) >= 80
