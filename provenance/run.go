// Package provenance holds the record of one run of a command that writes
// results: which tool and version made them, when, from which command
// line, reference set, method, blank and input files (each with its
// SHA-256), and every setting in force. Package report writes it into
// every result file (CSV comment lines, a JSON "run" object) and can show
// it in any other form through Run.Fields, which gives it as ordered
// (key, label, value) triples.
//
// A run's record is host-independent: the command line is the program's
// base name and the arguments as typed, and files are named by the paths
// the user gave (relative paths stay relative), so that two runs of the
// same command on the same files differ only in Time.
package provenance

import (
	"bytes"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"fmt"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
)

// Run is the record of one run.
type Run struct {
	// Tool and Version name the program and its version.
	Tool    string `json:"tool"`
	Version string `json:"version"`
	// Time is when the run started, RFC 3339 in UTC, to the second.
	Time string `json:"time"`
	// Command is the program's base name followed by the arguments as
	// typed (see CommandLine).
	Command []string `json:"command"`
	// Method is the method file given (nil when none was): its path as
	// given and its checksum.
	Method *File `json:"method,omitempty"`
	// Reference is the reference set: its path (as given, or as the
	// method resolved it) and its checksum (the set's own checksum
	// field, which a method binds).
	Reference *File `json:"reference_set,omitempty"`
	// Blank is the separate blank scan file, if any, with its SHA-256.
	Blank *File `json:"blank,omitempty"`
	// Sheets are the sheets read (sample sheet, check standards,
	// standards for cross-validation), each with its SHA-256; File.Role
	// says which is which.
	Sheets []File `json:"sheets,omitempty"`
	// Interferents are the scans of substances fitted but not quantified:
	// those the reference set stores (Role "stored in the reference
	// set", with the file and SHA-256 it recorded) and those given, each
	// with its SHA-256.
	Interferents []File `json:"interferents,omitempty"`
	// Settings are every setting in force, in a fixed order, with the
	// values used (defaults resolved: a window left to the whole grid is
	// the grid's range).
	Settings Settings `json:"settings"`
	// Overrides are the settings a method gave and the command line
	// changed.
	Overrides []Override `json:"overrides,omitempty"`
	// Inputs are the input files (scans), in the order read, with
	// their SHA-256.
	Inputs []File `json:"inputs"`
	// InputList, if not nil, holds more input files, after Inputs: a
	// run over a folder of many scans keeps them there compactly. Read
	// both through EachInput or AllInputs; the JSON form lists them in
	// "inputs".
	InputList *InputList `json:"-"`
}

// InputList is a compact list of input files, in the order read: each
// a path and the SHA-256 of the bytes read, or a note saying why there
// is none. It holds 48 bytes a file besides the path's text, which it
// shares with the caller, where a File would hold 80 and a 64-byte hex
// string: a run over 20,000 files keeps its record in about 1 MB.
type InputList struct {
	paths []string
	sums  [][sha256.Size]byte
	notes map[int]string // entries with no SHA-256
}

// Grow makes room for n more files.
func (l *InputList) Grow(n int) {
	l.paths = slices.Grow(l.paths, n)
	l.sums = slices.Grow(l.sums, n)
}

// Add appends a file: its path and SHA-256, or, when sum is nil, the
// note saying why it has none.
func (l *InputList) Add(path string, sum *[sha256.Size]byte, note string) {
	var s [sha256.Size]byte
	if sum != nil {
		s = *sum
	} else {
		if l.notes == nil {
			l.notes = make(map[int]string)
		}
		l.notes[len(l.paths)] = note
	}
	l.paths = append(l.paths, path)
	l.sums = append(l.sums, s)
}

// Len is the number of files in l (0 for a nil list).
func (l *InputList) Len() int {
	if l == nil {
		return 0
	}
	return len(l.paths)
}

// File returns file i as a File.
func (l *InputList) File(i int) File {
	f := File{Path: l.paths[i]}
	if note, ok := l.notes[i]; ok {
		f.Note = note
	} else {
		f.SHA256 = hex.EncodeToString(l.sums[i][:])
	}
	return f
}

// EachInput calls fn with each input file in turn: Inputs, then those
// of InputList.
func (r *Run) EachInput(fn func(File)) {
	for _, in := range r.Inputs {
		fn(in)
	}
	for i := range r.InputList.Len() {
		fn(r.InputList.File(i))
	}
}

// AllInputs returns every input file (EachInput) as one list.
func (r *Run) AllInputs() []File {
	if r.InputList.Len() == 0 {
		return r.Inputs
	}
	all := make([]File, 0, len(r.Inputs)+r.InputList.Len())
	r.EachInput(func(f File) { all = append(all, f) })
	return all
}

// File is a file a run used.
type File struct {
	// Role says what the file was for, in a word or two ("sample
	// sheet"); empty where the field it sits in says it.
	Role string `json:"role,omitempty"`
	// Path is the path as the user gave it (or as a folder or pattern
	// expanded to).
	Path string `json:"path"`
	// Checksum is a reference set's or method's own checksum (the one
	// stored in the file); SHA256 is the SHA-256 of the file's bytes.
	Checksum string `json:"checksum,omitempty"`
	SHA256   string `json:"sha256,omitempty"`
	// Note says why a file has no SHA-256 (it could not be read).
	Note string `json:"note,omitempty"`
}

// Setting is one setting in force: Name is the option's name without
// dashes (window, baseline, ...), Value the value used, in the option's
// own syntax where it has one.
type Setting struct {
	Name  string `json:"name"`
	Value string `json:"value"`
}

