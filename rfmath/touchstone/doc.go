// Package touchstone reads and writes Touchstone® files (versions 1.x, 2.0
// and 2.1 of the IBIS Open Forum specification) and imports simple 1-port
// CSV sweeps, producing [rfmath.Sweep] values.
//
// # Reading
//
// [Read] accepts S-, Y- and Z-parameter data in RI, MA and DB formats with
// any frequency unit. Y and Z data are converted to S-parameters at the
// file's reference resistances with the conversions of package rfmath, so
// the returned sweep always holds S-parameters; [File] records what the file
// said. H- and G-parameters and mixed-mode data are refused with
// [ErrUnsupported].
//
// A file without a [Version] keyword is read by the version 1 rules: the
// port count comes from the file name (.s1p … .sNp), the option line is the
// first non-comment line and later option lines are ignored, Y and Z data are
// normalised to R, 2-port data are ordered N11 N21 N12 N22, and 2-port noise
// data follow the network data without a keyword. A file that starts with
// [Version] 2.0 or 2.1 is read by the keyword rules of version 2, and its
// name does not matter.
//
// Both versions may spread one frequency's data over several lines at any
// pair boundary. The reader counts the values of each frequency point and
// also checks that a point starts on a new line with an odd count of
// numbers (the frequency and whole pairs) and that each continuation line
// holds whole pairs, so a value missing in the middle of a file is reported
// at the line where it happened rather than at the end.
//
// Every problem with the input is a *[ParseError] with the file name, line
// and column, wrapping [ErrSyntax], [ErrUnsupported] or [ErrLimit]. The
// reader never returns a partial sweep.
//
// # Limits
//
// [Limits] bound the work a hostile or mistaken upload can cause. The
// defaults are 64 MiB of input, 16 ports and 2,000,000 frequency points.
//
// # Writing
//
// [Write] writes version 1.1 layout by default (at most four pairs per line,
// each matrix row of a 3+ port on a new line) or version 2.1 on request, and
// when the ports' reference resistances differ, which a version 1 option
// line (one R for every port) cannot hold.
// Reading what was written gives back the same numbers to the written
// precision.
//
// # Safety
//
// The package only handles files. The measurements they describe were taken
// at the bench: observe the analyser's maximum input power and DC ratings and
// ESD precautions at its ports, and follow local regulations and licensed
// practice for any transmitter work.
package touchstone
