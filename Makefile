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

# The example project's full output in project_example/out: findings, the technicians'
# calibration workbook, diagrams and range charts as SVG, and the PDF package.
demo: $(STAMP)
	$(VENV)/bin/loopdocs check project_example
	$(VENV)/bin/loopdocs calibrate project_example --out project_example/out/calibration.xlsx --format json > /dev/null
	$(VENV)/bin/loopdocs draw project_example --out project_example/out/drawings
	$(VENV)/bin/loopdocs build project_example --out project_example/out

test: $(STAMP)
	$(PY) -m pytest -q loopdocs tests

bench: $(STAMP)
	$(PY) benchmarks/bench_check.py
	$(PY) benchmarks/bench_build.py

clean:
	rm -rf $(VENV) build *.egg-info
