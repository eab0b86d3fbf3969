# Build and test entry points for dcchar.
#   make venv     create .venv and install dcchar with its widget and dev extras
#   make browser  install Debian's Chromium and a font for the browser tests (root)
#   make test     run the whole test suite (unit, notebook and real-browser tests)
#   make demo     run the demonstration
#   make bench    run every benchmarks/bench_*.py
#   make clean    remove the venv, test artifacts and caches

SHELL := /bin/bash
PYTHON ?= python3
VENV := .venv
VENV_STAMP := $(VENV)/.dcchar-installed
ARTIFACTS := test-artifacts
CHROMIUM := /usr/bin/chromium
DEJAVU := /usr/share/fonts/truetype/dejavu/DejaVuSans.ttf
# Notebooks checked by nbval; only those that exist are passed to pytest.
NOTEBOOKS := $(wildcard notebooks/*.ipynb)

export PIP_DISABLE_PIP_VERSION_CHECK := 1

.PHONY: venv browser test demo bench clean

venv: $(VENV_STAMP)

$(VENV_STAMP): pyproject.toml
	@if ! $(PYTHON) -c 'import ensurepip' 2>/dev/null; then \
	  if [ "$$(id -u)" != 0 ]; then \
	    echo "make venv: $(PYTHON) has no venv/ensurepip support; install python3-venv (as root: apt-get install python3-venv)" >&2; \
	    exit 1; \
	  fi; \
	  apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y python3-venv; \
	fi
	test -x $(VENV)/bin/pip || $(PYTHON) -m venv --clear $(VENV)
	$(VENV)/bin/pip install -e '.[widgets,dev]'
	touch $@

browser:
	@if [ -x $(CHROMIUM) ] && [ -e $(DEJAVU) ]; then \
	  echo "make browser: $(CHROMIUM) and DejaVu fonts are present"; \
	elif [ "$$(id -u)" != 0 ]; then \
	  echo "make browser: $(CHROMIUM) (Debian package chromium) or fonts-dejavu-core is missing," >&2; \
	  echo "and installing them needs root: run 'make browser' as root, or" >&2; \
	  echo "'apt-get update && apt-get install chromium fonts-dejavu-core' as root." >&2; \
	  exit 1; \
	else \
	  apt-get update && DEBIAN_FRONTEND=noninteractive apt-get install -y chromium fonts-dejavu-core; \
	fi

# Per-user Jupyter, IPython and matplotlib state is redirected to a temporary
# folder of this run. MPLBACKEND=Agg only sets the default backend: notebooks
# that say %matplotlib widget (or inline) still get the one they ask for.
test: venv browser
	@mkdir -p $(ARTIFACTS); \
	tmp=$$(mktemp -d "$(CURDIR)/$(ARTIFACTS)/env.XXXXXX"); \
	trap 'rm -rf "$$tmp"' EXIT; \
	for d in config runtime data ipython mpl; do mkdir -p "$$tmp/$$d"; done; \
	export JUPYTER_CONFIG_DIR="$$tmp/config" JUPYTER_RUNTIME_DIR="$$tmp/runtime" \
	  JUPYTER_DATA_DIR="$$tmp/data" IPYTHONDIR="$$tmp/ipython" MPLCONFIGDIR="$$tmp/mpl" \
	  JUPYTER_PLATFORM_DIRS=1 PYDEVD_DISABLE_FILE_VALIDATION=1 MPLBACKEND=Agg \
	  PATH="$(CURDIR)/$(VENV)/bin:$$PATH"; \
	rc=0; \
	$(VENV)/bin/pytest --nbval-lax --nbval-current-env --nbval-sanitize-with nbval_sanitize.cfg \
	  tests $(NOTEBOOKS) || rc=$$?; \
	if [ $$rc = 5 ]; then echo "make test: pytest collected no tests" >&2; fi; \
	exit $$rc

demo: venv
	$(VENV)/bin/python -m dcchar demo

bench: venv
	@set -e; found=0; \
	for f in benchmarks/bench_*.py; do \
	  [ -e "$$f" ] || continue; found=1; \
	  echo "== $$f"; \
	  $(VENV)/bin/python "$$f"; \
	done; \
	if [ $$found = 0 ]; then echo "make bench: no benchmarks/bench_*.py yet"; fi

clean:
	rm -rf $(VENV) $(ARTIFACTS) .pytest_cache .hypothesis build dcchar.egg-info
	find . -name __pycache__ -type d -prune -not -path './.git/*' -exec rm -rf {} +
