"""The public surface is exactly the names DESIGN.md fixes (plus the warning class)."""

import gainshape as gs


def test_all_names_exist_and_are_public():
    for name in gs.__all__:
        assert hasattr(gs, name), name
        assert not name.startswith("_")


def test_foundation_names_present():
    expected = {
        "GainCurve", "lowpass", "highpass", "bandpass", "bandstop", "notch",
        "design", "FilterDesign", "apply", "GainshapeWarning",
    }
    assert expected <= set(gs.__all__)


def test_warning_class_is_userwarning():
    assert issubclass(gs.GainshapeWarning, UserWarning)


# The layers of DESIGN.md, lowest first; a module may import (at module level)
# only modules before it. Deferred imports inside functions are the documented
# exceptions (design -> viz for FilterDesign.plot, adapters -> outofcore).
LAYERS = ["_checks", "curves", "design", "engine", "provenance", "adapters", "outofcore",
          "summaries", "audit", "viz", "demo"]
MNE_AWARE = {"adapters", "outofcore", "provenance", "demo"}  # provenance: version, mne-bids


def _package_imports(path, top_level_only):
    import ast

    tree = ast.parse(path.read_text())
    nodes = tree.body if top_level_only else list(ast.walk(tree))
    local, external = set(), set()
    for node in nodes:
        if isinstance(node, ast.ImportFrom) and node.level == 1:
            local.add(node.module or "")
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
