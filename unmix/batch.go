package unmix

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

	"huesolve/spectrum"
)

// Input is one file to read, or a command-line argument that named no file
// (Err set: a pattern that matched nothing, say).
type Input struct {
	Path string
	Err  error
}

// ErrNoMatch: a pattern or folder named no file.
var ErrNoMatch = errors.New("no file matches")

// ExpandInputs turns command-line arguments into files: a folder gives its
// regular, non-hidden files (not recursive), a pattern with *, ? or [
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
				out = append(out, Input{Path: a, Err: fmt.Errorf("%w pattern %q", ErrNoMatch, a)})
			}
			slices.SortFunc(m, NaturalCompare)
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
		var names []string
		for _, e := range ents {
			if e.Type().IsRegular() && !strings.HasPrefix(e.Name(), ".") {
				names = append(names, e.Name())
			}
		}
		slices.SortFunc(names, NaturalCompare)
		for _, nm := range names {
			out = append(out, Input{Path: filepath.Join(a, nm)})
		}
		n := len(names)
		if n == 0 {
			out = append(out, Input{Path: a, Err: fmt.Errorf("%w in folder %s", ErrNoMatch, a)})
		}
	}
	return out
}

// NaturalCompare orders names as a person would: runs of decimal digits
// compare by their value ("s2" < "s10" < "s11"), everything else byte by
// byte; names equal that way (s01, s1) fall back to plain order so the
// order is total.
func NaturalCompare(a, b string) int {
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
	Result *Result
	// Err says what failed: reading the file (Result nil, Unread true),
	// solving the sample (Result nil), or the Batch.Each hook (Result
	// set).
	Err    error
	Unread bool
	// Encoded holds what Batch.Encode made of Result (nil without it).
	// Like Result it is reused after emit returns.
	Encoded []byte
	// Checked: with Batch.CheckOnly, the sample was read and could be
	// solved.
	Checked bool
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
	Model *Model
	// Workers is the number of solving goroutines (0: GOMAXPROCS).
	Workers int
	// Read are the reader options for every file.
	Read spectrum.ReadOptions
	// ReadFile reads one file; nil means spectrum.ReadFile.
	ReadFile func(path string, opt spectrum.ReadOptions) ([]*spectrum.Spectrum, error)
	// Factors gives each sample its dilution and path; nil means defaults.
	// An error fails that sample.
	Factors func(s *spectrum.Spectrum) (Factors, error)
	// Each, if not nil, is called in the worker right after a sample is
	// solved (plots, say), with the sample's sequence number (as in
	// Outcome.Seq); it may run concurrently for different samples. An
	// error is reported in the outcome and counts the sample failed.
	Each func(seq int, r *Result) error
	// Encode, if not nil, formats each solved sample in the worker, so
	// that output formatting runs in parallel too; the bytes come in
	// Outcome.Encoded. It must be safe for concurrent use.
	Encode func(dst []byte, r *Result) []byte
	// Progress, if not nil, is called from the emitting goroutine after
	// each outcome, with the samples done and the samples known so far.
	Progress func(done, known int)
	// CheckOnly reads every sample and checks it (Model.Check) without
	// solving it: outcomes carry no Result, Checked is set for a sample
	// that could be solved, and Err for one that could not. Factors is
	// called as usual; Each and Encode are not.
	CheckOnly bool
}

// job is a chunk of consecutive samples of one file (or a file that
// failed to read), the first numbered seq.
type job struct {
	seq  int
	file string
	ss   []*spectrum.Spectrum
	err  error
}

// maxChunk is the most samples handed to a worker at once.
const maxChunk = 64

type fileRead struct {
	ss  []*spectrum.Spectrum
	err error
}

