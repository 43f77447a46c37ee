"""The public surface is exactly the names the project plan fixes (plus the warning class);
the layer rules of docs/architecture.md hold."""

import gainshape as gs


def test_package_exports_exactly_all():
    # common practice (no source): __init__ re-exports the public API and nothing else
    import types

    public = {name for name in dir(gs)
              if not name.startswith("_") and not isinstance(getattr(gs, name), types.ModuleType)}
    assert public == set(gs.__all__)
    import gainshape.about  # noqa: F401  (a submodule of the same name does not hide the function)

    assert callable(gs.about) and gs.about.__module__ == "gainshape.about"
    assert len(gs.__all__) == len(set(gs.__all__))


def test_foundation_names_present():
    expected = {
        "GainCurve", "lowpass", "highpass", "bandpass", "bandstop", "notch",
        "design", "FilterDesign", "apply", "GainshapeWarning",
    }
    assert expected <= set(gs.__all__)


def test_warning_class_is_userwarning():
    assert issubclass(gs.GainshapeWarning, UserWarning)


# The wings of docs/architecture.md, lowest first, and each wing's modules, lowest first
# ("ground" and "top" are the modules outside the wings). A module may import, at module
# level or deferred inside a function, only modules before it: a wing only lower wings
# (or its own earlier modules), so there is no import circle. A wing's __init__ comes
# after its modules. The one way up is gainshape._showing, by name, for FilterDesign.plot.
WINGS = {
    "ground": ["_version", "_types", "_compat", "_checks", "_files", "_spectra", "_showing"],
    "shaping": ["gains", "curves", "shapes", "realize", "rates", "words", "stopbands", "timing",
                "measure", "lengths", "filter_design", "design"],
    "record": ["steps", "methods", "bids", "recipes"],
    "filtering": ["blocks", "engine", "outofcore", "signals", "adapters"],
    "examining": ["summaries", "causes", "lines", "notches", "audit", "components", "cautions",
                  "compare"],
    "showing": ["look", "filter_plots", "spectrum_plots", "waveform_plots", "comparison_plots",
                "edits", "drawing"],
    "studies": ["stamps", "finding", "task", "workers", "report", "study"],
    "top": ["about", "simulate", "cli", "demo"],
}
OUTSIDE = {"ground", "top"}  # modules directly in src/gainshape
MNE_AWARE = {"_compat", "filtering.signals", "filtering.adapters", "record.steps", "record.bids",
             "examining.compare", "studies.finding", "studies.task", "studies.report", "cli",
             "simulate", "demo"}
MAX_LINES = 500


def _ordered_modules():
    """Every module's dotted name below gainshape, lowest first (wing __init__ last)."""
    order = []
    for wing, modules in WINGS.items():
        order += modules if wing in OUTSIDE else [f"{wing}.{m}" for m in modules]
        order += [] if wing in OUTSIDE else [f"{wing}.__init__"]
    return order


def _source_files():
    from pathlib import Path

    src = Path(gs.__file__).parent
    return {".".join(p.relative_to(src).with_suffix("").parts): p
            for p in src.rglob("*.py") if p.name != "__init__.py" or p.parent != src}


def _imports_of(name, path):
    """The gainshape modules ``name`` imports anywhere in its file, and its other top
    names (third-party and standard library)."""
    import ast

    package = name.split(".")[:-1]
    local, external = set(), set()
    for node in ast.walk(ast.parse(path.read_text())):
        if isinstance(node, ast.ImportFrom) and node.level:
            base = package[: len(package) - node.level + 1]
            targets = [node.module] if node.module else [a.name for a in node.names]
            local.update(".".join([*base, target]) for target in targets)
        elif isinstance(node, ast.ImportFrom) and node.module:
            external.add(node.module.split(".")[0])
        elif isinstance(node, ast.Import):
            external.update(alias.name.split(".")[0] for alias in node.names)
    return local, external


def test_architecture_page_shows_the_wings_modules_and_mne_aware_ones():
    # the page readers see (docs/architecture.md) agrees with the rules enforced here
    from pathlib import Path

    page = Path(__file__).parent.parent / "docs" / "architecture.md"
    rows = [[c.strip().strip("`") for c in line.split("|")[1:-1]]
            for line in page.read_text().splitlines()
            if line.startswith("| ") and line.split("|")[1].strip().isdigit()]
    listed = [(cells[1], cells[2]) for cells in rows]
    assert listed == [(wing, module) for wing, modules in WINGS.items() for module in modules]
    dotted = {(module if wing in OUTSIDE else f"{wing}.{module}")
              for _, wing, module, _, mne in rows if mne == "MNE"}
    assert dotted == MNE_AWARE


def test_every_module_is_in_its_wing_and_imports_only_lower_ones():
    order = _ordered_modules()
    files = _source_files()
    assert sorted(files) == sorted(order)
    for rank, name in enumerate(order):
        local, external = _imports_of(name, files[name])
        local = {m if m in files else m + ".__init__" for m in local}
        assert local <= set(order[:rank]), (name, sorted(local - set(order[:rank])))
        assert bool({"mne", "mne_bids"} & external) == (name in MNE_AWARE), name


def test_no_module_is_over_the_line_limit():
    longest = {name: len(path.read_text().splitlines()) for name, path in _source_files().items()}
    assert max(longest.values()) <= MAX_LINES, sorted(longest.items(), key=lambda kv: -kv[1])[:3]


