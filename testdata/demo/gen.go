// Command demo builds Tessary, the invented demo world of Heatledger: monthly
// greenhouse concentrations, three invented eruptions, a solar cycle, an ocean
// index, two surface temperature records (1950-01 to 2025-12) and annual ocean
// heat content, plus truth.json with every parameter used. None of it is real
// data. The output is byte-identical on every run (fixed seed, fixed formats):
//
//	go run ./testdata/demo -out testdata/demo
package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// Fixed seed ("TESSARY" in ASCII). Each random component draws from its own
// stream PCG(seed, stream), so changing one never shifts the draws of another.
const seed = 0x54455353415259

const (
	streamSolar = iota + 1
	streamIndex
	streamNoise
	streamNoise2
	streamGaps
	streamHeat
)

const (
	spinupYear = 1850 // the model starts at rest here, forcing ramps from 0
	firstYear  = 1950 // first written year
	lastYear   = 2025
	nMonths    = (lastYear - spinupYear + 1) * 12
	i0         = (firstYear - spinupYear) * 12 // index of 1950-01
	dt         = 1.0 / 12                      // years

	// Two-layer energy balance model (Held et al. 2010; Geoffroy et al. 2013).
	lambda, gamma, heatC, heatC0, efficacy = 1.2, 0.7, 8.0, 100.0, 1.0
	f2x                                    = 3.93 // W m-2, IPCC AR6 best estimate (from memory)
	aerosolScale                           = 1.0

	co2PI, ch4PI, n2oPI             = 278.0, 722.0, 270.0 // pre-industrial ppm, ppb, ppb
	volcanicFactor                  = -20.0               // W m-2 per unit AOD, IPCC AR6 (from memory)
	aodBackground                   = 0.003
	solarAlbedo                     = 0.29
	tsiMean, tsiAmp                 = 1361.0, 0.5 // W m-2
	solarPeriod, solarMax, tsiNoise = 11.0, 1957.9, 0.05

	indexPeriod, indexRoot, indexSD = 48.0, 0.96, 0.9 // AR(2) ocean index
	indexCoef, indexLag             = 0.10, 3         // K per K, months (index leads)
	noisePhi, noiseSD               = 0.5, 0.08
	second, noise2SD                = 0.85, 0.12
	gapProb, gapMax                 = 0.065, 6
	gapsEnd                         = (1980 - spinupYear) * 12
	emptyEnd                        = (1955 - spinupYear) * 12

	earthArea, secondsPerYear = 5.10e14, 3.15576e7
	oceanFraction, heatNoise  = 0.91, 3.0 // ZJ
	heatBaseYear              = 1955
)

// zjPerWYrM2 converts W yr m-2 over the whole Earth to ZJ.
const zjPerWYrM2 = earthArea * secondsPerYear / 1e21

type eruption struct {
	Name        string  `json:"name"`
	Start       string  `json:"start"`
	PeakAOD     float64 `json:"peak_aod"`
	RiseMonths  int     `json:"rise_months"`
	EfoldMonths float64 `json:"efold_months"`
}

var eruptions = []eruption{
	{"Mount Caldor", "1958-03", 0.08, 4, 12},
	{"Mount Brisk", "1977-10", 0.05, 3, 12},
	{"Mount Ostra", "1996-06", 0.12, 5, 12},
}

// gauss draws uniform and normal deviates from a PCG source with our own
// derivations (Box-Muller), so the stream depends only on the PCG algorithm.
type gauss struct {
	src   *rand.PCG
	spare float64
	has   bool
}

func newGauss(stream uint64) *gauss { return &gauss{src: rand.NewPCG(seed, stream)} }

func (g *gauss) uniform() float64 { return (float64(g.src.Uint64()>>11) + 0.5) / (1 << 53) }

