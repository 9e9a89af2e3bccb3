# Two commands for a fresh machine with Python 3.11 (see README.md):
#   make demo   set up .venv and run the built-in demo scenario
#   make test   set up .venv and run the test suite
PYTHON ?= python3
VENV   ?= .venv
BIN     = $(VENV)/bin
STAMP   = $(VENV)/.installed

.PHONY: demo test bench setup clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[test,cluster,dataframe]"
	touch $(STAMP)

setup: $(STAMP)

demo: $(STAMP)
	$(BIN)/cvsim run scenarios/nitrogen-blowdown.yaml --out results/nitrogen-blowdown --report

test: $(STAMP)
	$(BIN)/python -m pytest -q

bench: $(STAMP)
	$(BIN)/python benchmarks/bench_blowdown.py
	$(BIN)/python benchmarks/bench_walls.py

clean:
	rm -rf $(VENV) results .pytest_cache
