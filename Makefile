# The two commands a newcomer needs: `make site` and `make test`.
# Both create and fill .venv on first use (and again when pyproject.toml changes).
PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed

.PHONY: site test test-fast bench screens clean

$(STAMP): pyproject.toml
	$(PYTHON) -m venv $(VENV)
	$(PY) -m pip install --quiet --upgrade pip
	$(PY) -m pip install --quiet -e '.[test]'
	touch $(STAMP)

site: $(STAMP)
	$(VENV)/bin/dossier build cases --out site

# The whole suite on every logical CPU (pytest-xdist); tests that must not run beside each
# other are grouped (xdist_group, see tests/conftest.py).  TEST_WORKERS=0 runs it in
# one process, TEST_WORKERS=2 on two workers.
TEST_WORKERS ?= logical

test: $(STAMP)
	@if command -v npm >/dev/null 2>&1; then npm ci --prefix tools/axe --no-audit --no-fund --silent; else echo "note: npm not found; the accessibility checks (tests/system/test_accessibility.py) will skip"; fi
	$(PY) -m pytest -q -n $(TEST_WORKERS) --dist loadgroup

# The edit loop: everything but the tests marked slow (site builds, PDFs, the browser,
# kills, fuzzing), in one process: measured, two workers took more CPU (each imports
# the heavy libraries) and no less time for these many small tests.
test-fast: $(STAMP)
	$(PY) -m pytest -q -m "not slow"

screens: site
	$(PY) tools/screens.py

bench: $(STAMP)
	$(PY) bench/run.py

clean:
	rm -rf site .pytest_cache
