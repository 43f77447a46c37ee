"""Smoke test of an installed gainshape wheel, run from outside the source tree.

Run by ``make test-wheel`` in a fresh virtual environment where MNE-Python
was installed first and the wheel second (as in a user's environment). It
fails (exit code 1) unless every step does what the README says.
"""

import importlib.resources
import subprocess
import sys
import tempfile
import warnings
from pathlib import Path

import mne

import gainshape as gs
from gainshape.simulate import simulate_workshop_recording


def main() -> int:
    where = Path(gs.__file__).parent
    assert "site-packages" in str(where), f"gainshape imported from {where}, not the wheel"
    for package, name in (("gainshape.showing", "_editor.js"), ("gainshape.showing", "_editor.css"),
                          ("gainshape.record", "step.schema.json"), ("gainshape", "py.typed")):
        assert (importlib.resources.files(package) / name).is_file(), (package, name)
    print(f"gainshape {gs.__version__} from {where}; MNE-Python {mne.__version__}")

    # the README's "A first look", on a simulated Raw
    raw = simulate_workshop_recording(seconds=120.0)
    curve = gs.bandpass(0.1, 40.0, rolloff=12.0) * gs.notch(50.0, width=2.0, harmonics=3)
    filt = gs.design(curve, raw.info["sfreq"])
    print(filt)
    fig = filt.plot(show=False)
    assert len(fig.axes) >= 3
    filtered = gs.apply(raw, filt)
    assert not (filtered.get_data() == raw.get_data()).all()

    # the hum found, then notched
    found = gs.find_lines(raw)
    notches = gs.suggest_notches(found)
    print("\n".join(notches.reasons))
    assert 50.0 in [round(float(f)) for f in found.frequency.values]

    # saved and read back with its history
    with tempfile.TemporaryDirectory() as folder:
        path = Path(folder) / "smoke_raw.fif"
        with warnings.catch_warnings():
            warnings.simplefilter("ignore")
            filtered.save(path)
        back = mne.io.read_raw_fif(path, verbose=False)
        assert gs.history(back) == gs.history(filtered) and len(gs.history(back)) == 1
        print(gs.methods_text(back))

    # the command line
    script = Path(sys.executable).parent / "gainshape"
    version = subprocess.run([str(script), "--version"], capture_output=True, text=True,
                             check=True).stdout.strip()
    assert version == f"gainshape {gs.__version__}", version
    helped = subprocess.run([str(script), "--help"], capture_output=True, text=True, check=True)
    assert all(c in helped.stdout for c in ("run", "describe", "history", "about"))
    print(version)
    print("smoke test passed")
    return 0


if __name__ == "__main__":
    raise SystemExit(main())
