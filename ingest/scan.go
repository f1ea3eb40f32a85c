package ingest

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"sort"
	"strings"
	"sync"
	"syscall"
)

// Skipped is a file that was not analysed, with a one-line reason.
type Skipped struct {
	File   string `json:"file"`
	Reason string `json:"reason"`
}

// Duplicate is a ride left out as a copy of another: the same ride
// recorded twice (a head unit's file and the service's copy of it), or a
// file and a link or copy of it (see powerduration.Duplicates).
type Duplicate struct {
	File    string `json:"file"`
	Session int    `json:"session"`
	Kept    string `json:"kept"`
	Why     string `json:"why"`
}

// Result is what a scan found: rides in order (start time, then path, then
// session) and the files it had to skip.
type Result struct {
	Rides   []Ride
	Skipped []Skipped
	// Read, when above len(Rides), is how many rides were read before a
	// caller filtered Rides.
	Read int
	// Duplicates are the rides left out as copies of others.
	Duplicates []Duplicate
}

// Scan reads every ride under paths. A path may be a file (read whatever its
// name) or a folder (walked recursively, following links but never around a
// loop, reading only files whose names look like rides). Files are decoded in
// parallel on a bounded pool. Nothing is written anywhere.
func Scan(paths []string, opts Options) Result {
	files, skipped := ListFiles(paths)
	files = opts.only(files)
	var res Result
	res.Skipped = skipped
	perFile := make([][]Ride, len(files))
	errs := make([]error, len(files))
	Each(files, opts, func(i int, rides []Ride, err error) {
		perFile[i], errs[i] = rides, err
	})
	for i := range files {
		if errs[i] != nil {
			res.Skipped = append(res.Skipped, Skipped{files[i], reasonOf(errs[i])})
			continue
		}
		res.Rides = append(res.Rides, perFile[i]...)
	}
	SortRides(res.Rides)
	sort.SliceStable(res.Skipped, func(a, b int) bool { return res.Skipped[a].File < res.Skipped[b].File })
	return res
}

// only keeps the files opts.Only accepts (every file when it is unset).
func (opts Options) only(files []string) []string {
	if opts.Only == nil {
		return files
	}
	var kept []string
	for _, f := range files {
		if opts.Only(f) {
			kept = append(kept, f)
		}
	}
	return kept
}

// Only keeps the files opts.Only accepts, for a scan that lists files
// itself (the store's).
func Only(files []string, opts Options) []string { return opts.only(files) }

// Each decodes files on a pool of opts.Workers goroutines and calls fn once
// per file, from one goroutine at a time, in no particular order.
func Each(files []string, opts Options, fn func(i int, rides []Ride, err error)) {
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	workers = min(workers, max(len(files), 1))
	jobs := make(chan int)
	type out struct {
		i     int
		rides []Ride
		err   error
	}
	results := make(chan out)
	var wg sync.WaitGroup
	for range workers {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range jobs {
				rides, err := ReadFile(files[i], opts)
				if err == nil && opts.AfterRead != nil {
					opts.AfterRead(rides)
				}
				results <- out{i, rides, err}
			}
		}()
	}
	go func() {
		for i := range files {
			jobs <- i
		}
		close(jobs)
		wg.Wait()
		close(results)
	}()
	done := 0
	for o := range results {
		fn(o.i, o.rides, o.err)
		done++
		if opts.Progress != nil {
			opts.Progress(done, len(files))
		}
	}
}

// SortRides orders rides by start time, then path, then session.
func SortRides(rides []Ride) {
	sort.SliceStable(rides, func(a, b int) bool { return RideBefore(&rides[a], &rides[b]) })
}

// RideBefore is the order of rides in every result: start time, then path,
// then session.
func RideBefore(ra, rb *Ride) bool {
	if !ra.Start.Equal(rb.Start) {
		return ra.Start.Before(rb.Start)
	}
	if ra.File != rb.File {
		return ra.File < rb.File
	}
	return ra.Session < rb.Session
}

// pathReason says in a rider's words why a path cannot be reached.
func pathReason(p string, err error) string {
	switch {
	case os.IsNotExist(err):
		if fi, lerr := os.Lstat(p); lerr == nil && fi.Mode()&os.ModeSymlink != 0 {
			return "a link to something that does not exist"
		}
		return "no such file or folder"
	case os.IsPermission(err):
		return "permission denied"
	case errors.Is(err, syscall.ENAMETOOLONG):
		return "the path is too long to open"
	case errors.Is(err, syscall.ELOOP):
		return "a loop of links"
	}
	return unwrapPathError(err).Error()
}

func reasonOf(err error) string {
	var fe *FileError
	if errors.As(err, &fe) {
		return fe.Reason.Error()
	}
	return err.Error()
}

