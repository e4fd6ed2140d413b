package chartsvg

// simplify marks in keep the points of the polyline pts that must stay so
// that every dropped point lies within tol of the drawn line. It is the
// Ramer–Douglas–Peucker reduction (Ramer 1972; Douglas and Peucker 1973),
// run with an explicit stack between the points already marked in keep
// (the ends are marked here), so that points the caller forces (extremes,
// the dip, marker frequencies) split the work and always stay. The stack
// is returned for reuse.
//
// The distance used is to the segment, not to its line, so that a loop
// whose ends meet is not collapsed.
func simplify(pts []pt, keep []bool, tol float64, stack []int) []int {
	n := len(pts)
	if n == 0 {
		return stack
	}
	keep[0], keep[n-1] = true, true
	stack = stack[:0]
	prev := 0
	for i := 1; i < n; i++ {
		if keep[i] {
			if i-prev > 1 {
				stack = append(stack, prev, i)
			}
			prev = i
		}
	}
	tol2 := tol * tol
	for len(stack) > 0 {
		a, b := stack[len(stack)-2], stack[len(stack)-1]
		stack = stack[:len(stack)-2]
		pa, pb := pts[a], pts[b]
		dx, dy := pb.x-pa.x, pb.y-pa.y
		l2 := dx*dx + dy*dy
		inv := 0.0
		if l2 > 0 {
			inv = 1 / l2
		}
		worst, at := -1.0, -1
		for i := a + 1; i < b; i++ {
			ex, ey := pts[i].x-pa.x, pts[i].y-pa.y
			var d float64
			switch dot := ex*dx + ey*dy; {
			case dot <= 0 || inv == 0: // beyond a: distance to a
				d = ex*ex + ey*ey
			case dot >= l2: // beyond b: distance to b
				fx, fy := ex-dx, ey-dy
				d = fx*fx + fy*fy
			default: // beside the segment: distance to its line
				cr := ex*dy - ey*dx
				d = cr * cr * inv
			}
			if d > worst {
				worst, at = d, i
			}
		}
		if worst > tol2 {
			keep[at] = true
			if at-a > 1 {
				stack = append(stack, a, at)
			}
			if b-at > 1 {
				stack = append(stack, at, b)
			}
		}
	}
	return stack
}

// markExtremes marks in keep the points of pts with the least and greatest
// x and y: the edges of what the eye sees.
func markExtremes(pts []pt, keep []bool) {
	if len(pts) == 0 {
		return
	}
	var ix0, ix1, iy0, iy1 int
	x0, x1, y0, y1 := pts[0].x, pts[0].x, pts[0].y, pts[0].y
	for i, p := range pts {
		if p.x < x0 {
			x0, ix0 = p.x, i
		} else if p.x > x1 {
			x1, ix1 = p.x, i
		}
		if p.y < y0 {
			y0, iy0 = p.y, i
		} else if p.y > y1 {
			y1, iy1 = p.y, i
		}
	}
	keep[ix0], keep[ix1], keep[iy0], keep[iy1] = true, true, true, true
}
