# necflow: the two commands a user needs (`make demo`, `make test`) plus helpers.
# Each target creates or reuses the virtual environment in $(VENV).

PYTHON ?= python3
VENV   ?= .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.necflow-installed

.PHONY: demo test lint bench check-configs docs clean

$(STAMP): pyproject.toml
	@test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	@touch $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/necflow evaluate configs/demo.yaml
	@# The same doublet through the builder's own shack tuner, with a relay-switched
	@# variant that opens 30 m: its report compares the ways of feeding it per band.
	$(VENV)/bin/necflow evaluate configs/demo-tuner.yaml
	@# A short, seeded study of the demo doublet (a few minutes on 2 cores: with its
	@# route every trial solves the line's outside with the antenna); it prints the
	@# per-band table before and after. A fresh folder each time.
	rm -rf runs/demo-study
	$(VENV)/bin/necflow optimize configs/demo.yaml --trials 40 --seed 1 --workers 2 \
		--out runs/demo-study

test: $(STAMP)
	$(PY) -m pytest -q

# The structure and the style: import-linter's layer contract (pyproject.toml,
# [tool.importlinter]) and ruff (pyproject.toml, [tool.ruff]).
lint: $(STAMP)
	$(VENV)/bin/lint-imports
	$(VENV)/bin/ruff check .

# Speed benchmark (not part of `make test`; under about 30 minutes on 2 cores): three
# problems (the demo, bench/problems/off-centre.yaml, bench/problems/inverted-v.yaml),
# each a reference optimum, the nested study and a plain optuna loop; prints one table
# and writes bench.json.  BENCH_ARGS passes options, e.g.
# make bench BENCH_ARGS="--problems demo --plain-budget 120".
bench: $(STAMP)
	$(PY) bench/run.py $(BENCH_ARGS)

# Regenerate the design-key reference in README.md from the schema.
docs: $(STAMP)
	$(PY) -m necflow.config.reference --write README.md

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache
