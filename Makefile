# Tidemark: two commands do all the set-up.  `make run` and `make test`.
PYTHON ?= python3
VENV   := .venv
BIN    := $(VENV)/bin
STAMP  := $(VENV)/.installed-$(shell cat pyproject.toml | cksum | cut -d' ' -f1)
PORT   ?= 8630
# `make run` serves the fictional demo from a store file of its own (never the store for real data).
DEMO_STORE ?= $(HOME)/.tidemark/demo.sqlite
# `make run` installs Tidemark alone; `make test` adds the test and PostgreSQL extras.
RUN_STAMP := $(VENV)/.run-installed-$(shell cat pyproject.toml | cksum | cut -d' ' -f1)

.PHONY: run test install demo bench lint clean

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

$(STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e '.[test,postgres]'
	rm -f $(VENV)/.installed-*
	touch $(STAMP)

install: $(STAMP)

$(RUN_STAMP): $(BIN)/python pyproject.toml
	$(BIN)/python -m pip install --quiet -e .
	rm -f $(VENV)/.run-installed-*
	touch $(RUN_STAMP)

run: $(RUN_STAMP)
	$(BIN)/tidemark demo --load --store $(DEMO_STORE)
	$(BIN)/tidemark serve --port $(PORT) --store $(DEMO_STORE)

# ruff (style and likely bugs) and mypy (types) over the four packages; mypy keeps an incremental
# cache in .mypy_cache/, so a second run takes a few seconds.
LINTED := analysis store dashboard tidemark

lint: install
	$(BIN)/ruff check $(LINTED)
	$(BIN)/mypy $(LINTED)

test: install lint
	$(BIN)/python -m pytest $(PYTEST_ARGS)

demo: install
	$(BIN)/tidemark demo

bench: install
	$(BIN)/python benchmarks/run_all.py

clean:
	rm -rf $(VENV) .pytest_cache .mypy_cache .ruff_cache test-artifacts
