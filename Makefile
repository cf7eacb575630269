# The gates of .ci/run, on the checkout you have (no fresh environment). Run `make check` before
# landing: lint, format, import contracts, types, then the tests on two cores.
.PHONY: check gates lint format imports types test snapshots

PYTHON ?= python
export PYTHONPATH := $(CURDIR)

check: gates test

gates: lint format imports types

lint:
	ruff check .

format:
	ruff format --check .

imports:
	lint-imports --no-cache

types:
	mypy

test:
	$(PYTHON) -m pytest -q -x -n 2

# Accept the current UI and job cards as the new reference (read the diff before committing).
snapshots:
	$(PYTHON) -m pytest -q -p no:xdist tests/tui/test_snapshots.py tests/report/test_golden_cards.py --snapshot-update
