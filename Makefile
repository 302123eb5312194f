# Two set-up commands: `make demo` and `make test`. Both create .venv if missing and install the package.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed-stamp

.PHONY: demo test benchmark clean

$(STAMP): pyproject.toml
	@test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	$(BIN)/python -m compileall -q src  # byte-compiled once here, so no command pays for it on first use
	@touch $(STAMP)

demo: $(STAMP)
	$(BIN)/globcons demo -o demo-output

test: $(STAMP)
	$(BIN)/python -m pytest -q

benchmark: $(STAMP)
	$(BIN)/python benchmarks/bench_columns.py

clean:
	rm -rf $(VENV) demo-output build src/*.egg-info .pytest_cache .hypothesis
