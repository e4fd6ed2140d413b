package server

import (
	"fmt"
	"strconv"
	"unicode/utf8"
)

// maxEcho bounds how much of a client's own input an error message quotes
// back: an error names what was wrong and where, and a 2 MB header line
// quoted whole would make a 6 MB reply.
const maxEcho = 120

// maxReplyText bounds the whole text of an error reply (a websocket error
// or an upload's JSON answer), whatever made it.
const maxReplyText = 1000

// clip returns s cut to at most n bytes on a character boundary, with
// "…" and the full length added when it was cut.
func clip(s string, n int) string {
	if len(s) <= n {
		return s
	}
	cut := n
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return fmt.Sprintf("%s… (%d bytes in all)", s[:cut], len(s))
}

// quoteClipped is strconv.Quote of s cut to at most n bytes, with the
// full length noted after the quotes when it was cut.
func quoteClipped(s string, n int) string {
	if len(s) <= n {
		return strconv.Quote(s)
	}
	cut := n
	for cut > 0 && !utf8.RuneStart(s[cut]) {
		cut--
	}
	return fmt.Sprintf("%s… (%d bytes in all)", strconv.Quote(s[:cut]), len(s))
}
