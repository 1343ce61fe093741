package bytesize

import "testing"

func TestText(t *testing.T) {
	for _, c := range []struct {
		n    int64
		want string
	}{
		{0, "0 bytes"}, {1023, "1023 bytes"}, {1024, "1 KiB"}, {1536, "1.5 KiB"},
		{64 << 20, "64 MiB"}, {1 << 30, "1 GiB"}, {5 << 30, "5 GiB"}, {5<<30 + 1<<29, "5.5 GiB"},
	} {
		if got := Text(c.n); got != c.want {
			t.Errorf("Text(%d) = %q, want %q", c.n, got, c.want)
		}
	}
}
