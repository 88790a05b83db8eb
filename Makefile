# Two commands set everything up on a fresh machine: `make demo` and `make test`.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed

.PHONY: demo test bench clean

$(STAMP): pyproject.toml requirements.lock
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --disable-pip-version-check -r requirements.lock
	$(PY) -m pip install --quiet --disable-pip-version-check --no-deps -e .
	touch $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/loopdocs check project_example
	$(VENV)/bin/loopdocs build project_example --out project_example/out

test: $(STAMP)
	$(PY) -m pytest -q loopdocs tests

bench: $(STAMP)
	$(PY) benchmarks/bench_check.py

clean:
	rm -rf $(VENV) build *.egg-info
