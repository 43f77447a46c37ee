"""A study's recordings: found in a BIDS root or a folder, named for their outputs, and the
derivative's dataset description."""

from __future__ import annotations

import json
from pathlib import Path

from .._checks import missing_modules
from .._files import atomic_output
from ..record.recipes import read_recipe, recipe_content


ENTITIES = ("subject", "session", "task")


PARTS = {"band_change": "band-change summary (band_change.nc)",
          "methods": "methods paragraph (methods.txt)", None: "report (report.html)"}


def recipe_content_of(recipe) -> dict:
    """The recipe's JSON content, checked (from a file or read_recipe's dict)."""
    if isinstance(recipe, dict):
        return recipe_content(**recipe)
    return recipe_content(**read_recipe(recipe))


def study_recordings(inputs, selection) -> list:
    """(source, output path relative to the output folder, (subject, session, task)) per recording."""
    if isinstance(inputs, (str, Path)) and Path(inputs).is_dir():
        return _bids_recordings(Path(inputs), selection)
    if isinstance(inputs, (str, Path)):
        raise ValueError(f"The 'inputs' parameter is a BIDS root folder or a list of recording "
                         f"files; {inputs!s} is neither (no such folder).")
    if any(value is not None for value in selection.values()):
        raise ValueError("'subjects', 'sessions' and 'tasks' select recordings of a BIDS root; "
                         "the inputs are a list of files.")
    missing = [str(p) for p in inputs if not Path(p).is_file()]
    if missing:
        raise FileNotFoundError(f"{len(missing)} of the {len(inputs)} inputs do not exist or are "
                                f"not files: {', '.join(missing[:5])}{' ...' if len(missing) > 5 else ''}"
                                " (nothing was done).")
    return [(Path(p), Path(f"{_base_name(Path(p))}_filtered_raw.fif"), (None, None, None))
            for p in inputs]


def _bids_recordings(root: Path, selection) -> list:
    """Every EEG recording of a BIDS dataset (the selected ones), with its derivative's place."""
    require_modules("mne_bids", "bids")
    import mne_bids

    if not (root / "dataset_description.json").exists():
        raise ValueError(f"The 'inputs' folder {root} is not a BIDS root (no "
                         "dataset_description.json); pass the dataset's top folder or a list of files.")
    paths = mne_bids.find_matching_paths(root, datatypes="eeg", suffixes="eeg",
                                         extensions=READABLE, **selection)
    if not paths:
        raise ValueError(f"No EEG recording in {root} matches the selection {selection}.")
    found = []
    for path in sorted(paths, key=lambda p: str(p.fpath)):
        folder = path.fpath.parent.relative_to(root)
        derived = path.copy().update(description="filtered", extension=".fif", check=False)
        found.append((path.fpath, folder / derived.basename,
                      (path.subject, path.session, path.task)))
    return found


def _base_name(source: Path) -> str:
    """The source's name without extensions and a trailing "_raw" or "_eeg".

    >>> _base_name(Path("sub-01_task-rest_eeg.vhdr")), _base_name(Path("rec_raw.fif.gz"))
    ('sub-01_task-rest', 'rec')
    """
    name = source.name.split(".")[0]
    for tail in ("_raw", "_eeg"):
        if name.endswith(tail):
            return name[: -len(tail)]
    return name


def check_distinct(sources, outputs) -> None:
    seen: dict = {}
    for source, output in zip(sources, outputs):
        if output in seen and seen[output] != source:
            raise ValueError(f"The inputs {seen[output]} and {source} would both be written to "
                             f"{output.name}; give recordings distinct names.")
        seen[output] = source


def write_dataset_description(out_dir: Path) -> None:
    """BIDS derivatives' dataset_description.json, written once."""
    from .._version import __version__

    path = out_dir / "dataset_description.json"
    if path.exists():
        return
    content = {"Name": "Recordings filtered by gainshape", "BIDSVersion": "1.9.0",
               "DatasetType": "derivative",
               "GeneratedBy": [{"Name": "gainshape", "Version": __version__,
                                "Description": "gain-curve FIR filtering (gainshape.run_study)"}]}
    with atomic_output(path) as staged:
        staged.write_text(json.dumps(content, indent=2) + "\n", encoding="utf-8")


def require_modules(module: str, extra: str, *more: str) -> None:
    """ImportError naming the extra to install unless ``module`` (and ``more``) import.

    >>> require_modules("json", "none")
    """
    absent = missing_modules(module, *more)
    if absent:
        raise ImportError(f"This needs {', '.join(absent)}, which is not installed: "
                          f'pip install "gainshape[{extra}]"')


READABLE = [".vhdr", ".edf", ".bdf", ".set", ".fif", ".cnt", ".mff"]
