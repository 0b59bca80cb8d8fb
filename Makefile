# nudge: build, test and benchmark. `make test` is what CI runs.
SHELL := /bin/bash
PY    ?= /usr/bin/python3
BIN   := $(CURDIR)/out/nudge
JP    := $(CURDIR)/out/jupyter

RM    := kernel/testdata/rendermime

.PHONY: demo build deps test gotest race fuzz jupyter-test notebooks-test rendermime-test browser-test bench bench-kernels clean

demo:
	go run ./kernel/cmd/nudge demo

build:
	go build -o $(BIN) ./kernel/cmd/nudge

# Every test: Go tests, the race detector on the concurrent packages, a short
# fuzz run of each parser (the CSV and notebook readers too), of the compiler,
# of the interpreter on whole cells and of the kernel's wire reader (frames,
# handshake, messages) and of the evaluation passes against each other
# (FuzzEvalPaths), the Jupyter conformance suite, every notebook
# executed through nbconvert, JupyterLab's rendermime registry on the
# kernel's bundles, and a real browser on the classic Notebook and on the
# what-if panel. The Debian packages they need are installed first when
# missing (as root; otherwise the command to run is printed).
test: deps gotest race fuzz jupyter-test notebooks-test rendermime-test browser-test

deps:
	bash .ci/deps

gotest:
	go vet ./...
	go test -count=1 ./...
	GOEXPERIMENT=simd go vet ./sens/tape/
	GOEXPERIMENT=simd go test -count=1 ./sens/tape/

race:
	go test -count=1 -race ./kernel/... ./sens/... ./plotting/

# Fuzz budgets are counts of executions, not durations: a duration's deadline
# can race the workers and fail with "context deadline exceeded" and no
# failing input under load (a known race in Go's fuzzing coordinator, Go 1.26).
fuzz:
	go test -run='^$$' -fuzz='^FuzzParse$$' -fuzztime=250000x ./sens/syntax/
	go test -run='^$$' -fuzz='^FuzzParse$$' -fuzztime=500000x ./sens/unit/
	go test -run='^$$' -fuzz='^FuzzCompile$$' -fuzztime=150000x ./sens/
	go test -run='^$$' -fuzz='^FuzzExecute$$' -fuzztime=60000x ./kernel/
	go test -run='^$$' -fuzz='^FuzzReadMsg$$' -fuzztime=500000x ./kernel/jupyter/internal/zsock/
	go test -run='^$$' -fuzz='^FuzzHandshake$$' -fuzztime=400000x ./kernel/jupyter/internal/zsock/
	go test -run='^$$' -fuzz='^FuzzParseMessage$$' -fuzztime=500000x ./kernel/jupyter/
	go test -run='^$$' -fuzz='^FuzzReadTable$$' -fuzztime=200000x ./sens/
	go test -run='^$$' -fuzz='^FuzzRead$$' -fuzztime=100000x ./kernel/notebook/
	go test -run='^$$' -fuzz='^FuzzEvalPaths$$' -fuzztime=50000x ./sens/tape/

$(JP)/share/jupyter/kernels/nudge/kernel.json: build
	rm -rf $(JP) && $(BIN) install --prefix $(JP)

jupyter-test: $(JP)/share/jupyter/kernels/nudge/kernel.json
	cd kernel/testdata/jupyter && JUPYTER_PATH=$(JP)/share/jupyter $(PY) -m unittest -v test_conformance test_live
	JUPYTER_PATH=$(JP)/share/jupyter $(PY) kernel/testdata/jupyter/console_session.py

notebooks-test: $(JP)/share/jupyter/kernels/nudge/kernel.json
	rm -rf out/notebooks && mkdir -p out/notebooks
	for nb in notebooks/*.ipynb; do \
	  JUPYTER_PATH=$(JP)/share/jupyter $(PY) -m nbconvert --to html --execute \
	    --ExecutePreprocessor.kernel_name=nudge --ExecutePreprocessor.timeout=300 \
	    --output-dir out/notebooks "$$nb" || exit 1; \
	done

# JupyterLab's own code (from npm, versions pinned by package-lock.json) picks
# the representation it shows of every output the kernel sends.
rendermime-test: $(RM)/node_modules/.package-lock.json
	mkdir -p out
	NUDGE_BUNDLES=$(CURDIR)/out/bundles.json go test -count=1 -run '^TestFrontEndBundles$$' ./kernel/
	node --import ./$(RM)/register.mjs $(RM)/check.mjs out/bundles.json notebooks/*.ipynb

$(RM)/node_modules/.package-lock.json: $(RM)/package.json $(RM)/package-lock.json
	cd $(RM) && npm ci --no-audit --no-fund

# Headless Chromium (Debian's, through python3-selenium and chromium-driver)
# on the classic Notebook running a demo notebook with the nudge kernel, and
# on the what-if panel in an HTML file opened from disk, its values checked
# against nudge exec --json. Screenshots and the HTML go to out/browser.
browser-test: $(JP)/share/jupyter/kernels/nudge/kernel.json
	rm -rf out/browser
	cd kernel/testdata/browser && JUPYTER_PATH=$(JP)/share/jupyter NUDGE=$(BIN) $(PY) -m unittest -v test_browser

bench:
	GOEXPERIMENT=simd go run ./kernel/cmd/nudge bench   # both batched rows: pure Go and vector kernels

# Start-up and round-trip times of nudge against ipykernel, side by side.
bench-kernels: $(JP)/share/jupyter/kernels/nudge/kernel.json
	cd kernel/testdata/jupyter && JUPYTER_PATH=$(JP)/share/jupyter $(PY) bench_kernels.py

clean:
	rm -rf out
