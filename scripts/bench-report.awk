# Prints the ratios the benchmark targets are stated in (see the issues and
# the README), from `go test -bench` output.
/^Benchmark/ {
	name = $1
	sub(/-[0-9]+$/, "", name)
	ns[name] = $3
	for (i = 4; i < NF; i++) if ($(i + 1) == "peak-MB") peak = $i
	for (i = 4; i < NF; i++) if ($(i + 1) == "B/s-of-ride") budget[name] = $i
}
END {
	printf "\n"
	printf "FIT library decode / tolerant reader:    %.1fx (target >= 15x)\n", ns["BenchmarkFITDecode"] / ns["BenchmarkFITReader"]
	printf "ingest / bare FIT decode, one 3-h file:  %.2f (target <= 1.15)\n", ns["BenchmarkIngestFIT"] / ns["BenchmarkFITDecode"]
	printf "scan / bare FIT decode, 100 files:       %.2f (target <= 1.25)\n", ns["BenchmarkScanNoStore"] / ns["BenchmarkBareFITDecode"]
	printf "  the same with the rides' curves:       %.2f\n", ns["BenchmarkScanNoStoreWithCurves"] / ns["BenchmarkBareFITDecode"]
	printf "cold / warm store scan, 100 files:       %.1fx (target >= 20x)\n", ns["BenchmarkStoreCold"] / ns["BenchmarkStoreWarm"]
	printf "peak heap, 1000 files through the store: %.0f MB (target <= 150)\n", peak
	printf "memory per second of ride read, bytes: FIT %.0f, TCX %.0f, CSV %.0f (budget: caps of 32 MiB of FIT data, 250,000 FIT records, 2^20 samples, 64-KiB CSV lines, 1-MiB XML tokens)\n", budget["BenchmarkReadBudget/fit"], budget["BenchmarkReadBudget/tcx"], budget["BenchmarkReadBudget/csv"]
	printf "curve of a 6-h ride: %.1f ms (target <= 10); of a 2-h ride: %.1f ms (target <= 3)\n", ns["BenchmarkCurve6h"] / 1e6, ns["BenchmarkCurve2h"] / 1e6
}
