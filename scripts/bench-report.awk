# Prints the ratios the benchmark targets are stated in (see the issues and
# the README), from `go test -bench` output.
/^Benchmark/ {
	name = $1
	sub(/-[0-9]+$/, "", name)
	ns[name] = $3
	for (i = 4; i < NF; i++) {
		if ($(i + 1) == "peak-MB") peak[name] = $i
		if ($(i + 1) == "B/s-of-ride") budget[name] = $i
		if ($(i + 1) == "store/FIT") storeRatio = $i
	}
}
END {
	printf "\n"
	printf "FIT library decode / tolerant reader:    %.1fx (target >= 15x)\n", ns["BenchmarkFITDecode"] / ns["BenchmarkFITReader"]
	printf "ingest / bare FIT decode, one 3-h file:  %.2f (target <= 1.15)\n", ns["BenchmarkIngestFIT"] / ns["BenchmarkFITDecode"]
	printf "scan / bare FIT decode, 100 files:       %.2f (target <= 1.25)\n", ns["BenchmarkScanNoStore"] / ns["BenchmarkBareFITDecode"]
	printf "  with the rides' curves:                %.2f, %.1fx faster than the bare decode (target >= 5x)\n", ns["BenchmarkScanNoStoreWithCurves"] / ns["BenchmarkBareFITDecode"], ns["BenchmarkBareFITDecode"] / ns["BenchmarkScanNoStoreWithCurves"]
	printf "cold / warm store scan, 5000 files:      %.1fx (target >= 40x)\n", ns["BenchmarkStoreCold5000"] / ns["BenchmarkStoreWarm5000"]
	printf "cold / warm store scan, 100 files:       %.1fx (a scan's fixed costs weigh more)\n", ns["BenchmarkStoreCold"] / ns["BenchmarkStoreWarm"]
	printf "store size / FIT files:                  %.2f (target <= 0.5)\n", storeRatio
	printf "peak heap, 1000 files through the store: %.0f MB (target <= 150)\n", peak["BenchmarkPeakMemory1000"]
	printf "peak heap, 5000 files without the store: %.0f MB (target <= 300)\n", peak["BenchmarkPeakMemoryNoStore5000"]
	printf "warm store scan, 5000 files:             %.2f s (target <= 1)\n", ns["BenchmarkStoreWarm5000"] / 1e9
	printf "memory per second of ride read, bytes: FIT %.0f, TCX %.0f, CSV %.0f (budget: caps of 32 MiB of FIT data, 250,000 FIT records, 2^20 samples, 64-KiB CSV lines, 1-MiB XML tokens)\n", budget["BenchmarkReadBudget/fit"], budget["BenchmarkReadBudget/tcx"], budget["BenchmarkReadBudget/csv"]
	printf "curve, ms (target: 2-h field ride <= 1.5, 6-h <= 4), and / tight O(N*D) loop (target <= 0.25 on every shape):\n"
	n = split("field2h field6h field24h constant24h ramp6h noise10h trainer24h periodic2h alternating2h", shapes, " ")
	for (k = 1; k <= n; k++) {
		s = shapes[k]
		printf "  %-14s %7.2f ms  %5.3f\n", s, ns["BenchmarkCurve/" s] / 1e6, ns["BenchmarkCurve/" s] / ns["BenchmarkCurveTightLoop/" s]
	}
	printf "best of 1,000 rides' curves: %.1f ms (target <= 15)\n", ns["BenchmarkBestOf1000"] / 1e6
}
