package linreg

import (
	"math"
	"math/rand/v2"
)

// SimulateARMA11 returns n values of a stationary ARMA(1,1) process
//
//	u_t = phi u_{t-1} + e_t + theta e_{t-1},  e_t ~ N(0, sigma^2),
//
// (R's sign convention; theta = 0 gives AR(1)) drawn with rng.
//
// The series starts in its stationary distribution rather than from zero:
// (u_0, e_0) is drawn from their exact joint stationary law,
// Var u = sigma^2 (1 + 2 phi theta + theta^2) / (1 - phi^2) (the ARMA(1,1)
// variance of Box and Jenkins, Time Series Analysis), Cov(u_0, e_0) =
// sigma^2, so no value is transient. On top of that a
// burn-in of 50 steps is discarded (harmless, and it keeps the draw
// sequence independent of how the start is made).
//
// It returns nil when n < 0 or when |phi| >= 1 (no stationary law),
// sigma < 0, or any argument is not finite.
func SimulateARMA11(rng *rand.Rand, n int, phi, theta, sigma float64) []float64 {
	if n < 0 || !(math.Abs(phi) < 1) || !(sigma >= 0) || math.IsInf(sigma, 0) || math.IsNaN(theta) || math.IsInf(theta, 0) {
		return nil
	}
	const burn = 50
	vu := (1 + 2*phi*theta + theta*theta) / (1 - phi*phi)
	// u_0 = e_0 + w with w independent of e_0: Var w = vu - 1 (>= 0 since
	// vu - 1 = (phi + theta)^2 / (1 - phi^2)).
	e := rng.NormFloat64()
	w := math.Sqrt(math.Max(vu-1, 0)) * rng.NormFloat64()
	u := e + w
	out := make([]float64, n)
	for t := 0; t < burn+n; t++ {
		en := rng.NormFloat64()
		u = phi*u + en + theta*e
		e = en
		if t >= burn {
			out[t-burn] = sigma * u
		}
	}
	return out
}
