# `make demo` and `make test` work on a fresh machine: each creates (or
# refreshes) the local virtual environment .venv from pyproject.toml first.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test test-wheel test-oldest test-browser docs venv clean

venv: $(STAMP)

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[test,docs]"
	touch $(STAMP)

demo: $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m gainshape.demo --out demo-output

test: $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m pytest -q
	$(BIN)/python -m mypy
	$(MAKE) docs
	$(MAKE) test-wheel
	$(MAKE) test-oldest

# the product as users install it: an sdist and a wheel built from it, the
# wheel installed into a fresh environment that had MNE-Python first, and a
# smoke script run from outside the source tree
WHEEL_VENV := build/wheel-venv
test-wheel: $(STAMP)
	rm -rf build/dist $(WHEEL_VENV)
	$(BIN)/python -m build --outdir build/dist . > /dev/null
	$(PYTHON) -m venv $(WHEEL_VENV)
	$(WHEEL_VENV)/bin/python -m pip install --quiet --upgrade pip
	$(WHEEL_VENV)/bin/python -m pip install --quiet mne
	$(WHEEL_VENV)/bin/python -m pip install --quiet build/dist/gainshape-*.whl
	$(BIN)/python -m zipfile -l build/dist/gainshape-*.whl | awk '{print $$1}' | grep '^gainshape/'
	cd $(WHEEL_VENV) && MPLBACKEND=Agg bin/python $(CURDIR)/tests/wheel/smoke.py

# the core suite with the lowest versions gainshape declares (tests/oldest.txt)
OLDEST_VENV := build/oldest-venv
CORE_TESTS := tests/test_curves.py tests/test_realize.py tests/test_rates.py tests/test_measure.py \
	tests/test_design.py tests/test_engine.py tests/test_adapters.py tests/test_outofcore.py \
	tests/test_provenance.py tests/test_recipes.py tests/test_summaries.py tests/test_spectra.py \
	tests/test_lines.py tests/test_audit.py tests/test_compat.py tests/references
test-oldest:
	rm -rf $(OLDEST_VENV)
	$(PYTHON) -m venv $(OLDEST_VENV)
	$(OLDEST_VENV)/bin/python -m pip install --quiet --upgrade pip
	$(OLDEST_VENV)/bin/python -m pip install --quiet -r tests/oldest.txt
	$(OLDEST_VENV)/bin/python -m pip install --quiet --no-deps .
	$(OLDEST_VENV)/bin/python -c "import numpy, scipy, mne, xarray, matplotlib; print('oldest:', \
		'NumPy', numpy.__version__, 'SciPy', scipy.__version__, 'MNE', mne.__version__, \
		'xarray', xarray.__version__, 'matplotlib', matplotlib.__version__)"
	MPLBACKEND=Agg $(OLDEST_VENV)/bin/python -m pytest -q -p no:cacheprovider $(CORE_TESTS)

# the curve editor and the study report in a real browser: Debian's Chromium (installed when
# missing and apt-get can run), JupyterLab and Playwright; the screenshots go to
# build/screenshots (look at them; copy one to docs/_static/ by hand to publish it)
test-browser: $(STAMP)
	command -v chromium >/dev/null || (apt-get update && apt-get install -y chromium)
	$(BIN)/python -m pip install --quiet -e ".[test,docs,browser]"
	mkdir -p build/screenshots
	MPLBACKEND=Agg GAINSHAPE_SCREENSHOTS=build/screenshots $(BIN)/python -m pytest -q -s tests/test_drawing_browser.py tests/test_report_browser.py

# the documentation site, built from scratch with warnings as errors into a
# staging folder that replaces docs/_build/html only when the build succeeded
docs: $(STAMP)
	rm -rf docs/_build/html.partial docs/generated
	MPLBACKEND=Agg $(BIN)/python -m sphinx -E -W --keep-going -q -b html docs docs/_build/html.partial
	rm -rf docs/_build/html && mv docs/_build/html.partial docs/_build/html

clean:
	rm -rf $(VENV) demo-output .pytest_cache docs/_build docs/generated docs/tutorials docs/jupyter_execute
