// Package store keeps what reading a ride file produced — the clean 1-Hz
// power, the quality report and the mean-maximal curve — in an embedded
// SQLite database, keyed by the SHA-256 of the file's bytes and by the
// options that shaped the result (cleaning-policy version, spike ceiling,
// salvage, sport). A re-scan decodes only files that are new or changed;
// files whose size and modification time are unchanged are not even read.
//
// The database is a cache: a store from an older schema is rebuilt, a
// damaged one is moved aside and rebuilt, and a store another run holds
// locked for too long is reported and bypassed. Only a store of this tool
// (its header's application id says so) is ever opened, moved or written:
// anything else at the store's path is refused and left as it is. Writes are transactions in
// WAL mode, so a run killed mid-write leaves the store as it was before.
package store

import (
	"database/sql"
	"encoding/binary"
	"encoding/json"
	"errors"
	"fmt"
	"hash/crc32"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"time"

	"github.com/sustain-cycling/sustain/ingest"
	"github.com/sustain-cycling/sustain/powerduration"
	_ "modernc.org/sqlite" // registers the "sqlite" driver (pure Go)
)

// SchemaVersion changes whenever the tables change; an older store is rebuilt.
const SchemaVersion = 4

const schema = `
CREATE TABLE IF NOT EXISTS meta (key TEXT PRIMARY KEY, value TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS files (
	path TEXT PRIMARY KEY, size INTEGER NOT NULL, mtime_ns INTEGER NOT NULL, sha256 TEXT NOT NULL);
CREATE TABLE IF NOT EXISTS results (
	sha256 TEXT NOT NULL, options TEXT NOT NULL, reason TEXT NOT NULL DEFAULT '',
	PRIMARY KEY (sha256, options));
CREATE TABLE IF NOT EXISTS rides (
	sha256 TEXT NOT NULL, options TEXT NOT NULL, session INTEGER NOT NULL,
	start TEXT NOT NULL, sport TEXT NOT NULL, seconds INTEGER NOT NULL,
	quality BLOB NOT NULL,
	sum INTEGER NOT NULL, power_sum INTEGER NOT NULL, curve BLOB NOT NULL,
	power BLOB NOT NULL,
	PRIMARY KEY (sha256, options, session));
`

// Store is an open ride store.
type Store struct {
	db    *sql.DB // the one connection that writes (and reads)
	reads *sql.DB // connections that only read, one a core
	wait  time.Duration
	Path  string
	// Notes says what Open had to do (rebuild an old or damaged store).
	Notes []string
}

// DefaultPath is the store under the user's cache folder.
func DefaultPath() (string, error) {
	dir, err := os.UserCacheDir()
	if err != nil {
		return "", err
	}
	return filepath.Join(dir, "sustain", "rides.db"), nil
}

// Open opens or creates the store at path. A run waits up to 10 s for
// another run's transaction.
func Open(path string) (*Store, error) { return OpenWait(path, 10*time.Second) }

// ApplicationID marks a SQLite file as a store of this tool (SQLite's
// application_id, in the file's header: readable even when later pages
// are damaged). It spells "SUST".
const ApplicationID = 0x53555354

// ErrNotAStore: the path holds something that is not a store of this tool;
// it is never opened, moved or written.
var ErrNotAStore = errors.New("not a store of sustain")

// whose tells what is at path: nothing (or an empty file), a store of this
// tool, or something else (the user's, never touched: an error).
func whose(path string) (exists bool, err error) {
	fi, err := os.Stat(path)
	if os.IsNotExist(err) {
		return false, nil
	}
	if err != nil {
		return true, err
	}
	if !fi.Mode().IsRegular() {
		return true, fmt.Errorf("store %s is a folder or a special file: %w; name a new file with --store", path, ErrNotAStore)
	}
	if fi.Size() == 0 {
		return false, nil
	}
	f, err := os.Open(path)
	if err != nil {
		return true, err
	}
	defer f.Close()
	head := make([]byte, 100)
	n, _ := f.Read(head)
	if n < 100 || string(head[:16]) != "SQLite format 3\x00" {
		return true, fmt.Errorf("store %s is a file of another kind: %w; name a new file with --store", path, ErrNotAStore)
	}
	if binary.BigEndian.Uint32(head[68:72]) == ApplicationID {
		return true, nil
	}
	// a store of the first schema, before the application id: its meta row
	db, err := sql.Open("sqlite", "file:"+path+"?mode=ro")
	if err == nil {
		defer db.Close()
		var v string
		if db.QueryRow(`SELECT value FROM meta WHERE key = 'schema_version'`).Scan(&v) == nil {
			var n int
			if db.QueryRow(`SELECT count(*) FROM sqlite_master WHERE name IN ('files', 'results', 'rides')`).Scan(&n) == nil && n == 3 {
				return true, nil
			}
		}
	}
	return true, fmt.Errorf("store %s is another program's database: %w; name a new file with --store", path, ErrNotAStore)
}

