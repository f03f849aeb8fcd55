# Polyadic: set-up, build and tests.
#
#   make demo   local virtual environment + JupyterLab + the extension (development mode),
#               then JupyterLab on demo/greenhouse.ipynb
#   make test   jest, pytest and the browser tests (Playwright + Debian's Chromium)
#
# Everything is installed into this directory: .venv (Python) and node_modules (npm).
# Nothing downloads a browser: Chromium is Debian's package, installed with apt-get when missing.
# `make help` lists the other targets.

SHELL := /bin/bash
.SHELLFLAGS := -eu -o pipefail -c
.DEFAULT_GOAL := help
MAKEFLAGS += --no-print-directory

PYTHON ?= python3
VENV ?= .venv
VENV_BIN := $(abspath $(VENV))/bin
VENV_PY := $(VENV_BIN)/python
CHROMIUM ?= /usr/bin/chromium
# Extra arguments for `jupyter lab` in `make demo`, e.g. LAB_ARGS="--no-browser --port=8899".
LAB_ARGS ?=
# Where the runners' logs and the browser-test artifacts go (gitignored).
ARTIFACTS := artifacts

# npm scripts call `jupyter labextension build`: use the one in the virtual environment.
export PATH := $(VENV_BIN):$(PATH)
# No tool may download a browser.
export PLAYWRIGHT_SKIP_BROWSER_DOWNLOAD := 1
export DEBIAN_FRONTEND := noninteractive
# pip would otherwise prompt or check for a newer pip.
export PIP_NO_INPUT := 1
export PIP_DISABLE_PIP_VERSION_CHECK := 1

PY_TEST_STAMP := $(VENV)/.polyadic-test
PY_DEMO_STAMP := $(VENV)/.polyadic-demo
NPM_STAMP := node_modules/.polyadic-npm-ci

# One clear line when a registry cannot be reached, instead of a page of retries.
define check_npm_registry
	if ! timeout 60 npm ping --fetch-timeout=20000 --fetch-retries=1 >/dev/null 2>&1; then \
	  echo "error: cannot reach the npm registry (npm ping failed): installing needs network access to it" >&2; \
	  exit 1; \
	fi
endef
define check_python_index
	if ! timeout 90 "$(VENV_PY)" -m pip index versions pip --timeout 20 --retries 1 >/dev/null 2>&1; then \
	  echo "error: cannot reach the Python package index (pip index failed): installing needs network access to it" >&2; \
	  exit 1; \
	fi
endef

.PHONY: help
help:
	@echo "make demo         set up everything, then open JupyterLab on demo/greenhouse.ipynb"
	@echo "make test         set up everything, build, run jest + pytest + browser tests"
	@echo "make install      virtual environment, Python and npm packages, Chromium check"
	@echo "make build        TypeScript, CLI bundle and the JupyterLab extension (development mode)"
	@echo "make test-js      jest only          make test-py   pytest only"
	@echo "make test-ui      browser tests only (screenshots in $(ARTIFACTS)/ui/)"
	@echo "make check-package  build a wheel from a clean export, install it in a scratch"
	@echo "                  environment, check 'jupyter labextension list'"
	@echo "make clean        remove build output and artifacts   make distclean  also .venv, node_modules"

# ---------------------------------------------------------------------------------------------
# Set-up

$(VENV_PY):
	@command -v "$(PYTHON)" >/dev/null 2>&1 || { \
	  echo "error: $(PYTHON) not found: install Python 3.9 or newer (Debian: apt-get install python3)" >&2; exit 1; }
	@"$(PYTHON)" -c 'import ensurepip, venv' >/dev/null 2>&1 || { \
	  echo "error: $(PYTHON) cannot create virtual environments (Debian: apt-get install python3-venv)" >&2; exit 1; }
	@echo "--- creating $(VENV) with $$(command -v $(PYTHON))"
	@"$(PYTHON)" -m venv "$(VENV)" || { rm -rf "$(VENV)"; \
	  echo "error: '$(PYTHON) -m venv' failed (Debian: apt-get install python3-venv)" >&2; exit 1; }

