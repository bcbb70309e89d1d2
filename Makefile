# Two commands on a fresh clone: `make demo` and `make test`.
PY ?= python3
VENV := .venv
BIN := $(VENV)/bin
# one stamp per install: the core (what `pinlib check` and `pinlib report` need), then
# the test and notebook extras on top of it
CORE := $(VENV)/.installed-core
FULL := $(VENV)/.installed-test
DEMO := workbooks/designs/demo-board.toml
PACKAGING := pyproject.toml setup.py MANIFEST.in

.PHONY: demo test bench lint clean

# compat mode: the checkout goes on sys.path through a .pth file, as an installed
# package would be found, rather than through an import hook on every start
$(CORE): $(PACKAGING)
	test -x $(BIN)/python || $(PY) -m venv $(VENV)
	$(BIN)/python -m pip install -q --upgrade pip
	$(BIN)/python -m pip install -q -e . --config-settings editable_mode=compat
	touch $(CORE)

$(FULL): $(CORE)
	$(BIN)/python -m pip install -q -e ".[test,notebook]" --config-settings editable_mode=compat
	touch $(FULL)

demo: $(CORE)
	$(BIN)/pinlib check $(DEMO); s=$$?; [ $$s -le 1 ] || exit $$s
	@echo "pinlib is $(BIN)/pinlib: '. $(BIN)/activate' puts it on the PATH of this shell"

test: $(FULL)
	$(BIN)/python -m pytest -q

bench: $(FULL)
	$(BIN)/python -m tests.bench

lint: $(FULL)
	$(BIN)/python -m ruff check pinlib tests setup.py

clean:
	rm -rf $(VENV) build *.egg-info
