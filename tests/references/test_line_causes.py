"""Lines sorted by cause before they are notched: mains (as the recording
states it), stimulus-locked lines of a fixed-rate paradigm, steady rhythms
and equipment lines, on simulated recordings whose truth is known.

References: a signal that repeats exactly every T seconds has a spectrum of
lines at whole multiples of 1/T (Fourier series; any signal-processing
handbook); mains hum is at the stated mains frequency and its whole
multiples (common practice, no source). Scalp EEG rhythms are measured up
to the low gamma band, about 45 Hz (common practice, no source): the
default comb leaves lines below that alone unless they are mains.
"""

import mne
import numpy as np
import pytest

import gainshape as gs

SFREQ, SECONDS = 500.0, 120.0


def recording(soa, mains, line_freq, seed=0, rhythm=10.0, equipment=31.7, with_events=True):
    """8 EEG channels: 1/f noise, a steady rhythm, an equipment line, mains
    and its harmonics, and an evoked response repeated every ``soa`` s (the
    stim channel marks each onset)."""
    rng = np.random.default_rng(seed)
    n = int(SECONDS * SFREQ)
    t = np.arange(n) / SFREQ
    f = np.fft.rfftfreq(n, 1 / SFREQ)
    spectra = rng.standard_normal((8, f.size)) + 1j * rng.standard_normal((8, f.size))
    data = np.fft.irfft(spectra / np.sqrt(np.maximum(f, 0.5)), n)
    data *= 5e-6 / data.std(axis=1, keepdims=True)  # 1/f background, 5 uV rms
    data += 1.5e-6 * np.sin(2 * np.pi * rhythm * t + rng.uniform(0, 6, (8, 1)))
    data += 1e-6 * np.sin(2 * np.pi * equipment * t + rng.uniform(0, 6, (8, 1)))
    for k, amplitude in zip(range(1, 4), (4e-6, 2e-6, 1e-6)):
        data += amplitude * np.sin(2 * np.pi * k * mains * t + rng.uniform(0, 6, (8, 1)))
    onsets = np.arange(int(0.5 * SFREQ), n - int(SFREQ), int(round(soa * SFREQ)))
    tau = np.arange(int(0.6 * SFREQ)) / SFREQ
    response = 10e-6 * np.sin(2 * np.pi * 4.0 * tau) * np.exp(-tau / 0.15)  # an evoked wave
    stim = np.zeros(n)
    for onset in onsets:
        data[:, onset:onset + tau.size] += response
        stim[onset] = 1.0
    names = [f"E{i}" for i in range(8)] + (["STI"] if with_events else [])
    types = ["eeg"] * 8 + (["stim"] if with_events else [])
    raw = mne.io.RawArray(np.vstack([data, stim]) if with_events else data,
                          mne.create_info(names, SFREQ, types), verbose=False)
    raw.info["line_freq"] = line_freq
    return raw


def _causes(found):
    return {round(float(f), 1): str(c) for f, c in zip(found.line_frequency.values, found.cause.values)}


@pytest.mark.parametrize(("soa", "mains"), [(1.0, 50.0), (0.8, 60.0)], ids=["1 s, 50 Hz", "0.8 s, 60 Hz"])
def test_mains_is_labelled_from_the_stated_frequency_and_only_it_is_notched(soa, mains):
    raw = recording(soa, mains, line_freq=mains)
    found = gs.find_lines(raw)
    causes = _causes(found)
    assert causes[mains] == "mains"
    assert causes[2 * mains] == causes[3 * mains] == "mains harmonic"
    for f, of in zip(found.line_frequency.values, found.harmonic_of.values):
        if round(float(f), 1) in (2 * mains, 3 * mains):
            assert of == mains
    assert found.attrs["stimulus_rate"] == pytest.approx(1 / soa, rel=1e-3)
    stimulus = [f for f, c in causes.items() if c == "stimulus-locked"]
    assert stimulus, causes  # the repeated response's lines were found ...
    assert all(abs(f * soa - round(f * soa)) < 0.05 * soa * 2 for f in stimulus)  # ... at k / soa
    assert not any(c.startswith("mains") for f, c in causes.items() if f not in (mains, 2 * mains, 3 * mains))
    comb = gs.suggest_notches(found)
    assert comb.recipe["freqs"] == pytest.approx([mains, 2 * mains, 3 * mains], abs=0.05)
    skipped = [r for r in comb.reasons if r.startswith("not notched")]
    assert any("31.70 Hz" in r and "below 45 Hz" in r for r in skipped)
    assert any("10.00 Hz" in r for r in skipped)
    assert sum("stimulus-locked" in r for r in skipped) == len(stimulus)


def test_no_line_is_the_harmonic_of_an_unexplained_lower_line():
    # the report: 50 Hz called "harmonic of 10.00 Hz" and 150 Hz "harmonic of 3.00 Hz"
    found = gs.find_lines(recording(1.0, 50.0, line_freq=50.0))
    for f, of, cause in zip(found.line_frequency.values, found.harmonic_of.values, found.cause.values):
        if np.isfinite(of):
            assert of == 50.0 or of == pytest.approx(found.attrs["stimulus_rate"]) or \
                cause == "harmonic", (f, of, cause)
    assert "harmonic of 10.00" not in " ".join(gs.suggest_notches(found).reasons)


def test_without_a_stated_frequency_mains_is_the_line_at_50_or_60_hz():
    found = gs.find_lines(recording(1.0, 50.0, line_freq=None))
    assert _causes(found)[50.0] == "mains" and _causes(found)[100.0] == "mains harmonic"


def test_lines_asked_for_by_frequency_or_cause_are_notched():
    found = gs.find_lines(recording(1.0, 50.0, line_freq=50.0))
    comb = gs.suggest_notches(found, include=[31.7])
    assert 31.7 == pytest.approx(min(comb.recipe["freqs"], key=lambda f: abs(f - 31.7)), abs=0.05)
    comb = gs.suggest_notches(found, include=["stimulus-locked"])
    assert len(comb.recipe["freqs"]) > 3
    with pytest.raises(ValueError, match="no line found near 77 Hz"):
        gs.suggest_notches(found, include=[77.0])


def test_an_equipment_line_above_45_hz_is_notched_by_default():
    found = gs.find_lines(recording(1.0, 50.0, line_freq=50.0, equipment=73.3))
    assert _causes(found)[73.3] == "unexplained"
    assert 73.3 == pytest.approx(min(gs.suggest_notches(found).recipe["freqs"],
                                     key=lambda f: abs(f - 73.3)), abs=0.05)


def test_events_given_for_an_array_mark_stimulus_locked_lines():
    raw = recording(1.0, 50.0, line_freq=50.0)
    events = mne.find_events(raw, shortest_event=1, verbose=False)
    found = gs.find_lines(raw.get_data(picks="eeg"), sfreq=SFREQ, events=events)
    assert found.attrs["stimulus_rate"] == pytest.approx(1.0, rel=1e-3)
    assert "stimulus-locked" in set(found.cause.values)
    plain = gs.find_lines(raw.get_data(picks="eeg"), sfreq=SFREQ)
    assert np.isnan(plain.attrs["stimulus_rate"]) and "stimulus-locked" not in set(plain.cause.values)


def test_the_methods_text_calls_a_proposed_notch_a_notch():
    raw = recording(1.0, 50.0, line_freq=50.0)
    comb = gs.suggest_notches(gs.find_lines(raw), include=[3.0])
    text = gs.methods_text(gs.apply(raw, comb), detail="full")
    assert "band-stop" not in text
    assert "notch at 3.0" in text or "notch at 2.99" in text