// Settings are settings in a fixed order. In JSON they are one object,
// {"window": "350-750", "baseline": "offset", ...}, its keys in that
// order.
type Settings []Setting

// MarshalJSON writes the settings as one object, in order.
func (ss Settings) MarshalJSON() ([]byte, error) {
	b := []byte{'{'}
	for i, s := range ss {
		if i > 0 {
			b = append(b, ',')
		}
		k, err := json.Marshal(s.Name)
		if err != nil {
			return nil, err
		}
		v, err := json.Marshal(s.Value)
		if err != nil {
			return nil, err
		}
		b = append(append(append(b, k...), ':'), v...)
	}
	return append(b, '}'), nil
}

// UnmarshalJSON reads the object MarshalJSON writes, keeping its order.
func (ss *Settings) UnmarshalJSON(b []byte) error {
	dec := json.NewDecoder(bytes.NewReader(b))
	if t, err := dec.Token(); err != nil || t != json.Delim('{') {
		return fmt.Errorf("provenance: settings: want a JSON object")
	}
	*ss = nil
	for dec.More() {
		k, err := dec.Token()
		if err != nil {
			return err
		}
		name, _ := k.(string)
		var v string
		if err := dec.Decode(&v); err != nil {
			return fmt.Errorf("provenance: setting %q: %w", name, err)
		}
		*ss = append(*ss, Setting{Name: name, Value: v})
	}
	_, err := dec.Token()
	return err
}

// Override is a setting given on the command line over a method's.
type Override struct {
	Name   string `json:"name"`
	Value  string `json:"value"`
	Method string `json:"method_value"`
}

// Field is one line of a run's record: Key is a lower-case name without
// spaces (for CSV comment lines and scripts; keys may repeat, e.g.
// "input"), Label a short text for people, Value the value on one line.
type Field struct {
	Key, Label, Value string
}

// Fields returns the record as ordered fields: tool, version, time,
// command, method, reference set, blank, sheets, interferents, settings,
// overrides, then one "input" per input file. A file with a hash is given as
// "SHA256  PATH", the layout of sha256sum(1), so the lines can be
// checked with it. Values are on one line: text holding control
// characters is quoted with Go escapes.
func (r *Run) Fields() []Field {
	var fs []Field
	r.EachField(func(f Field) { fs = append(fs, f) })
	return fs
}

// EachField calls fn with each field of Fields in turn, without making
// the list (a run over 20,000 files has as many input fields).
func (r *Run) EachField(fn func(Field)) {
	add := func(key, label, value string) { fn(Field{key, label, oneLine(value)}) }
	add("tool", "Tool", r.Tool)
	add("version", "Version", r.Version)
	add("time", "Time (UTC)", r.Time)
	add("command", "Command", CommandLine(r.Command))
	if r.Method != nil {
		add("method", "Method", r.Method.Path)
		add("method_checksum", "Method checksum", r.Method.Checksum)
	}
	if r.Reference != nil {
		add("reference_set", "Reference set", r.Reference.Path)
		add("reference_set_checksum", "Reference set checksum", r.Reference.Checksum)
	}
	if r.Blank != nil {
		add("blank", "Blank", r.Blank.hashed())
	}
	for _, s := range r.Sheets {
		key := strings.ReplaceAll(s.Role, " ", "_")
		add(key, upperFirst(s.Role), s.hashed())
	}
	for _, f := range r.Interferents {
		label := "Interferent"
		if f.Role != "" {
			label += " (" + f.Role + ")"
		}
		add("interferent", label, f.hashed())
	}
	for _, s := range r.Settings {
		add(s.Name, "Setting "+s.Name, s.Value)
	}
	for _, o := range r.Overrides {
		add("override", "Override", o.Name+" "+o.Value+" (method: "+o.Method+")")
	}
	r.EachInput(func(in File) { add("input", "Input", in.hashed()) })
}

// hashed is "SHA256  PATH", or "PATH (NOTE)" for a file not hashed.
func (f File) hashed() string {
	p := oneLine(f.Path)
	switch {
	case f.SHA256 != "":
		return f.SHA256 + "  " + p
	case f.Note != "":
		return p + " (" + f.Note + ")"
	}
	return p
}

// CommandLine joins a command as a shell would read it back: an
// argument holding a space, a quote, a shell metacharacter or nothing is
// put in single quotes.
func CommandLine(args []string) string {
	q := make([]string, len(args))
	for i, a := range args {
		q[i] = shellQuote(a)
	}
	return strings.Join(q, " ")
}

func shellQuote(a string) string {
	if a != "" && !strings.ContainsAny(a, " \t\n\r'\"\\$`!*?[]{}()<>|&;#~") {
		return a
	}
	return "'" + strings.ReplaceAll(a, "'", `'\''`) + "'"
}

// Command is the command line to record for a program started as argv0
// with args: argv0's base name (the folder it was started from says
// nothing about the results) and the arguments as typed.
func Command(argv0 string, args []string) []string {
	return append([]string{filepath.Base(argv0)}, args...)
}

// oneLine quotes s with Go escapes when it holds a control character,
// so that a value stays on its line.
func oneLine(s string) string {
	for _, c := range s {
		if c < 0x20 || c == 0x7f || (c >= 0x80 && c < 0xa0) || c == '\u2028' || c == '\u2029' {
			return strconv.Quote(s)
		}
	}
	return s
}

func upperFirst(s string) string {
	if s == "" {
		return s
	}
	return strings.ToUpper(s[:1]) + s[1:]
}
