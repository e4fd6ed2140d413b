package chartsvg

import (
	"encoding/xml"
	"strconv"
	"strings"
	"testing"
)

// schNode is an element of a rendered schematic read back with
// encoding/xml.
type schNode struct {
	XMLName xml.Name
	Attrs   []xml.Attr `xml:",any,attr"`
	Nodes   []schNode  `xml:",any"`
	Text    string     `xml:",chardata"`
}

func (n schNode) attr(name string) string {
	for _, a := range n.Attrs {
		if a.Name.Local == name {
			return a.Value
		}
	}
	return ""
}

func (n schNode) walk(f func(schNode)) {
	f(n)
	for _, c := range n.Nodes {
		c.walk(f)
	}
}

// texts returns the words of a <text>, line by line.
func (n schNode) texts() []string {
	var out []string
	n.walk(func(c schNode) {
		if c.XMLName.Local == "tspan" {
			out = append(out, c.Text)
		}
	})
	return out
}

func TestSchematic(t *testing.T) {
	t.Parallel()
	parts := []SchematicPart{ // from the load
		{Symbol: SymCapacitor, Shunt: true, Designator: "C1", Value: "2.2 pF", Notes: []string{"0402 typical", "E24"}, Color: "#7a3e9d"},
		{Symbol: SymInductor, Designator: "L1", Value: "12 nH", Notes: []string{"0402 typical"}},
		{Symbol: SymLine, Designator: "TL1", Value: "30 mm", Notes: []string{"Z0 60 Ω"}},
		{Symbol: SymStubOpen, Designator: "TS1", Value: "20 mm", Notes: []string{"open"}},
		{Symbol: SymStubShort, Designator: "TS2", Value: "50 mm"},
		{Symbol: SymTransformer, Designator: "T1", Value: "1.3 : 1"},
		{Symbol: SymResistor, Shunt: true, Designator: "R1", Value: "1 kΩ <&>"},
	}
	s := Schematic{Source: []string{"Source (radio)", "50 Ω"}, Load: []string{"Load", "antenna S11"}, IDPrefix: "r-", Title: "Network A"}
	var b strings.Builder
	if err := s.Render(&b, parts); err != nil {
		t.Fatal(err)
	}
	var root schNode
	if err := xml.Unmarshal([]byte(b.String()), &root); err != nil {
		t.Fatalf("not XML: %v\n%s", err, b.String())
	}
	if root.attr("id") != "r-schematic" || root.attr("width") != strconv.FormatFloat(s.Width(len(parts)), 'f', -1, 64) {
		t.Errorf("root id %q width %q", root.attr("id"), root.attr("width"))
	}
	// Each part's group holds its words; the parts run from the source at
	// the left to the load at the right, so the load's first part is at
	// the right.
	xs := map[string]float64{}
	groups := map[string]schNode{}
	root.walk(func(n schNode) {
		if n.XMLName.Local == "g" && strings.HasPrefix(n.attr("id"), "r-sp-") {
			groups[n.attr("data-designator")] = n
			n.walk(func(c schNode) {
				if c.XMLName.Local == "text" {
					x, _ := strconv.ParseFloat(c.attr("x"), 64)
					xs[n.attr("data-designator")] = x
					w := c.texts()
					i := indexOfPart(parts, n.attr("data-designator"))
					want := append([]string{parts[i].Designator, parts[i].Value}, parts[i].Notes...)
					if strings.Join(w, "|") != strings.Join(want, "|") {
						t.Errorf("%s: words %q, want %q", n.attr("data-designator"), w, want)
					}
				}
			})
		}
	})
	if len(groups) != len(parts) {
		t.Fatalf("%d part groups, want %d", len(groups), len(parts))
	}
	for i := 1; i < len(parts); i++ {
		if !(xs[parts[i].Designator] < xs[parts[i-1].Designator]) {
			t.Errorf("%s (x %g) is not left of %s (x %g), nearer the load", parts[i].Designator, xs[parts[i].Designator], parts[i-1].Designator, xs[parts[i-1].Designator])
		}
	}
	// What each symbol is drawn with, counted per part group.
	type features struct{ coils, grounds, plates, boxes, circles, texts int }
	countOf := func(g schNode) features {
		var f features
		g.walk(func(c schNode) {
			d := c.attr("d")
			switch c.XMLName.Local {
			case "path":
				switch {
				case strings.Count(d, "a") == 4:
					f.coils++
				case strings.Count(d, "M") == 3:
					f.grounds++
				case c.attr("stroke-width") == "2.4":
					f.plates++
				}
			case "rect":
				f.boxes++
			case "circle":
				f.circles++
			case "text":
				f.texts++
			}
		})
		return f
	}
	for _, c := range []struct {
		des  string
		want features
	}{
		{"C1", features{grounds: 1, plates: 2, circles: 2, texts: 1}}, // shunt: junction, colour mark
		{"L1", features{coils: 1, texts: 1}},                          // in series
		{"TL1", features{boxes: 1, texts: 1}},                         // the sleeve
		{"TS1", features{boxes: 1, circles: 2, texts: 1}},             // junction and the open end
		{"TS2", features{boxes: 1, grounds: 1, circles: 1, texts: 1}}, // the shorted end
		{"T1", features{coils: 2, grounds: 2, texts: 1}},              // two windings to ground
		{"R1", features{boxes: 1, grounds: 1, circles: 1, texts: 1}},  // shunt resistor
	} {
		if got := countOf(groups[c.des]); got != c.want {
			t.Errorf("%s: drawn with %+v, want %+v", c.des, got, c.want)
		}
	}
	if !strings.Contains(b.String(), "1 kΩ &lt;&amp;&gt;") || !strings.Contains(b.String(), "<title>Network A</title>") {
		t.Error("words are not escaped or the title is missing")
	}
}

func indexOfPart(ps []SchematicPart, d string) int {
	for i, p := range ps {
		if p.Designator == d {
			return i
		}
	}
	return -1
}

// TestSchematicEmpty: no parts is a through line from the source to the
// load.
func TestSchematicEmpty(t *testing.T) {
	t.Parallel()
	var b strings.Builder
	if err := (Schematic{}).Render(&b, nil); err != nil {
		t.Fatal(err)
	}
	var root schNode
	if err := xml.Unmarshal([]byte(b.String()), &root); err != nil {
		t.Fatal(err)
	}
	var words []string
	through := false
	root.walk(func(n schNode) {
		if n.XMLName.Local == "text" {
			words = append(words, n.texts()...)
		}
		if n.XMLName.Local == "path" && n.attr("d") == "M"+strconv.Itoa(int(schPort))+" 76L"+strconv.Itoa(int(schPort+schCell))+" 76" {
			through = true
		}
	})
	if strings.Join(words, "|") != "Source|Load" || !through {
		t.Errorf("words %q, through line %v:\n%s", words, through, b.String())
	}
}