// Run reads the inputs, solves every sample and calls emit with each
// outcome in input order (file order, then the order of the scans in each
// file), whatever the number of workers. emit runs in the caller's
// goroutine; the Result it gets is reused after emit returns, so emit must
// copy what it keeps.
//
// A file that cannot be read, or a sample that cannot be solved, is
// passed to emit with Err set and the batch goes on. Run stops early if
// emit returns an error (returned as is) or ctx is cancelled (ctx.Err()
// is returned); the Summary then counts what was emitted before the stop,
// and no outcome after it is emitted.
func (b *Batch) Run(ctx context.Context, inputs []Input, emit func(Outcome) error) (Summary, error) {
	sum := Summary{Files: len(inputs)}
	workers := b.Workers
	if workers <= 0 {
		workers = runtime.GOMAXPROCS(0)
	}
	read := b.ReadFile
	if read == nil {
		read = spectrum.ReadFile
	}
	parent := ctx
	ctx, cancel := context.WithCancel(parent)
	defer cancel()

	// Stage 1: read files ahead in parallel. Tokens are taken in file
	// order, so the next file the dispatcher waits for always has one.
	ready := make([]chan fileRead, len(inputs))
	for i := range ready {
		ready[i] = make(chan fileRead, 1)
	}
	lookahead := workers + 1
	tokens := make(chan struct{}, lookahead)
	files := make(chan int)
	var wg sync.WaitGroup
	go func() {
		defer close(files)
		for i := range inputs {
			select {
			case tokens <- struct{}{}:
			case <-ctx.Done():
				return
			}
			select {
			case files <- i:
			case <-ctx.Done():
				return
			}
		}
	}()
	for range min(workers, max(len(inputs), 1)) {
		wg.Go(func() {
			for i := range files {
				in := inputs[i]
				if in.Err != nil {
					ready[i] <- fileRead{err: in.Err}
					continue
				}
				ss, err := read(in.Path, b.Read)
				if err == nil && len(ss) == 0 {
					err = fmt.Errorf("%s: %w", in.Path, spectrum.ErrEmpty)
				}
				ready[i] <- fileRead{ss: ss, err: err}
			}
		})
	}

	// Stage 2: dispatch samples in order with sequence numbers, in
	// chunks of consecutive samples so that hand-offs between goroutines
	// stay rare next to the solving (a solve takes some 15 µs).
	jobs := make(chan job, 2*workers)
	known := make(chan int, len(inputs)+1)
	total, complete := 0, false // written before jobs is closed
	go func() {
		defer close(jobs)
		seq := 0
		defer func() { total = seq }()
		for i := range inputs {
			var fr fileRead
			select {
			case fr = <-ready[i]:
			case <-ctx.Done():
				return
			}
			if fr.err != nil {
				known <- 1
				select {
				case jobs <- job{seq: seq, file: inputs[i].Path, err: fr.err}:
				case <-ctx.Done():
					return
				}
				seq++
				<-tokens
				continue
			}
			known <- len(fr.ss)
			size := min(maxChunk, max(1, len(fr.ss)/(4*workers)))
			for lo := 0; lo < len(fr.ss); lo += size {
				hi := min(lo+size, len(fr.ss))
				chunk := slices.Clone(fr.ss[lo:hi])
				clear(fr.ss[lo:hi]) // the chunk holds the last references
				select {
				case jobs <- job{seq: seq, file: inputs[i].Path, ss: chunk}:
				case <-ctx.Done():
					return
				}
				seq += len(chunk)
			}
			<-tokens
		}
		complete = true
	}()

	// Stage 3: solve.
	results := make(chan []Outcome, 2*workers)
	pool := sync.Pool{New: func() any { return new(Result) }}
	var sw sync.WaitGroup
	for wi := range workers {
		m := b.Model
		if wi > 0 {
			m = b.Model.Clone()
		}
		sw.Go(func() {
			for j := range jobs {
				if ctx.Err() != nil {
					continue
				}
				var outs []Outcome
				if j.err != nil {
					outs = []Outcome{{Seq: j.seq, File: j.file, Err: j.err, Unread: true}}
				} else {
					outs = make([]Outcome, len(j.ss))
					for k, s := range j.ss {
						o := &outs[k]
						o.Seq, o.File = j.seq+k, j.file
						o.Err = b.solveOne(m, &pool, o.Seq, s, o)
						j.ss[k] = nil
					}
				}
				select {
				case results <- outs:
				case <-ctx.Done():
				}
			}
		})
	}
	go func() {
		sw.Wait()
		close(results)
	}()

	// Stage 4: emit in order. Chunks hold consecutive sequence numbers,
	// so they are keyed by their first.
	pending := map[int][]Outcome{}
	next, knownN := 0, 0
	var emitErr error
	for outs := range results {
		if emitErr != nil || ctx.Err() != nil {
			continue
		}
		pending[outs[0].Seq] = outs
		for ctx.Err() == nil && emitErr == nil {
			chunk, ok := pending[next]
			if !ok {
				break
			}
			delete(pending, next)
			for _, o := range chunk {
				if ctx.Err() != nil {
					break
				}
				next++
				count(&sum, o)
				if err := emit(o); err != nil {
					emitErr = err
					cancel()
					break
				}
				sum.Emitted++
				if o.Result != nil {
					*o.Result = Result{Amounts: o.Result.Amounts, Flags: o.Result.Flags, Baseline: o.Result.Baseline, encoded: o.Result.encoded}
					pool.Put(o.Result)
				}
				if b.Progress != nil {
				drain:
					for {
						select {
						case k := <-known:
							knownN += k
						default:
							break drain
						}
					}
					b.Progress(next, knownN)
				}
			}
		}
	}
	if emitErr != nil {
		return sum, emitErr
	}
	if !complete || next < total {
		if err := parent.Err(); err != nil {
			return sum, err
		}
		return sum, errors.New("unmix: batch stopped early")
	}
	cancel()
	wg.Wait()
	return sum, nil
}

// solveOne solves s into a pooled Result and runs the Each hook.
func (b *Batch) solveOne(m *Model, pool *sync.Pool, seq int, s *spectrum.Spectrum, out *Outcome) error {
	f := Factors{}
	if b.Factors != nil {
		var err error
		if f, err = b.Factors(s); err != nil {
			return err
		}
	}
	if b.CheckOnly {
		err := m.Check(s, f)
		out.Checked = err == nil
		return err
	}
	r := pool.Get().(*Result)
	if err := m.SolveTo(r, s, f); err != nil {
		pool.Put(r)
		return err
	}
	out.Result = r
	if b.Encode != nil {
		out.Encoded = b.Encode(r.encoded[:0], r)
		r.encoded = out.Encoded
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
	case o.Checked:
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
