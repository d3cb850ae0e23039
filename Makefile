# The two everyday commands: `make demo` and `make test`. Each sets up its own virtualenv:
# `make demo` installs only what the window needs, `make test` adds the test tools.
VENV       := .venv
PY         := $(VENV)/bin/python
HASH       := $(shell python3 -c "import hashlib,sys;print(hashlib.sha1(open('pyproject.toml','rb').read()).hexdigest()[:12])")
STAMP      := $(VENV)/.installed-$(HASH)
DEMO_STAMP := $(VENV)/.demo-$(HASH)

.PHONY: demo test setup screenshots

setup: $(STAMP)

$(VENV)/bin/python:
	python3 -m venv $(VENV)
	$(PY) -m pip install --quiet --disable-pip-version-check --upgrade pip

$(STAMP): pyproject.toml $(VENV)/bin/python
	$(PY) -m pip install --quiet --disable-pip-version-check -e '.[test]'
	rm -f $(VENV)/.installed-* && touch $(STAMP)

$(DEMO_STAMP): pyproject.toml $(VENV)/bin/python
	$(PY) -m pip install --quiet --disable-pip-version-check -e .
	rm -f $(VENV)/.demo-* && touch $(DEMO_STAMP)

demo: $(DEMO_STAMP)
	$(VENV)/bin/hunchbook --demo

test: $(STAMP)
	$(VENV)/bin/ruff check src tests benchmarks
	$(VENV)/bin/lint-imports
	QT_QPA_PLATFORM=offscreen $(PY) -m pytest

# Every section of the demo desk at each window size the window is checked at, in
# docs/screenshots/<section>-<WxH>.png (idea 16 has a run), and the idea family of idea 11.
SIZES    := 1280x720 1440x900 1920x1080
SECTIONS := idea rules runs journal review
SHOT     := QT_QPA_PLATFORM=offscreen $(VENV)/bin/hunchbook --demo
screenshots: $(STAMP)
	for size in $(SIZES); do for section in $(SECTIONS); do \
	  $(SHOT) --idea 16 --section $$section --size $$size \
	    --screenshot docs/screenshots/$$section-$$size.png || exit 1; done; done
	$(SHOT) --idea 11 --section idea --size 1440x900 --screenshot docs/screenshots/family.png