// damage reports whether an error from opening a store says its file is
// damaged (and not, say, unreadable or in a read-only folder).
func damage(err error) bool {
	m := strings.ToLower(err.Error())
	return strings.Contains(m, "malformed") || strings.Contains(m, "not a database") || strings.Contains(m, "corrupt") ||
		strings.Contains(m, "no such column") || strings.Contains(m, "no such table")
}

// OpenWait is Open with the longest wait for another run's lock. Only a
// store of this tool is opened; only one found damaged is moved aside and
// rebuilt; anything else at path is refused, untouched.
func OpenWait(path string, wait time.Duration) (*Store, error) {
	exists, err := whose(path)
	if err != nil {
		return nil, err
	}
	if !exists {
		if err := os.MkdirAll(filepath.Dir(path), 0o755); err != nil {
			return nil, fmt.Errorf("store %s: %w", path, err)
		}
	}
	s, err := open(path, wait)
	if err == nil {
		return s, nil
	}
	if errors.Is(err, errLocked) {
		return nil, fmt.Errorf("store %s is locked by another run: %w", path, err)
	}
	if !damage(err) {
		return nil, fmt.Errorf("store %s cannot be opened for writing (a read-only folder or file, or no space?)", path)
	}
	// damaged: move it aside and start afresh
	aside := fmt.Sprintf("%s.damaged-%s", path, time.Now().UTC().Format("20060102T150405"))
	if rerr := os.Rename(path, aside); rerr != nil && !os.IsNotExist(rerr) {
		return nil, fmt.Errorf("store %s is damaged (%v) and could not be moved aside: %w", path, err, rerr)
	}
	for _, suffix := range []string{"-wal", "-shm"} {
		os.Remove(path + suffix)
	}
	s, err2 := open(path, wait)
	if err2 != nil {
		return nil, fmt.Errorf("store %s: %w", path, err2)
	}
	s.Notes = append(s.Notes, fmt.Sprintf("the store was damaged (%v); it was moved to %s and rebuilt", err, aside))
	return s, nil
}

var errLocked = errors.New("database is locked")

func open(path string, wait time.Duration) (*Store, error) {
	// WAL: readers do not block the writer; busy_timeout: a second run
	// waits for the first one's transaction instead of failing.
	dsn := fmt.Sprintf("file:%s?_pragma=busy_timeout(%d)&_pragma=journal_mode(WAL)&_pragma=synchronous(NORMAL)", path, wait.Milliseconds())
	db, err := sql.Open("sqlite", dsn)
	if err != nil {
		return nil, err
	}
	db.SetMaxOpenConns(1)
	// a warm scan reads on a connection for each core at once (bulkLoad);
	// they never write, and read the file through a memory map (no read
	// call and no copy for each page: 15 % off a warm scan of 5,000 files;
	// SQLite maps no more than the file holds)
	reads, err := sql.Open("sqlite", fmt.Sprintf("file:%s?_pragma=busy_timeout(%d)&_pragma=query_only(1)&_pragma=mmap_size(%d)", path, wait.Milliseconds(), 1<<30))
	if err != nil {
		db.Close()
		return nil, err
	}
	reads.SetMaxOpenConns(runtime.NumCPU())
	reads.SetMaxIdleConns(runtime.NumCPU())
	s := &Store{db: db, reads: reads, Path: path, wait: wait}
	if err := s.init(); err != nil {
		db.Close()
		reads.Close()
		if strings.Contains(err.Error(), "locked") || strings.Contains(err.Error(), "busy") {
			return nil, fmt.Errorf("%w: %v", errLocked, err)
		}
		return nil, err
	}
	return s, nil
}

