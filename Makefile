# hipeq developer targets. Every target creates .venv and installs the package on first use.
PY      ?= python3
VENV    := .venv
BIN     := $(VENV)/bin
STAMP   := $(VENV)/.installed
# numba does not notice when a kernel in another module changes: key the cache by the kernel sources (and by
# data/heat_capacity.py, whose TRC closed forms data/_kernels.py compiles)
KERNEL_HASH := $(shell cat src/hipeq/_*.py src/hipeq/*/_*.py src/hipeq/data/heat_capacity.py 2>/dev/null | sha1sum | cut -c1-12)
export NUMBA_CACHE_DIR ?= $(CURDIR)/.numba_cache/$(KERNEL_HASH)

.PHONY: test demo bench soak clean

$(STAMP): pyproject.toml
	test -d $(VENV) || $(PY) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[test,bench]"
	touch $(STAMP)

test: $(STAMP)
	$(BIN)/python -m pytest -q -n 2 -m "not soak"

demo: $(STAMP)
	$(BIN)/hipeq run examples/demo_plant.toml

bench: $(STAMP)
	$(BIN)/python benchmarks/run.py

soak: $(STAMP)
	HYPOTHESIS_PROFILE=soak $(BIN)/python -m pytest -q -n 2 -m soak tests/properties

clean:
	rm -rf $(VENV) .numba_cache .pytest_cache .hypothesis
