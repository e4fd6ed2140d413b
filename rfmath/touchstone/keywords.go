package touchstone

import (
	"bytes"
	"math"
	"strconv"
	"strings"
)

// keywordName lower-cases a keyword and collapses its inner blanks.
func keywordName(b []byte) string {
	return strings.ToLower(strings.Join(strings.Fields(string(b)), " "))
}

// knownKeywords lists the version 2 keywords, for the error about an
// unknown one.
var knownKeywords = "[Version], [Number of Ports], [Two-Port Data Order], [Number of Frequencies], [Number of Noise Frequencies], [Reference], [Matrix Format], [Mixed-Mode Order], [Network Data], [Noise Data], [Begin Information], [End Information], [End]"

// keyword is a version 2 keyword line: its name (lower case, inner blanks
// collapsed), the fields after its ']' and the column of its '['.
type keyword struct {
	name string
	args []field
	col  int
}

// keywordLine handles a version 2 keyword: it checks that the keyword may
// stand where it does and hands it to the function of its name.
func (p *parser) keywordLine(line []byte, i int) error {
	content, err := p.textLine(line)
	if err != nil {
		return err
	}
	end := bytes.IndexByte(content, ']')
	if end < 0 {
		return p.errAt(i+1, syntaxf("expected ']' closing the keyword"))
	}
	k := keyword{name: keywordName(content[i+1 : end]), args: splitFields(content, end+1), col: i + 1}
	if err := p.keywordInPlace(k); err != nil {
		return err
	}
	if err := p.keywordInOrder(k); err != nil {
		return err
	}
	if p.seen == nil {
		p.seen = make(map[string]int)
	}
	if _, dup := p.seen[k.name]; !dup {
		p.seen[k.name] = p.line
	}

	switch k.name {
	case "version":
		return p.versionKeyword(k)
	case "number of ports":
		return p.portsKeyword(k)
	case "two-port data order":
		return p.dataOrderKeyword(k)
	case "number of frequencies", "number of noise frequencies":
		return p.countKeyword(k)
	case "reference":
		return p.referenceKeyword(k)
	case "matrix format":
		return p.matrixKeyword(k)
	case "mixed-mode order":
		return p.errAt(k.col, unsupportedf("mixed-mode data ([Mixed-Mode Order]) are not supported"))
	case "network data":
		if err := p.noArgs(k); err != nil {
			return err
		}
		return p.startNetwork(k.col)
	case "noise data":
		return p.noiseDataKeyword(k)
	case "end":
		return p.endKeyword(k)
	case "begin information":
		if err := p.noArgs(k); err != nil {
			return err
		}
		p.inInfo, p.infoLine = true, p.line
		return nil
	case "end information":
		return p.errAt(k.col, syntaxf("[End Information] without [Begin Information]"))
	}
	return p.errAt(k.col, syntaxf("unknown keyword [%s]; expected one of %s", found(k.name), knownKeywords))
}

// keywordInPlace checks that the state of the file allows a keyword: a
// version 2 file that has started with [Version] and not ended, and no
// [Reference] or frequency point left incomplete.
func (p *parser) keywordInPlace(k keyword) error {
	name, col := k.name, k.col
	switch p.version {
	case 0:
		if name != "version" {
			return p.errAt(col, syntaxf("a file with keywords must start with [Version] 2.0 or 2.1, found [%s]", found(name)))
		}
	case 1:
		return p.errAt(col, syntaxf("keyword [%s] in a version 1 file (no [Version] before the option line): a version 2 file must start with [Version]", found(name)))
	}
	if p.state == stEnded {
		return p.errAt(col, syntaxf("keyword [%s] after [End]: [End] must be the last keyword", found(name)))
	}
	if p.refPending {
		return p.errAt(col, syntaxf("[Reference] on line %d needs %d values, one per port; found %d", p.refKwLine, p.ports, len(p.keyRefs)))
	}
	if p.inFrame {
		return p.errAt(col, syntaxf("the point at %g %s (line %d) still needs %d of its %d pairs", p.freq[len(p.freq)-1]/p.unit.mul, p.unit.name, p.frameLine, p.pairs-p.framePairs, p.pairs))
	}
	return nil
}

