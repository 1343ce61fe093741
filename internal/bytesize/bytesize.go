// Package bytesize writes byte counts for people, for messages that state
// a size limit.
package bytesize

import (
	"strconv"
	"strings"
)

// Text writes n as "512 bytes", "1.5 KiB", "64 MiB" or "5 GiB" (binary
// units, one decimal, a ".0" dropped).
func Text(n int64) string {
	const k = 1024
	switch {
	case n < k:
		return strconv.FormatInt(n, 10) + " bytes"
	case n < k*k:
		return oneDecimal(float64(n)/k) + " KiB"
	case n < k*k*k:
		return oneDecimal(float64(n)/(k*k)) + " MiB"
	}
	return oneDecimal(float64(n)/(k*k*k)) + " GiB"
}

func oneDecimal(v float64) string {
	return strings.TrimSuffix(strconv.FormatFloat(v, 'f', 1, 64), ".0")
}
