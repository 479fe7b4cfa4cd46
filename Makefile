# Two commands on a fresh machine: `make run` and `make test`.
VENV ?= .venv
PY := $(VENV)/bin/python
PORT ?= 5000

.PHONY: run test lint typecheck bench install clean

$(VENV)/.installed: pyproject.toml
	python3 -m venv $(VENV)
	$(VENV)/bin/pip install --upgrade pip
	$(VENV)/bin/pip install -e '.[dev]'
	touch $@

install: $(VENV)/.installed

run: $(VENV)/.installed
	$(PY) -m fieldapp.manage setup
	$(PY) -m flask --app fieldapp run --host 127.0.0.1 --port $(PORT)

lint: $(VENV)/.installed
	$(VENV)/bin/ruff check .

typecheck: $(VENV)/.installed
	$(VENV)/bin/mypy

test: $(VENV)/.installed lint typecheck
	$(VENV)/bin/pytest -q

bench: $(VENV)/.installed
	$(PY) bench/diagnosis.py

clean:
	rm -rf $(VENV) instance .pytest_cache .ruff_cache
