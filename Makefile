# Two commands for a fresh machine with Python 3.11+ (see README):
#   make demo   — install into .venv, build the demo lab's notebook and open it
#   make test   — install into .venv (with test extras), lint (ruff), run the test suite
PY ?= python3
VENV ?= .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.trapbook-installed

.PHONY: demo lint test test-slow test-all bench schemas

$(STAMP): pyproject.toml
	$(PY) -m venv $(VENV)
	$(BIN)/python -m pip install -q --upgrade pip
	$(BIN)/python -m pip install -q -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/trapbook demo

lint: $(STAMP)
	$(BIN)/ruff check .
	$(BIN)/ruff format --check .

test: $(STAMP) lint
	$(BIN)/python -m pytest -n 2 -q

test-slow: $(STAMP)
	$(BIN)/python -m pytest -n 2 -q -m slow

test-all: $(STAMP)
	$(BIN)/python -m pytest -n 2 -q -m "slow or not slow"

bench: $(STAMP)
	$(BIN)/python benchmarks/strain.py
	$(BIN)/python benchmarks/search.py
	$(BIN)/python benchmarks/tui.py

schemas: $(STAMP)
	$(BIN)/python -m trapbook.schema_files
