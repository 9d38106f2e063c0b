# hipeq developer targets. Every target creates .venv and installs the package on first use.
PY      ?= python3
VENV    := .venv
BIN     := $(VENV)/bin
STAMP   := $(VENV)/.installed
# numba's cache: hipeq chooses the folder itself and keys it by the kernel sources (src/hipeq/_cache.py), the same
# folder for make targets and plain runs; nothing to set here (see DEVELOPERS.md, "The compiled-code cache")

.PHONY: test demo bench soak clean browser validation-docs validation-docs-check

$(STAMP): pyproject.toml
	test -d $(VENV) || $(PY) -m venv $(VENV)
	$(BIN)/python -m pip install --quiet --upgrade pip
	$(BIN)/python -m pip install --quiet -e ".[test,bench]"
	touch $(STAMP)

test: $(STAMP)
	@sh tools/install-browser
	$(BIN)/python -m pytest -q -n 2 -m "not soak"

demo: $(STAMP)
	$(BIN)/hipeq demo --out demo-output

bench: $(STAMP)
	$(BIN)/python benchmarks/run.py

# every validation table of docs/ and the scoring figures, regenerated from the code (docs/tools/validation_docs.py);
# -check compares without writing (tests/validation/test_validation_docs.py compares the same blocks, the thermo
# cross-check table of docs/eos_validation.md with its rounding-level digits masked)
validation-docs: $(STAMP)
	$(BIN)/python docs/tools/validation_docs.py --eos

validation-docs-check: $(STAMP)
	$(BIN)/python docs/tools/validation_docs.py --eos --check

soak: $(STAMP)
	HYPOTHESIS_PROFILE=soak $(BIN)/python -m pytest -q -n 2 -m soak tests/properties

clean:
	rm -rf $(VENV) .numba_cache .pytest_cache .hypothesis

browser:
	sh tools/install-browser