def test_only_the_showing_hook_and_the_package_import_gainshape_by_name():
    # importlib.import_module would hide an upward import from the test above
    import ast

    for name, path in _source_files().items():
        for node in ast.walk(ast.parse(path.read_text())):
            if isinstance(node, ast.Call) and getattr(node.func, "attr", None) == "import_module":
                argument = node.args[0]
                by_name = not isinstance(argument, ast.Constant) or \
                    argument.value.startswith(("gainshape", "."))
                assert not by_name or name in {"_showing", "_checks", "studies.workers"}, name
    from gainshape._showing import plotting_function

    assert plotting_function("plot_design").__module__ == "gainshape.showing.filter_plots"


def test_public_names_come_from_the_homes_the_package_lists():
    import gainshape

    for name in gs.__all__:
        assert getattr(gs, name).__module__ == f"gainshape.{gainshape._HOMES[name]}", name


# Names and sentences of another filtering program's interface that must not
# come back (our own words rule; the list is from the project's review).
BORROWED_PARAMETERS = {"phase", "filter_length", "l_freq", "h_freq", "trans_bandwidth",
                       "l_trans_bandwidth", "h_trans_bandwidth", "fir_window", "fir_design",
                       "iir_params", "method", "notch_widths", "skip_by_annotation",
                       "mt_bandwidth"}
BORROWED_STRINGS = ("zero-double", "Invalid value for the", "Allowed values are",
                    "firwin", "length='auto'", 'length="auto"', "but got",
                    "must be an instance of")


def _public_callables():
    """Every public function, class, method and classmethod, the editor's included."""
    import inspect

    from gainshape.showing.drawing import GainEditor

    owners = [(name, getattr(gs, name)) for name in gs.__all__] + [("GainEditor", GainEditor)]
    for name, obj in owners:
        yield name, obj
        if inspect.isclass(obj):
            for attr, member in vars(obj).items():
                member = getattr(member, "__func__", member)  # classmethods: the function
                if callable(member) and not attr.startswith("_") and not inspect.isclass(member):
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


def test_command_line_flags_page_labels_and_record_keys_borrow_no_name(tmp_path):
    # the command line's flags, the editor page's strings, a recipe's and a step's keys
    import argparse
    import json
    import re
    from pathlib import Path

    import numpy as np

    from gainshape import cli

    def flags(parser):
        for action in parser._actions:  # argparse keeps no public list of its options
            yield from (option.lstrip("-").replace("-", "_") for option in action.option_strings)
            yield action.dest
            if isinstance(action, argparse._SubParsersAction):
                for sub in action.choices.values():
                    yield from flags(sub)

    names = set(flags(cli._parser()))
    assert {"out", "scheduler", "allow_short", "sfreq", "full"} <= names  # the scan saw them
    assert not names & BORROWED_PARAMETERS, names & BORROWED_PARAMETERS

    script = (Path(gs.__file__).parent / "showing" / "_editor.js").read_text()
    texts = re.findall(r'"((?:[^"\\\n]|\\.)*)"|\'((?:[^\'\\\n]|\\.)*)\'|`([^`]*)`', script)
    texts = [next(filter(None, groups), "") for groups in texts]
    assert len(texts) > 50
    words = {word for text in texts for word in re.findall(r"[A-Za-z_]+", text)}
    assert not words & BORROWED_PARAMETERS, words & BORROWED_PARAMETERS
    for text in texts:
        assert not any(b in text for b in BORROWED_STRINGS), text[:80]

    def keys(value):
        if isinstance(value, dict):
            for key, inner in value.items():
                yield key
                yield from keys(inner)
        elif isinstance(value, list):
            for inner in value:
                yield from keys(inner)

    recipe = json.loads(gs.write_recipe(tmp_path / "r.json", gs.bandpass(0.1, 40.0)).read_text())
    _, step = gs.apply(np.zeros((1, 5000)), gs.bandpass(0.1, 40.0) * gs.notch(50.0),
                       sfreq=250.0, return_step=True)
    recorded = set(keys(recipe)) | set(keys(step))
    assert {"kernel", "pad", "realized", "stop_bands"} <= recorded  # the scan saw them
    assert not recorded & BORROWED_PARAMETERS, recorded & BORROWED_PARAMETERS


def test_source_strings_hold_no_borrowed_option_or_message():
    import ast
    from pathlib import Path

    src = Path(gs.__file__).parent
    nodes = [node for path in src.rglob("*.py") for node in ast.walk(ast.parse(path.read_text()))]
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


def test_every_public_function_and_method_is_fully_annotated():
    # what `make test` type-checks with mypy: every parameter and return of the public names
    import inspect

    unannotated = []
    for name, obj in _public_callables():
        function = getattr(obj, "__func__", obj)
        if inspect.isclass(function):
            continue  # dataclass fields are annotated; warnings take what Warning takes
        signature = inspect.signature(function)
        unannotated += [f"{name}({p})" for p, v in signature.parameters.items()
                        if p not in ("self", "cls") and v.annotation is inspect.Parameter.empty]
        if signature.return_annotation is inspect.Signature.empty:
            unannotated.append(f"{name} -> ?")
    assert not unannotated, unannotated
