package match

// progressPerShape is the number of progress units of one shape.
const progressPerShape = 1000

// progress throttles the Progress callback. Each shape is worth
// progressPerShape units, shared out over the shape's own units of work.
type progress struct {
	fn                 func(done, total int)
	done, total, shown int
	base, units, count int
}

// startShape starts a shape whose work is units units (at least 1).
func (p *progress) startShape(units int) {
	p.base, p.units, p.count = p.done, max(units, 1), 0
}

// endShape counts the shape as done whole and reports.
func (p *progress) endShape() {
	p.done = p.base + progressPerShape
	p.report()
}

// add counts n units of the shape's work done, and reports once the
// figure has moved by 1/256 of the total since it was last shown.
func (p *progress) add(n int) {
	p.count += n
	p.done = p.base + progressPerShape*min(p.count, p.units)/p.units
	if p.fn != nil && p.done-p.shown >= max(1, p.total/256) {
		p.report()
	}
}

// report passes the progress to the callback, if there is one.
func (p *progress) report() {
	if p.fn != nil {
		p.shown = p.done
		p.fn(p.done, p.total)
	}
}
