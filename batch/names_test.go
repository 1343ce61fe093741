package batch

import (
	"math/rand/v2"
	"strconv"
	"testing"
)

// TestNameSet: the compact set answers as a map does, for names kept as
// their input's stem and names kept on their own, across its growth.
func TestNameSet(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	var inputs []Input
	for i := range 3000 {
		inputs = append(inputs, Input{Path: "d/s" + strconv.Itoa(i%1500) + ".csv"})
	}
	set := newNameSet(inputs)
	want := map[string]bool{}
	for range 20000 {
		i := rng.IntN(len(inputs))
		name, input := stem(inputs[i].Path), i
		if rng.IntN(3) == 0 {
			name, input = "x"+strconv.Itoa(rng.IntN(2000)), -1
		}
		if got := set.has(name); got != want[name] {
			t.Fatalf("has(%q) = %v, want %v", name, got, want[name])
		}
		if !want[name] {
			set.add(name, input)
			want[name] = true
		}
	}
	if set.n != len(want) || set.has("s1500") || set.has("") {
		t.Fatalf("%d names, want %d", set.n, len(want))
	}
}