func (s *Store) init() error {
	if _, err := s.db.Exec(schema); err != nil {
		return err
	}
	if _, err := s.db.Exec(fmt.Sprintf(`PRAGMA application_id = %d`, ApplicationID)); err != nil {
		return err
	}
	var v string
	err := s.db.QueryRow(`SELECT value FROM meta WHERE key = 'schema_version'`).Scan(&v)
	switch {
	case err == sql.ErrNoRows:
		// several first runs at once: the first one's row stands
		_, err = s.db.Exec(`INSERT OR IGNORE INTO meta (key, value) VALUES ('schema_version', ?)`, fmt.Sprint(SchemaVersion))
		return err
	case err != nil:
		return err
	case v != fmt.Sprint(SchemaVersion):
		// a cache from another version: empty it
		tx, err := s.db.Begin()
		if err != nil {
			return err
		}
		for _, q := range []string{`DELETE FROM files`, `DELETE FROM results`, `DELETE FROM rides`,
			`UPDATE meta SET value = '` + fmt.Sprint(SchemaVersion) + `' WHERE key = 'schema_version'`} {
			if _, err := tx.Exec(q); err != nil {
				tx.Rollback()
				return err
			}
		}
		s.Notes = append(s.Notes, fmt.Sprintf("the store was from schema %s; it was emptied and rebuilt", v))
		return tx.Commit()
	}
	return nil
}

// Check runs SQLite's integrity check.
func (s *Store) Check() error {
	var res string
	if err := s.db.QueryRow(`PRAGMA integrity_check`).Scan(&res); err != nil {
		return err
	}
	if res != "ok" {
		return fmt.Errorf("store %s: %s", s.Path, res)
	}
	return nil
}

// Close closes the store.
func (s *Store) Close() error {
	s.reads.Close()
	return s.db.Close()
}

// optionsKey names the options that change what a file decodes to.
func optionsKey(o ingest.Options) string {
	return fmt.Sprintf("policy=%d ceiling=%g salvage=%t anysport=%t", ingest.PolicyVersion, ceiling(o), o.Salvage, o.AnySport)
}

func ceiling(o ingest.Options) float64 {
	if o.SpikeCeilingW > 0 {
		return o.SpikeCeilingW
	}
	return ingest.DefaultSpikeCeilingW
}

// Stats counts what a scan did.
type Stats struct {
	Files   int // files listed
	Decoded int // files decoded (new or changed)
	Cached  int // files answered from the store
	// Repaired counts files whose stored rows failed their check and were
	// decoded again (and replaced).
	Repaired int
	// Rebuilt, when set, says the store was found damaged and rebuilt.
	Rebuilt string
	// WriteFailed, when set, says results could not be stored (writing
	// stopped at the first failure; the scan's results are complete).
	WriteFailed string
}

// entry is one file's result, from the store or freshly decoded.
type entry struct {
	path   string
	size   int64
	mtime  int64
	hash   string
	rides  []ingest.Ride
	curves []powerduration.RideCurve
	reason string // why the file was skipped
	fresh  bool   // decoded in this run: to be written
	// repaired: the store held it, but a row failed its check; it was
	// decoded again and its rows replaced
	repaired bool
	known    bool // path, size and mtime matched the files table
	loaded   bool // answered by bulkLoad (repaired: its rows failed their check)
	raws     []stored
}

// stored is a ride's row as read, before its blobs are unpacked.
type stored struct {
	session, seconds int
	start, sport     string
	qual             []byte // packed (qualityRow.packed)
	curve            []byte
	sum              int64
}

// storedColumns are the rides table's columns a scan reads, in the order
// of stored.fields.
const storedColumns = `session, start, sport, seconds, quality, sum, curve`

// fields are the row's columns, for Scan; the curve is scanned without a
// copy (sql.RawBytes), and copied once by keep.
func (x *stored) fields(qual, curve *sql.RawBytes) []any {
	return []any{&x.session, &x.start, &x.sport, &x.seconds, qual, &x.sum, curve}
}

