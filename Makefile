# hipeq developer targets. Every target creates .venv and installs the package on first use.
PY      ?= python3
VENV    := .venv
BIN     := $(VENV)/bin
STAMP   := $(VENV)/.installed
# numba's cache: hipeq chooses the folder itself and keys it by the kernel sources (src/hipeq/_cache.py), the same
# folder for make targets and plain runs; nothing to set here (see DEVELOPERS.md, "The compiled-code cache")

.PHONY: test demo bench soak clean browser validation-docs

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

# the validation tables and figures of docs/, regenerated through hipeq.score_models (docs/tools/validation_docs.py)
validation-docs: $(STAMP)
	$(BIN)/python docs/tools/validation_docs.py --eos

soak: $(STAMP)
	HYPOTHESIS_PROFILE=soak $(BIN)/python -m pytest -q -n 2 -m soak tests/properties

clean:
	rm -rf $(VENV) .numba_cache .pytest_cache .hypothesis

browser:
	sh tools/install-browser