// keywordInOrder checks the keyword's place among the others: once only
// (but for [Version], checked by its own function, and the information
// block's), after the option line, after [Number of Ports] where it needs
// the port count, and before [Network Data] where it belongs to the
// header.
func (p *parser) keywordInOrder(k keyword) error {
	name, col := k.name, k.col
	if name != "version" && name != "begin information" && name != "end information" {
		if prev, dup := p.seen[name]; dup {
			return p.errAt(col, syntaxf("[%s] appears twice (first on line %d)", name, prev))
		}
	}
	if name == "version" {
		return nil
	}
	if !p.haveOpt {
		return p.errAt(col, syntaxf("expected the option line (# <unit> <parameter> <format> R <n>) after [Version], found [%s]", found(name)))
	}
	switch name {
	case "number of ports", "begin information", "end information", "end":
	default:
		if p.ports == 0 {
			return p.errAt(col, syntaxf("[%s] must follow [Number of Ports]", name))
		}
	}
	switch name {
	case "number of ports", "two-port data order", "number of frequencies", "number of noise frequencies", "reference", "matrix format", "mixed-mode order", "network data":
		if p.state != stHeader {
			return p.errAt(col, syntaxf("[%s] must come before [Network Data]", name))
		}
	}
	return nil
}

// noArgs checks that keyword k has no argument.
func (p *parser) noArgs(k keyword) error {
	if len(k.args) > 0 {
		return p.errAt(k.args[0].col, syntaxf("[%s] takes no argument, found %q", found(k.name), found(k.args[0].text)))
	}
	return nil
}

// oneArg returns the one argument of keyword k.
func (p *parser) oneArg(k keyword) (field, error) {
	if len(k.args) != 1 {
		return field{}, p.errAt(k.col, syntaxf("[%s] takes one argument, found %d", k.name, len(k.args)))
	}
	return k.args[0], nil
}

// versionKeyword handles [Version] 2.0 or 2.1, which makes the file a
// version 2 file.
func (p *parser) versionKeyword(k keyword) error {
	if p.version != 0 {
		return p.errAt(k.col, syntaxf("[Version] appears twice"))
	}
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	if a.text != "2.0" && a.text != "2.1" {
		return p.errAt(a.col, syntaxf("expected [Version] 2.0 or 2.1, found %q", found(a.text)))
	}
	p.version, p.ver21 = 2, a.text == "2.1"
	p.file.Version = a.text
	return nil
}

// portsKeyword handles [Number of Ports]: a positive whole number within
// the MaxPorts limit that agrees with the option line's reference
// resistances.
func (p *parser) portsKeyword(k keyword) error {
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	n, err := strconv.Atoi(a.text)
	if err != nil || n < 1 {
		return p.errAt(a.col, syntaxf("expected a positive whole number of ports, found %q", found(a.text)))
	}
	if n > p.lim.MaxPorts {
		return p.errAt(a.col, limitf("%d ports is more than the MaxPorts limit of %d", n, p.lim.MaxPorts))
	}
	if len(p.refs) > 1 && len(p.refs) != n {
		return p.errAt(a.col, syntaxf("the option line on line %d gives %d reference resistances; a %d-port file needs 1 or %d", p.refLine, len(p.refs), n, n))
	}
	p.ports = n
	return nil
}

// dataOrderKeyword handles [Two-Port Data Order] 12_21 or 21_12, allowed
// only in a 2-port file.
func (p *parser) dataOrderKeyword(k keyword) error {
	if p.ports != 2 {
		return p.errAt(k.col, syntaxf("[Two-Port Data Order] is allowed only in 2-port files; this file has %d ports", p.ports))
	}
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	if a.text != "12_21" && a.text != "21_12" {
		return p.errAt(a.col, syntaxf("expected [Two-Port Data Order] 12_21 or 21_12, found %q", found(a.text)))
	}
	p.order = a.text
	return nil
}

// countKeyword handles [Number of Frequencies] and [Number of Noise
// Frequencies] (only in a 2-port file): a positive whole number within the
// MaxPoints limit.
func (p *parser) countKeyword(k keyword) error {
	if k.name == "number of noise frequencies" && p.ports != 2 {
		return p.errAt(k.col, syntaxf("noise data are defined only for 2-port networks; this file has %d ports", p.ports))
	}
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	n, err := strconv.Atoi(a.text)
	if err != nil || n < 1 {
		return p.errAt(a.col, syntaxf("expected a positive whole number of frequencies, found %q", found(a.text)))
	}
	if n > p.lim.MaxPoints {
		return p.errAt(a.col, limitf("%d frequencies is more than the MaxPoints limit of %d", n, p.lim.MaxPoints))
	}
	if k.name == "number of frequencies" {
		p.nfreq, p.nfreqLine = n, p.line
	} else {
		p.nnoise, p.nnoiseLine = n, p.line
	}
	return nil
}