# SKIP_JUPYTER_BUILDER: the npm install and build are done by the targets below, once.
# Both registries are checked before either install starts, so a machine without network
# stops at once with one line.
$(PY_TEST_STAMP): pyproject.toml | $(VENV_PY)
	@$(check_npm_registry)
	@$(check_python_index)
	@echo "--- pip install -e .[test]"
	@SKIP_JUPYTER_BUILDER=1 .ci/logged "$(ARTIFACTS)/logs/pip-install-test.log" "pip install -e .[test]" \
	  "the Python package index" "$(VENV_PY)" -m pip install -e ".[test]"
	@touch "$@"

$(PY_DEMO_STAMP): pyproject.toml | $(VENV_PY)
	@$(check_npm_registry)
	@$(check_python_index)
	@echo "--- pip install -e .[demo]"
	@SKIP_JUPYTER_BUILDER=1 .ci/logged "$(ARTIFACTS)/logs/pip-install-demo.log" "pip install -e .[demo]" \
	  "the Python package index" "$(VENV_PY)" -m pip install -e ".[demo]"
	@touch "$@"

$(NPM_STAMP): package.json package-lock.json
	@command -v npm >/dev/null 2>&1 || { echo "error: npm not found: install Node.js 20 with npm" >&2; exit 1; }
	@$(check_npm_registry)
	@echo "--- npm ci"
	@.ci/logged "$(ARTIFACTS)/logs/npm-ci.log" "npm ci" "the npm registry" npm ci --no-audit --no-fund
	@touch "$@"

# Debian's Chromium for the browser tests; apt-get as root, or through sudo when allowed.
.PHONY: chromium
chromium:
	@if [ ! -x "$(CHROMIUM)" ]; then \
	  if [ "$$(id -u)" = 0 ]; then SUDO=; \
	  elif command -v sudo >/dev/null 2>&1 && sudo -n true 2>/dev/null; then SUDO=sudo; \
	  else echo "error: Chromium is missing at $(CHROMIUM): install it with 'sudo apt-get install chromium'" >&2; exit 1; fi; \
	  command -v apt-get >/dev/null 2>&1 || { \
	    echo "error: Chromium is missing at $(CHROMIUM) and apt-get is not available to install it" >&2; exit 1; }; \
	  echo "--- apt-get install chromium"; \
	  $$SUDO apt-get update -qq && $$SUDO apt-get install -y -qq --no-install-recommends chromium >/dev/null || { \
	    echo "error: apt-get could not install chromium (see the messages above)" >&2; exit 1; }; \
	fi
	@"$(CHROMIUM)" --version 2>/dev/null | head -n 1

# A Java 17 runtime for the Spark tests (pyspark runs Spark in a JVM); apt-get as root, else one line.
.PHONY: java
java:
	@if ! command -v java >/dev/null 2>&1; then \
	  if [ "$$(id -u)" = 0 ] && command -v apt-get >/dev/null 2>&1; then \
	    echo "--- apt-get install openjdk-17-jre-headless"; \
	    apt-get update -qq && apt-get install -y -qq --no-install-recommends openjdk-17-jre-headless >/dev/null || { \
	      echo "error: apt-get could not install openjdk-17-jre-headless (see the messages above)" >&2; exit 1; }; \
	  else echo "error: java is missing: the Spark tests need it (Debian: apt-get install openjdk-17-jre-headless)" >&2; exit 1; fi; \
	fi

.PHONY: install install-demo
install: $(PY_TEST_STAMP) $(NPM_STAMP) chromium java
install-demo: $(PY_DEMO_STAMP) $(NPM_STAMP)

# ---------------------------------------------------------------------------------------------
# Build: TypeScript, the CLI bundle, the federated extension; then link it into JupyterLab.

.PHONY: build _build
build: $(PY_TEST_STAMP) $(NPM_STAMP)
	@$(MAKE) _build
_build:
	@echo "--- npm run build"
	@npm run --silent build
	@"$(VENV_BIN)/jupyter" labextension develop . --overwrite >/dev/null
	@"$(VENV_BIN)/jupyter" labextension list 2>&1 | grep -F jupyterlab-polyadic

# ---------------------------------------------------------------------------------------------
# Tests. `make test` runs every suite even when one fails, prints each runner's summary line,
# and fails if any suite failed.

