# sustain: threshold power from ride files. See README.md.
GO ?= go

.PHONY: build test bench demo fuzz

build:
	$(GO) build -o bin/sustain ./cmd/sustain

# vet, then every test with the race detector (scans run in parallel).
test:
	$(GO) vet ./...
	$(GO) test -race -count=1 ./...

# every benchmark, then the ratios the targets are stated in
bench:
	$(GO) test -run '^$$' -bench . -benchmem ./... | tee bench.out
	@awk '/^Benchmark/ { sub(/-[0-9]+$$/, "", $$1); ns[$$1] = $$3; for (i = 4; i <= NF; i++) if ($$(i+1) == "peak-MB") peak = $$i } \
	END { \
	  printf "\ningest / bare FIT decode, one 3-h file:  %.2f (target <= 1.15)\n", ns["BenchmarkIngestFIT"] / ns["BenchmarkFITDecode"]; \
	  printf "scan / bare FIT decode, 100 files:       %.2f (target <= 1.25)\n", ns["BenchmarkScanNoStore"] / ns["BenchmarkBareFITDecode"]; \
	  printf "  with the rides' curves:                %.2f\n", ns["BenchmarkScanNoStoreWithCurves"] / ns["BenchmarkBareFITDecode"]; \
	  printf "cold / warm store scan, 100 files:       %.1fx (target >= 20x)\n", ns["BenchmarkStoreCold"] / ns["BenchmarkStoreWarm"]; \
	  printf "peak heap, 1000 files through the store: %.0f MB (target <= 150)\n", peak; \
	  printf "curve, 6-h ride: %.1f ms (target <= 10); 2-h ride: %.1f ms (target <= 3)\n", ns["BenchmarkCurve6h"] / 1e6, ns["BenchmarkCurve2h"] / 1e6 }' bench.out
	@rm -f bench.out

# an invented season, written to a temporary folder and analysed
demo:
	$(GO) run ./cmd/sustain demo

# a short run of each fuzz test (crashers land in the package's testdata/fuzz)
fuzz:
	for f in FuzzTCX FuzzCSV FuzzFIT FuzzClean; do $(GO) test ./ingest -run '^$$' -fuzz "^$$f$$" -fuzztime 30s || exit 1; done
