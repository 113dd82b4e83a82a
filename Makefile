# Two entry points for a fresh machine: `make demo` (set up, run the study on an example brief)
# and `make test` (set up, run the test suite). Both create .venv on first use.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed
BRIEF ?= examples/towel_rail_boost.yaml

.PHONY: demo test bench clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/tradeoff study $(BRIEF)

test: $(STAMP)
	$(BIN)/python -m pytest

bench: $(STAMP)
	for f in bench/bench_*.py; do echo "== $$f"; $(BIN)/python $$f || exit 1; done

clean:
	rm -rf $(VENV) build dist *.egg-info
