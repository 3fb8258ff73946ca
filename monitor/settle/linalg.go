package settle

import "math"

// lstsq solves the linear least-squares problem min ‖X·beta − y‖² for the p
// columns cols (each of length n) through the normal equations, and returns beta
// and the residual sum of squares. Columns are scaled to unit norm first so the
// normal matrix stays well conditioned for the small p (≤ ~8) used here.
// ok is false when the columns are linearly dependent.
func lstsq(cols [][]float64, y []float64) (beta []float64, rss float64, ok bool) {
	p := len(cols)
	scale := make([]float64, p)
	for j, c := range cols {
		scale[j] = math.Sqrt(dot(c, c))
		if scale[j] == 0 {
			return nil, 0, false
		}
	}
	a := make([][]float64, p)
	for i := range a {
		a[i] = make([]float64, p+1)
		for j := range p {
			a[i][j] = dot(cols[i], cols[j]) / (scale[i] * scale[j])
		}
		a[i][p] = dot(cols[i], y) / scale[i]
	}
	sol, ok := solve(a)
	if !ok {
		return nil, 0, false
	}
	beta = make([]float64, p)
	for j := range p {
		beta[j] = sol[j] / scale[j]
	}
	for i := range y {
		r := y[i]
		for j := range p {
			r -= beta[j] * cols[j][i]
		}
		rss += r * r
	}
	return beta, rss, true
}

// solve reduces the augmented p×(p+1) matrix a in place by Gaussian elimination with
// partial pivoting and returns the solution. ok is false for a (near) singular system.
func solve(a [][]float64) ([]float64, bool) {
	p := len(a)
	for col := range p {
		piv := col
		for r := col + 1; r < p; r++ {
			if math.Abs(a[r][col]) > math.Abs(a[piv][col]) {
				piv = r
			}
		}
		if math.Abs(a[piv][col]) < 1e-12 {
			return nil, false
		}
		a[col], a[piv] = a[piv], a[col]
		for r := range p {
			if r == col {
				continue
			}
			f := a[r][col] / a[col][col]
			for c := col; c <= p; c++ {
				a[r][c] -= f * a[col][c]
			}
		}
	}
	x := make([]float64, p)
	for i := range p {
		x[i] = a[i][p] / a[i][i]
	}
	return x, true
}

// invert returns the inverse of the symmetric positive definite p×p matrix m (not
// modified), or ok=false when it is singular. It inverts D·m·D with D = diag(1/√m_ii)
// so parameters of very different units (cents, hours) do not upset the pivoting.
func invert(m [][]float64) (inv [][]float64, ok bool) {
	p := len(m)
	d := make([]float64, p)
	for i := range p {
		if !(m[i][i] > 0) {
			return nil, false
		}
		d[i] = 1 / math.Sqrt(m[i][i])
	}
	inv = make([][]float64, p)
	for k := range p {
		a := make([][]float64, p)
		for i := range p {
			a[i] = make([]float64, p+1)
			for j := range p {
				a[i][j] = m[i][j] * d[i] * d[j]
			}
			if i == k {
				a[i][p] = 1
			}
		}
		col, ok := solve(a)
		if !ok {
			return nil, false
		}
		for i := range col {
			col[i] *= d[i] * d[k]
		}
		inv[k] = col // symmetric: column k equals row k
	}
	return inv, true
}

func dot(a, b []float64) float64 {
	var s float64
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}
