// Package batch runs a sample model over many scans: it expands the
// command line's files, folders and patterns into inputs, reads them ahead
// in parallel, solves their samples on several workers with one
// unmix.Model each, and hands the outcomes on in input order (so the
// output is the same for any number of workers), with progress.
package batch

import (
	"context"
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"runtime"
	"slices"
	"strings"
	"sync"
	"sync/atomic"

	"huesolve/internal/pkgerr"
	"huesolve/spectrum"
	"huesolve/unmix"
)

// Input is one file to read, or a command-line argument that named no file
// (Err set: a pattern that matched nothing, say).
type Input struct {
	Path string
	Err  error
}

// errNoMatch: a pattern or folder named no file.
var errNoMatch = errors.New("no file matches")

// ExpandInputs turns command-line arguments into files: a folder gives its
// regular, non-hidden files and links to regular files (not recursive; see
// folderFiles), a pattern with *, ? or [
// gives its matches, anything else is taken as a file (a missing file
// fails when read). Each group is sorted by name in natural order (runs
// of digits compare as numbers: s2 before s10); the order of the
// arguments is kept.
func ExpandInputs(args []string) []Input {
	var out []Input
	for _, a := range args {
		if strings.ContainsAny(a, "*?[") {
			m, err := filepath.Glob(a)
			if err != nil {
				out = append(out, Input{Path: a, Err: fmt.Errorf("pattern %q: %w", a, err)})
				continue
			}
			m = slices.DeleteFunc(m, func(p string) bool {
				fi, err := os.Stat(p)
				return err == nil && fi.IsDir()
			})
			if len(m) == 0 {
				out = append(out, Input{Path: a, Err: fmt.Errorf("%w pattern %q", errNoMatch, a)})
			}
			slices.SortFunc(m, naturalCompare)
			for _, p := range m {
				out = append(out, Input{Path: p})
			}
			continue
		}
		fi, err := os.Stat(a)
		if err != nil || !fi.IsDir() {
			out = append(out, Input{Path: a})
			continue
		}
		ents, err := os.ReadDir(a)
		if err != nil {
			out = append(out, Input{Path: a, Err: fmt.Errorf("folder %s: %w", a, err)})
			continue
		}
		names := folderFiles(a, ents)
		slices.SortFunc(names, naturalCompare)
		out = append(slices.Grow(out, len(names)), joinAll(a, names)...)
		n := len(names)
		if n == 0 {
			out = append(out, Input{Path: a, Err: fmt.Errorf("%w in folder %s", errNoMatch, a)})
		}
	}
	return out
}

// joinAll returns the inputs dir/name for each name, as filepath.Join
// makes them, their paths cut from one string (one allocation for a
// folder of many files, not one each).
func joinAll(dir string, names []string) []Input {
	paths := make([]string, len(names))
	size := 0
	for i, nm := range names {
		paths[i] = filepath.Join(dir, nm)
		size += len(paths[i])
	}
	var b strings.Builder
	b.Grow(size)
	for _, p := range paths {
		b.WriteString(p)
	}
	all := b.String()
	in := make([]Input, len(names))
	start := 0
	for i, p := range paths {
		in[i].Path = all[start : start+len(p)]
		start += len(p)
	}
	return in
}

// folderFiles are the names of the entries of folder dir that are inputs:
// regular files and symbolic links to regular files (followed, so a
// folder of links to scans kept elsewhere reads like the scans), not
// hidden. A link that points nowhere is kept, so that reading it reports
// it by name rather than leaving it out without a word; subfolders, links
// to folders, pipes and devices are left out.
func folderFiles(dir string, ents []os.DirEntry) []string {
	var names []string
	for _, e := range ents {
		if strings.HasPrefix(e.Name(), ".") {
			continue
		}
		switch t := e.Type(); {
		case t.IsRegular():
			names = append(names, e.Name())
		case t&os.ModeSymlink != 0:
			fi, err := os.Stat(filepath.Join(dir, e.Name()))
			if err != nil || fi.Mode().IsRegular() {
				names = append(names, e.Name())
			}
		}
	}
	return names
}

