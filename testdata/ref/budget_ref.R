# Reference values for the energy-budget engine (core/budget).
#
# Run once from the repository root with Debian's R 4.2 (base R only):
#
#     Rscript testdata/ref/budget_ref.R
#
# It writes testdata/ref/budget_ref.json. CI never runs this script; the Go
# tests read the committed JSON. Deterministic: no random numbers are used.
#
# 1. ratio_cases: exact percentiles of the energy-budget sensitivity
#    S = F2x dT / Y for independent normal inputs, by numerical integration
#    (R's integrate, adaptive Gauss-Kronrod) and root finding (uniroot), with
#    Y = dF - dN for ECS and Y = dF for TCR. Convention (as core/budget): a
#    draw with Y <= 0 is S = +Inf, so for finite r
#        P(S <= r) = P(Y > 0 and F2x dT <= r Y)
#                  = int_0^Inf phi_Y(y) P(F2x dT <= r y) dy,
#    and with F2x fixed at f > 0, P(F2x dT <= r y) = pnorm((r y / f - mT) / sT).
#    With F2x normal (all its mass far above 0) the outer integral runs over
#    F2x as well. A percentile p above P(Y > 0) is +Inf (written null).
#    Also written: P(Y <= 0) = pnorm(0, mY, sY) (the unbounded fraction) and
#    the CDF at a few points.
# 2. gregory: lm(N ~ T) on a deterministic data set (written out), the
#    ordinary least squares coefficients, standard errors and residual
#    lag-1/lag-2 autocorrelations (acf), for the Gregory regression's white
#    noise model.

out_path <- file.path("testdata", "ref", "budget_ref.json")
if (!dir.exists(file.path("testdata", "ref"))) stop("run from the repository root")

num <- function(x) {
  if (is.null(x) || length(x) == 0) return("null")
  vapply(x, function(v) {
    if (is.na(v) || !is.finite(v)) return("null")
    s <- sprintf("%.15g", v)
    if (as.numeric(s) != v) s <- sprintf("%.17g", v)
    s
  }, "")
}
arr <- function(x) paste0("[", paste(num(x), collapse = ", "), "]")
obj <- function(...) {
  kv <- list(...)
  paste0("{", paste(sprintf("\"%s\": %s", names(kv), unlist(kv)), collapse = ", "), "}")
}
str <- function(s) paste0("\"", gsub("\"", "\\\\\"", s), "\"")

# CDF of S at r (finite), F2x fixed at f.
cdf_fixed <- function(r, f, mT, sT, mY, sY) {
  g <- function(y) dnorm(y, mY, sY) * pnorm((r * y / f - mT) / sT)
  integrate(g, 0, Inf, rel.tol = 1e-12, abs.tol = 0, subdivisions = 2000L)$value
}
# CDF of S at r, F2x ~ N(mf, sf) (integrated over mf +- 10 sf, all > 0).
cdf_random <- function(r, mf, sf, mT, sT, mY, sY) {
  outer <- function(fs) vapply(fs, function(f) dnorm(f, mf, sf) * cdf_fixed(r, f, mT, sT, mY, sY), 0)
  integrate(outer, mf - 10 * sf, mf + 10 * sf, rel.tol = 1e-10, abs.tol = 0, subdivisions = 2000L)$value
}

probs <- c(0.05, 0.17, 0.5, 0.83, 0.95)

ratio_case <- function(name, kind, f2x, dT, dF, dN) {
  mT <- dT[1]; sT <- dT[2]
  if (kind == "ecs") { mY <- dF[1] - dN[1]; sY <- sqrt(dF[2]^2 + dN[2]^2) } else { mY <- dF[1]; sY <- dF[2] }
  cdf <- if (f2x[2] == 0) function(r) cdf_fixed(r, f2x[1], mT, sT, mY, sY) else
    function(r) cdf_random(r, f2x[1], f2x[2], mT, sT, mY, sY)
  ppos <- pnorm(0, mY, sY, lower.tail = FALSE)
  centre <- f2x[1] * mT / mY
  q <- vapply(probs, function(p) {
    if (p >= ppos) return(Inf)
    lo <- 0; hi <- centre
    while (cdf(hi) < p) hi <- hi * 2
    while (cdf(lo) > p) lo <- lo - centre
    uniroot(function(r) cdf(r) - p, c(lo, hi), tol = 1e-12)$root
  }, 0)
  pts <- c(0.5, 1, 1.5, 2, 3, 5) * centre
  obj(name = str(name), kind = str(kind),
      f2x = obj(mean = num(f2x[1]), sd = num(f2x[2])),
      dT = obj(mean = num(dT[1]), sd = num(dT[2])),
      dF = obj(mean = num(dF[1]), sd = num(dF[2])),
      dN = obj(mean = num(dN[1]), sd = num(dN[2])),
      central = num(centre),
      unbounded_fraction = num(pnorm(0, mY, sY)),
      probs = arr(probs), quantiles = arr(q),
      cdf_at = arr(pts), cdf = arr(vapply(pts, cdf, 0)))
}

cases <- c(
  ratio_case("moderate, F2x fixed", "ecs", c(3.9, 0), c(0.8, 0.1), c(2.5, 0.4), c(0.5, 0.15)),
  ratio_case("moderate, F2x fixed", "tcr", c(3.9, 0), c(0.8, 0.1), c(2.5, 0.4), c(0.5, 0.15)),
  ratio_case("moderate, F2x normal", "ecs", c(3.93, 0.47 / qnorm(0.95)), c(0.8, 0.1), c(2.5, 0.4), c(0.5, 0.15)),
  ratio_case("moderate, F2x normal", "tcr", c(3.93, 0.47 / qnorm(0.95)), c(0.8, 0.1), c(2.5, 0.4), c(0.5, 0.15)),
  ratio_case("weak forcing, unbounded upper tail", "ecs", c(3.9, 0), c(0.9, 0.12), c(1.2, 0.5), c(0.6, 0.2))
)

# Gregory regression data: deterministic, with autocorrelated pseudo-noise.
i <- 0:59
Tv <- 0.03 * i + 0.15 * sin(0.9 * i) + 0.05 * cos(2.3 * i)
e <- 0.2 * sin(0.45 * i + 0.3) + 0.1 * cos(1.7 * i)
Nv <- 3.1 - 1.25 * Tv + e
fit <- lm(Nv ~ Tv)
co <- summary(fit)$coefficients
ac <- acf(residuals(fit), lag.max = 2, plot = FALSE)$acf[2:3]
greg <- obj(
  call = str("lm(N ~ T)"), t = arr(i + 1950.5), T = arr(Tv), N = arr(Nv),
  intercept = num(co[1, 1]), slope = num(co[2, 1]),
  se_intercept = num(co[1, 2]), se_slope = num(co[2, 2]),
  df = num(fit$df.residual), sigma = num(summary(fit)$sigma),
  acf_resid = arr(ac))

json <- paste0("{\n",
  "  \"generator\": ", str("testdata/ref/budget_ref.R"), ",\n",
  "  \"r_version\": ", str(R.version.string), ",\n",
  "  \"ratio_cases\": [\n    ", paste(cases, collapse = ",\n    "), "\n  ],\n",
  "  \"gregory\": ", greg, "\n}\n")
writeLines(json, out_path, sep = "")
cat("wrote", out_path, "\n")
