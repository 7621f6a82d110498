package ebm

import (
	"fmt"
	"math"

	"gonum.org/v1/gonum/mat"
	"gonum.org/v1/gonum/stat/distuv"

	"heatledger/core/drivers"
	"heatledger/core/series"
)

// fdStep is the central-difference step in log parameters.
const fdStep = 1e-5

// predict fills out with the model values (unweighted: temperature rows,
// then heat rows) at parameters p and linear coefficients beta.
func (ft *fitter) predict(p Params, beta, out []float64) {
	ft.columns(p)
	nt, ns, ne := len(ft.tRows), len(ft.scaled), len(ft.extras)
	for r := range nt {
		v := ft.colT[0][r] + beta[ns]
		for g := 1; g < len(ft.gF); g++ {
			v += beta[g-1] * ft.colT[g][r]
		}
		for j, e := range ft.extras {
			v += beta[len(beta)-ne+j] * e[r]
		}
		out[r] = v
	}
	for r := range ft.hRows {
		v := ft.colH[0][r]
		for g := 1; g < len(ft.gF); g++ {
			v += beta[g-1] * ft.colH[g][r]
		}
		out[nt+r] = ft.share*v + beta[ns+1]
	}
}

// jacobian is d(model values)/d(parameters) at (x, beta), unweighted rows,
// in natural units: central differences in log theta divided by theta for
// the dynamic parameters, the design columns for the linear ones.
func (ft *fitter) jacobian(x, beta []float64) (*mat.Dense, error) {
	nrow := len(ft.tRows) + len(ft.hRows)
	nd := len(ft.dyn)
	J := mat.NewDense(nrow, nd+len(beta), nil)
	up, dn := make([]float64, nrow), make([]float64, nrow)
	for i := range nd {
		xp := append([]float64(nil), x...)
		xm := append([]float64(nil), x...)
		xp[i] += fdStep
		xm[i] -= fdStep
		pp, ok1 := ft.dynParams(xp)
		pm, ok2 := ft.dynParams(xm)
		if !ok1 || !ok2 {
			b := fitBounds[ft.dyn[i]]
			return nil, fmt.Errorf("%s ran to the edge of its allowed range (%.4g, range %g to %g): these data cannot determine it together with the other free parameters; fix it, free fewer parameters, or add a heat-content record",
				ft.dyn[i], math.Exp(x[i]), b[0], b[1])
		}
		ft.predict(pp, beta, up)
		ft.predict(pm, beta, dn)
		v := math.Exp(x[i])
		for r := range nrow {
			J.Set(r, i, (up[r]-dn[r])/(2*fdStep*v))
		}
	}
	p, _ := ft.dynParams(x)
	ft.columns(p)
	ft.design(1)
	for j := range beta {
		for r := range nrow {
			J.Set(r, nd+j, ft.ls.a[j][r])
		}
	}
	return J, nil
}

// inflation is the Foster and Rahmstorf 2011 ARMA(1,1) variance inflation
// of residuals laid on a record's axis (NaN where not fitted), through
// drivers.ResidualACF12 and drivers.Inflation; residuals without variation
// get rho = 0, nu = 1.
func inflation(res []float64) (rho1, rho2, nu float64, note string) {
	rho1, rho2 = drivers.ResidualACF12(res)
	if math.IsNaN(rho1) || math.IsNaN(rho2) {
		rho1, rho2 = 0, 0
	}
	nu, _, note = drivers.Inflation(rho1, rho2)
	if math.IsInf(nu, 0) || math.IsNaN(nu) {
		nu = 1
	}
	if !(rho1 > 0) {
		note = ""
	}
	return
}

// onAxis lays row values onto a record's axis (NaN elsewhere).
func onAxis(n int, rows []int, v []float64) []float64 {
	out := nanSlice(n)
	for r, i := range rows {
		out[i] = v[r]
	}
	return out
}

// covariance inverts the information matrix sum_k J_k'J_k / (s_k^2 nu_k),
// k the temperature and heat blocks, s_k^2 = RSS_k/n_k * n/(n - p).
func covariance(J *mat.Dense, nt int, rssT, nuT, rssH, nuH float64) (*mat.SymDense, error) {
	nrow, np := J.Dims()
	nh := nrow - nt
	dofScale := float64(nrow) / float64(nrow-np)
	info := mat.NewSymDense(np, nil)
	addBlock := func(r0, r1 int, wgt float64) {
		for a := range np {
			for b := a; b < np; b++ {
				var s float64
				for r := r0; r < r1; r++ {
					s += J.At(r, a) * J.At(r, b)
				}
				info.SetSym(a, b, info.At(a, b)+s*wgt)
			}
		}
	}
	addBlock(0, nt, 1/(rssT/float64(nt)*dofScale*nuT))
	if nh > 0 {
		addBlock(nt, nrow, 1/(rssH/float64(nh)*dofScale*nuH))
	}
	var cov mat.SymDense
	var chol mat.Cholesky
	if ok := chol.Factorize(info); !ok {
		return nil, fmt.Errorf("the parameters cannot be separated by these data (singular information matrix): free fewer parameters")
	}
	if c := chol.Cond(); c > 1e13 {
		return nil, fmt.Errorf("the parameters cannot be separated by these data (condition number %.2g): free fewer parameters", c)
	}
	if err := chol.InverseTo(&cov); err != nil {
		return nil, fmt.Errorf("the parameters cannot be separated by these data: %v", err)
	}
	return &cov, nil
}

// result builds the outputs at the optimum x with heat weight w.
func (ft *fitter) result(x []float64, w float64) (*FitResult, error) {
	p, _ := ft.dynParams(x)
	ft.objective(x, w)
	beta := append([]float64(nil), ft.ls.beta...)
	nt, nh, nd := len(ft.tRows), len(ft.hRows), len(ft.dyn)
	np := nd + len(beta)

	pred := make([]float64, nt+nh)
	ft.predict(p, beta, pred)
	resT, resH := make([]float64, nt), make([]float64, nh)
	var rssT, rssH float64
	for r := range nt {
		resT[r] = ft.yT[r] - pred[r]
		rssT += resT[r] * resT[r]
	}
	for r := range nh {
		resH[r] = ft.yH[r] - pred[nt+r]
		rssH += resH[r] * resH[r]
	}
	J, err := ft.jacobian(x, beta)
	if err != nil {
		return nil, err
	}
	tg := ft.opt.Target
	rho1, rho2, nu, note := inflation(onAxis(len(tg.Values), ft.tRows, resT))
	if note != "" {
		ft.warns = append(ft.warns, note)
	}
	heatNu := 1.0
	var resHS []float64
	if nh > 0 {
		resHS = onAxis(len(ft.opt.Heat.Values), ft.hRows, resH)
		_, _, heatNu, _ = inflation(resHS)
	}
	cov, err := covariance(J, nt, rssT, nu, rssH, heatNu)
	if err != nil {
		return nil, err
	}

	out := &FitResult{Params: p, Level: ft.level, N: nt, HeatN: nh, Rho1: rho1, Rho2: rho2, Nu: nu, HeatNu: heatNu,
		HeatShare: ft.share, Evaluations: ft.evals, Target: tg, Heat: ft.opt.Heat}
	if nh > 0 {
		out.HeatWeight = w
		v := math.Sqrt(rssH / float64(nh))
		out.HeatRMSEZJ = &v
	}
	q := distuv.StudentsT{Mu: 0, Sigma: 1, Nu: math.Max(1, float64(nt)/nu-float64(np))}.Quantile((1 + ft.level) / 2)
	vals, se := ft.estimates(out, p, beta, cov, q)
	ft.derivedIntervals(out, x, vals, se, cov, q)

	// the fitted forcing, run and series
	factors := map[string]float64{}
	for i, k := range ft.scaled {
		factors[ft.f.Components[k].Name] = beta[i]
	}
	if out.Forcing, err = ft.f.Rescaled(factors); err != nil {
		return nil, err
	}
	if out.Run, err = Simulate(out.Forcing, p, RunOptions{Spinup: spinMode(ft.sp), SpinupFromYear: ft.sp.from}); err != nil {
		return nil, err
	}
	var ss, mean float64
	for _, y := range ft.yT {
		mean += y / float64(nt)
	}
	for _, y := range ft.yT {
		ss += (y - mean) * (y - mean)
	}
	out.Fitted = series.New(tg.Name+" fitted", tg.Unit, tg.Resolution, tg.First, onAxis(len(tg.Values), ft.tRows, pred[:nt]))
	out.Residuals = series.New(tg.Name+" residual", tg.Unit, tg.Resolution, tg.First, onAxis(len(tg.Values), ft.tRows, resT))
	out.RMSE = math.Sqrt(rssT / float64(nt))
	out.R2 = 1 - rssT/ss
	if nh > 0 {
		h := ft.opt.Heat
		out.HeatFitted = series.New(h.Name+" fitted", h.Unit, h.Resolution, h.First, onAxis(len(h.Values), ft.hRows, pred[nt:]))
		out.HeatResiduals = series.New(h.Name+" residual", h.Unit, h.Resolution, h.First, resHS)
	}
	out.Warnings = append([]string{}, ft.warns...)
	return out, nil
}