// keep copies what was scanned without a copy, before the next row.
func (x *stored) keep(qual, curve sql.RawBytes) {
	x.qual, x.curve = append([]byte(nil), qual...), append([]byte(nil), curve...)
}

// Every stored ride carries checksums (CRC-32C, Castagnoli) written with
// it: one over what a scan reads (start, sport, length, quality report,
// curve) and one over its power; a row whose checksum or physical bounds
// fail is never used, but decoded again from its file.
var castagnoli = crc32.MakeTable(crc32.Castagnoli)

func rowSum(start, sport string, seconds int, qual, curve []byte) int64 {
	var head [96]byte
	b := append(append(append(append(head[:0], start...), 0), sport...), 0)
	b = append(strconv.AppendInt(b, int64(seconds), 10), 0)
	crc := crc32.Update(0, castagnoli, b)
	crc = crc32.Update(crc, castagnoli, qual)
	return int64(crc32.Update(crc, castagnoli, curve))
}

func powerSum(power []byte) int64 { return int64(crc32.Checksum(power, castagnoli)) }

// Scan reads every ride under paths as ingest.Scan does, with the rides'
// curves, decoding only the files the store does not already hold. Damage
// found while scanning (a malformed page) moves the store aside, rebuilds
// it and scans again, once; Stats.Rebuilt says so.
func (s *Store) Scan(paths []string, opts ingest.Options) (ingest.Result, []powerduration.RideCurve, Stats, error) {
	res, curves, st, err := s.scan(paths, opts)
	if err == nil || !damage(err) {
		return res, curves, st, err
	}
	note, rerr := s.rebuild(err)
	if rerr != nil {
		return res, curves, st, fmt.Errorf("%v; rebuilding it failed: %w", err, rerr)
	}
	res, curves, st, err = s.scan(paths, opts)
	st.Rebuilt = note
	return res, curves, st, err
}

// rebuild moves the damaged store aside and opens a new one at its path.
func (s *Store) rebuild(cause error) (string, error) {
	s.Close()
	aside := fmt.Sprintf("%s.damaged-%s", s.Path, time.Now().UTC().Format("20060102T150405"))
	if err := os.Rename(s.Path, aside); err != nil && !os.IsNotExist(err) {
		return "", err
	}
	for _, suffix := range []string{"-wal", "-shm"} {
		os.Remove(s.Path + suffix)
	}
	ns, err := open(s.Path, s.wait)
	if err != nil {
		return "", err
	}
	s.db, s.reads = ns.db, ns.reads
	return fmt.Sprintf("the store was found damaged (%v); it was moved to %s and rebuilt", cause, aside), nil
}