func (g *gauss) norm() float64 {
	if g.has {
		g.has = false
		return g.spare
	}
	r := math.Sqrt(-2 * math.Log(g.uniform()))
	a := 2 * math.Pi * g.uniform()
	g.spare, g.has = r*math.Sin(a), true
	return r * math.Cos(a)
}

// num formats with fixed decimals and no negative zero; q rounds x to exactly
// what a reader of the file gets back.
func num(x float64, prec int) string {
	s := strconv.FormatFloat(x, 'f', prec, 64)
	if strings.Trim(s, "-0.") == "" {
		s = strings.TrimPrefix(s, "-")
	}
	return s
}

func q(x float64, prec int) float64 {
	v, err := strconv.ParseFloat(num(x, prec), 64)
	if err != nil {
		panic(err)
	}
	return v
}

func midMonth(i int) float64 { return spinupYear + (float64(i)+0.5)/12 }

func label(i int) string { return fmt.Sprintf("%d-%02d", spinupYear+i/12, i%12+1) }

// Invented smooth paths: excess over pre-industrial a(exp(b s)-1), s years since 1850.
func excess(a, b, t float64) float64 { return a * (math.Exp(b*(t-spinupYear)) - 1) }

func logistic(x float64) float64 { return 1 / (1 + math.Exp(-x)) }

// Myhre et al. 1998 simplified expressions; coefficients 5.35, 0.036, 0.12 and
// the overlap term's 0.47, 2.01e-5, 0.75, 5.31e-15, 1.52 are from memory.
func overlap(m, n float64) float64 {
	mn := m * n
	return 0.47 * math.Log(1+2.01e-5*math.Pow(mn, 0.75)+5.31e-15*m*math.Pow(mn, 1.52))
}
func forcingCO2(c float64) float64 { return 5.35 * math.Log(c/co2PI) }
func forcingCH4(m float64) float64 {
	return 0.036*(math.Sqrt(m)-math.Sqrt(ch4PI)) - (overlap(m, n2oPI) - overlap(ch4PI, n2oPI))
}
func forcingN2O(n float64) float64 {
	return 0.12*(math.Sqrt(n)-math.Sqrt(n2oPI)) - (overlap(ch4PI, n) - overlap(ch4PI, n2oPI))
}

type mat2 [2][2]float64

// twoLayer integrates x = (T, T0) exactly for forcing held constant over each
// step: x1 = x* + E (x0 - x*), x* = (F/lambda)(1, 1), E = exp(A dt). With
// eigenvalues l1, l2 of A, f(A) = (f(l1)(A - l2 I) - f(l2)(A - l1 I)) / (l1 - l2).
type twoLayer struct{ step, half, mean mat2 }

func newTwoLayer() twoLayer {
	a := mat2{{-(lambda + efficacy*gamma) / heatC, efficacy * gamma / heatC}, {gamma / heatC0, -gamma / heatC0}}
	tr, det := a[0][0]+a[1][1], a[0][0]*a[1][1]-a[0][1]*a[1][0]
	d := math.Sqrt(tr*tr/4 - det)
	l1, l2 := tr/2+d, tr/2-d
	fn := func(f func(l float64) float64) mat2 {
		var m mat2
		for r := range 2 {
			for c := range 2 {
				id := 0.0
				if r == c {
					id = 1
				}
				m[r][c] = (f(l1)*(a[r][c]-l2*id) - f(l2)*(a[r][c]-l1*id)) / (l1 - l2)
			}
		}
		return m
	}
	return twoLayer{
		step: fn(func(l float64) float64 { return math.Exp(l * dt) }),
		half: fn(func(l float64) float64 { return math.Exp(l * dt / 2) }),
		mean: fn(func(l float64) float64 { return math.Expm1(l*dt) / (l * dt) }), // (1/dt) int_0^dt exp(A s) ds
	}
}

