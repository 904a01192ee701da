# Everyday tasks. The virtual environment is .venv (made by `make venv`); CI runs .ci/run instead.
PY ?= .venv/bin/python

.PHONY: venv test lint fix types bench screenshots

venv:
	python3 -m venv .venv && .venv/bin/pip install -e '.[test]'

# The README's test command.
test:
	$(PY) -m pytest -n auto

lint:
	$(PY) -m ruff check .
	$(PY) -m ruff format --check .
	.venv/bin/lint-imports

fix:
	$(PY) -m ruff check --fix .
	$(PY) -m ruff format .

# The benchmark harness against gensim (minutes; outside the test suite). BENCH_ARGS=--big adds 1M and 2M words.
bench:
	$(PY) -m tests.bench.run $(BENCH_ARGS)

# Regenerates the pictures in docs/screenshots.
screenshots:
	$(PY) -m tests.screenshots
