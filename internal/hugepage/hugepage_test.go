package hugepage

import (
	"testing"
	"unsafe"
)

func TestFloat64s(t *testing.T) {
	for _, n := range []int{0, 1, 1000, minBytes/8 + 3} {
		v := Float64s(n)
		if len(v) != n {
			t.Fatalf("Float64s(%d) has length %d", n, len(v))
		}
		for i, x := range v {
			if x != 0 {
				t.Fatalf("Float64s(%d)[%d] = %g, want 0", n, i, x)
			}
		}
		for i := range v {
			v[i] = float64(i)
		}
		if n > 0 && v[n-1] != float64(n-1) {
			t.Fatalf("Float64s(%d): last value did not stick", n)
		}
	}
}

func TestBytesOfAligned(t *testing.T) {
	v := make([]float64, 3*pageBytes/8+1)
	for _, w := range [][]float64{v, v[1:], v[5:]} {
		b := bytesOf(w)
		if len(b) == 0 {
			t.Fatal("no aligned part in three pages")
		}
		if p := uintptr(unsafe.Pointer(&b[0])); p%pageBytes != 0 {
			t.Errorf("start %#x not page-aligned", p)
		}
		end := uintptr(unsafe.Pointer(&w[len(w)-1])) + 8
		if got := uintptr(unsafe.Pointer(&b[len(b)-1])) + 1; got != end {
			t.Errorf("aligned view ends at %#x, slice at %#x", got, end)
		}
	}
	if b := bytesOf(v[:1]); len(b) > 8 {
		t.Errorf("view of one value has %d bytes", len(b))
	}
}

// Touch leaves the values as they were (zeros) and writes nothing past
// the slice it is given, in one part or several.
func TestTouch(t *testing.T) {
	n := minBytes/8 + 1001
	for _, parts := range []int{1, 2, 3, 8} {
		all := make([]float64, n+16)
		for i := n; i < len(all); i++ {
			all[i] = 7 // beyond the slice touched
		}
		Touch(all[:n], parts)
		for i, x := range all[:n] {
			if x != 0 {
				t.Fatalf("parts %d: v[%d] = %g after Touch, want 0", parts, i, x)
			}
		}
		for i := n; i < len(all); i++ {
			if all[i] != 7 {
				t.Fatalf("parts %d: Touch wrote past the slice at %d", parts, i)
			}
		}
	}
	Touch(nil, 4)                 // nothing to do
	Touch(make([]float64, 10), 4) // below minBytes: nothing to do
}
