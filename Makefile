# Two commands do all set-up on a fresh machine: `make run` and `make test`.
PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
STAMP := $(VENV)/.installed

.PHONY: run test lint bench bench-quick samples wheel-smoke clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[dev]'
	touch $(STAMP)

run: $(STAMP)
	$(VENV)/bin/netstretch serve --address localhost --port 5006

test: $(STAMP)
	$(PY) -m ruff check .
	$(PY) -m mypy
	$(PY) -m pytest -q

lint: $(STAMP)
	$(PY) -m ruff check .
	$(PY) -m mypy

bench: $(STAMP)
	$(PY) -m benchmarks

bench-quick: $(STAMP)
	$(PY) -m benchmarks --quick --json

samples: $(STAMP)
	$(PY) sample_sets/make_samples.py

# build the wheel, install it in a fresh venv outside the checkout and use it there (CI runs this too)
wheel-smoke: $(STAMP)
	bash .ci/wheel_smoke.sh $(abspath $(PY))

clean:
	rm -rf $(VENV) build dist *.egg-info .pytest_cache .ruff_cache
