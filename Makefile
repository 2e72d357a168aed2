# nestfit: the two set-up commands are `make demo` and `make test`.
PYTHON ?= python3
VENV := .venv
PY := $(VENV)/bin/python
STAMP := $(VENV)/.installed

.PHONY: demo test test-fast check bench clean install

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install -q --upgrade pip
	$(PY) -m pip install -q -e ".[test,dev,plot]"
	touch $(STAMP)

install: $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/nestfit demo --out demo-report

# The suite solves thousands of tiny least-squares problems; BLAS threads only add
# synchronisation cost there, and more so on a loaded machine.
TEST_ENV := OPENBLAS_NUM_THREADS=1 OMP_NUM_THREADS=1 MKL_NUM_THREADS=1

test: $(STAMP) browser
	$(TEST_ENV) $(PY) -m pytest -q

test-fast: $(STAMP)
	$(TEST_ENV) $(PY) -m pytest -q -m "not slow"

check: $(STAMP)
	$(VENV)/bin/ruff check src tests benchmarks examples tools
	$(VENV)/bin/mypy

bench: $(STAMP)
	$(PY) benchmarks/run.py

clean:
	rm -rf $(VENV) build dist src/*.egg-info .pytest_cache .mypy_cache .ruff_cache

# Headless Chromium (Debian's package) for the page tests in tests/report; they skip without it.
.PHONY: browser
browser:
	@command -v chromium >/dev/null || (apt-get update -qq && apt-get install -y -qq chromium) \
		|| echo "chromium could not be installed: the page tests in tests/report will skip"
