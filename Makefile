# The two set-up commands. Needs only Python 3.11+ and make.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
PORT ?= 5000
# `make test` spreads the tests over one worker process per core (pytest-xdist); TEST_WORKERS=0
# runs them in this one process, in order.
TEST_WORKERS ?= auto

.PHONY: run test bench install clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

# `make run` installs the project alone; `make test` adds the test extra (pytest, Playwright,
# ...). Each is redone when pyproject.toml changes.
$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e .
	touch $@

$(VENV)/.installed-test: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@ $(VENV)/.installed

install: $(VENV)/.installed

run: install
	$(BIN)/withstand init --with-demo
	@echo "Open http://127.0.0.1:$(PORT)/ and log in with a login listed above."
	@echo "The command line is $(BIN)/withstand (or activate the venv: . $(BIN)/activate)."
	$(BIN)/withstand serve --host 127.0.0.1 --port $(PORT)

test: $(VENV)/.installed-test
	$(BIN)/python -m pytest -n $(TEST_WORKERS)

bench: $(VENV)/.installed-test
	$(BIN)/python -m bench

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache
