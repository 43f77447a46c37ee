"""Any operating system: nothing POSIX-only at import, the local cluster under spawn.

Windows has no ``resource`` or ``fcntl`` module (Python documentation, "Unix
Specific Services"); its only start method for processes is ``spawn``, and
macOS's default is ``spawn`` too (Python documentation, multiprocessing
"Contexts and start methods").
"""

import os
import subprocess
import sys

import pytest

import gainshape as gs

POSIX_ONLY = """
import platform, sys
sys.modules["resource"] = None  # import resource -> ImportError, as on Windows
sys.modules["fcntl"] = None
platform.system = lambda: "Windows"
platform.platform = lambda *a, **k: "Windows-10-10.0.19045-SP0"
import numpy as np
import gainshape as gs
for name in gs.__all__:
    getattr(gs, name)  # every public name imports
from gainshape import about, cli
from gainshape.studies import study
x = np.random.default_rng(0).standard_normal((2, 5000))
y = gs.apply(x, gs.lowpass(30.0), sfreq=250.0)
assert y.shape == x.shape and "Windows" in gs.about()
print("ok")
"""


def test_gainshape_imports_and_filters_without_posix_only_modules():
    done = subprocess.run([sys.executable, "-c", POSIX_ONLY], capture_output=True, text=True,
                          env={**os.environ, "MPLBACKEND": "Agg"})
    assert done.returncode == 0 and done.stdout.strip().endswith("ok"), done.stderr


def test_the_local_cluster_runs_a_study_under_spawn(two_recordings, tmp_path, monkeypatch):
    pytest.importorskip("distributed")
    from gainshape.studies import workers as workers_module

    recipe, paths = two_recordings
    monkeypatch.setitem(workers_module._LOCAL_WORKERS, "distributed.worker.multiprocessing-method",
                        "spawn")
    table = gs.run_study(recipe, paths, tmp_path / "out", workers=1, verbose=False)
    assert list(table["status"]) == ["filtered", "filtered"]
