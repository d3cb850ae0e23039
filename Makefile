# The two everyday commands: `make demo` and `make test`. Each sets up its own virtualenv.
VENV   := .venv
PY     := $(VENV)/bin/python
STAMP  := $(VENV)/.installed-$(shell python3 -c "import hashlib,sys;print(hashlib.sha1(open('pyproject.toml','rb').read()).hexdigest()[:12])")

.PHONY: demo test setup

setup: $(STAMP)

$(STAMP): pyproject.toml
	python3 -m venv $(VENV)
	$(PY) -m pip install --quiet --disable-pip-version-check --upgrade pip
	$(PY) -m pip install --quiet --disable-pip-version-check -e '.[test]'
	rm -f $(VENV)/.installed-* && touch $(STAMP)

demo: $(STAMP)
	$(VENV)/bin/hunchbook --demo

test: $(STAMP)
	$(VENV)/bin/ruff check src tests benchmarks
	$(VENV)/bin/lint-imports
	QT_QPA_PLATFORM=offscreen $(PY) -m pytest
