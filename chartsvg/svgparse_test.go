package chartsvg

import (
	"encoding/xml"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"testing"
)

// This file reads back what the package writes, independently of how it was
// written: path data by the SVG grammar, arcs by the SVG 1.1 implementation
// notes (appendix F.6.5, endpoint to centre parameterisation).

// pathToken is a command letter or a number of SVG path data.
type pathToken struct {
	cmd byte
	num float64
}

// tokenize splits SVG path data into commands and numbers.
func tokenize(t *testing.T, d string) []pathToken {
	t.Helper()
	var out []pathToken
	for i := 0; i < len(d); {
		c := d[i]
		switch {
		case c == ' ' || c == ',' || c == '\n' || c == '\t':
			i++
		case c >= 'A' && c <= 'Z' || c >= 'a' && c <= 'z':
			out = append(out, pathToken{cmd: c})
			i++
		default:
			j := i
			if d[j] == '-' || d[j] == '+' {
				j++
			}
			dot := false
			for j < len(d) && (d[j] >= '0' && d[j] <= '9' || d[j] == '.' && !dot) {
				if d[j] == '.' {
					dot = true
				}
				j++
			}
			v, err := strconv.ParseFloat(d[i:j], 64)
			if err != nil || j == i {
				t.Fatalf("bad number at %d in %q", i, d)
			}
			out = append(out, pathToken{num: v})
			i = j
		}
	}
	return out
}

// arcSeg is one elliptical-arc command with equal radii and no rotation.
type arcSeg struct {
	p0, p1       pt
	r            float64
	large, sweep bool
}

// parseArcs reads path data made of "M x y" followed by "A" commands.
func parseArcs(t *testing.T, d string) []arcSeg {
	t.Helper()
	tok := tokenize(t, d)
	var out []arcSeg
	var cur pt
	for i := 0; i < len(tok); {
		switch tok[i].cmd {
		case 'M':
			cur = pt{tok[i+1].num, tok[i+2].num}
			i += 3
		case 'A':
			if tok[i+1].num != tok[i+2].num || tok[i+3].num != 0 {
				t.Fatalf("arc with unequal radii or rotation in %q", d)
			}
			s := arcSeg{p0: cur, r: tok[i+1].num, large: tok[i+4].num == 1, sweep: tok[i+5].num == 1,
				p1: pt{tok[i+6].num, tok[i+7].num}}
			out = append(out, s)
			cur = s.p1
			i += 8
		default:
			t.Fatalf("unexpected token %v in %q", tok[i], d)
		}
	}
	return out
}

// centre returns the centre of the arc and the point halfway along it,
// per SVG 1.1 F.6.5 with rx = ry = r and φ = 0. (Radii too small are
// scaled up, per F.6.6, which only matters for rounding here.)
func (a arcSeg) centre() (c, mid pt) {
	x1p, y1p := (a.p0.x-a.p1.x)/2, (a.p0.y-a.p1.y)/2
	d2 := x1p*x1p + y1p*y1p
	r := math.Max(a.r, math.Sqrt(d2))
	coef := math.Sqrt(math.Max(0, (r*r-d2)/d2))
	if a.large == a.sweep {
		coef = -coef
	}
	cxp, cyp := coef*y1p, -coef*x1p
	c = pt{cxp + (a.p0.x+a.p1.x)/2, cyp + (a.p0.y+a.p1.y)/2}
	ang := func(ux, uy, vx, vy float64) float64 { return math.Atan2(ux*vy-uy*vx, ux*vx+uy*vy) }
	th1 := ang(1, 0, (x1p-cxp)/r, (y1p-cyp)/r)
	dth := ang((x1p-cxp)/r, (y1p-cyp)/r, (-x1p-cxp)/r, (-y1p-cyp)/r)
	if !a.sweep && dth > 0 {
		dth -= 2 * math.Pi
	} else if a.sweep && dth < 0 {
		dth += 2 * math.Pi
	}
	m := th1 + dth/2
	return c, pt{c.x + r*math.Cos(m), c.y + r*math.Sin(m)}
}

// parsePolyline reads path data of "M x y l dx dy …" subpaths into absolute
// points, one slice per subpath.
func parsePolyline(t *testing.T, d string) [][]pt {
	t.Helper()
	tok := tokenize(t, d)
	var out [][]pt
	var cur pt
	rel := false
	for i := 0; i < len(tok); {
		switch tok[i].cmd {
		case 'M':
			cur = pt{tok[i+1].num, tok[i+2].num}
			out = append(out, []pt{cur})
			rel = false
			i += 3
		case 'l':
			rel = true
			i++
		case 0:
			if !rel {
				t.Fatalf("number outside an l command in %q", d)
			}
			cur = pt{cur.x + tok[i].num, cur.y + tok[i+1].num}
			out[len(out)-1] = append(out[len(out)-1], cur)
			i += 2
		default:
			t.Fatalf("unexpected command %q", tok[i].cmd)
		}
	}
	return out
}

// element is a parsed SVG element: its name, attributes and children.
type element struct {
	name     string
	attr     map[string]string
	children []*element
	text     string
}

// parseSVG decodes the whole document with encoding/xml and returns its root.
func parseSVG(t *testing.T, doc string) *element {
	t.Helper()
	dec := xml.NewDecoder(strings.NewReader(doc))
	var stack []*element
	var root *element
	for {
		tok, err := dec.Token()
		if err == io.EOF {
			break
		}
		if err != nil {
			t.Fatalf("SVG does not parse as XML: %v", err)
		}
		switch tk := tok.(type) {
		case xml.StartElement:
			e := &element{name: tk.Name.Local, attr: map[string]string{}}
			for _, a := range tk.Attr {
				e.attr[a.Name.Local] = a.Value
			}
			if len(stack) > 0 {
				p := stack[len(stack)-1]
				p.children = append(p.children, e)
			} else if root != nil {
				t.Fatalf("second root element %q", e.name)
			} else {
				root = e
			}
			stack = append(stack, e)
		case xml.EndElement:
			stack = stack[:len(stack)-1]
		case xml.CharData:
			if len(stack) > 0 {
				stack[len(stack)-1].text += string(tk)
			}
		}
	}
	if root == nil {
		t.Fatal("no root element")
	}
	return root
}

// walk calls f for e and every element below it.
func (e *element) walk(f func(*element)) {
	f(e)
	for _, c := range e.children {
		c.walk(f)
	}
}

// byID returns the element with the id, or nil.
func (e *element) byID(id string) *element {
	var found *element
	e.walk(func(x *element) {
		if x.attr["id"] == id && found == nil {
			found = x
		}
	})
	return found
}

// allText returns the character data of e and its children.
func (e *element) allText() string {
	var b strings.Builder
	e.walk(func(x *element) { b.WriteString(x.text) })
	return b.String()
}

func (p pt) String() string { return fmt.Sprintf("(%.2f, %.2f)", p.x, p.y) }