func (s *Store) scan(paths []string, opts ingest.Options) (ingest.Result, []powerduration.RideCurve, Stats, error) {
	files, skipped := ingest.ListFiles(paths)
	files = ingest.Only(files, opts)
	st := Stats{Files: len(files)}
	key := optionsKey(opts)
	workers := opts.Workers
	if workers <= 0 {
		workers = runtime.NumCPU()
	}
	es := make([]entry, len(files))
	for i, p := range files {
		es[i].path = p
	}
	// each file's size and time, and meanwhile what the store knows of
	// them
	var known []fileRow
	var knownErr error
	read := make(chan struct{})
	go func() {
		known, knownErr = s.knownFiles()
		close(read)
	}()
	statAll(es, workers)
	<-read
	if knownErr != nil {
		return ingest.Result{}, nil, st, knownErr
	}
	matchHashes(es, known)
	// decode or load each file on a bounded pool
	if err := s.bulkLoad(es, key, opts, workers); err != nil {
		return ingest.Result{}, nil, st, err
	}
	// one writer stores fresh results in batches, then lets their power go
	// (it stays in the store until something needs it)
	toWrite := make(chan *entry, 64)
	writeErr := make(chan error, 1)
	go func() {
		var batch []*entry
		var err error
		flush := func() {
			if err == nil && len(batch) > 0 {
				err = s.write(batch, key)
				if err == nil {
					for _, e := range batch {
						e.leavePower(s, key, opts)
					}
				}
			}
			batch = batch[:0]
		}
		for e := range toWrite {
			batch = append(batch, e)
			if len(batch) == 32 {
				flush()
			}
		}
		flush()
		writeErr <- err
	}()
	var wg sync.WaitGroup
	var mu sync.Mutex
	var firstErr error
	next := make(chan int)
	done := 0
	for range min(workers, max(len(es), 1)) {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := range next {
				err := s.resolve(&es[i], key, opts)
				if err == nil && es[i].hash != "" && (es[i].fresh || !es[i].known) {
					toWrite <- &es[i]
				}
				mu.Lock()
				if err != nil && firstErr == nil {
					firstErr = err
				}
				done++
				if opts.Progress != nil {
					opts.Progress(done, len(es))
				}
				mu.Unlock()
			}
		}()
	}
	for i := range es {
		next <- i
	}
	close(next)
	wg.Wait()
	close(toWrite)
	if err := <-writeErr; err != nil {
		// a full disk or a read-only store costs the caching, not the
		// scan: every result is in memory; nothing more is written
		st.WriteFailed = fmt.Sprintf("results could not be written to the store (%v); this run did not cache them", err)
	}
	if firstErr != nil {
		return ingest.Result{}, nil, st, firstErr
	}
	var res ingest.Result
	res.Skipped = skipped
	type pair struct {
		r ingest.Ride
		c powerduration.RideCurve
	}
	var all []pair
	for i := range es {
		e := &es[i]
		switch {
		case e.fresh:
			st.Decoded++
		case e.hash != "": // answered from the store (a file that could not be hashed is neither)
			st.Cached++
		}
		if e.repaired {
			st.Repaired++
		}
		if e.reason != "" {
			res.Skipped = append(res.Skipped, ingest.Skipped{File: e.path, Reason: e.reason})
			continue
		}
		for k := range e.rides {
			all = append(all, pair{e.rides[k], e.curves[k]})
		}
	}
	sort.SliceStable(all, func(a, b int) bool { return ingest.RideBefore(&all[a].r, &all[b].r) })
	curves := make([]powerduration.RideCurve, len(all))
	for i, p := range all {
		res.Rides = append(res.Rides, p.r)
		curves[i] = p.c
	}
	sort.SliceStable(res.Skipped, func(a, b int) bool { return res.Skipped[a].File < res.Skipped[b].File })
	return res, curves, st, nil
}

// fileRow is a file as the files table knows it.
type fileRow struct {
	path        string
	size, mtime int64
	hash        string
}

// knownFiles is the files table.
func (s *Store) knownFiles() ([]fileRow, error) {
	rows, err := s.reads.Query(`SELECT path, size, mtime_ns, sha256 FROM files`)
	if err != nil {
		return nil, err
	}
	defer rows.Close()
	var out []fileRow
	for rows.Next() {
		var f fileRow
		if err := rows.Scan(&f.path, &f.size, &f.mtime, &f.hash); err != nil {
			return nil, err
		}
		out = append(out, f)
	}
	return out, rows.Err()
}

// statAll reads each entry's size and modification time, on `workers`
// goroutines (a stat is a system call: thousands of them take a while).
func statAll(es []entry, workers int) {
	var wg sync.WaitGroup
	parts := min(workers, max(len(es)/64, 1))
	for k := range parts {
		wg.Add(1)
		go func() {
			defer wg.Done()
			for i := k * len(es) / parts; i < (k+1)*len(es)/parts; i++ {
				if size, mtime, err := ingest.StatFile(es[i].path); err == nil {
					es[i].size, es[i].mtime = size, mtime.UnixNano()
				}
			}
		}()
	}
	wg.Wait()
}

// matchHashes gives each entry the hash the files table holds for its
// path, size and modification time (the content is then what the store
// already knows).
func matchHashes(es []entry, known []fileRow) {
	byPath := make(map[string]*entry, len(es))
	for i := range es {
		byPath[es[i].path] = &es[i]
	}
	for _, f := range known {
		if e := byPath[f.path]; e != nil && e.size == f.size && e.mtime == f.mtime {
			e.hash, e.known = f.hash, true
		}
	}
}

