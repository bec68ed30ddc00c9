PY ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed

.PHONY: demo test bench lint clean wheel-check

$(STAMP): pyproject.toml
	test -d $(VENV) || $(PY) -m venv $(VENV)
	$(BIN)/pip install -q --upgrade pip
	$(BIN)/pip install -q -e '.[test]'
	$(BIN)/python -m compileall -q bankbuild  # bytecode, as a wheel install writes it (PYTHONDONTWRITEBYTECODE)
	touch $(STAMP)

SURVEY := bankbuild-out/survey

demo: $(STAMP)
	$(BIN)/bankbuild demo --out bankbuild-out
	$(BIN)/python -m bankbuild.spec.demo_meter $(SURVEY)/packaging-line-15min.csv
	$(BIN)/bankbuild survey $(SURVEY)/packaging-line-15min.csv --voltage-v 480 --pf-target 0.95 \
		--name "Packaging line automatic bank" --out $(SURVEY)
	$(BIN)/bankbuild size $(SURVEY)/spec.yaml --out $(SURVEY)/bank

test: $(STAMP)
	$(BIN)/ruff check bankbuild tests benchmarks
	$(BIN)/pytest
	$(BIN)/python tests/wheel_check.py

wheel-check: $(STAMP)
	$(BIN)/python tests/wheel_check.py

bench: $(STAMP)
	$(BIN)/python benchmarks/run.py

lint: $(STAMP)
	$(BIN)/ruff check bankbuild tests benchmarks

clean:
	rm -rf $(VENV) bankbuild-out .pytest_cache .ruff_cache .hypothesis
