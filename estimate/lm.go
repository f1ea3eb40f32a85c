package estimate

import (
	"errors"
	"math"

	"gonum.org/v1/gonum/mat"
)

// Problem is a nonlinear least-squares problem: find the parameters b that
// minimise Σ (y_i − f(x_i; b))².
type Problem struct {
	X, Y []float64
	// F is the model.
	F func(x float64, b []float64) float64
	// Grad, when set, writes ∂f/∂b at x into g; otherwise central
	// differences are used.
	Grad func(x float64, b []float64, g []float64)
}

// Solution is the least-squares fit and its uncertainty.
type Solution struct {
	Params []float64
	// StdErr are the standard errors of the parameters, from the Jacobian at
	// the solution: sqrt(diag(s²·(JᵀJ)⁻¹)), s² = RSS/(n − p).
	StdErr     []float64
	Cov        *mat.SymDense // s²·(JᵀJ)⁻¹
	RSS        float64
	Iterations int
}

// ErrTooFewPoints: a fit needs more observations than parameters.
var ErrTooFewPoints = errors.New("fewer observations than parameters + 1")

// LevenbergMarquardt solves the problem from the start values b0 with
// Marquardt's damping scaled by diag(JᵀJ) and the "delayed gratification"
// update of the damping factor: divide by 3 after an accepted step,
// multiply by 2 after a rejected one (Transtrum & Sethna 2012, Improvements
// to the Levenberg-Marquardt algorithm for nonlinear least-squares
// minimization; cited from memory). Slow relaxation of the damping keeps a
// parameter from running off to a plateau, which is how plain updates fail
// on NIST's BoxBOD from its first starting point.
func LevenbergMarquardt(pr Problem, b0 []float64) (Solution, error) {
	n, p := len(pr.X), len(b0)
	if n <= p {
		return Solution{}, ErrTooFewPoints
	}
	b := append([]float64(nil), b0...)
	J := mat.NewDense(n, p, nil)
	r := make([]float64, n)
	g := make([]float64, p)
	rss := func(b []float64, r []float64) float64 {
		s := 0.0
		for i, x := range pr.X {
			e := pr.Y[i] - pr.F(x, b)
			if r != nil {
				r[i] = e
			}
			s += e * e
		}
		return s
	}
	jacobian := func(b []float64) {
		row := make([]float64, p)
		for i, x := range pr.X {
			if pr.Grad != nil {
				pr.Grad(x, b, row)
			} else {
				numGrad(pr.F, x, b, row)
			}
			J.SetRow(i, row)
		}
	}
	cur := rss(b, r)
	if math.IsNaN(cur) || math.IsInf(cur, 0) {
		return Solution{}, errors.New("model is not finite at the start values")
	}
	jacobian(b)
	var JtJ mat.SymDense
	JtJ.SymOuterK(1, J.T())
	gv := mat.NewVecDense(p, g)
	gv.MulVec(J.T(), mat.NewVecDense(n, r)) // g = Jᵀr (the descent direction)

	mu := 1e-3 // dimensionless: the damping is scaled by diag(JᵀJ)
	trial := make([]float64, p)
	iter := 0
	const maxIter = 5000
	for ; iter < maxIter; iter++ {
		if infNorm(g) < 1e-300 {
			break
		}
		// (JᵀJ + μ·diag(JᵀJ)) δ = Jᵀr
		A := mat.NewSymDense(p, nil)
		A.CopySym(&JtJ)
		for k := range p {
			d := JtJ.At(k, k)
			if d == 0 {
				d = 1e-12
			}
			A.SetSym(k, k, JtJ.At(k, k)+mu*d)
		}
		var ch mat.Cholesky
		if !ch.Factorize(A) {
			mu *= 2
			continue
		}
		var delta mat.VecDense
		if err := ch.SolveVecTo(&delta, gv); err != nil {
			mu *= 2
			continue
		}
		small := true
		for k := range p {
			trial[k] = b[k] + delta.AtVec(k)
			if math.Abs(delta.AtVec(k)) > 1e-13*(math.Abs(b[k])+1e-13) {
				small = false
			}
		}
		if small {
			break
		}
		next := rss(trial, nil)
		// predicted reduction: δᵀ(μ·D·δ + Jᵀr)
		pred := 0.0
		for k := range p {
			dk := delta.AtVec(k)
			d := JtJ.At(k, k)
			if d == 0 {
				d = 1e-12
			}
			pred += dk * (mu*d*dk + g[k])
		}
		rho := (cur - next) / pred
		if !math.IsNaN(next) && pred > 0 && rho > 0 {
			copy(b, trial)
			done := (cur - next) <= 1e-15*cur
			cur = rss(b, r)
			jacobian(b)
			JtJ.SymOuterK(1, J.T())
			gv.MulVec(J.T(), mat.NewVecDense(n, r))
			mu /= 3
			if done {
				break
			}
		} else {
			mu *= 2
			if mu > 1e300 {
				break
			}
		}
	}
	sol := Solution{Params: b, RSS: cur, Iterations: iter}
	cov, err := covariance(&JtJ, cur/float64(n-p))
	if err != nil {
		return sol, err
	}
	sol.Cov = cov
	sol.StdErr = make([]float64, p)
	for k := range p {
		sol.StdErr[k] = math.Sqrt(math.Max(0, cov.At(k, k)))
	}
	return sol, nil
}

// covariance returns s²·(JᵀJ)⁻¹.
func covariance(JtJ *mat.SymDense, s2 float64) (*mat.SymDense, error) {
	var ch mat.Cholesky
	if !ch.Factorize(JtJ) {
		return nil, errors.New("parameters are not identifiable from these points (singular JᵀJ)")
	}
	var inv mat.SymDense
	if err := ch.InverseTo(&inv); err != nil {
		return nil, err
	}
	inv.ScaleSym(s2, &inv)
	return &inv, nil
}

func numGrad(f func(float64, []float64) float64, x float64, b []float64, g []float64) {
	tmp := append([]float64(nil), b...)
	for k := range b {
		h := 1e-6 * math.Max(math.Abs(b[k]), 1e-6)
		tmp[k] = b[k] + h
		up := f(x, tmp)
		tmp[k] = b[k] - h
		down := f(x, tmp)
		tmp[k] = b[k]
		g[k] = (up - down) / (2 * h)
	}
}

func maxDiag(a *mat.SymDense) float64 {
	m := 0.0
	for k := range a.SymmetricDim() {
		m = math.Max(m, a.At(k, k))
	}
	return m
}

func infNorm(v []float64) float64 {
	m := 0.0
	for _, x := range v {
		m = math.Max(m, math.Abs(x))
	}
	return m
}
