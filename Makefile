# Two commands on a fresh machine: `make run` and `make test`.
VENV ?= .venv
PY := $(VENV)/bin/python
PORT ?= 5000

.PHONY: run test lint typecheck bench bench-quick install clean

$(VENV)/.installed: pyproject.toml
	python3 -m venv $(VENV)
	$(VENV)/bin/pip install --upgrade pip
	$(VENV)/bin/pip install -e '.[dev]'
	touch $@

install: $(VENV)/.installed

# setup, then serve on 127.0.0.1:$(PORT); the demo logins are printed last (make run PORT=8080)
run: $(VENV)/.installed
	@$(PY) -m fieldapp.manage run --host 127.0.0.1 --port $(PORT)

lint: $(VENV)/.installed
	$(VENV)/bin/ruff check .

typecheck: $(VENV)/.installed
	$(VENV)/bin/mypy

test: $(VENV)/.installed lint typecheck
	$(VENV)/bin/pytest -q

# Diagnosis benchmark under site conditions (prints, asserts nothing); e.g.
# make bench BENCH_ARGS="--conditions clean,typical --n 10"
BENCH_ARGS ?=
bench: $(VENV)/.installed
	$(PY) bench/diagnosis.py $(BENCH_ARGS)

bench-quick: $(VENV)/.installed
	$(PY) bench/diagnosis.py --quick $(BENCH_ARGS)

clean:
	rm -rf $(VENV) instance .pytest_cache .ruff_cache