.PHONY: test test-js test-py test-ui run-jest run-pytest run-playwright
test: install
	@mkdir -p "$(ARTIFACTS)/logs"
	@rm -f $(ARTIFACTS)/logs/{jest,pytest,playwright}.log
	@status=0; \
	$(MAKE) _build || { status=1; echo "error: the build failed; running the suites anyway" >&2; }; \
	$(MAKE) run-jest || status=1; \
	$(MAKE) run-pytest || status=1; \
	$(MAKE) run-playwright || status=1; \
	echo; echo "=== summary"; \
	show() { printf '%-12s%s\n' "$$1" "$${2:-no summary line (the runner stopped early; see its output above)}"; }; \
	show jest: "$$(grep -E '^Tests:' $(ARTIFACTS)/logs/jest.log 2>/dev/null | tail -n 1 | tr -s ' ' || true)"; \
	show pytest: "$$(grep -E '^=+ .*(passed|failed|error|no tests ran).* =+$$' $(ARTIFACTS)/logs/pytest.log 2>/dev/null | tail -n 1 | tr -d '=' | sed 's/^ *//; s/ *$$//' || true)"; \
	show playwright: "$$(grep -E '^ +[0-9]+ (passed|failed|flaky|skipped|did not run|interrupted)' $(ARTIFACTS)/logs/playwright.log 2>/dev/null | sed 's/^ *//' | paste -sd ',' - || true)"; \
	if [ $$status = 0 ]; then echo "all suites passed"; else echo "error: some suites failed" >&2; fi; \
	exit $$status

test-js: build
	@mkdir -p "$(ARTIFACTS)/logs"
	@$(MAKE) run-jest
test-py: build
	@mkdir -p "$(ARTIFACTS)/logs"
	@$(MAKE) run-pytest
test-ui: build chromium
	@mkdir -p "$(ARTIFACTS)/logs"
	@$(MAKE) run-playwright

run-jest:
	@echo "--- jest"
	@npx jest --ci 2>&1 | tee "$(ARTIFACTS)/logs/jest.log"

run-pytest:
	@echo "--- pytest"
	@"$(VENV_BIN)/pytest" test/python 2>&1 | tee "$(ARTIFACTS)/logs/pytest.log"

run-playwright:
	@echo "--- playwright (screenshots in $(ARTIFACTS)/ui/)"
	@npx tsc --noEmit -p test/ui/tsconfig.json
	@npx playwright test -c test/ui/playwright.config.ts 2>&1 | tee "$(ARTIFACTS)/logs/playwright.log"

# ---------------------------------------------------------------------------------------------
# Demo

.PHONY: demo
demo: install-demo
	@if [ "$${CI:-}" = true ]; then echo "error: make demo starts an interactive JupyterLab; it does not run in CI" >&2; exit 1; fi
	@$(MAKE) _build
	@if [ -f demo/generate.py ]; then echo "--- python demo/generate.py"; "$(VENV_PY)" demo/generate.py; fi
	@test -f demo/greenhouse.ipynb || { echo "error: demo/greenhouse.ipynb is missing" >&2; exit 1; }
	@echo "--- jupyter lab demo/greenhouse.ipynb (Ctrl+C to stop)"
	@# JupyterLab refuses to run as root without --allow-root; containers often only have root.
	@"$(VENV_BIN)/jupyter" lab demo/greenhouse.ipynb --ServerApp.ip=127.0.0.1 \
	  $$( [ "$$(id -u)" = 0 ] && echo --allow-root ) $(LAB_ARGS)

# ---------------------------------------------------------------------------------------------
# Packaging check: `pip install .` from a clean export must give an extension that JupyterLab
# lists as enabled and OK, with no JupyterLab rebuild.

.PHONY: check-package
check-package: $(VENV_PY)
	@bash .ci/check-package "$(PYTHON)"

.PHONY: clean distclean
clean:
	rm -rf lib tsconfig.tsbuildinfo polyadic/labextension bin/polyadic.cjs bin/polyadic-worker.cjs "$(ARTIFACTS)" dist
distclean: clean
	rm -rf "$(VENV)" node_modules
