# Entry points for a fresh machine: `make demo` (set up, run the study on an example brief),
# `make review` (set up, write the full review set for the brief into out/review) and `make test`
# (set up, run the test suite). Each creates .venv on first use.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed
BRIEF ?= examples/towel_rail_boost.yaml
REVIEW ?= out/review

.PHONY: demo review test bench clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

demo: $(STAMP)
	$(BIN)/tradeoff study $(BRIEF)

review: $(STAMP)
	$(BIN)/tradeoff study $(BRIEF) --review $(REVIEW) --force

test: $(STAMP)
	$(BIN)/python -m pytest -q -n auto --dist loadfile

bench: $(STAMP)
	for f in bench/bench_*.py; do echo "== $$f"; $(BIN)/python $$f || exit 1; done

clean:
	rm -rf $(VENV) build dist *.egg-info
