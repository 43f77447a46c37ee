"""The public surface is exactly the names the project plan fixes (plus the warning class);
the layer rules of docs/architecture.md hold."""

import gainshape as gs


def test_package_exports_exactly_all():
    # common practice (no source): __init__ re-exports the public API and nothing else
    import types

    public = {name for name in dir(gs)
              if not name.startswith("_") and not isinstance(getattr(gs, name), types.ModuleType)}
    assert public == set(gs.__all__)
    import gainshape.audit  # noqa: F401  (a submodule of the same name does not hide the function)
    import gainshape.design  # noqa: F401

    assert callable(gs.audit) and callable(gs.design) and gs.design.__module__ == "gainshape.design"
    assert len(gs.__all__) == len(set(gs.__all__))


def test_foundation_names_present():
    expected = {
        "GainCurve", "lowpass", "highpass", "bandpass", "bandstop", "notch",
        "design", "FilterDesign", "apply", "GainshapeWarning",
    }
    assert expected <= set(gs.__all__)


def test_warning_class_is_userwarning():
    assert issubclass(gs.GainshapeWarning, UserWarning)


# The layers of docs/architecture.md, lowest first; a module may import (at module level)
# only modules before it. Deferred imports inside functions are the documented
# exceptions (design -> viz for FilterDesign.plot, adapters -> outofcore).
LAYERS = ["_compat", "_checks", "_files", "_stamps", "_spectra", "curves", "realize", "rates", "measure", "lengths", "design", "engine", "recipes", "provenance", "adapters", "outofcore",
          "summaries", "lines", "audit", "viz", "drawing", "study", "about", "cli", "simulate", "demo"]
MNE_AWARE = {"_compat", "adapters", "outofcore", "provenance", "study", "cli", "simulate", "demo"}  # provenance: version, mne-bids


def test_architecture_page_lists_the_layers_in_order_and_the_mne_aware_modules():
    # the page readers see (docs/architecture.md) agrees with the rules enforced here
    from pathlib import Path

    page = Path(__file__).parent.parent / "docs" / "architecture.md"
    rows = [line.split("|")[1:-1] for line in page.read_text().splitlines()
            if line.startswith("| ") and line.split("|")[1].strip().isdigit()]
    assert [cells[1].strip().strip("`") for cells in rows] == LAYERS
    assert {cells[1].strip().strip("`") for cells in rows if cells[3].strip() == "MNE"} == MNE_AWARE


def _package_imports(path, top_level_only):
    import ast

    tree = ast.parse(path.read_text())
    nodes = tree.body if top_level_only else list(ast.walk(tree))
    local, external = set(), set()
    for node in nodes:
        if isinstance(node, ast.ImportFrom) and node.level == 1:  # "from . import x" names x
            local.update([node.module] if node.module else [a.name for a in node.names])
        elif isinstance(node, ast.ImportFrom) and node.module:
            external.add(node.module.split(".")[0])
        elif isinstance(node, ast.Import):
            external.update(alias.name.split(".")[0] for alias in node.names)
    return local, external


def test_modules_import_only_lower_layers_and_mne_stays_in_adapters():
    from pathlib import Path

    src = Path(gs.__file__).parent
    assert sorted(p.stem for p in src.glob("*.py") if p.stem != "__init__") == sorted(LAYERS)
    for rank, name in enumerate(LAYERS):
        local, _ = _package_imports(src / f"{name}.py", top_level_only=True)
        assert local <= set(LAYERS[:rank]), (name, local - set(LAYERS[:rank]))
        _, external = _package_imports(src / f"{name}.py", top_level_only=False)
        assert ("mne" in external or "mne_bids" in external) <= (name in MNE_AWARE), name


# Names and sentences of another filtering program's interface that must not
# come back (our own words rule; the list is from the project's review).
BORROWED_PARAMETERS = {"phase", "filter_length", "l_freq", "h_freq", "trans_bandwidth",
                       "l_trans_bandwidth", "h_trans_bandwidth", "fir_window", "fir_design",
                       "iir_params"}
BORROWED_STRINGS = ("zero-double", "Invalid value for the", "Allowed values are",
                    "firwin", "length='auto'", 'length="auto"', "but got",
                    "must be an instance of")


def _public_callables():
    import inspect

    for name in gs.__all__:
        obj = getattr(gs, name)
        yield name, obj
        if inspect.isclass(obj):
            for attr, member in vars(obj).items():
                if callable(member) and not attr.startswith("_"):
                    yield f"{name}.{attr}", member


def test_public_signatures_use_no_borrowed_parameter_names():
    import inspect

    checked = 0
    for name, obj in _public_callables():
        try:
            params = set(inspect.signature(obj).parameters)
        except (TypeError, ValueError):
            continue
        checked += 1
        assert not params & BORROWED_PARAMETERS, (name, params & BORROWED_PARAMETERS)
    assert checked >= len(gs.__all__)  # the scan saw every public function and class


def test_source_strings_hold_no_borrowed_option_or_message():
    import ast
    from pathlib import Path

    src = Path(gs.__file__).parent
    nodes = [node for path in src.glob("*.py") for node in ast.walk(ast.parse(path.read_text()))]
    strings = [node.value for node in nodes
               if isinstance(node, ast.Constant) and isinstance(node.value, str)]
    # an f-string's pieces read as one text, its fields as {} ("..., but " f"got {x}")
    strings += ["".join(v.value if isinstance(v, ast.Constant) else "{}" for v in node.values)
                for node in nodes if isinstance(node, ast.JoinedStr)]
    assert len(strings) > 100
    for text in strings:
        for borrowed in BORROWED_STRINGS:
            assert borrowed not in text, (borrowed, text[:80])


def test_auto_is_not_a_kernel_option():
    import pytest

    with pytest.raises(ValueError, match="not a choice for 'kernel'"):
        gs.design(gs.lowpass(30.0), 250.0, kernel="auto")


def test_warnings_point_at_the_users_line():
    # common practice (no source): a warning names the line that caused it
    import warnings

    import numpy as np

    x = np.random.default_rng(0).standard_normal((2, 3000))
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        gs.apply(x, gs.highpass(0.5), sfreq=250.0)  # kernel long for 12 s of data
    assert caught and all(w.filename == __file__ for w in caught)
