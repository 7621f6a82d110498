// Package forcing turns data columns into effective radiative forcing (ERF,
// W m-2): greenhouse-gas concentrations by the simplified expressions of
// Myhre et al. 1998 or Etminan et al. 2016, stratospheric aerosol optical
// depth times a factor, total solar irradiance through the planetary albedo,
// and columns already in W m-2 taken as they are. Each component has a
// reference value (pre-industrial, the first year of the run, the series'
// mean, or a number), a scale factor and an efficacy; Build assembles the
// components on one time axis and sums them.
//
// The package imports only the standard library and core/series, so it
// builds natively and as GOOS=js GOARCH=wasm.
package forcing

import "math"

// Settings defaults. Values tagged "from memory" were recalled, not read
// from the source while writing this code.
const (
	// DefaultF2xWPerM2 is the ERF of doubled CO2 used for ECS = F2x/lambda
	// and the TCR ramp: 3.93 +/- 0.47 W m-2, IPCC AR6 WG1 chapter 7 (from
	// memory, as ../shared/CHECKS.md gives it).
	DefaultF2xWPerM2 = 3.93
	// DefaultVolcanicWPerM2PerAOD is the ERF per unit stratospheric aerosol
	// optical depth at 550 nm: about -20 W m-2 in IPCC AR6 (from memory).
	DefaultVolcanicWPerM2PerAOD = -20.0
	// AR5VolcanicWPerM2PerAOD is the older factor, -25 W m-2 per unit AOD,
	// IPCC AR5 after Hansen et al. 2005 (J. Geophys. Res. 110, D18104; from
	// memory).
	AR5VolcanicWPerM2PerAOD = -25.0
	// DefaultAlbedo is the planetary albedo used for solar forcing,
	// dTSI (1 - albedo) / 4 (0.29: common practice).
	DefaultAlbedo = 0.29
	// Pre-industrial concentrations used as the default references and as
	// the other gas in the CH4-N2O overlap term: 278 ppm CO2, 722 ppb CH4,
	// 270 ppb N2O (common choice for 1750; from memory).
	DefaultCO2PreindustrialPPM = 278.0
	DefaultCH4PreindustrialPPB = 722.0
	DefaultN2OPreindustrialPPB = 270.0
)

// CO2Myhre1998 is the ERF of CO2 at concentration c relative to c0 (both
// ppm) by the simplified expression of Myhre et al. 1998 (Geophys. Res.
// Lett. 25, 2715, table 3):
//
//	F = 5.35 ln(c / c0)   W m-2   (5.35 ln 2 = 3.708 W m-2 at doubling).
func CO2Myhre1998(c, c0 float64) float64 { return 5.35 * math.Log(c/c0) }

// Overlap is the CH4-N2O band-overlap function of Myhre et al. 1998 (after
// IPCC 1990), with m the CH4 and n the N2O concentration in ppb:
//
//	f(m, n) = 0.47 ln[1 + 2.01e-5 (m n)^0.75 + 5.31e-15 m (m n)^1.52]
//
// (coefficients from memory, as ../shared/CHECKS.md gives them).
func Overlap(m, n float64) float64 {
	mn := m * n
	return 0.47 * math.Log(1+2.01e-5*math.Pow(mn, 0.75)+5.31e-15*m*math.Pow(mn, 1.52))
}

// CH4Myhre1998 is the ERF of CH4 at m relative to m0 (ppb), with N2O held
// at n0 (ppb), Myhre et al. 1998:
//
//	F = 0.036 (sqrt m - sqrt m0) - [f(m, n0) - f(m0, n0)].
func CH4Myhre1998(m, m0, n0 float64) float64 {
	return 0.036*(math.Sqrt(m)-math.Sqrt(m0)) - (Overlap(m, n0) - Overlap(m0, n0))
}

