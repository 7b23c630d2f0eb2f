# bitmend: `make` sets up and runs the main job on the bundled examples; `make test` runs the test suite.
PYTHON  ?= python3
VENV    := .venv
BIN     := $(VENV)/bin
SPECS   := $(sort $(wildcard examples/*.toml))

.PHONY: all generate firmware test fuzz bench check-generated clean

all: generate firmware

$(BIN)/python:
	$(PYTHON) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip

# Stamps: reinstall when the package metadata changes.
$(VENV)/.installed: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e .
	touch $@

$(VENV)/.installed-test: pyproject.toml | $(BIN)/python
	$(BIN)/python -m pip install --quiet -e '.[test]'
	touch $@ $(VENV)/.installed

generate: $(VENV)/.installed
	$(BIN)/bitmend generate $(SPECS) -o generated

firmware: $(VENV)/.installed
	$(MAKE) -C examples/firmware BITMEND=$(CURDIR)/$(BIN)/bitmend run

# The suite runs on every core (pytest-xdist); TEST_JOBS=1 runs it in one process.
TEST_JOBS ?= auto
test: $(VENV)/.installed-test
	$(BIN)/python -m pytest -n $(TEST_JOBS) --dist worksteal

# The fuzz tests of the suite, run long: libFuzzer inputs per C target, examples per spec property.
FUZZ_RUNS     ?= 300000
FUZZ_EXAMPLES ?= 2000
fuzz: $(VENV)/.installed-test
	BITMEND_FUZZ_RUNS=$(FUZZ_RUNS) BITMEND_FUZZ_EXAMPLES=$(FUZZ_EXAMPLES) \
		$(BIN)/python -m pytest tests/test_fuzz_c.py tests/test_fuzz_spec.py

bench: $(VENV)/.installed-test
	$(BIN)/python bench/run.py

check-generated: $(VENV)/.installed
	$(BIN)/bitmend generate --check $(SPECS) -o generated

clean:
	rm -rf $(VENV) examples/firmware/build
