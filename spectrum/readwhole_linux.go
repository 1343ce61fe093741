//go:build linux

package spectrum

import "syscall"

// readSmallFile reads the regular file at path into *bp when it holds at
// most max bytes, with the system calls themselves: open (non-blocking,
// as OpenInput), fstat, read, close, and no poller registration. ok false
// means the general path must read the file (see readWhole); err is a
// failed read of a file opened and found fit.
func readSmallFile(path string, max int64, bp *[]byte) (n int, ok bool, err error) {
	var fd int
	for {
		fd, err = syscall.Open(path, syscall.O_RDONLY|syscall.O_NONBLOCK|syscall.O_CLOEXEC, 0)
		if err != syscall.EINTR {
			break
		}
	}
	if err != nil {
		return 0, false, nil
	}
	defer syscall.Close(fd)
	var st syscall.Stat_t
	if err := syscall.Fstat(fd, &st); err != nil || st.Mode&syscall.S_IFMT != syscall.S_IFREG || st.Size > max {
		return 0, false, nil
	}
	// One byte more than the size tells a file that grew since fstat.
	growWholeBuf(bp, int(st.Size)+1)
	buf := *bp
	for n < len(buf) {
		m, err := syscall.Read(fd, buf[n:])
		if err == syscall.EINTR {
			continue
		}
		if err != nil {
			return 0, true, err
		}
		if m == 0 {
			return n, true, nil
		}
		n += m
		if n == int(st.Size) && st.Size > 0 {
			// All the bytes fstat counted: the read that would return
			// 0 is saved (a file that changes while it is read is read
			// as of some moment in any case).
			return n, true, nil
		}
	}
	return 0, false, nil // grew while it was read, or stated no size
}