// ListFiles expands paths into the ride files to read, sorted. Files named
// explicitly are always listed; inside folders only names that look like
// rides (IsRideName) are. Paths that do not exist are returned as skipped.
func ListFiles(paths []string) ([]string, []Skipped) {
	var files []string
	var skipped []Skipped
	seenFile := map[string]bool{}
	add := func(p string) {
		if !seenFile[p] {
			seenFile[p] = true
			files = append(files, p)
		}
	}
	for _, p := range paths {
		st, err := os.Stat(p)
		if err != nil {
			skipped = append(skipped, Skipped{p, pathReason(p, err)})
			continue
		}
		if !st.IsDir() {
			switch {
			case !st.Mode().IsRegular():
				// a pipe or a device would hang the run or never end
				skipped = append(skipped, Skipped{p, "not a regular file (a pipe, device or socket): not read"})
			case IsArchiveName(p):
				addArchive(p, add, &skipped)
			default:
				add(p)
			}
			continue
		}
		visited := map[fileKey]bool{}
		walk(p, st, visited, add, &skipped)
	}
	sort.Strings(files)
	return files, skipped
}

// addArchive lists an archive's ride members, or skips it with the reason.
func addArchive(p string, add func(string), skipped *[]Skipped) {
	members, why := archiveMembers(p)
	if why != "" {
		*skipped = append(*skipped, Skipped{p, why})
		return
	}
	for _, m := range members {
		add(m)
	}
}

type fileKey struct{ dev, ino uint64 }

func keyOf(st os.FileInfo) (fileKey, bool) {
	if s, ok := st.Sys().(*syscall.Stat_t); ok {
		return fileKey{uint64(s.Dev), uint64(s.Ino)}, true
	}
	return fileKey{}, false
}

// walk visits dir recursively; visited holds the folders already entered, so
// a link back up the tree is not followed twice.
func walk(dir string, st os.FileInfo, visited map[fileKey]bool, add func(string), skipped *[]Skipped) {
	if k, ok := keyOf(st); ok {
		if visited[k] {
			return
		}
		visited[k] = true
	}
	entries, err := os.ReadDir(dir)
	if err != nil {
		*skipped = append(*skipped, Skipped{dir, "folder not readable: " + pathReason(dir, err)})
		return
	}
	for _, e := range entries {
		if len(e.Name()) > 0 && e.Name()[0] == '.' {
			continue
		}
		p := filepath.Join(dir, e.Name())
		if e.Type().IsRegular() {
			// the folder's listing says what it is: no stat needed
			switch {
			case IsArchiveName(e.Name()):
				addArchive(p, add, skipped)
			case IsRideName(e.Name()):
				add(p)
			}
			continue
		}
		est, err := os.Stat(p) // a folder, or a link followed
		if err != nil {
			if IsRideName(e.Name()) || e.IsDir() || e.Type()&os.ModeSymlink != 0 {
				*skipped = append(*skipped, Skipped{p, pathReason(p, err)})
			}
			continue
		}
		switch {
		case est.IsDir():
			walk(p, est, visited, add, skipped)
		case est.Mode().IsRegular() && IsArchiveName(e.Name()):
			addArchive(p, add, skipped)
		case !IsRideName(e.Name()):
		case est.Mode().IsRegular():
			add(p)
		default:
			*skipped = append(*skipped, Skipped{p, "not a regular file (a pipe, device or socket): not read"})
		}
	}
}

// Athletes lists a coach's folder of athletes, declared as one (a folder
// is never taken for a squad from its layout): its subfolders that hold
// rides, sorted, each an athlete. A squad folder with no such subfolder,
// or with ride files of its own (rides of no athlete), is an error.
func Athletes(dir string) ([]string, error) {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return nil, fmt.Errorf("%s: %s", dir, pathReason(dir, err))
	}
	var names, loose []string
	for _, e := range entries {
		p := filepath.Join(dir, e.Name())
		st, err := os.Stat(p)
		if err != nil || strings.HasPrefix(e.Name(), ".") {
			continue
		}
		if !st.IsDir() {
			if IsRideName(e.Name()) {
				loose = append(loose, e.Name())
			}
			continue
		}
		if files, _ := ListFiles([]string{p}); len(files) > 0 {
			names = append(names, e.Name())
		}
	}
	switch {
	case len(loose) > 0:
		return nil, fmt.Errorf("%s is named as a squad (one subfolder per athlete) but holds ride files of no athlete (%s…): move them into an athlete's folder", dir, loose[0])
	case len(names) == 0:
		return nil, fmt.Errorf("%s is named as a squad (one subfolder per athlete) but no subfolder holds rides", dir)
	}
	sort.Strings(names)
	return names, nil
}
