package forcefield

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/optimize"
)

// MinimizeOptions bound a minimization. The zero value takes the defaults.
type MinimizeOptions struct {
	// MaxIterations caps the L-BFGS iterations (default 2000).
	MaxIterations int
	// GradientTol stops when every gradient component is below it, kcal/mol/Å (default 1e-3).
	GradientTol float64
}

func (o MinimizeOptions) withDefaults() MinimizeOptions {
	if o.MaxIterations <= 0 {
		o.MaxIterations = 2000
	}
	if o.GradientTol <= 0 {
		o.GradientTol = 1e-3
	}
	return o
}

// MinimizeResult reports a minimization.
type MinimizeResult struct {
	EnergyKcalMol float64
	Iterations    int
	Evaluations   int
	// Converged is true when the gradient or energy criterion stopped the search (not the
	// iteration budget).
	Converged bool
}

// ErrNotFinite reports coordinates or an energy that is not a finite number.
var ErrNotFinite = errors.New("energy is not finite")

// Minimize relaxes x (3 per atom, Å) in place to a local minimum of the MMFF energy by L-BFGS
// (the limited-memory quasi-Newton method of gonum's optimize package) and returns the energy.
// A budget exhausted before convergence is not an error: the result says Converged false.
func (s *System) Minimize(x []float64, opt MinimizeOptions) (MinimizeResult, error) {
	if len(x) != 3*len(s.Mol.Atoms) {
		return MinimizeResult{}, fmt.Errorf("%d coordinates for %d atoms", len(x), len(s.Mol.Atoms))
	}
	return lbfgs(s.Gradient, x, opt.withDefaults())
}

// lbfgs minimizes f (which writes the gradient into g and returns the value) from x in place.
// It drives gonum's L-BFGS direction and its More–Thuente line search itself, one evaluation
// per requested point and no goroutines; the run stops when every gradient component is below
// the tolerance, when the energy has stopped falling, or at the iteration budget.
func lbfgs(f func(x, g []float64) float64, x []float64, opt MinimizeOptions) (MinimizeResult, error) {
	n := len(x)
	loc := &optimize.Location{X: x, Gradient: make([]float64, n)}
	loc.F = f(loc.X, loc.Gradient)
	out := MinimizeResult{Evaluations: 1}
	if !finite(loc.F) {
		return out, ErrNotFinite
	}
	if gradMax(loc.Gradient) < opt.GradientTol {
		out.EnergyKcalMol, out.Converged = loc.F, true
		return out, nil
	}
	method := &optimize.LinesearchMethod{
		NextDirectioner: &optimize.LBFGS{Store: 12},
		Linesearcher:    &optimize.MoreThuente{},
	}
	op, err := method.Init(loc)
	best, stall := loc.F, 0
	for err == nil && out.Evaluations < 5*opt.MaxIterations {
		switch {
		case op == optimize.MajorIteration:
			out.Iterations++
			if !finite(loc.F) {
				return out, ErrNotFinite
			}
			if gradMax(loc.Gradient) < opt.GradientTol {
				out.Converged = true
			} else if best-loc.F > 1e-12*math.Abs(loc.F)+1e-10 {
				best, stall = loc.F, 0
			} else if stall++; stall >= 25 {
				out.Converged = true
			}
			if out.Converged || out.Iterations >= opt.MaxIterations {
				out.EnergyKcalMol = loc.F
				return out, nil
			}
		case op&(optimize.FuncEvaluation|optimize.GradEvaluation) != 0:
			loc.F = f(loc.X, loc.Gradient)
			out.Evaluations++
		default:
			return out, fmt.Errorf("minimization: unexpected step %v", op)
		}
		op, err = method.Iterate(loc)
	}
	// the line search gives up only where no step lowers the energy: at a minimum in floating
	// point, unless the gradient is still large
	out.EnergyKcalMol = f(loc.X, loc.Gradient)
	out.Evaluations++
	if !finite(out.EnergyKcalMol) {
		return out, ErrNotFinite
	}
	out.Converged = gradMax(loc.Gradient) < 100*opt.GradientTol
	return out, nil
}

func finite(v float64) bool { return !math.IsNaN(v) && !math.IsInf(v, 0) }

func gradMax(g []float64) float64 {
	var m float64
	for _, v := range g {
		m = math.Max(m, math.Abs(v))
	}
	return m
}
