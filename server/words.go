package server

import (
	"regexp"
	"strconv"
	"strings"

	"matchbench/rfmath/units"
)

// plainWords rewrites an error for the page in the engineer's words: the
// store's and the maths packages' prefixes ("sessions: invalid: ",
// "match: ") go, an op and its field ("network.set: designHz: ") become
// what the page calls them ("Design frequency: "), and frequencies written
// as numbers of hertz ("2.9e+09 Hz", "2e+09–3e+09 Hz") get SI prefixes
// ("2.9 GHz", "2 GHz – 3 GHz"). The detail after them is kept: it says
// what is wrong and where. A reader's position ("bad.s1p:4: ") is kept.
func plainWords(msg string) string {
	msg = plainDetail(msg)
	if first, _, _ := strings.Cut(msg, " "); msg != "" && !strings.ContainsAny(first, ".:/") {
		// Not a file's name and line. Only a Latin letter: a symbol's
		// case is its meaning (μ, Γ), and a byte of one is not a letter.
		if c := msg[0]; c >= 'a' && c <= 'z' {
			msg = string(c-'a'+'A') + msg[1:]
		}
	}
	return msg
}

// plainDetail is plainWords for a message that goes on within a sentence
// ("Bode–Fano: cannot fit …"): the same words, not capitalised.
func plainDetail(msg string) string {
	if msg == "" {
		return msg
	}
	if m := opField.FindStringSubmatch(msg); m != nil && !pkgNames[m[2]] {
		label := fieldWords[m[1]+" "+m[2]]
		if label == "" {
			label = fieldWords[m[2]]
		}
		if label == "" {
			label = opWords[m[1]]
		}
		if label != "" {
			msg = label + ": " + msg[len(m[0]):]
		}
	} else if m := opOnly.FindStringSubmatch(msg); m != nil && opWords[m[1]] != "" {
		msg = opWords[m[1]] + ": " + msg[len(m[0]):]
	}
	for _, r := range sentinels {
		msg = strings.ReplaceAll(msg, r[0], r[1])
	}
	msg = pkgPrefix.ReplaceAllString(msg, "")
	msg = hzRange.ReplaceAllStringFunc(msg, func(s string) string {
		m := hzRange.FindStringSubmatch(s)
		a, _ := strconv.ParseFloat(m[1], 64)
		b, _ := strconv.ParseFloat(m[2], 64)
		sep := " – "
		if strings.Contains(s, "and") {
			sep = " and "
		} else if strings.Contains(s, " to ") {
			sep = " to "
		}
		return units.FormatFrequency(a, 6) + sep + units.FormatFrequency(b, 6)
	})
	msg = hz.ReplaceAllStringFunc(msg, func(s string) string {
		m := hz.FindStringSubmatch(s)
		v, err := strconv.ParseFloat(m[1], 64)
		if err != nil {
			return s
		}
		return units.FormatFrequency(v, 6)
	})
	return msg
}

var (
	// "band.set: loHz: …" and "undo: …" at the start of a message.
	opField = regexp.MustCompile(`^([a-z]+\.[a-z_]+): ([A-Za-z][A-Za-z.]*): `)
	opOnly  = regexp.MustCompile(`^([a-z]+(?:\.[a-z_]+)?): `)
	// A package's prefix anywhere: "match: ", "rfmath: ", "deembed: ".
	pkgPrefix = regexp.MustCompile(`\b(sessions|rfmath|match|deembed|tdr|touchstone|parts|units|limits|chartsvg|server): `)
	num       = `(-?\d+(?:\.\d+)?(?:e[+-]?\d+)?)`
	hzRange   = regexp.MustCompile(num + `\s*(?:[–-]|and|to)\s*` + num + ` Hz\b`)
	hz        = regexp.MustCompile(num + ` Hz\b`)
	sentinels = [][2]string{
		{"sessions: invalid: ", ""},
		{"sessions: not found: ", ""},
		{"sessions: forbidden for a view link", "this is a view link: changes need the edit link"},
		{"sessions: version conflict", "the session changed meanwhile; try again"},
		{"lo must be below hi", "the start must be below the end"},
	}
)

// pkgNames are the packages whose prefixes plainWords takes out.
var pkgNames = map[string]bool{"sessions": true, "rfmath": true, "match": true, "deembed": true, "tdr": true,
	"touchstone": true, "parts": true, "units": true, "limits": true, "chartsvg": true, "server": true}

// opWords names the store's ops as the page does.
var opWords = map[string]string{
	"session.rename": "Session name", "sweep.rename": "Sweep name", "sweep.color": "Colour", "sweep.visible": "Sweep",
	"sweep.remove": "Sweep", "sweep.add": "Sweep", "sweep.refplane": "Reference plane",
	"marker.add": "Marker", "marker.move": "Marker", "marker.step": "Marker", "marker.label": "Marker label",
	"marker.remove": "Marker", "marker.to_dip": "Marker",
	"band.set": "Band", "band.remove": "Band", "chart.set": "Chart",
	"network.add": "Matching network", "network.set": "Matching network", "network.select": "Matching network",
	"network.remove": "Matching network", "part.add": "Part", "part.set": "Part", "part.remove": "Part", "part.move": "Part",
	"search.store": "Search", "tdr.set": "Time domain", "undo": "Undo", "redo": "Redo",
}

// fieldWords names the fields of the store's changes as the page's forms
// label them; an entry "op field" wins over one for the field alone.
var fieldWords = map[string]string{
	"loHz": "From", "hiHz": "To", "freqHz": "Frequency", "minReturnLossDB": "Return loss",
	"minPowerToLoad": "Power to the load", "designHz": "Design frequency", "powerW": "Input power",
	"chuRadiusM": "Sphere radius", "yieldBuilds": "Builds", "value": "Value", "model": "Model", "series": "Standard values",
	"color": "Colour", "name": "Name", "label": "Label", "port": "Port", "gamma": "Chart point", "window": "Search window",
	"params.q": "Q", "params.qRefHz": "Q frequency", "params.srfHz": "Self-resonance", "params.esrOhm": "ESR",
	"params.tolRel": "Tolerance", "params.maxV": "Rated voltage", "params.maxA": "Rated current",
	"params.z0Ohm": "Line impedance", "params.vf": "Velocity factor", "params.lossDBPerM": "Line loss",
	"params.lossRefHz":   "Loss frequency",
	"refPlane.lossRefHz": "Loss frequency", "refPlane.fixtureSweepId": "Fixture", "refPlane.fixturePortFacingAnalyser": "Fixture port",
	"chart.qArcs": "Q arcs", "chart.vswrCircle": "VSWR circle", "chart.returnLossCircleDB": "Return-loss circle", "chart.zoom": "Zoom",
	"timeDomain.beta": "Kaiser β", "timeDomain.vf": "Velocity factor", "timeDomain.gateSpanS": "Gate",
	"timeDomain.mode": "Time-domain view", "timeDomain.window": "Window",
	"band.set bandId": "Band", "marker.move markerId": "Marker",
}