func apply(m mat2, x [2]float64, xs float64) [2]float64 {
	d0, d1 := x[0]-xs, x[1]-xs
	return [2]float64{xs + m[0][0]*d0 + m[0][1]*d1, xs + m[1][0]*d0 + m[1][1]*d1}
}

func heat(x [2]float64) float64 { return heatC*x[0] + heatC0*x[1] } // W yr m-2

func imbalance(f float64, x [2]float64) float64 {
	return f - lambda*x[0] - (efficacy-1)*gamma*(x[0]-x[1])
}

// advance returns the end state and the month-mean state. Self-check (energy
// conservation): dH/dt = N holds along the true solution, so the heat gained
// must equal Simpson's integral of N over the step using the half-step state;
// a wrong propagator fails this by far more than Simpson's error (~1e-12).
func (m twoLayer) advance(x [2]float64, f float64) (end, mean [2]float64) {
	xs := f / lambda
	end, mid, mean := apply(m.step, x, xs), apply(m.half, x, xs), apply(m.mean, x, xs)
	simpson := dt / 6 * (imbalance(f, x) + 4*imbalance(f, mid) + imbalance(f, end))
	tMean := (x[0] + 4*mid[0] + end[0]) / 6
	if math.Abs(heat(end)-heat(x)-simpson) > 1e-9 || math.Abs(tMean-mean[0]) > 1e-9 {
		panic(fmt.Sprintf("two-layer self-check failed: dH %g vs int N %g", heat(end)-heat(x), simpson))
	}
	return end, mean
}

type comps struct{ CO2, CH4, N2O, Aerosol, Volcanic, Solar, Total float64 }

type truth struct {
	World        string     `json:"world"`
	Seed         uint64     `json:"seed"`
	Streams      string     `json:"streams"`
	First        string     `json:"first_month"`
	Last         string     `json:"last_month"`
	SpinupStart  string     `json:"spinup_start"`
	Model        any        `json:"model"`
	Forcing      any        `json:"forcing"`
	Eruptions    []eruption `json:"eruptions"`
	Solar        any        `json:"solar"`
	OceanIndex   any        `json:"ocean_index"`
	Surface      any        `json:"surface"`
	SecondRecord any        `json:"second_record"`
	OceanHeat    any        `json:"ocean_heat"`
	Outputs      any        `json:"outputs"`
}

type m = map[string]any // encoding/json writes map keys sorted: stable output

func main() {
	out := flag.String("out", "testdata/demo", "directory to write the Tessary files into")
	flag.Parse()
	files := generate()
	for _, name := range []string{"tessary_surface.csv", "tessary_forcing.csv", "tessary_ocean_heat.csv", "truth.json"} {
		if err := os.WriteFile(filepath.Join(*out, name), files[name], 0o644); err != nil {
			fmt.Fprintln(os.Stderr, "demo:", err)
			os.Exit(1)
		}
	}
}