// resolve loads the file's result from the store, or decodes it.
func (s *Store) resolve(e *entry, key string, opts ingest.Options) error {
	if e.loaded && !e.repaired {
		return nil // answered by bulkLoad: a reason, or rides unpacked
	}
	e.loaded = false
	if e.hash == "" {
		// hashed as a stream: a file is never held whole in memory
		h, err := ingest.HashFile(e.path)
		if err != nil {
			e.reason = err.Error()
			return nil
		}
		e.hash = h
	}
	found, err := s.load(e, key, opts)
	if err != nil || found {
		return err
	}
	e.fresh = true
	rides, err := ingest.ReadFile(e.path, opts)
	if err != nil {
		var fe *ingest.FileError
		if errors.As(err, &fe) {
			e.reason = fe.Reason.Error()
		} else {
			e.reason = err.Error()
		}
		return nil
	}
	e.rides = rides
	e.curves = make([]powerduration.RideCurve, len(rides))
	for i := range rides {
		e.curves[i] = powerduration.OfRide(&e.rides[i])
	}
	return nil
}

// load reads a stored result; found is false when the store has none.
func (s *Store) load(e *entry, key string, opts ingest.Options) (found bool, err error) {
	var reason string
	err = s.db.QueryRow(`SELECT reason FROM results WHERE sha256 = ? AND options = ?`, e.hash, key).Scan(&reason)
	if err == sql.ErrNoRows {
		return false, nil
	}
	if err != nil {
		return false, err
	}
	if reason != "" {
		e.reason = reason
		return true, nil
	}
	var raws []stored
	rows, err := s.db.Query(`SELECT `+storedColumns+` FROM rides
		WHERE sha256 = ? AND options = ? ORDER BY session`, e.hash, key)
	if err != nil {
		return false, err
	}
	for rows.Next() {
		var x stored
		var qual, curve sql.RawBytes
		if err := rows.Scan(x.fields(&qual, &curve)...); err != nil {
			rows.Close()
			return false, err
		}
		x.keep(qual, curve)
		raws = append(raws, x)
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return false, err
	}
	if len(raws) == 0 {
		return false, nil // a results row without rides: decode again
	}
	e.raws = raws
	if !e.unpack(s, key, opts, nil) {
		e.repaired = true
		return false, nil
	}
	return true, nil
}

// unpack turns the entry's stored rows into rides (their power left in the
// store until needed) and curves. A row that fails its checksum or the
// physical bounds leaves the entry unanswered (ok false), to be decoded
// again from its file.
func (e *entry) unpack(s *Store, key string, opts ingest.Options, sl *curveSlab) (ok bool) {
	var got []checked
	for _, x := range e.raws {
		r, c, err := x.check(e.path, opts, sl)
		if err != nil {
			e.raws, e.rides, e.curves = nil, nil, nil
			return false
		}
		got = append(got, checked{r, c})
	}
	e.raws = nil
	e.answer(s, key, opts, got)
	return true
}

// checked is a stored row that passed its checks, as a ride and a curve.
type checked struct {
	ride  ingest.Ride
	curve powerduration.RideCurve
}

// answer makes the entry's rides and curves of its checked rows (checked
// for this entry's path or another path with the same content): what
// depends on the path is set for this one.
func (e *entry) answer(s *Store, key string, opts ingest.Options, rows []checked) {
	e.rides, e.curves = make([]ingest.Ride, len(rows)), make([]powerduration.RideCurve, len(rows))
	for i, x := range rows {
		r, c := x.ride, x.curve
		if q := r.Quality; q.DatedByFallback || r.File != e.path {
			r.File = e.path
			if q.DatedByFallback {
				// the date is the path's and the file's, not the content's:
				// the same bytes under another name or time are another day
				fb := ingest.FallbackStart(e.path, time.Unix(0, e.mtime))
				r.Start = fb.Add(time.Duration(q.FallbackOffsetS * 1e9)).In(fb.Location())
			}
			c.Source = powerduration.SourceOf(&r)
		}
		r.LeavePower(s.powerLoader(e.path, e.hash, key, r.Session, r.Quality.Seconds, opts))
		e.rides[i], e.curves[i] = r, c
	}
}

