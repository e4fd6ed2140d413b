// Package limits reads, writes and checks limit files: the return-loss or
// VSWR that a device must meet over each of its frequency bands, as a
// production line checks it board after board.
//
// # The limit file
//
// A limit file is plain UTF-8 text with one band per line:
//
//	# Fieldnode antenna, production limits
//	band 863M 870M rl 10        EU SRD
//	band 902MHz 928MHz vswr 1.9 US ISM
//	band 902MHz 928MHz power 80% US ISM, power to the antenna
//
// The rules:
//
//   - A line is "band LO HI KIND VALUE [LABEL]", fields separated by spaces
//     or tabs. The keyword band is case-insensitive.
//   - LO and HI are frequencies, LO ≤ HI (equal for a single frequency). A
//     frequency is a number with an optional prefix k, M, G or T and an
//     optional unit Hz, written without a space: 863M, 863MHz, 0.863GHz,
//     863e6 and 863000000 are the same. A lone "m" is refused as ambiguous.
//   - KIND is rl, vswr or power (case-insensitive). "rl DB" asks for a
//     return loss of at least DB dB at every frequency of the band, DB > 0
//     (10 dB means |Γ| ≤ 0.316). "vswr X" asks for a VSWR of at most X,
//     X > 1. "power P%" asks that at least P % of the power the source
//     makes available reaches the load at every frequency of the band,
//     0 < P ≤ 100; "power LdB" asks the same as a loss of at most L dB
//     (1dB is 79.4 %). A measured sweep's load takes 1 − |Γ|² of the
//     power; through a matching network, what its parts do not burn. To
//     ask for a return loss and a power in one band, write two lines with
//     the same frequencies. Values must be finite; a return loss above
//     100 dB is refused as a slip.
//   - LABEL is optional free text naming the band; it runs to the end of
//     the line or to a '#', and runs of spaces in it become one space.
//   - '#' starts a comment that runs to the end of the line, on a line of
//     its own or after a band. Blank lines are ignored. Lines may end in
//     "\n" or "\r\n"; a UTF-8 byte-order mark at the start is skipped.
//   - A file needs at least one band. Bands may overlap; each is checked
//     on its own.
//
// [Parse] reports the first error as a *[ParseError] with the line and
// column (in bytes, from 1) and a cause that wraps [ErrSyntax], [ErrValue]
// or [ErrEmpty]. [Write] writes bands back in this format, so that Parse
// reads exactly the same bands.
//
// # Checking
//
// [Check] evaluates a reflection sweep against bands: every measured point
// from LO to HI, and the sweep interpolated at LO and HI themselves, must
// meet the limit. The margin is in dB of return loss for both kinds
// (measured RL − required RL; a VSWR limit X is the return loss
// −20·log10((X − 1)/(X + 1))), and for a power limit 10·log10(share/least),
// so a positive margin passes and the worst point of a band is the one of
// least margin. A band that the sweep does
// not cover from end to end fails: a check must not pass on points that
// were never measured.
package limits
