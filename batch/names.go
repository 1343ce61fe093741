package batch

import (
	"hash/maphash"
	"path/filepath"
	"strings"
)

// nameSet is the set of sample names a run has handed out (uniqueNames),
// kept small for folders of many files: an open-addressing table of
// 4-byte references, where a name that is its file's stem (the name of a
// one-scan file without a header name) is kept as the index of its input,
// whose path holds it anyway, and any other name in a list of its own. A
// folder of 20,000 scans takes some 13 bytes a file instead of a map's
// 40 and more.
type nameSet struct {
	inputs []Input
	other  []string // names that are not their file's stem
	slots  []uint32 // 0: empty; else a reference + 1 (see name)
	n      int
	seed   maphash.Seed
}

func newNameSet(inputs []Input) *nameSet {
	return &nameSet{inputs: inputs, seed: maphash.MakeSeed()}
}

// stem is the name of the file at path without its folder and extension.
func stem(path string) string {
	base := filepath.Base(path)
	return strings.TrimSuffix(base, filepath.Ext(base))
}

// name is the name reference ref stands for.
func (t *nameSet) name(ref uint32) string {
	if int(ref) < len(t.inputs) {
		return stem(t.inputs[ref].Path)
	}
	return t.other[int(ref)-len(t.inputs)]
}

// has reports whether name was added.
func (t *nameSet) has(name string) bool {
	if len(t.slots) == 0 {
		return false
	}
	mask := uint64(len(t.slots) - 1)
	for i := maphash.String(t.seed, name) & mask; ; i = (i + 1) & mask {
		r := t.slots[i]
		if r == 0 {
			return false
		}
		if t.name(r-1) == name {
			return true
		}
	}
}

// add adds name, which is not in the set; input is the index of the
// input whose stem name is, or -1.
func (t *nameSet) add(name string, input int) {
	if 2*(t.n+1) > len(t.slots) {
		t.grow()
	}
	ref := uint32(input)
	if input < 0 {
		ref = uint32(len(t.inputs) + len(t.other))
		t.other = append(t.other, name)
	}
	t.insert(name, ref)
	t.n++
}

func (t *nameSet) insert(name string, ref uint32) {
	mask := uint64(len(t.slots) - 1)
	i := maphash.String(t.seed, name) & mask
	for t.slots[i] != 0 {
		i = (i + 1) & mask
	}
	t.slots[i] = ref + 1
}

// grow doubles the table (at least 64 slots) and inserts every name again.
func (t *nameSet) grow() {
	old := t.slots
	t.slots = make([]uint32, max(64, 2*len(old)))
	for _, r := range old {
		if r != 0 {
			t.insert(t.name(r-1), r-1)
		}
	}
}