// naturalCompare orders names as a person would: runs of decimal digits
// compare by their value ("s2" < "s10" < "s11"), everything else byte by
// byte; names equal that way (s01, s1) fall back to plain order so the
// order is total. The extension is set aside first, so that a name
// comes before its longer variants: lot-106.csv before lot-106-d5.csv
// (byte by byte "." would follow "-").
func naturalCompare(a, b string) int {
	if c := naturalCompareText(strings.TrimSuffix(a, filepath.Ext(a)), strings.TrimSuffix(b, filepath.Ext(b))); c != 0 {
		return c
	}
	return naturalCompareText(a, b)
}

// naturalCompareText is naturalCompare on the whole text.
func naturalCompareText(a, b string) int {
	i, j := 0, 0
	for i < len(a) && j < len(b) {
		ca, cb := a[i], b[j]
		if isDigit(ca) && isDigit(cb) {
			si, sj := i, j
			for i < len(a) && isDigit(a[i]) {
				i++
			}
			for j < len(b) && isDigit(b[j]) {
				j++
			}
			da := strings.TrimLeft(a[si:i], "0")
			db := strings.TrimLeft(b[sj:j], "0")
			if len(da) != len(db) {
				return cmpInt(len(da), len(db))
			}
			if c := strings.Compare(da, db); c != 0 {
				return c
			}
			continue
		}
		if ca != cb {
			return cmpInt(int(ca), int(cb))
		}
		i++
		j++
	}
	if c := cmpInt(len(a)-i, len(b)-j); c != 0 {
		return c
	}
	return strings.Compare(a, b)
}

func isDigit(c byte) bool { return c >= '0' && c <= '9' }

func cmpInt(a, b int) int {
	switch {
	case a < b:
		return -1
	case a > b:
		return 1
	}
	return 0
}

// Outcome is one sample solved, or one file or sample that failed.
type Outcome struct {
	// Seq numbers outcomes in input order from 0.
	Seq int
	// File is the input file.
	File string
	// Result is the solved sample; nil when reading or solving failed.
	Result *unmix.Result
	// Err says what failed: reading the file (Result nil, Unread true),
	// solving the sample (Result nil), or the Batch.Each hook (Result
	// set).
	Err    error
	Unread bool
	// Renamed is the name the sample was given because an earlier sample
	// of the run had its own ("" when it kept its name): Result.Sample
	// is Renamed, and the sample sheet was looked up by its own name.
	Renamed string
	// Encoded holds what Batch.Encode made of Result (nil without it).
	// Like Result it is reused after emit returns.
	Encoded []byte
	// Digest is set on the first outcome of each input file read when
	// Batch.Digests is (nil on the others, and for an argument that
	// named no file): the SHA-256 of the file's bytes as they were read
	// for this run, or why there is none.
	Digest *spectrum.Digest
	// checked: with Batch.CheckOnly, the sample was read and could be
	// solved.
	checked bool

	slot *slot // holds Result, back to the pool once emitted
}

// Summary counts a batch.
type Summary struct {
	Files      int // inputs given
	Unreadable int // inputs that could not be read
	Samples    int // samples read
	Solved     int // samples solved
	Failed     int // samples that could not be solved, or whose Each hook failed
	Flagged    int // solved samples carrying a warning flag
	Emitted    int // outcomes passed to emit (in order) before the end or an interruption
	Checked    int // samples read and checked (Batch.CheckOnly) that could be solved
}

// Batch solves many scans with one model on several workers.
type Batch struct {
	// Model is cloned for each worker.
	Model *unmix.Model
	// Workers is the number of solving goroutines (0: GOMAXPROCS).
	Workers int
	// Read are the reader options for every file.
	Read spectrum.ReadOptions
	// ReadFile reads one file; nil means spectrum.ReadFile.
	ReadFile func(path string, opt spectrum.ReadOptions) ([]*spectrum.Spectrum, error)
	// Factors gives each sample its dilution and path; nil means defaults.
	// An error fails that sample.
	Factors func(s *spectrum.Spectrum) (unmix.Factors, error)
	// Each, if not nil, is called in the worker right after a sample is
	// solved (plots, say), with the sample's sequence number (as in
	// Outcome.Seq); it may run concurrently for different samples. An
	// error is reported in the outcome and counts the sample failed.
	Each func(seq int, r *unmix.Result) error
	// Encode, if not nil, formats each solved sample in the worker, so
	// that output formatting runs in parallel too; the bytes come in
	// Outcome.Encoded. It must be safe for concurrent use.
	Encode func(dst []byte, r *unmix.Result) []byte
	// Progress, if not nil, is called from the emitting goroutine after
	// each outcome, with the samples done and the total expected: the
	// samples of the files read so far plus one for each file not read
	// yet (exact for files of one scan each, whose number is known from
	// the start).
	Progress func(done, known int)
	// CheckOnly reads every sample and checks it (Model.Check) without
	// solving it: outcomes carry no Result, and Err is set for a sample
	// that could not be solved (Summary.Checked counts those that could). Factors is
	// called as usual; Each and Encode are not.
	CheckOnly bool
	// Digests asks the reader for the SHA-256 of each input file
	// (spectrum.ReadOptions.Digest), taken from the bytes it parses, so
	// that no file is read twice; it comes in Outcome.Digest.
	Digests bool
}

