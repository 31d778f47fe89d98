# The two commands a newcomer needs: `make site` and `make test`.
# Both create and fill .venv on first use (and again when pyproject.toml changes).
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed

.PHONY: site test bench screens clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	touch $(STAMP)

site: $(STAMP)
	$(VENV)/bin/dossier build cases --out site

test: $(STAMP)
	@if command -v npm >/dev/null 2>&1; then npm ci --prefix tools/axe --no-audit --no-fund --silent; else echo "note: npm not found; the accessibility checks (tests/system/test_accessibility.py) will skip"; fi
	$(PY) -m pytest -q

screens: site
	$(PY) tools/screens.py

bench: $(STAMP)
	$(PY) bench/run.py

clean:
	rm -rf site .pytest_cache
