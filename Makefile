# The two set-up commands. Needs only Python 3.11+ and make.
PYTHON ?= python3
VENV := .venv
BIN := $(VENV)/bin
PORT ?= 5000

.PHONY: run test bench install clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

# Installs the project with its test extra; reinstalled when pyproject.toml changes.
$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@

install: $(VENV)/.installed

run: install
	$(BIN)/withstand init --with-demo
	@echo "Open http://127.0.0.1:$(PORT)/ and log in (demo logins above, e.g. steward / larkspur-steward)."
	$(BIN)/withstand serve --host 127.0.0.1 --port $(PORT)

test: install
	$(BIN)/python -m pytest

bench: install
	$(BIN)/python -m bench

clean:
	rm -rf $(VENV) build *.egg-info .pytest_cache
