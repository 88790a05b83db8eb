# Two commands set everything up on a fresh machine: `make demo` and `make test`.
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
PIP    := $(PY) -m pip install --quiet --disable-pip-version-check
STAMP  := $(VENV)/.installed
TESTSTAMP := $(VENV)/.installed-test

.PHONY: demo test bench clean

# The tool alone: runtime pins only.
$(STAMP): pyproject.toml requirements.lock
	$(PYTHON) -m venv $(VENV)
	$(PIP) -r requirements.lock
	$(PIP) --no-deps -e .
	touch $(STAMP)

# The test tools on top (pytest, hypothesis, and the reference libraries the tests use).
$(TESTSTAMP): $(STAMP) requirements-test.lock
	$(PIP) -r requirements-test.lock
	touch $(TESTSTAMP)

# The example project's full output in project_example/out: findings, the technicians'
# calibration workbook, diagrams and range charts as SVG, and the PDF package.
demo: $(STAMP)
	$(VENV)/bin/loopdocs check project_example
	$(VENV)/bin/loopdocs calibrate project_example --out project_example/out/calibration.xlsx --format json > /dev/null
	$(VENV)/bin/loopdocs draw project_example --out project_example/out/drawings
	$(VENV)/bin/loopdocs build project_example --out project_example/out

test: $(TESTSTAMP)
	$(PY) -m pytest -q loopdocs tests

bench: $(TESTSTAMP)
	$(PY) benchmarks/bench_check.py --memory
	$(PY) benchmarks/bench_diff.py
	$(PY) benchmarks/scaling.py
	$(PY) benchmarks/bench_build.py

clean:
	rm -rf $(VENV) build *.egg-info
