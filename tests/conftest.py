"""Small seeded simulated recordings shared by the tests (made here, never loaded)."""

import mne
import numpy as np
import pytest

mne.set_log_level("ERROR")


def simulated_raw(sfreq=250.0, seconds=40.0, seed=0, with_stim=True):
    """EEG channels of white noise plus sines, an EOG, a misc and a stim channel."""
    rng = np.random.default_rng(seed)
    n = int(sfreq * seconds)
    t = np.arange(n) / sfreq
    names = ["Fz", "Cz", "Pz", "Oz", "EOG1", "MISC1"]
    types = ["eeg"] * 4 + ["eog", "misc"]
    data = 1e-6 * rng.standard_normal((len(names), n))
    data[:4] += 5e-6 * np.sin(2 * np.pi * 10.0 * t) + 3e-6 * np.sin(2 * np.pi * 50.0 * t)
    if with_stim:
        names.append("Trigger")
        types.append("stim")
        stim = np.zeros((1, n))
        stim[0, int(sfreq)::int(2 * sfreq)] = 1.0
        data = np.vstack([data, stim])
    return mne.io.RawArray(data, mne.create_info(names, sfreq, types))


@pytest.fixture
def raw():
    return simulated_raw()


@pytest.fixture
def rng():
    return np.random.default_rng(12345)


@pytest.fixture(scope="session")
def make_raw():
    return simulated_raw


@pytest.fixture
def two_recordings(tmp_path):
    """A low-pass recipe file and two 20 s FIF recordings in tmp_path."""
    import gainshape as gs

    paths = []
    for i in range(2):
        path = tmp_path / f"rec{i}_raw.fif"
        simulated_raw(seconds=20.0, seed=i).save(path)
        paths.append(path)
    return gs.write_recipe(tmp_path / "filter.json", gs.lowpass(30.0), picks="eeg"), paths


@pytest.fixture
def free_port():
    """A function returning a TCP port free on 127.0.0.1 now."""
    import socket

    def port() -> int:
        with socket.socket() as s:
            s.bind(("127.0.0.1", 0))
            return s.getsockname()[1]
    return port


def pytest_configure(config):
    """Every step the suite writes is checked against the shipped schema (step.schema.json),
    with the jsonschema package, when it is installed."""
    try:
        import jsonschema
    except ImportError:
        return
    import json
    from importlib.resources import files

    import importlib
    import pkgutil

    import gainshape
    from gainshape.record import steps

    schema = json.loads((files("gainshape.record") / "step.schema.json").read_text())
    jsonschema.Draft202012Validator.check_schema(schema)
    validator = jsonschema.Draft202012Validator(schema)
    made = steps.make_step

    def checked_make_step(*args, **kwargs):
        step = made(*args, **kwargs)
        validator.validate(json.loads(json.dumps(step)))  # as it is stored: through JSON
        STEPS_CHECKED.append(step["id"])
        return step

    # every module that builds steps, wherever it sits (optional extras' modules skipped)
    for info in pkgutil.walk_packages(gainshape.__path__, "gainshape."):
        try:
            module = importlib.import_module(info.name)
        except ImportError:
            continue
        if getattr(module, "make_step", None) is made:
            module.make_step = checked_make_step


STEPS_CHECKED = []