// job is a chunk of consecutive samples of one file (or a file that
// failed to read), the first numbered seq.
type job struct {
	seq  int
	file string
	ss   []*spectrum.Spectrum
	// names holds, per sample, the name it is given when its own is
	// taken by an earlier sample ("" when it keeps its own).
	names []string
	err   error
	// digest is the file's, on its first job only.
	digest *spectrum.Digest
}

// maxChunk is the most samples handed to a worker at once.
const maxChunk = 64

// Files of few points (a folder of scans) are read and handed on in
// groups of consecutive files, so that the hand-offs between goroutines
// (each a wake-up that may sleep on a lock) are per group, not per file:
// a group holds up to maxGroup files, and about groupPoints points by
// the mean size of the files read so far (one file at a time for wide
// tables, so that the files read ahead stay few).
const (
	maxGroup    = 16
	groupPoints = 1 << 14
)

// span is a group of consecutive inputs [lo, hi), the no-th.
type span struct{ no, lo, hi int }

type fileRead struct {
	ss     []*spectrum.Spectrum
	err    error
	digest *spectrum.Digest
}

// run is the state of one Batch.Run: the channels between its stages.
type run struct {
	b       *Batch
	inputs  []Input
	workers int
	ctx     context.Context
	cancel  context.CancelFunc

	// ready holds the groups of files read ahead: span no in
	// ready[no%len(ready)]. There are as many slots as tokens, and
	// tokens are taken and given back in input order, so a slot is free
	// again before the span that needs it next gets its token; the state
	// stays the same size whatever the number of inputs.
	ready  []chan []fileRead
	tokens chan struct{} // spans read ahead and not yet dispatched
	// readFiles and readPoints count the files read and their points,
	// which size the spans.
	readFiles, readPoints atomic.Int64
	// knownN and knownF count, for Progress, the samples found in the
	// files dispatched and those files.
	knownN, knownF atomic.Int64
	jobs           chan []job
	group          []job // jobs gathered by the dispatcher, not sent yet
	groupN         int   // their samples
	// total and complete are written by the dispatcher before it closes
	// jobs: the samples numbered, and whether every input was dispatched.
	total    int
	complete bool
	// taken holds the sample names handed out so far (dispatcher only).
	taken   *nameSet
	results chan []Outcome
	pool    sync.Pool // of *slot
}

// slot is a pooled Result with the buffer Encode last wrote into.
type slot struct {
	r   unmix.Result
	enc []byte
}

// Run reads the inputs, solves every sample and calls emit with each
// outcome in input order (file order, then the order of the scans in each
// file), whatever the number of workers. A sample whose name an earlier
// sample of the run has is renamed (see uniqueNames; Outcome.Renamed), so
// that every result's name is unique. emit runs in the caller's
// goroutine; the Result it gets is reused after emit returns, so emit must
// copy what it keeps.
//
// A file that cannot be read, or a sample that cannot be solved, is
// passed to emit with Err set and the batch goes on. Run stops early if
// emit returns an error (returned as is) or ctx is cancelled (ctx.Err()
// is returned); the Summary then counts what was emitted before the stop,
// and no outcome after it is emitted.
func (b *Batch) Run(ctx context.Context, inputs []Input, emit func(Outcome) error) (Summary, error) {
	workers := b.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	parent := ctx
	ctx, cancel := context.WithCancel(parent)
	defer cancel()
	r := &run{b: b, inputs: inputs, workers: workers, ctx: ctx, cancel: cancel}
	r.pool.New = func() any { return new(slot) }
	r.jobs = make(chan []job, 2*workers)

	var wg sync.WaitGroup
	r.readAhead(&wg)
	go r.dispatch()
	r.solve()
	sum, next, emitErr := r.emitInOrder(emit)
	if emitErr != nil {
		return sum, emitErr
	}
	if !r.complete || next < r.total {
		if err := parent.Err(); err != nil {
			return sum, err
		}
		return sum, pkgerr.New("batch", "stopped early")
	}
	cancel()
	wg.Wait()
	return sum, nil
}

