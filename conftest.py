"""Doctests read the public names without importing them, as a user of ``gs.*`` would."""

import pytest


@pytest.fixture(autouse=True)
def _public_names_in_doctests(doctest_namespace):
    import gainshape

    for name in gainshape.__all__:
        doctest_namespace.setdefault(name, getattr(gainshape, name))
