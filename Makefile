# Two commands on a fresh clone: `make demo` and `make test`.
PY ?= python3
VENV := .venv
BIN := $(VENV)/bin
STAMP := $(VENV)/.installed
DEMO := workbooks/designs/demo-board.toml

.PHONY: demo test bench lint clean

$(STAMP): pyproject.toml
	test -x $(BIN)/python || $(PY) -m venv $(VENV)
	$(BIN)/python -m pip install -q --upgrade pip
	# compat mode: the checkout goes on sys.path through a .pth file, as an installed
	# package would be found, rather than through an import hook on every start
	$(BIN)/python -m pip install -q -e ".[test,notebook]" --config-settings editable_mode=compat
	touch $(STAMP)

demo: $(STAMP)
	@if [ -f $(DEMO) ]; then $(BIN)/pinlib check $(DEMO); s=$$?; [ $$s -le 1 ] || exit $$s; \
	else $(BIN)/pinlib parts list; fi

test: $(STAMP)
	$(BIN)/python -m pytest -q

bench: $(STAMP)
	$(BIN)/python -m tests.bench

lint: $(STAMP)
	$(BIN)/python -m ruff check pinlib tests

clean:
	rm -rf $(VENV) build *.egg-info
