package main

import (
	"context"
	"fmt"
	"io"
	"math"
	"sort"
	"sync"
	"text/tabwriter"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"bandedge/fit"
	"bandedge/model"
)

// bootResult is one replica of the bootstrap comparison.
type bootResult struct {
	ok bool
	// For each parameter: the estimate, the covariance standard error, the
	// bootstrap standard error and the percentile intervals at 68.3 % and
	// 95 %.
	est, se, bse [nPar]float64
	p68, p95     [nPar][2]float64
	dof          int
}

// bootstrapStudy compares residual-resampling bootstrap intervals with the
// covariance intervals on the well-behaved regime (A1 and A3 set-ups).
//
// Residual resampling for weighted least squares (Efron & Tibshirani, An
// Introduction to the Bootstrap, 1993, §9.5; Davison & Hinkley, Bootstrap
// Methods and their Application, 1997, §6.2): with the weighted residuals
// r_i = √w_i·(α_i − f(E_i; p̂)), centred and inflated by √(n/(n − p)) for
// the degrees of freedom used, a resample is α*_i = f(E_i; p̂) + r*_i/√w_i
// with r* drawn with replacement from the r_i; p* is its fit from p̂. The
// intervals are the percentile intervals of p* (B resamples).
func bootstrapStudy(ctx context.Context, out io.Writer, o options) error {
	fmt.Fprintf(out, "\nResidual-resampling bootstrap (B = %d resamples, percentile intervals) against the covariance intervals, %d replicas each\n", o.bootB, o.boot)
	tw := tabwriter.NewWriter(out, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "set-up\tparam\tok\tboot SE/cov SE\tcov t68.3\tboot 68.3\tcov t95\tboot 95\twidth95 boot/cov\t")
	base := regimes(o)
	for _, ri := range []int{0, 2} { // A1 and A3
		s, err := newSetup(base[ri])
		if err != nil {
			return err
		}
		res := s.bootRun(ctx, o.seed, streamOf(s.r.name+"/bootstrap"), o.boot, o.bootB, o.workers)
		for j := range nPar {
			var n, ct68, cb68, ct95, cb95 int
			var ratio, wr []float64
			for _, b := range res {
				if !b.ok {
					continue
				}
				n++
				d := math.Abs(b.est[j] - s.r.truth[j])
				t68 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(b.dof)}.Quantile((1 + 0.683) / 2)
				t95 := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: float64(b.dof)}.Quantile((1 + 0.95) / 2)
				if d <= t68*b.se[j] {
					ct68++
				}
				if d <= t95*b.se[j] {
					ct95++
				}
				tr := s.r.truth[j]
				if tr >= b.p68[j][0] && tr <= b.p68[j][1] {
					cb68++
				}
				if tr >= b.p95[j][0] && tr <= b.p95[j][1] {
					cb95++
				}
				ratio = append(ratio, b.bse[j]/b.se[j])
				wr = append(wr, (b.p95[j][1]-b.p95[j][0])/(2*t95*b.se[j]))
			}
			fn := float64(n)
			fmt.Fprintf(tw, "%s\t%s\t%d\t%.3f\t%.1f\t%.1f\t%.1f\t%.1f\t%.3f\t\n", s.r.name, parNames[j], n, stat.Mean(ratio, nil),
				100*float64(ct68)/fn, 100*float64(cb68)/fn, 100*float64(ct95)/fn, 100*float64(cb95)/fn, stat.Mean(wr, nil))
		}
	}
	tw.Flush()
	fmt.Fprintf(out, "binomial standard error of a coverage from %d replicas: %.1f points at 68.3 %%, %.1f at 95 %%\n", o.boot, 100*binomSE(0.683, o.boot), 100*binomSE(0.95, o.boot))
	return nil
}

func (s *setup) bootRun(ctx context.Context, seed, stream uint64, n, nb, workers int) []bootResult {
	out := make([]bootResult, n)
	idx := make(chan int)
	var wg sync.WaitGroup
	for range workers {
		wg.Go(func() {
			for i := range idx {
				out[i] = s.bootOne(ctx, seed, stream, i, nb)
			}
		})
	}
	for i := range n {
		idx <- i
	}
	close(idx)
	wg.Wait()
	return out
}

func (s *setup) bootOne(ctx context.Context, seed, stream uint64, i, nb int) bootResult {
	rng := s.rng(seed, stream, i)
	alpha, sigma, mask, err := s.draw(rng)
	if err != nil {
		return bootResult{}
	}
	e, a, w := s.windowed(alpha, sigma, mask)
	m := model.DirectUrbach{}
	set := &fit.Settings{AbsoluteSigma: true}
	res, err := fit.Fit(ctx, fit.Problem{E: e, Alpha: a, Weights: w, Model: m, Init: s.r.truth[:]}, set)
	if err != nil || res.Status.Early() {
		return bootResult{}
	}
	np := len(e)
	f := make([]float64, np)
	m.Eval(f, e, res.Params)
	r := make([]float64, np)
	for k := range r {
		r[k] = res.Residuals[k]
	}
	mr := stat.Mean(r, nil)
	infl := math.Sqrt(float64(np) / float64(np-nPar))
	for k := range r {
		r[k] = (r[k] - mr) * infl
	}
	sw := make([]float64, np)
	for k := range sw {
		sw[k] = math.Sqrt(w[k])
	}
	var pstar [nPar][]float64
	astar := make([]float64, np)
	for range nb {
		for k := range astar {
			astar[k] = f[k] + r[rng.IntN(np)]/sw[k]
		}
		rb, err := fit.Fit(ctx, fit.Problem{E: e, Alpha: astar, Weights: w, Model: m, Init: res.Params}, set)
		if err != nil || rb.Status.Early() {
			continue
		}
		for j := range nPar {
			pstar[j] = append(pstar[j], rb.Params[j])
		}
	}
	if len(pstar[0]) < nb/2 {
		return bootResult{}
	}
	b := bootResult{ok: true, dof: res.DoF}
	for j := range nPar {
		b.est[j], b.se[j] = res.Params[j], res.StdErr[j]
		b.bse[j] = stat.StdDev(pstar[j], nil)
		sort.Float64s(pstar[j])
		q := func(p float64) float64 { return stat.Quantile(p, stat.LinInterp, pstar[j], nil) }
		b.p68[j] = [2]float64{q((1 - 0.683) / 2), q((1 + 0.683) / 2)}
		b.p95[j] = [2]float64{q(0.025), q(0.975)}
	}
	return b
}
