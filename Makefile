# Two commands do everything on a fresh machine with Python 3.11+ and make:
#   make run    install the service into .venv and start it on 127.0.0.1:8000
#   make test   install the service and its test tools, then run the whole suite
# The service runs from this source tree (no build step); dependencies come
# only from the hash-pinned lock files under requirements/.

PYTHON ?= python3
VENV   := .venv
PY     := $(VENV)/bin/python
PIP    := $(PY) -m pip --disable-pip-version-check
# Client generators (tests/clients) in a venv of their own: openapi-python-client caps httpx below the service's pin.
GEN_VENV := .venv-generators
NODE_DIR := tests/clients/node

.PHONY: run test install install-test system-test-deps system-deploy-deps client-test-deps contract manifest lock bench load soak startup survival fuzz audit clean

$(VENV)/bin/python:
	$(PYTHON) -m venv $(VENV)

$(VENV)/.run-installed: requirements/run.lock | $(VENV)/bin/python
	$(PIP) install --quiet --require-hashes -r requirements/run.lock
	touch $@

$(VENV)/.test-installed: requirements/test.lock | $(VENV)/bin/python
	$(PIP) install --quiet --require-hashes -r requirements/test.lock
	touch $@ $(VENV)/.run-installed

install: $(VENV)/.run-installed

install-test: $(VENV)/.test-installed system-test-deps system-deploy-deps client-test-deps

$(GEN_VENV)/.installed: requirements/generators.lock
	$(PYTHON) -m venv $(GEN_VENV)
	$(GEN_VENV)/bin/python -m pip --disable-pip-version-check install --quiet --require-hashes -r requirements/generators.lock
	touch $@

# Node.js and npm (Debian packages, when absent) and the npm tools pinned in tests/clients/node/package-lock.json
# (Redocly, openapi-typescript, openapi-fetch, TypeScript), for tests/clients. None needs an install script.
# Redocly CLI is the 1.34 line: 2.x wants Node 20.19 or later, and Debian 12's nodejs is 18.20. TypeScript is the
# 5.x line, the one openapi-typescript 7 names as its peer.
$(NODE_DIR)/node_modules/.installed: $(NODE_DIR)/package-lock.json
	@{ command -v node && command -v npm; } >/dev/null 2>&1 || { \
	  echo "installing nodejs and npm (Debian packages) for the generated-client tests"; \
	  SUDO=$$( [ "$$(id -u)" = 0 ] || echo sudo ); \
	  $$SUDO apt-get update -qq && DEBIAN_FRONTEND=noninteractive $$SUDO apt-get install -y -qq nodejs npm >/dev/null; }
	cd $(NODE_DIR) && npm ci --ignore-scripts --no-audit --no-fund --loglevel=error
	touch $@

client-test-deps: $(GEN_VENV)/.installed $(NODE_DIR)/node_modules/.installed

# ngspice is the independent circuit oracle of tests/reference (Debian package).
system-test-deps:
	@command -v ngspice >/dev/null 2>&1 || { \
	  echo "installing ngspice (Debian package) for the reference tests"; \
	  SUDO=$$( [ "$$(id -u)" = 0 ] || echo sudo ); \
	  $$SUDO apt-get update -qq && DEBIAN_FRONTEND=noninteractive $$SUDO apt-get install -y -qq ngspice >/dev/null; }

# docker-compose (Debian package) checks deploy/compose.yaml against the Compose schema; no engine needed.
system-deploy-deps:
	@command -v docker-compose >/dev/null 2>&1 || { \
	  echo "installing docker-compose (Debian package) for the compose-file check"; \
	  SUDO=$$( [ "$$(id -u)" = 0 ] || echo sudo ); \
	  $$SUDO apt-get update -qq && DEBIAN_FRONTEND=noninteractive $$SUDO apt-get install -y -qq --no-install-recommends docker-compose >/dev/null; }

run: install
	$(PY) -m service

# The audit runs first, so pytest's summary stays the last line of the output.
test: install-test
	$(PY) tools/audit_locks.py
	AMPLINE_REQUIRE_NGSPICE=1 AMPLINE_REQUIRE_CLIENT_TOOLS=1 $(PY) -m pytest

# Known vulnerabilities in the locked dependencies (pip-audit). A vulnerability fails; an advisory service
# that cannot be reached prints "NOT checked" and fails only with AMPLINE_AUDIT_REQUIRED=1 (tools/audit_locks.py).
audit: $(VENV)/.test-installed
	$(PY) tools/audit_locks.py

# Regenerate the committed OpenAPI contract from the app.
contract: install
	$(PY) -m service.api.contract

# Record the SHA-256 of every data table (service/core/data/MANIFEST.sha256) after checking a new or corrected
# table against its source; start-up refuses any table file that differs from the manifest.
manifest: install
	$(PY) -m service.core.data.manifest --write

# Re-pin dependencies (needs network access to the package index).
lock: install-test
	$(PIP) install --quiet uv
	$(VENV)/bin/uv pip compile pyproject.toml --extra test --generate-hashes --python-version 3.11 --universal -o requirements/test.lock
	$(VENV)/bin/uv pip compile pyproject.toml --generate-hashes --python-version 3.11 --universal -c requirements/test.lock -o requirements/run.lock
	$(VENV)/bin/uv pip compile requirements/generators.in --generate-hashes --python-version 3.11 --universal -o requirements/generators.lock

bench: install-test
	$(PY) load_tests/bench_network.py

# Load tests of a real server on 127.0.0.1 (load_tests/load.py; figures in docs/performance.md).
load: $(VENV)/.test-installed
	$(PY) load_tests/load.py run

soak: $(VENV)/.test-installed
	$(PY) load_tests/load.py soak

startup: $(VENV)/.test-installed
	$(PY) load_tests/startup.py

# 10,000 hostile requests at a real server, then 1,000 of each costly shape of issue 21 (long strings, deep
# nesting, empty arrays, high-fill networks, slow headers); CI runs 1,000 of the first kind only, in
# tests/e2e/test_survival.py. Figures in docs/performance.md.
survival: $(VENV)/.test-installed
	$(PY) load_tests/survival.py --hostile 10000

# schemathesis (every phase, positive and negative, keys on) against a real server for FUZZ_SECONDS
# (tools/fuzz_server.py; figures in docs/performance.md). CI keeps its shorter in-process run.
FUZZ_SECONDS ?= 600
fuzz: $(VENV)/.test-installed
	$(PY) tools/fuzz_server.py --seconds $(FUZZ_SECONDS)

clean:
	rm -rf $(VENV) $(GEN_VENV) $(NODE_DIR)/node_modules .pytest_cache .hypothesis