// readAhead starts stage 1: read files ahead in parallel. Tokens are taken
// in file order, so the next file the dispatcher waits for always has one.
// The readers are counted in wg.
func (r *run) readAhead(wg *sync.WaitGroup) {
	read := r.b.ReadFile
	if read == nil {
		read = spectrum.ReadFile
	}
	lookahead := r.workers + 1
	r.ready = make([]chan []fileRead, lookahead)
	for i := range r.ready {
		r.ready[i] = make(chan []fileRead, 1)
	}
	r.tokens = make(chan struct{}, lookahead)
	spans := make(chan span)
	go func() {
		defer close(spans)
		for no, lo := 0, 0; lo < len(r.inputs); no++ {
			select {
			case r.tokens <- struct{}{}:
			case <-r.ctx.Done():
				return
			}
			hi := min(lo+r.spanFiles(), len(r.inputs))
			select {
			case spans <- span{no: no, lo: lo, hi: hi}:
			case <-r.ctx.Done():
				return
			}
			lo = hi
		}
	}()
	for range min(r.workers, max(len(r.inputs), 1)) {
		wg.Go(func() {
			for sp := range spans {
				frs := make([]fileRead, sp.hi-sp.lo)
				for i := range frs {
					frs[i] = r.readOne(read, r.inputs[sp.lo+i])
				}
				r.ready[sp.no%len(r.ready)] <- frs
			}
		})
	}
}

// readOne reads one input.
func (r *run) readOne(read func(string, spectrum.ReadOptions) ([]*spectrum.Spectrum, error), in Input) fileRead {
	if in.Err != nil {
		return fileRead{err: in.Err}
	}
	opt := r.b.Read
	if r.b.Digests {
		opt.Digest = new(spectrum.Digest)
	}
	ss, err := read(in.Path, opt)
	if err == nil && len(ss) == 0 {
		err = fmt.Errorf("%s: %w", in.Path, spectrum.ErrEmpty)
	}
	points := 0
	for _, s := range ss {
		points += len(s.Values)
	}
	r.readFiles.Add(1)
	r.readPoints.Add(int64(points))
	return fileRead{ss: ss, err: err, digest: opt.Digest}
}

// spanFiles is the number of files of the next span: as many as make
// about groupPoints points at the mean size of the files read so far
// (1 before any is read), at most maxGroup.
func (r *run) spanFiles() int {
	files := r.readFiles.Load()
	if files == 0 {
		return 1
	}
	mean := max(r.readPoints.Load()/files, 1)
	return int(min(max(groupPoints/mean, 1), maxGroup))
}

// dispatch is stage 2: it hands out samples in order with sequence
// numbers, in chunks of consecutive samples so that hand-offs between
// goroutines stay rare next to the solving (a solve takes some 15 µs).
func (r *run) dispatch() {
	defer close(r.jobs)
	seq := 0
	defer func() { r.total = seq }()
	for i, no := 0, 0; i < len(r.inputs); no++ {
		var frs []fileRead
		select {
		case frs = <-r.ready[no%len(r.ready)]:
		case <-r.ctx.Done():
			return
		}
		for k, fr := range frs {
			var ok bool
			if seq, ok = r.dispatchFile(i+k, fr, seq); !ok {
				return
			}
			frs[k] = fileRead{}
		}
		if !r.flush() {
			return
		}
		i += len(frs)
		<-r.tokens
	}
	r.complete = true
}

// send adds j to the group of jobs for the workers, and sends the group
// once it holds maxGroup jobs or maxChunk samples; false means the run
// was cancelled.
func (r *run) send(j job) bool {
	r.group = append(r.group, j)
	r.groupN += max(len(j.ss), 1)
	if len(r.group) < maxGroup && r.groupN < maxChunk {
		return true
	}
	return r.flush()
}