// check verifies a stored row and turns it into a ride and its curve:
// its checksum, its time, quality report and curve within physical
// bounds (watts finite, 0 to the spike ceiling; offsets inside the ride).
func (x stored) check(path string, opts ingest.Options, sl *curveSlab) (ingest.Ride, powerduration.RideCurve, error) {
	bad := func(what string) (ingest.Ride, powerduration.RideCurve, error) {
		return ingest.Ride{}, powerduration.RideCurve{}, fmt.Errorf("store: %s: stored %s fails its check", path, what)
	}
	if rowSum(x.start, x.sport, x.seconds, x.qual, x.curve) != x.sum {
		return bad("row")
	}
	r := ingest.Ride{File: path, Session: x.session, Sport: x.sport}
	var err error
	if r.Start, err = time.Parse(time.RFC3339Nano, x.start); err != nil {
		return bad("start")
	}
	if x.seconds <= 0 || x.seconds > ingest.MaxTimelineS {
		return bad("length")
	}
	qr, err := unpackQuality(x.qual)
	if err != nil {
		return bad("quality report")
	}
	if r.Quality, err = qr.quality(x.seconds); err != nil {
		return bad("quality report")
	}
	c, err := decodeCurve(x.curve, &r, ceiling(opts), sl)
	if err != nil {
		return bad("curve")
	}
	return r, c, nil
}

// bulkLoad answers every entry whose hash the files table knew: one
// query for the results (a reason, or rides), then the rides, the hashes
// split among `workers` goroutines, each reading its share on a
// connection of its own and checking and decoding each row as it comes
// (no copy of a row is kept). An entry whose rows fail their check is
// left unanswered (and marked repaired), for resolve to decode again.
func (s *Store) bulkLoad(es []entry, key string, opts ingest.Options, workers int) error {
	byHash := map[string][]*entry{}
	var hashes []string
	for i := range es {
		if h := es[i].hash; h != "" {
			if byHash[h] == nil {
				hashes = append(hashes, h)
			}
			byHash[h] = append(byHash[h], &es[i])
		}
	}
	if len(hashes) == 0 {
		return nil
	}
	slices.Sort(hashes)
	list, err := json.Marshal(hashes)
	if err != nil {
		return err
	}
	rows, err := s.reads.Query(`SELECT sha256, reason FROM results WHERE options = ? AND sha256 IN (SELECT value FROM json_each(?))`, key, string(list))
	if err != nil {
		return err
	}
	var withRides []string // in hash order
	for rows.Next() {
		var h, reason string
		if err := rows.Scan(&h, &reason); err != nil {
			rows.Close()
			return err
		}
		if reason != "" {
			for _, e := range byHash[h] {
				e.reason, e.loaded = reason, true
			}
		} else {
			withRides = append(withRides, h)
		}
	}
	rows.Close()
	if err := rows.Err(); err != nil {
		return err
	}
	slices.Sort(withRides)
	parts := min(workers, max(len(withRides)/16, 1)) // a share of at least 16 files
	errs := make([]error, parts)
	var wg sync.WaitGroup
	for k := range parts {
		share := withRides[k*len(withRides)/parts : (k+1)*len(withRides)/parts]
		wg.Add(1)
		go func() {
			defer wg.Done()
			errs[k] = s.loadShare(share, byHash, key, opts)
		}()
	}
	wg.Wait()
	return errors.Join(errs...)
}

