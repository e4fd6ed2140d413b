package touchstone

import "unsafe"

// unsafeString returns a string that shares b's memory. The caller must not
// change b while the string is in use, nor let the string outlive that use.
func unsafeString(b []byte) string {
	if len(b) == 0 {
		return ""
	}
	return unsafe.String(&b[0], len(b))
}