// N2OMyhre1998 is the ERF of N2O at n relative to n0 (ppb), with CH4 held
// at m0 (ppb), Myhre et al. 1998:
//
//	F = 0.12 (sqrt n - sqrt n0) - [f(m0, n) - f(m0, n0)].
func N2OMyhre1998(n, n0, m0 float64) float64 {
	return 0.12*(math.Sqrt(n)-math.Sqrt(n0)) - (Overlap(m0, n) - Overlap(m0, n0))
}

// Etminan et al. 2016 (Geophys. Res. Lett. 43, 12614, table 1) revised the
// expressions to include the shortwave absorption of CH4 and the overlap of
// CO2 and N2O. Every coefficient below is from memory: nobody here checked
// it against the paper, so the Myhre et al. 1998 expressions stay the
// default. Concentrations: CO2 ppm, CH4 and N2O ppb.
const (
	etA1, etB1, etC1, etD1 = -2.4e-7, 7.2e-4, -2.1e-4, 5.36  // CO2 (from memory)
	etA2, etB2, etC2, etD2 = -8.0e-6, 4.2e-6, -4.9e-6, 0.117 // N2O (from memory)
	etA3, etB3, etD3       = -1.3e-6, -8.2e-6, 0.043         // CH4 (from memory)
)

// Validity ranges Etminan et al. 2016 give for their fits (from memory):
// CO2 180-2000 ppm, CH4 340-3500 ppb, N2O 200-525 ppb.
var etminanRange = map[string][2]float64{KindCO2: {180, 2000}, KindCH4: {340, 3500}, KindN2O: {200, 525}}

// CO2Etminan2016 is the ERF of CO2 at c relative to c0 (ppm), N2O at n
// (ppb), Etminan et al. 2016 (coefficients from memory):
//
//	F = [a1 (c - c0)^2 + b1 |c - c0| + c1 n + 5.36] ln(c / c0),
//	a1 = -2.4e-7, b1 = 7.2e-4, c1 = -2.1e-4.
func CO2Etminan2016(c, c0, n float64) float64 {
	d := c - c0
	return (etA1*d*d + etB1*math.Abs(d) + etC1*n + etD1) * math.Log(c/c0)
}

// N2OEtminan2016 is the ERF of N2O at n relative to n0 (ppb), CO2 at c
// (ppm) and CH4 at m (ppb), Etminan et al. 2016 (coefficients from memory):
//
//	F = [a2 c + b2 nbar + c2 m + 0.117] (sqrt n - sqrt n0),  nbar = (n + n0)/2,
//	a2 = -8.0e-6, b2 = 4.2e-6, c2 = -4.9e-6.
func N2OEtminan2016(n, n0, c, m float64) float64 {
	nbar := (n + n0) / 2
	return (etA2*c + etB2*nbar + etC2*m + etD2) * (math.Sqrt(n) - math.Sqrt(n0))
}

// CH4Etminan2016 is the ERF of CH4 at m relative to m0 (ppb), N2O at n
// (ppb), Etminan et al. 2016 (coefficients from memory):
//
//	F = [a3 mbar + b3 n + 0.043] (sqrt m - sqrt m0),  mbar = (m + m0)/2,
//	a3 = -1.3e-6, b3 = -8.2e-6.
func CH4Etminan2016(m, m0, n float64) float64 {
	mbar := (m + m0) / 2
	return (etA3*mbar + etB3*n + etD3) * (math.Sqrt(m) - math.Sqrt(m0))
}

// Volcanic is the ERF of stratospheric aerosol: factor (aod - aodRef), the
// factor in W m-2 per unit optical depth (-20 in IPCC AR6, -25 in AR5 after
// Hansen et al. 2005).
func Volcanic(aod, aodRef, factor float64) float64 { return factor * (aod - aodRef) }

// Solar is the ERF of a change in total solar irradiance: the change spread
// over the sphere (a quarter) less the reflected part,
//
//	F = (tsi - tsiRef) (1 - albedo) / 4   W m-2.
func Solar(tsi, tsiRef, albedo float64) float64 { return (tsi - tsiRef) * (1 - albedo) / 4 }