func generate() map[string][]byte {
	co2, ch4, n2o, aod, tsi, aer := make([]float64, nMonths), make([]float64, nMonths), make([]float64, nMonths),
		make([]float64, nMonths), make([]float64, nMonths), make([]float64, nMonths)
	solarRng := newGauss(streamSolar)
	aer0 := logistic((spinupYear - 1965) / 15.0)
	for i := range nMonths {
		t := midMonth(i)
		co2[i] = q(co2PI+excess(2.2, 0.024, t), 3)
		ch4[i] = q(ch4PI+excess(249, 0.010, t), 2)
		n2o[i] = q(n2oPI+excess(7.49, 0.013, t), 3)
		aer[i] = q(-1.12*(logistic((t-1965)/15)-aer0), 4)
		tsi[i] = q(tsiMean+tsiAmp*math.Cos(2*math.Pi*(t-solarMax)/solarPeriod)+tsiNoise*solarRng.norm(), 4)
		a := aodBackground
		for _, e := range eruptions {
			var y, mo int
			fmt.Sscanf(e.Start, "%d-%d", &y, &mo)
			k := float64(i - ((y-spinupYear)*12 + mo - 1))
			r := float64(e.RiseMonths)
			switch {
			case k >= 0 && k <= r:
				a += e.PeakAOD * math.Pow(math.Sin(math.Pi/2*k/r), 2)
			case k > r:
				a += e.PeakAOD * math.Exp(-(k-r)/e.EfoldMonths)
			}
		}
		aod[i] = q(a, 5)
	}

	// Forcing from the values exactly as written, then the model from 1850 at rest.
	model := newTwoLayer()
	var x [2]float64
	fc := make([]comps, nMonths)
	tMean, hEnd := make([]float64, nMonths), make([]float64, nMonths)
	sumN := 0.0
	for i := range nMonths {
		c := comps{CO2: forcingCO2(co2[i]), CH4: forcingCH4(ch4[i]), N2O: forcingN2O(n2o[i]),
			Aerosol: aerosolScale * aer[i], Volcanic: volcanicFactor * (aod[i] - aodBackground),
			Solar: (tsi[i] - tsiMean) * (1 - solarAlbedo) / 4}
		c.Total = c.CO2 + c.CH4 + c.N2O + c.Aerosol + c.Volcanic + c.Solar
		fc[i] = c
		prev := x
		var mean [2]float64
		x, mean = model.advance(x, c.Total)
		sumN += heat(x) - heat(prev)
		tMean[i], hEnd[i] = mean[0], heat(x)
	}
	if math.Abs(sumN-hEnd[nMonths-1]) > 1e-6 {
		panic("two-layer self-check failed: heat budget does not close")
	}

	// Ocean index: AR(2) with complex roots indexRoot*exp(+-2 pi i/indexPeriod).
	phi1, phi2 := 2*indexRoot*math.Cos(2*math.Pi/indexPeriod), -indexRoot*indexRoot
	idx := make([]float64, nMonths)
	ir := newGauss(streamIndex)
	for i := 2; i < nMonths; i++ {
		idx[i] = phi1*idx[i-1] + phi2*idx[i-2] + ir.norm()
	}
	mu, sd := meanSD(idx[i0:])
	for i := range idx {
		idx[i] = q((idx[i]-mu)/sd*indexSD, 4)
	}

	// Two temperature records: model T (+ factor), lagged index, AR(1) noise.
	ar1 := func(g *gauss, s float64) []float64 {
		e := make([]float64, nMonths)
		e[0] = s / math.Sqrt(1-noisePhi*noisePhi) * g.norm()
		for i := 1; i < nMonths; i++ {
			e[i] = noisePhi*e[i-1] + s*g.norm()
		}
		return e
	}
	e1, e2 := ar1(newGauss(streamNoise), noiseSD), ar1(newGauss(streamNoise2), noise2SD)
	missing := make([]bool, nMonths)
	gr := newGauss(streamGaps)
	for i := i0; i < gapsEnd; i++ {
		if i < emptyEnd {
			missing[i] = true
		} else if !missing[i] && gr.uniform() < gapProb {
			for k := range 1 + int(gr.uniform()*gapMax) {
				missing[min(i+k, gapsEnd-1)] = true
			}
		}
	}
	surf, sec := make([]float64, nMonths), make([]float64, nMonths)
	for i := range nMonths {
		surf[i] = tMean[i] + indexCoef*idx[max(i-indexLag, 0)] + e1[i]
		sec[i] = second*tMean[i] + indexCoef*idx[max(i-indexLag, 0)] + e2[i]
		if missing[i] {
			sec[i] = math.NaN()
		}
	}
	b61, b90 := (1961-spinupYear)*12, (1991-spinupYear)*12
	off1, _ := meanSD(surf[b61:b90])
	off2, _ := meanSD(sec[b61:b90])
	nMissing, nGaps := 0, 0
	var sb, fb strings.Builder
	sb.WriteString("# Tessary (invented demo world, not real data): monthly surface temperature, anomalies from 1961-1990\n")
	sb.WriteString("date,surface_anomaly (K),second_record (K),ocean_index (K)\n")
	fb.WriteString("# Tessary (invented demo world, not real data): monthly greenhouse concentrations, aerosol and solar\n")
	fb.WriteString("date,co2 (ppm),ch4 (ppb),n2o (ppb),aod (1),tsi (W m-2),aerosol_erf (W m-2)\n")
	for i := i0; i < nMonths; i++ {
		s2 := ""
		if missing[i] {
			nMissing++
			if i >= emptyEnd {
				nGaps++
			}
		} else {
			s2 = num(sec[i]-off2, 4)
		}
		fmt.Fprintf(&sb, "%s,%s,%s,%s\n", label(i), num(surf[i]-off1, 4), s2, num(idx[i], 4))
		fmt.Fprintf(&fb, "%s,%s,%s,%s,%s,%s,%s\n", label(i), num(co2[i], 3), num(ch4[i], 2), num(n2o[i], 3),
			num(aod[i], 5), num(tsi[i], 4), num(aer[i], 4))
	}

	// Ocean heat content: model state at mid-year (end of June), ocean share, ZJ.
	hr := newGauss(streamHeat)
	june := func(y int) int { return (y-spinupYear)*12 + 5 }
	var hb strings.Builder
	hb.WriteString("# Tessary (invented demo world, not real data): annual ocean heat content, mid-year, relative to 1955\n")
	hb.WriteString("year,ocean_heat (ZJ)\n")
	for y := firstYear; y <= lastYear; y++ {
		v := oceanFraction*(hEnd[june(y)]-hEnd[june(heatBaseYear)])*zjPerWYrM2 + heatNoise*hr.norm()
		fmt.Fprintf(&hb, "%d,%s\n", y, num(v, 3))
	}

	// Model outputs for tests.
	dec := func(y int) int { return (y-spinupYear)*12 + 11 }
	var sx, sy, sxx, sxy, n float64
	for i := (1979 - spinupYear) * 12; i < (2025-spinupYear)*12; i++ {
		t := midMonth(i)
		sx, sy, sxx, sxy, n = sx+t, sy+tMean[i], sxx+t*t, sxy+t*tMean[i], n+1
	}
	slope := (n*sxy - sx*sy) / (n*sxx - sx*sx)
	var f25 comps
	for i := (2025 - spinupYear) * 12; i < nMonths; i++ {
		c := fc[i]
		f25 = comps{f25.CO2 + c.CO2/12, f25.CH4 + c.CH4/12, f25.N2O + c.N2O/12, f25.Aerosol + c.Aerosol/12,
			f25.Volcanic + c.Volcanic/12, f25.Solar + c.Solar/12, f25.Total + c.Total/12}
	}
	r6 := func(v float64) float64 { return q(v, 6) }
	tr := truth{
		World: "Tessary: an invented demo world; no real place, eruption or dataset", Seed: seed,
		Streams: "PCG(seed, stream): 1 solar, 2 ocean index, 3 surface noise, 4 second record noise, 5 gaps, 6 ocean heat noise",
		First:   "1950-01", Last: "2025-12", SpinupStart: "1850-01",
		Model: m{"kind": "two-layer (Held et al. 2010; Geoffroy et al. 2013), exact update for monthly piecewise-constant forcing, at rest in 1850-01",
			"lambda_w_m2_per_k": lambda, "gamma_w_m2_per_k": gamma, "c_w_yr_m2_per_k": heatC, "c0_w_yr_m2_per_k": heatC0,
			"efficacy": efficacy, "f2x_w_m2": f2x, "ecs_k": r6(f2x / lambda), "f2x_co2_formula_w_m2": r6(forcingCO2(2 * co2PI)),
			"steps_per_year": 12, "temperature_convention": "monthly mean of the model state over each month"},
		Forcing: m{"co2": "5.35 ln(C/C0) (Myhre et al. 1998)", "ch4_n2o": "Myhre et al. 1998 with overlap f(M,N)",
			"preindustrial_co2_ppm": co2PI, "preindustrial_ch4_ppb": ch4PI, "preindustrial_n2o_ppb": n2oPI,
			"aerosol_scale": aerosolScale, "volcanic_factor_w_m2_per_aod": volcanicFactor, "aod_background": aodBackground,
			"volcanic": "factor * (aod - aod_background)", "solar_albedo": solarAlbedo, "tsi_reference_w_m2": tsiMean,
			"solar": "(tsi - tsi_reference) * (1 - solar_albedo) / 4", "computed_from": "the rounded values written in tessary_forcing.csv"},
		Eruptions:  eruptions,
		Solar:      m{"mean_w_m2": tsiMean, "amplitude_w_m2": tsiAmp, "period_yr": solarPeriod, "maximum_year": solarMax, "noise_sd_w_m2": tsiNoise},
		OceanIndex: m{"process": "AR(2)", "ar1": r6(phi1), "ar2": r6(phi2), "period_months": indexPeriod, "root_modulus": indexRoot, "sd_k": indexSD},
		Surface: m{"index_coefficient_k": indexCoef, "index_lag_months": indexLag, "noise_phi": noisePhi, "noise_sd_k": noiseSD,
			"baseline": "1961-1990", "baseline_offset_k": r6(off1)},
		SecondRecord: m{"factor": second, "index_coefficient_k": indexCoef, "index_lag_months": indexLag, "noise_phi": noisePhi,
			"noise_sd_k": noise2SD, "empty": "1950-01 to 1954-12", "gap_start_probability": gapProb, "gap_max_months": gapMax,
			"gaps_until": "1979-12", "missing_months": nMissing, "gap_months_1955_1979": nGaps, "baseline": "1961-1990", "baseline_offset_k": r6(off2)},
		OceanHeat: m{"ocean_fraction": oceanFraction, "earth_area_m2": earthArea, "seconds_per_year": secondsPerYear,
			"zj_per_w_yr_m2": r6(zjPerWYrM2), "time": "model state at year+0.5", "baseline": "model state at 1955.5",
			"noise_sd_zj": heatNoise},
		Outputs: m{"mean_imbalance_2005_2020_w_m2": r6((hEnd[dec(2020)] - hEnd[dec(2004)]) / 16),
			"t_trend_1979_2024_k_per_decade": r6(10 * slope), "final_t_k": r6(x[0]), "final_t0_k": r6(x[1]),
			"cumulative_heat_since_1850_w_yr_m2": r6(hEnd[nMonths-1]), "cumulative_heat_since_1850_zj": r6(hEnd[nMonths-1] * zjPerWYrM2),
			"forcing_2025_mean_w_m2": m{"co2": r6(f25.CO2), "ch4": r6(f25.CH4), "n2o": r6(f25.N2O), "aerosol": r6(f25.Aerosol),
				"volcanic": r6(f25.Volcanic), "solar": r6(f25.Solar), "total": r6(f25.Total)}},
	}
	js, err := json.MarshalIndent(tr, "", "  ")
	if err != nil {
		panic(err)
	}
	return map[string][]byte{"tessary_surface.csv": []byte(sb.String()), "tessary_forcing.csv": []byte(fb.String()),
		"tessary_ocean_heat.csv": []byte(hb.String()), "truth.json": append(js, '\n')}
}

// meanSD skips NaN.
func meanSD(v []float64) (mean, sd float64) {
	var s, ss, n float64
	for _, x := range v {
		if !math.IsNaN(x) {
			s, ss, n = s+x, ss+x*x, n+1
		}
	}
	mean = s / n
	return mean, math.Sqrt(ss/n - mean*mean)
}