// loadShare reads, checks and decodes the stored rides of the given
// hashes (sorted), and answers their entries.
func (s *Store) loadShare(hashes []string, byHash map[string][]*entry, key string, opts ingest.Options) error {
	if len(hashes) == 0 {
		return nil
	}
	list, err := json.Marshal(hashes)
	if err != nil {
		return err
	}
	rows, err := s.reads.Query(`SELECT sha256, `+storedColumns+` FROM rides
		WHERE options = ? AND sha256 IN (SELECT value FROM json_each(?)) ORDER BY sha256, session`, key, string(list))
	if err != nil {
		return err
	}
	defer rows.Close()
	var slab curveSlab // this share's
	// rows come ordered by hash: a hash's rows are complete when the next
	// hash starts
	var h string
	var got []checked
	failed := false
	finish := func() {
		for _, e := range byHash[h] {
			switch {
			case failed:
				e.loaded, e.repaired = true, true // decoded again by resolve
			case len(got) > 0:
				e.answer(s, key, opts, got)
				e.loaded = true
			}
		}
		got, failed = nil, false
	}
	for rows.Next() {
		var rh string
		var x stored
		var qual, curve sql.RawBytes
		if err := rows.Scan(append([]any{&rh}, x.fields(&qual, &curve)...)...); err != nil {
			return err
		}
		if rh != h {
			finish()
			h = rh
		}
		if failed || len(byHash[rh]) == 0 {
			continue
		}
		// checked and decoded while the row's bytes are the driver's
		x.qual, x.curve = qual, curve
		r, c, err := x.check(byHash[rh][0].path, opts, &slab)
		if err != nil {
			failed = true
			continue
		}
		got = append(got, checked{r, c})
	}
	if err := rows.Err(); err != nil {
		return err
	}
	finish()
	return nil
}

// leavePower drops the power of freshly decoded rides (and the heart rate
// and cadence, which the store does not keep), to be fetched on demand.
func (e *entry) leavePower(s *Store, key string, opts ingest.Options) {
	if !e.fresh {
		return
	}
	for k := range e.rides {
		r := &e.rides[k]
		r.HeartRateBPM, r.CadenceRPM = nil, nil
		r.LeavePower(s.powerLoader(e.path, e.hash, key, r.Session, r.Quality.Seconds, opts))
	}
}

// powerLoader fetches one ride's stored power. Power that fails its
// checksum or the physical bounds is read again from the ride's file.
func (s *Store) powerLoader(path, hash, key string, session, seconds int, opts ingest.Options) func() ([]float64, error) {
	return func() ([]float64, error) {
		var blob []byte
		var sum int64
		err := s.db.QueryRow(`SELECT power, power_sum FROM rides WHERE sha256 = ? AND options = ? AND session = ?`, hash, key, session).Scan(&blob, &sum)
		if err == nil && powerSum(blob) == sum {
			if v, err := decodePower(blob, seconds); err == nil && inBounds(v, ceiling(opts)) {
				return v, nil
			}
		}
		power, rerr := ingest.ReadPowerAgain(path, session, seconds, opts)
		if rerr != nil {
			return nil, fmt.Errorf("store %s: the power of %s fails its check, and it cannot be read again from the file (%v)", s.Path, path, rerr)
		}
		return power, nil
	}
}

func inBounds(v []float64, ceil float64) bool {
	for _, w := range v {
		if !(w >= 0 && w <= ceil) { // also false for NaN
			return false
		}
	}
	return true
}

// write stores the entries' fresh results and the files' hashes in one
// transaction.
func (s *Store) write(es []*entry, key string) error {
	tx, err := s.db.Begin()
	if err != nil {
		return err
	}
	defer tx.Rollback()
	for _, e := range es {
		if !e.known {
			if _, err := tx.Exec(`INSERT OR REPLACE INTO files (path, size, mtime_ns, sha256) VALUES (?, ?, ?, ?)`,
				e.path, e.size, e.mtime, e.hash); err != nil {
				return err
			}
		}
		if !e.fresh {
			continue
		}
		if _, err := tx.Exec(`INSERT OR REPLACE INTO results (sha256, options, reason) VALUES (?, ?, ?)`, e.hash, key, e.reason); err != nil {
			return err
		}
		for k := range e.rides {
			r := &e.rides[k]
			q := rowOfQuality(&r.Quality)
			start, qual, power, curve := r.Start.Format(time.RFC3339Nano), q.packed(), encodePower(r.PowerW), encodeCurve(e.curves[k])
			if _, err := tx.Exec(`INSERT OR REPLACE INTO rides (sha256, options, session, start, sport, seconds, quality, sum, power_sum, curve, power)
				VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`, e.hash, key, r.Session, start, r.Sport, len(r.PowerW), qual,
				rowSum(start, r.Sport, len(r.PowerW), qual, curve), powerSum(power), curve, power); err != nil {
				return err
			}
		}
	}
	return tx.Commit()
}
