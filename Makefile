# sustain: threshold power from ride files. See README.md.
GO ?= go

.PHONY: build test bench demo fuzz accuracy

build:
	$(GO) build -o bin/sustain ./cmd/sustain

# vet, then every test: with the race detector for the packages that run
# goroutines (scans, curves on a pool, the store), and for the command's
# tests that drive them end to end at once (two runs on one store, a
# hostile folder, windows first, many skipped files); the command's other
# tests and the single-threaded numerics (estimate, the accuracy ground
# truth) without it, where it only slows the runs (every test runs).
RACE_PKGS = ./ingest/... ./powerduration/... ./internal/store/...
CMD_RACE = ^(TestStore.*|TestHostileFolder|TestExportArchiveOnce|TestWindowFirst|TestMessagesOnStderr)$$
PLAIN_PKGS = ./cmd/... ./view/... ./estimate/... ./lactate/... ./internal/accuracy/... ./internal/synth/... ./internal/export/... ./internal/athletes/...
test:
	$(GO) vet ./...
	$(GO) test -race -count=1 -timeout 30m $(RACE_PKGS)
	$(GO) test -race -count=1 -timeout 30m -run '$(CMD_RACE)' ./cmd/...
	$(GO) test -count=1 -timeout 30m $(PLAIN_PKGS)

# every benchmark, then the ratios the targets are stated in
bench:
	$(GO) test -run '^$$' -bench . -benchmem ./... | tee bench.out
	@awk -f scripts/bench-report.awk bench.out
	@rm -f bench.out

# an invented season, written to a temporary folder and analysed
demo:
	$(GO) run ./cmd/sustain demo

# a short run of each fuzz test (crashers land in the package's testdata/fuzz)
fuzz:
	for f in FuzzTCX FuzzGPX FuzzCSV FuzzFIT FuzzClean; do $(GO) test ./ingest -run '^$$' -fuzz "^$$f$$" -fuzztime 30s || exit 1; done
	$(GO) test ./lactate -run "^$$" -fuzz "^FuzzReadSteps$$" -fuzztime 30s
	$(GO) test ./internal/store -run "^$$" -fuzz "^FuzzStoredRow$$" -fuzztime 30s

# how well the estimates recover the truth of invented seasons of every
# kind and truth model (a report, like bench; not a timed test)
accuracy:
	$(GO) run ./internal/accuracy/report -seeds 20
