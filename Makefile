# Two set-up commands for a fresh machine: `make demo` and `make test`.
PY ?= python3
VENV := .venv
BIN := $(VENV)/bin
export MPLBACKEND := Agg

$(BIN)/holdoff: pyproject.toml
	$(PY) -m venv $(VENV)
	$(BIN)/pip install -q --upgrade pip
	$(BIN)/pip install -q -e '.[test]'
	@touch $@

.PHONY: install demo lint test bench
install: $(BIN)/holdoff

demo: install
	$(BIN)/holdoff shortlist --target examples/dc-link-target.toml --top 10


lint: install
	$(BIN)/ruff check .

test: lint
	$(BIN)/python -m pytest

bench: install
	$(BIN)/python -m pytest tests/bench -p no:cacheprovider -s -o addopts="" -o python_files="bench_*.py"