// referenceKeyword handles [Reference]: the values on its line, which may
// continue on the lines after it (see [parser.referenceValues]).
func (p *parser) referenceKeyword(k keyword) error {
	p.refPending, p.refKwLine = true, p.line
	nums, cols := make([]float64, 0, len(k.args)), make([]int, 0, len(k.args))
	for _, a := range k.args {
		v, err := parseNumber([]byte(a.text))
		if err != nil {
			return p.errAt(a.col, err)
		}
		nums, cols = append(nums, v), append(cols, a.col)
	}
	return p.referenceValues(nums, cols)
}

// matrixKeyword handles [Matrix Format] Full, Lower or Upper (any case).
func (p *parser) matrixKeyword(k keyword) error {
	a, err := p.oneArg(k)
	if err != nil {
		return err
	}
	m := strings.ToLower(a.text)
	if m != "full" && m != "lower" && m != "upper" {
		return p.errAt(a.col, syntaxf("expected [Matrix Format] Full, Lower or Upper, found %q", found(a.text)))
	}
	p.matrix = m
	return nil
}

// noiseDataKeyword handles [Noise Data]: it ends the network data, which
// must hold their count of points, and needs [Number of Noise Frequencies].
func (p *parser) noiseDataKeyword(k keyword) error {
	if err := p.noArgs(k); err != nil {
		return err
	}
	if p.state != stNetwork {
		return p.errAt(k.col, syntaxf("[Noise Data] must follow the network data"))
	}
	if err := p.endNetwork(k.col); err != nil {
		return err
	}
	if p.nnoise == 0 {
		return p.errAt(k.col, syntaxf("[Noise Data] needs [Number of Noise Frequencies] before [Network Data]"))
	}
	p.state = stNoise
	return nil
}

// endKeyword handles [End]: the network and noise data must hold the
// counts of points their keywords gave.
func (p *parser) endKeyword(k keyword) error {
	if err := p.noArgs(k); err != nil {
		return err
	}
	switch p.state {
	case stHeader:
		return p.errAt(k.col, syntaxf("[End] before [Network Data]: the file has no network data"))
	case stNetwork:
		if err := p.endNetwork(k.col); err != nil {
			return err
		}
		if p.nnoise > 0 {
			return p.errAt(k.col, syntaxf("[Number of Noise Frequencies] on line %d gives %d noise points, but there is no [Noise Data]", p.nnoiseLine, p.nnoise))
		}
	case stNoise:
		if n := len(p.file.Noise); n != p.nnoise {
			return p.errAt(k.col, syntaxf("[Number of Noise Frequencies] on line %d gives %d noise points, but [Noise Data] has %d", p.nnoiseLine, p.nnoise, n))
		}
	}
	p.state = stEnded
	return nil
}

// referenceValues adds values of [Reference], which may continue on the
// lines after the keyword.
func (p *parser) referenceValues(nums []float64, cols []int) error {
	for k, v := range nums {
		if len(p.keyRefs) == p.ports {
			return p.errAt(cols[k], syntaxf("[Reference] on line %d has more than %d values, one per port", p.refKwLine, p.ports))
		}
		if !(v > 0) || math.IsInf(v, 0) {
			return p.errAt(cols[k], syntaxf("reference resistance %g must be a positive number of ohms", v))
		}
		p.keyRefs = append(p.keyRefs, v)
	}
	if len(p.keyRefs) == p.ports {
		p.refPending = false
	}
	return nil
}

// startNetwork checks the header and sets up the network data of a version 2
// file.
func (p *parser) startNetwork(col int) error {
	if p.nfreq == 0 {
		return p.errAt(col, syntaxf("[Network Data] needs [Number of Frequencies] before it"))
	}
	if p.ports == 2 && p.order == "" {
		return p.errAt(col, syntaxf("a 2-port file needs [Two-Port Data Order] 12_21 or 21_12 before [Network Data]"))
	}
	p.z0 = make([]float64, p.ports)
	for i := range p.z0 {
		if p.keyRefs != nil {
			p.z0[i] = p.keyRefs[i] // [Reference] overrides the option line
		} else {
			p.z0[i] = p.refs[min(i, len(p.refs)-1)]
		}
	}
	p.setLayout(p.order == "21_12", p.matrix)
	p.prealloc(p.nfreq)
	p.state = stNetwork
	return nil
}

// endNetwork checks the count of network points at the end of the block.
func (p *parser) endNetwork(col int) error {
	if n := len(p.freq); n != p.nfreq {
		return p.errAt(col, syntaxf("[Number of Frequencies] on line %d gives %d points, but the network data have %d", p.nfreqLine, p.nfreq, n))
	}
	return nil
}
