// Package filekind names in words the kind of a file that is not a
// regular file, for messages that refuse one (an output that would replace
// a device, an input that would block on a named pipe).
package filekind

import "io/fs"

// Of names the kind of file m describes: "a folder", "a named pipe
// (FIFO)", "a socket", "a character device", "a block device", "a
// symbolic link", else "a special file".
func Of(m fs.FileMode) string {
	switch {
	case m.IsDir():
		return "a folder"
	case m&fs.ModeNamedPipe != 0:
		return "a named pipe (FIFO)"
	case m&fs.ModeSocket != 0:
		return "a socket"
	case m&fs.ModeCharDevice != 0:
		return "a character device"
	case m&fs.ModeDevice != 0:
		return "a block device"
	case m&fs.ModeSymlink != 0:
		return "a symbolic link"
	}
	return "a special file"
}
