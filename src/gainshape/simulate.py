"""The simulated workshop recording used by the demo, the tutorials and the tests.

Scenario (invented for the demo only): an apprentice in a joinery workshop
listens to tone pips through earphones while a 50 Hz bandsaw motor runs two
metres away and a dust extractor hums in the corner (its fan at 31.7 Hz, with
a harmonic at 63.4 Hz, written down nowhere). The 32-channel recording
carries mains hum at 50, 100 and 150 Hz, the extractor's two lines,
slow skin-potential drift from a warm room, posterior alpha, eye blinks, and
auditory responses to the tones (a sharp negativity near 100 ms, a positivity
near 180 ms and a slow late positivity).
"""

from __future__ import annotations

import numpy as np

__all__ = ["simulate_workshop_recording", "TONE_CHANNEL"]

_CHANNELS = [
    "Fp1", "Fp2", "F7", "F3", "Fz", "F4", "F8", "FC5", "FC1", "FC2", "FC6",
    "T7", "C3", "Cz", "C4", "T8", "CP5", "CP1", "CP2", "CP6", "P7", "P3", "Pz",
    "P4", "P8", "PO9", "O1", "Oz", "O2", "PO10", "TP9", "TP10",
]
_TONE_ID = 1
TONE_CHANNEL = "Tones"  # the stim channel marking tone onsets (code 1)
EXTRACTOR_HZ = 31.7  # the dust extractor's fan


def simulate_workshop_recording(seconds: float = 180.0, sfreq: float = 500.0, seed: int = 7):
    """Simulate the workshop session as an ``mne.io.RawArray`` (volts).

    Returns 32 EEG channels (10-20 montage), one EOG and one stim channel
    whose events (code 1) mark tone onsets; ``info["line_freq"]`` is 50 Hz.

    Examples
    --------
    >>> raw = simulate_workshop_recording(seconds=10.0)
    >>> len(raw.ch_names), raw.info["sfreq"]
    (34, 500.0)
    """
    import mne

    rng = np.random.default_rng(seed)
    n = int(seconds * sfreq)
    t = np.arange(n) / sfreq
    info = mne.create_info(_CHANNELS + ["EOG1", TONE_CHANNEL], sfreq,
                           ["eeg"] * len(_CHANNELS) + ["eog", "stim"])
    builtin = mne.channels.get_builtin_montages()
    info.set_montage("colin27_1020" if "colin27_1020" in builtin else "standard_1020")
    pos = np.array([info["chs"][i]["loc"][:3] for i in range(len(_CHANNELS))])
    front = (pos[:, 1] - pos[:, 1].min()) / np.ptp(pos[:, 1])  # 0 back .. 1 front
    top = (pos[:, 2] - pos[:, 2].min()) / np.ptp(pos[:, 2])  # 0 low .. 1 vertex

    eeg = 6e-6 * _pink_noise(rng, len(_CHANNELS), n)
    alpha_env = 1.0 + 0.6 * np.sin(2 * np.pi * 0.07 * t + rng.uniform(0, 6))
    eeg += np.outer(8e-6 * (1.0 - front), alpha_env * _alpha_rhythm(np.random.default_rng(seed + 2),
                                                                     n, sfreq))
    for k, amp in ((1, 25e-6), (2, 7e-6), (3, 3e-6)):  # bandsaw hum and harmonics
        gains = amp * rng.uniform(0.5, 1.5, len(_CHANNELS))
        eeg += np.outer(gains, np.sin(2 * np.pi * 50.0 * k * t + rng.uniform(0, 6)))
    eeg += _drift(rng, len(_CHANNELS), n, sfreq) * 40e-6
    eeg += _extractor(np.random.default_rng(seed + 1), len(_CHANNELS), t)

    onsets = np.cumsum(rng.uniform(1.1, 1.5, int(seconds / 1.1)))
    onsets = onsets[onsets < seconds - 1.0]
    response = _auditory_response(sfreq)
    spread_early = 0.4 + 0.6 * top * (0.5 + 0.5 * front)
    spread_late = 0.4 + 0.6 * top * (1.0 - 0.5 * front)
    stim = np.zeros(n)
    for onset in onsets:
        i = int(onset * sfreq)
        stop = min(n, i + response.shape[1])
        eeg[:, i:stop] += np.outer(spread_early, response[0, : stop - i])
        eeg[:, i:stop] += np.outer(spread_late, response[1, : stop - i])
        stim[i] = _TONE_ID

    eog = 20e-6 * _pink_noise(rng, 1, n)[0]
    for blink in rng.uniform(0, seconds - 1, int(seconds / 4)):
        eog += 150e-6 * np.exp(-0.5 * ((t - blink) / 0.05) ** 2)
    eeg += np.outer(0.3 * front**2, eog)

    raw = mne.io.RawArray(np.vstack([eeg, eog, stim]), info, verbose=False)
    raw.info["line_freq"] = 50.0  # the workshop's mains
    return raw


def _alpha_rhythm(rng, n, sfreq):
    """A rhythm near 10.2 Hz that wanders in frequency (a Gaussian band about
    1.5 Hz wide at half power), scaled to the RMS of a unit sine."""
    freqs = np.fft.rfftfreq(n, 1 / sfreq)
    band = np.exp(-0.5 * ((freqs - 10.2) / 0.9) ** 2)
    rhythm = np.fft.irfft(band * (rng.standard_normal(freqs.size)
                                  + 1j * rng.standard_normal(freqs.size)), n)
    return rhythm / (np.sqrt(2) * rhythm.std())


def _extractor(rng, n_ch, t):
    """The dust extractor: 31.7 Hz and its harmonic, stronger on the left."""
    side = np.linspace(1.0, 0.4, n_ch)
    lines = sum(amp * np.sin(2 * np.pi * freq * t + rng.uniform(0, 6))
                for freq, amp in ((EXTRACTOR_HZ, 1.2e-6), (2 * EXTRACTOR_HZ, 0.6e-6)))
    return np.outer(side, lines)


def _pink_noise(rng, n_ch, n):
    """Unit-variance 1/f noise (spectral shaping of white noise)."""
    spec = np.fft.rfft(rng.standard_normal((n_ch, n)), axis=-1)
    f = np.arange(spec.shape[-1], dtype=float)
    f[0] = 1.0
    x = np.fft.irfft(spec / np.sqrt(f), n, axis=-1)
    return x / x.std(axis=-1, keepdims=True)


def _drift(rng, n_ch, n, sfreq):
    """Skin-potential drift: smooth random excursions below about 0.1 Hz."""
    spec = np.fft.rfft(rng.standard_normal((n_ch, n)), axis=-1)
    f = np.fft.rfftfreq(n, 1.0 / sfreq)
    spec *= np.exp(-((f / 0.04) ** 2))
    x = np.fft.irfft(spec, n, axis=-1)
    return x / x.std(axis=-1, keepdims=True)


def _auditory_response(sfreq):
    """Early (sharp negativity then positivity) and late slow components, volts."""
    t = np.arange(int(0.9 * sfreq)) / sfreq
    early = -5e-6 * np.exp(-0.5 * ((t - 0.100) / 0.018) ** 2)
    early += 4e-6 * np.exp(-0.5 * ((t - 0.180) / 0.030) ** 2)
    late = 3e-6 * np.exp(-0.5 * ((t - 0.420) / 0.120) ** 2)
    return np.vstack([early, late])
