# protolint — the two commands a fresh machine needs are `make demo` and `make test`.
# Both create .venv/ when it is missing and install the project with every extra
# (`.[all,test]`: documents, analyses and the test libraries) into it, at the exact versions
# of constraints.txt, so every machine renders the same document bytes
# (`make constraints` rewrites the file from the working venv after a dependency change).

PYTHON ?= python3
VENV   ?= .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.protolint-installed
OUT    ?= out
DEMO   := demo_protocol/plan.yaml
LOCK   := constraints.txt

.PHONY: demo test bench install clean rules-doc lint constraints fuzz

install: $(STAMP)

$(STAMP): pyproject.toml setup.py $(LOCK)
	@test -x $(PY) || $(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip setuptools wheel
	$(PY) -m pip install --quiet -c $(LOCK) -e '.[all,test]'
	@touch $(STAMP)

demo: $(STAMP)
	@mkdir -p $(OUT)
	$(VENV)/bin/protolint check $(DEMO) --fail-on never
	$(VENV)/bin/protolint check $(DEMO) --fail-on never --format json --output $(OUT)/demo-check.json
	$(VENV)/bin/protolint check $(DEMO) --fail-on never --format sarif --output $(OUT)/demo-check.sarif
	$(VENV)/bin/protolint check $(DEMO) --fail-on never --format html --output $(OUT)/demo-check.html
	$(VENV)/bin/protolint agreement demo_protocol/data/certification_hlsc8.csv --format json --output $(OUT)/demo-certification-agreement.json
	$(VENV)/bin/protolint agreement demo_protocol/data/photo_grades_phg5.csv --scale ordinal --format json --output $(OUT)/demo-photo-agreement.json
	$(VENV)/bin/protolint consistency demo_protocol/data/items_hlsc8.csv --format json --output $(OUT)/demo-items-consistency.json
	$(PY) demo_protocol/export_qs.py $(OUT)/demo-qs-hlsc8.ndjson
	$(VENV)/bin/protolint consistency $(OUT)/demo-qs-hlsc8.ndjson --columns sdtm-qs --where 'QSTESTCD!=HLSC8TOT'
	$(VENV)/bin/protolint design demo_protocol/pilot/pilot_hlsc8_simulated.csv --plan $(DEMO) --cost-participant 4000 --cost-rating 150 --cost-occasion 350 --format pdf --output $(OUT)/demo-design.pdf
	$(VENV)/bin/protolint drift demo_protocol/data/drift_hlsc8.csv --plan $(DEMO) --fail-on never
	$(VENV)/bin/protolint drift demo_protocol/data/drift_hlsc8.csv --plan $(DEMO) --fail-on never --format json --output $(OUT)/demo-drift.json
	$(VENV)/bin/protolint drift demo_protocol/data/drift_hlsc8.csv --plan $(DEMO) --fail-on never --format pdf --output $(OUT)/demo-drift.pdf
	$(VENV)/bin/protolint render manual $(DEMO) --output $(OUT)/demo-manual.pdf
	$(VENV)/bin/protolint render checklist $(DEMO) --output $(OUT)/demo-checklist.pdf
	$(VENV)/bin/protolint render binder $(DEMO) --output $(OUT)/demo-binder.pdf
	$(VENV)/bin/protolint render binder $(DEMO) --format html --output $(OUT)/demo-binder.html
	$(VENV)/bin/protolint render manual $(DEMO) --format markdown --output $(OUT)/demo-manual.md
	$(VENV)/bin/protolint calendar $(DEMO) --output $(OUT)/demo-calendar.ics
	@echo "make demo: reports, documents and the calendar are in $(OUT)/"

# pytest exits 5 when it collected no test: that is a failure here, never a pass.
test: $(STAMP)
	@$(PY) -m pytest $(PYTEST_ARGS); rc=$$?; \
	  if [ $$rc -eq 5 ]; then echo "make test: pytest collected no tests" >&2; exit 1; fi; exit $$rc

# One table of every speed target (bench/run_all.py collects each bench/bench_*.py's rows()).
bench: $(STAMP)
	@$(PY) bench/run_all.py $(BENCH_ARGS)

# Fuzzing (not part of `make test`): every coverage-guided harness in fuzz/ for FUZZ_RUNS
# iterations, each input limited in memory and time, then the property-based tests with many
# examples. atheris is installed here only; it is not a test dependency.
FUZZ_RUNS ?= 20000
FUZZ_EXAMPLES ?= 500
fuzz: $(STAMP)
	$(PY) -m pip install --quiet atheris
	@for harness in fuzz/fuzz_*.py; do \
	  echo "== $$harness ($(FUZZ_RUNS) runs)"; \
	  PYTHONPATH=. $(PY) $$harness -runs=$(FUZZ_RUNS) -max_len=65536 -rss_limit_mb=2048 -timeout=20 -print_final_stats=1 || exit 1; \
	done
	PROTOLINT_FUZZ_EXAMPLES=$(FUZZ_EXAMPLES) $(PY) -m pytest -q tests/properties tests/stats/test_properties.py tests/commands/test_random_inputs.py tests/corpus

# Type check and static checks (the dev extra); not part of `make test`.
lint: $(STAMP)
	$(PY) -m pip install --quiet -c $(LOCK) -e '.[dev]'
	$(PY) -m ruff check --select F,E9 protolint tests bench tools
	$(PY) -m mypy protolint

rules-doc: $(STAMP)
	$(PY) tools/write_rule_reference.py

constraints: $(STAMP)
	$(PY) tools/write_constraints.py

clean:
	rm -rf $(OUT) build dist *.egg-info .pytest_cache