// estimates fills the estimates, their correlations and the warnings about
// them; it returns the values and standard errors in parameter order.
func (ft *fitter) estimates(out *FitResult, p Params, beta []float64, cov *mat.SymDense, q float64) (vals, se []float64) {
	nd := len(ft.dyn)
	names := append([]string(nil), ft.dyn...)
	for _, name := range ft.dyn {
		vals = append(vals, dynValue(p, name))
	}
	comps := make([]string, nd+len(beta))
	for i, k := range ft.scaled {
		names = append(names, ft.scaleAs[i])
		comps[nd+i] = ft.f.Components[k].Name
	}
	names = append(names, FreeOffset)
	if len(ft.hRows) > 0 {
		names = append(names, HeatOffset)
	}
	for _, e := range ft.opt.Extra {
		names = append(names, e.Name)
	}
	vals = append(vals, beta...)
	np := len(vals)
	out.Names = names
	se = make([]float64, np)
	for i := range np {
		se[i] = math.Sqrt(cov.At(i, i))
		out.Estimates = append(out.Estimates, Estimate{Name: names[i], Component: comps[i], Value: vals[i], StdErr: se[i], Low: vals[i] - q*se[i], High: vals[i] + q*se[i]})
	}
	out.Correlation = make([][]float64, np)
	for i := range np {
		out.Correlation[i] = make([]float64, np)
		for j := range np {
			c := cov.At(i, j) / (se[i] * se[j])
			if math.IsNaN(c) {
				c = 0
			}
			out.Correlation[i][j] = c
			if j > i && math.Abs(c) > 0.95 {
				ft.warns = append(ft.warns, fmt.Sprintf("the estimates of %s and %s are correlated at %.3f: the data hardly separate them", names[i], names[j], c))
			}
		}
	}
	for i, name := range ft.dyn {
		b := fitBounds[name]
		if v := vals[i]; v < b[0]*1.05 || v > b[1]/1.05 {
			ft.warns = append(ft.warns, fmt.Sprintf("%s = %.4g lies at the edge of its allowed range %g to %g", name, v, b[0], b[1]))
		}
	}
	for i := range ft.scaled {
		if beta[i] < 0 {
			ft.warns = append(ft.warns, fmt.Sprintf("the scale of %s came out negative (%.3g): the record does not support that forcing's sign", ft.scaleAs[i], beta[i]))
		}
	}
	return vals, se
}

// derivedIntervals sets ECS and TCR with their intervals: ECS's maps
// lambda's interval through F2x/lambda (its stderr by the delta method,
// ECS se_lambda/lambda); TCR's is the delta method, g' Cov g with g the
// gradient of the simulated TCR in the dynamic parameters (central
// differences).
func (ft *fitter) derivedIntervals(out *FitResult, x, vals, se []float64, cov *mat.SymDense, q float64) {
	p := out.Params
	out.Derived, _ = Derive(p)
	out.ECS = Interval{Value: out.Derived.ECSK}
	out.TCR = Interval{Value: out.Derived.TCRK}
	lo, hi := out.ECS.Value, out.ECS.Value
	out.ECS.Low, out.ECS.High = &lo, &hi
	if i := indexOf(ft.dyn, FreeLambda); i >= 0 {
		l, s := vals[i], se[i]
		out.ECS.StdErr = out.ECS.Value * s / l
		h := p.F2xWPerM2 / (l + q*s)
		out.ECS.Low = &h
		if l-q*s > 0 {
			v := p.F2xWPerM2 / (l - q*s)
			out.ECS.High = &v
		} else {
			out.ECS.High = nil
			ft.warns = append(ft.warns, "the interval of lambda reaches zero: the upper end of the ECS interval is unbounded")
		}
	}
	nd := len(ft.dyn)
	if nd > 0 {
		grad := make([]float64, nd)
		for i := range nd {
			xp := append([]float64(nil), x...)
			xm := append([]float64(nil), x...)
			xp[i] += fdStep
			xm[i] -= fdStep
			pp, _ := ft.dynParams(xp)
			pm, _ := ft.dynParams(xm)
			grad[i] = (tcrOf(pp) - tcrOf(pm)) / (2 * fdStep * vals[i])
		}
		var v float64
		for a := range nd {
			for b := range nd {
				v += grad[a] * grad[b] * cov.At(a, b)
			}
		}
		out.TCR.StdErr = math.Sqrt(v)
	}
	tl, th := out.TCR.Value-q*out.TCR.StdErr, out.TCR.Value+q*out.TCR.StdErr
	out.TCR.Low, out.TCR.High = &tl, &th
}
