# `make demo` and `make test` work on a fresh machine: each creates (or
# refreshes) the local virtual environment .venv from pyproject.toml first.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test venv clean

venv: $(STAMP)

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[test]"
	touch $(STAMP)

demo: $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m gainshape.demo --out demo-output

test: $(STAMP)
	MPLBACKEND=Agg $(BIN)/python -m pytest -q

clean:
	rm -rf $(VENV) demo-output .pytest_cache