// flush sends the group of jobs gathered so far.
func (r *run) flush() bool {
	if len(r.group) == 0 {
		return true
	}
	select {
	case r.jobs <- r.group:
	case <-r.ctx.Done():
		return false
	}
	r.group, r.groupN = nil, 0
	return true
}

// dispatchFile hands out the samples of one file read (or its failure),
// numbering them from seq; it returns the next number, and false when
// the run was cancelled.
func (r *run) dispatchFile(in int, fr fileRead, seq int) (int, bool) {
	file := r.inputs[in].Path
	// Samples before files: see emitter.progress.
	if fr.err != nil {
		r.knownN.Add(1)
		r.knownF.Add(1)
		if !r.send(job{seq: seq, file: file, err: fr.err, digest: fr.digest}) {
			return seq, false
		}
		return seq + 1, true
	}
	r.knownN.Add(int64(len(fr.ss)))
	r.knownF.Add(1)
	names := r.uniqueNames(in, fr.ss)
	size := min(maxChunk, max(1, len(fr.ss)/(4*r.workers)))
	for lo := 0; lo < len(fr.ss); lo += size {
		hi := min(lo+size, len(fr.ss))
		chunk := slices.Clone(fr.ss[lo:hi])
		clear(fr.ss[lo:hi]) // the chunk holds the last references
		var cn []string
		if names != nil {
			cn = names[lo:hi]
		}
		if !r.send(job{seq: seq, file: file, ss: chunk, names: cn, digest: fr.digest}) {
			return seq, false
		}
		fr.digest = nil
		seq += len(chunk)
	}
	return seq, true
}

// uniqueNames returns, for the samples of one file in input order, the
// name each gets when an earlier sample of the run already has its own
// (nil when none does): "NAME (STEM)" with the stem of its file, or, when
// that is taken too or the stem is the name, "NAME#K" with the smallest K
// from 2 that is free. The first sample of a name keeps it.
func (r *run) uniqueNames(in int, ss []*spectrum.Spectrum) []string {
	if r.taken == nil {
		r.taken = newNameSet(r.inputs)
	}
	t := r.taken
	var out []string
	stem := stem(r.inputs[in].Path)
	for i, s := range ss {
		name := SampleName(s)
		if !t.has(name) {
			if name == stem {
				t.add(name, in)
			} else {
				t.add(name, -1)
			}
			continue
		}
		alt := name + " (" + stem + ")"
		for k := 2; stem == name || t.has(alt); k++ {
			alt = fmt.Sprintf("%s#%d", name, k)
			if !t.has(alt) {
				break
			}
		}
		t.add(alt, -1)
		if out == nil {
			out = make([]string, len(ss))
		}
		out[i] = alt
	}
	return out
}

// SampleName is the name a sample's result carries before Run makes it
// unique: the spectrum's name, else its source.
func SampleName(s *spectrum.Spectrum) string {
	if s.Name != "" {
		return s.Name
	}
	return s.Source.String()
}

// solve starts stage 3: the workers, each with its own model, solve the
// jobs; results is closed when they are all done.
func (r *run) solve() {
	r.results = make(chan []Outcome, 2*r.workers)
	var sw sync.WaitGroup
	for wi := range r.workers {
		m := r.b.Model
		if wi > 0 {
			m = r.b.Model.Clone()
		}
		sw.Go(func() {
			for js := range r.jobs {
				if r.ctx.Err() != nil {
					continue
				}
				n := 0
				for _, j := range js {
					n += max(len(j.ss), 1)
				}
				outs := make([]Outcome, 0, n)
				for _, j := range js {
					outs = r.solveJob(m, j, outs)
				}
				select {
				case r.results <- outs:
				case <-r.ctx.Done():
				}
			}
		})
	}
	go func() {
		sw.Wait()
		close(r.results)
	}()
}

// solveJob solves the samples of j with m, appending their outcomes to
// outs.
func (r *run) solveJob(m *unmix.Model, j job, outs []Outcome) []Outcome {
	if j.err != nil {
		return append(outs, Outcome{Seq: j.seq, File: j.file, Err: j.err, Unread: true, Digest: j.digest})
	}
	first := len(outs)
	outs = append(outs, make([]Outcome, len(j.ss))...)
	if len(j.ss) > 0 {
		outs[first].Digest = j.digest
	}
	for k, s := range j.ss {
		o := &outs[first+k]
		o.Seq, o.File = j.seq+k, j.file
		if j.names != nil && j.names[k] != "" {
			o.Renamed = j.names[k]
		}
		o.Err = r.b.solveOne(m, &r.pool, o.Seq, s, o)
		j.ss[k] = nil
	}
	return outs
}

