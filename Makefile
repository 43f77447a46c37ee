# `make demo` and `make test` work on a fresh machine: each creates (or
# refreshes) the local virtual environment .venv from pyproject.toml first.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test test-wheel test-browser docs venv clean

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
	$(MAKE) docs
	$(MAKE) test-wheel

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

# the curve editor and the study report in a real browser: Debian's Chromium (installed when
# missing and apt-get can run), JupyterLab and Playwright; the screenshot is
# kept in docs/_static/
test-browser: $(STAMP)
	command -v chromium >/dev/null || (apt-get update && apt-get install -y chromium)
	$(BIN)/python -m pip install --quiet -e ".[test,docs,browser]"
	mkdir -p docs/_static
	MPLBACKEND=Agg GAINSHAPE_SCREENSHOTS=docs/_static $(BIN)/python -m pytest -q -s tests/test_drawing_browser.py tests/test_report_browser.py

# the documentation site, built from scratch with warnings as errors into a
# staging folder that replaces docs/_build/html only when the build succeeded
docs: $(STAMP)
	rm -rf docs/_build/html.partial docs/generated
	MPLBACKEND=Agg $(BIN)/python -m sphinx -E -W --keep-going -q -b html docs docs/_build/html.partial
	rm -rf docs/_build/html && mv docs/_build/html.partial docs/_build/html

clean:
	rm -rf $(VENV) demo-output .pytest_cache docs/_build docs/generated docs/tutorials docs/jupyter_execute
