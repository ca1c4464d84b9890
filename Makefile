# Two commands on a fresh clone: `make demo` and `make test`.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed
DEMO ?= designs/millrace.toml

.PHONY: venv demo test lint bench sheet-png clean

venv: $(STAMP)

# Reinstall only when the project's metadata changes; the stamp makes `venv` idempotent.
$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $(STAMP)

DEMO_OUT := out/$(notdir $(DEMO:.toml=))

demo: venv
	$(BIN)/statorsmith build $(DEMO)
	cat $(DEMO_OUT)/plan.txt
	@echo "the build package is in $(DEMO_OUT)/: manifest.json lists every file; read SAFETY.txt first"

test: venv
	$(BIN)/python -m pytest

lint: venv
	$(BIN)/ruff check .
	$(BIN)/ruff format --check .

sheet-png: venv
	$(BIN)/python bench/sheet_pages.py $(DEMO) $(DEMO_OUT)/sheet-pages

bench: venv
	$(BIN)/python bench/plan_speed.py
	$(BIN)/python bench/pairs_speed.py
	$(BIN)/python bench/build_speed.py
	$(BIN)/python bench/size_speed.py

clean:
	rm -rf $(VENV) out/*/