// emitInOrder is stage 4: it passes the outcomes to emit in order and
// counts them. Chunks hold consecutive sequence numbers, so they are keyed
// by their first. It returns the summary, the number of outcomes passed
// on and emit's error.
func (r *run) emitInOrder(emit func(Outcome) error) (Summary, int, error) {
	e := emitter{run: r, emit: emit, sum: Summary{Files: len(r.inputs)}}
	pending := map[int][]Outcome{}
	for outs := range r.results {
		if e.err != nil || r.ctx.Err() != nil {
			continue
		}
		pending[outs[0].Seq] = outs
		for r.ctx.Err() == nil && e.err == nil {
			chunk, ok := pending[e.next]
			if !ok {
				break
			}
			delete(pending, e.next)
			e.chunk(chunk)
		}
	}
	return e.sum, e.next, e.err
}

// emitter is the state of stage 4.
type emitter struct {
	*run
	emit func(Outcome) error
	sum  Summary
	next int   // sequence number of the next outcome to emit
	err  error // emit's error
}

// chunk emits the outcomes of one chunk until the run is cancelled or
// emit fails.
func (e *emitter) chunk(chunk []Outcome) {
	for _, o := range chunk {
		if e.ctx.Err() != nil {
			break
		}
		e.next++
		count(&e.sum, o)
		if err := e.emit(o); err != nil {
			e.err = err
			e.cancel()
			break
		}
		e.sum.Emitted++
		if s := o.slot; s != nil {
			s.r = unmix.Result{Amounts: s.r.Amounts, Flags: s.r.Flags, Baseline: s.r.Baseline}
			e.pool.Put(s)
		}
		if e.b.Progress != nil {
			e.progress()
		}
	}
}

// progress counts the samples the dispatcher found so far and calls
// Progress.
func (e *emitter) progress() {
	// Files first: a file counted in knownF always has its samples in
	// knownN already, so the total never counts a file twice.
	files := int(e.knownF.Load())
	samples := int(e.knownN.Load())
	// Each file not read yet counts as one sample, so that for a folder
	// of one-scan files the total is known from the start rather than
	// growing as files are read.
	e.b.Progress(e.next, samples+len(e.inputs)-files)
}

// solveOne solves s into a pooled Result and runs the Each hook. A scan
// that reads the same value everywhere (spectrum.CheckMeasured) is
// refused: a half-read file, not a sample.
func (b *Batch) solveOne(m *unmix.Model, pool *sync.Pool, seq int, s *spectrum.Spectrum, out *Outcome) error {
	if err := spectrum.CheckMeasured(s); err != nil {
		return err
	}
	f := unmix.Factors{}
	if b.Factors != nil {
		var err error
		if f, err = b.Factors(s); err != nil {
			return err
		}
	}
	if b.CheckOnly {
		err := m.Check(s, f)
		out.checked = err == nil
		return err
	}
	sl := pool.Get().(*slot)
	r := &sl.r
	if err := m.SolveTo(r, s, f); err != nil {
		pool.Put(sl)
		return err
	}
	if out.Renamed != "" {
		r.Sample = out.Renamed
	}
	out.Result, out.slot = r, sl
	if b.Encode != nil {
		out.Encoded = b.Encode(sl.enc[:0], r)
		sl.enc = out.Encoded
	}
	if b.Each != nil {
		if err := b.Each(seq, r); err != nil {
			return err
		}
	}
	return nil
}

// count adds an outcome to the summary.
func count(sum *Summary, o Outcome) {
	switch {
	case o.Unread:
		sum.Unreadable++
	case o.checked:
		sum.Samples++
		sum.Checked++
	case o.Result == nil:
		sum.Samples++
		sum.Failed++
	default:
		sum.Samples++
		if o.Err != nil {
			sum.Failed++
		} else {
			sum.Solved++
		}
		if o.Result.Flagged() {
			sum.Flagged++
		}
	}
}
