# Reference values for the trend engines (core/linreg, core/trend).
#
# Run once from the repository root with Debian's R 4.2:
#
#     Rscript testdata/ref/trend_ref.R
#
# It writes testdata/ref/trend_ref.json. CI never runs this script; the Go
# tests read the committed JSON. Needs the Debian packages r-base-core,
# r-cran-nlme, r-cran-segmented and r-cran-strucchange (jsonlite is not
# needed: the JSON is written by the small writer below, every number with
# the shortest of %.15g / %.17g that reads back as the same double).
#
# Inputs: R's own datasets LakeHuron, Nile, nhtemp (package "datasets") and
# the statsmodels elnino table copied to testdata/elnino/elnino.csv, flattened
# to a monthly series. Time is the decimal year at mid-period: year + 0.5 for
# annual values, year + (month - 0.5) / 12 for monthly values. The raw times
# and values go into the JSON so the Go tests need no R.

suppressPackageStartupMessages({
  library(nlme)
  library(segmented)
  library(strucchange)
})

out_path <- file.path("testdata", "ref", "trend_ref.json")
elnino_path <- file.path("testdata", "elnino", "elnino.csv")
if (!file.exists(elnino_path)) {
  stop("run from the repository root: ", elnino_path, " not found")
}

# ---------------------------------------------------------------------------
# Minimal JSON writer.
#   named list          -> object
#   unnamed list        -> array
#   vector of length 1  -> scalar (unless wrapped in arr())
#   vector of length >1 -> array
#   NA / NaN / Inf      -> null
# ---------------------------------------------------------------------------
arr <- function(x) structure(list(v = x), class = "json_array")

num_str <- function(x) {
  if (!is.finite(x)) return("null")
  if (x == round(x) && abs(x) < 1e15) return(sprintf("%.0f", x))
  s <- sprintf("%.15g", x)
  if (as.numeric(s) != x) s <- sprintf("%.17g", x)
  s
}

str_esc <- function(s) {
  s <- gsub("\\\\", "\\\\\\\\", s)
  s <- gsub("\"", "\\\\\"", s)
  s <- gsub("\n", "\\\\n", s)
  s <- gsub("\t", "\\\\t", s)
  paste0("\"", s, "\"")
}

scalar_str <- function(x) {
  if (is.logical(x)) return(if (is.na(x)) "null" else if (x) "true" else "false")
  if (is.character(x)) return(if (is.na(x)) "null" else str_esc(x))
  if (is.numeric(x)) return(num_str(as.numeric(x)))
  stop("cannot write type ", typeof(x))
}

to_json <- function(x, indent = 0) {
  pad <- strrep(" ", indent + 1)
  endpad <- strrep(" ", indent)
  if (inherits(x, "json_array")) {
    v <- unclass(x)$v
    if (is.list(v)) return(to_json(unname(v), indent))
    return(paste0("[", paste(vapply(v, scalar_str, ""), collapse = ", "), "]"))
  }
  if (is.null(x)) return("null")
  if (is.list(x)) {
    if (length(x) == 0) return(if (is.null(names(x))) "[]" else "{}")
    if (!is.null(names(x))) {
      items <- vapply(seq_along(x), function(i) {
        paste0(pad, str_esc(names(x)[i]), ": ", to_json(x[[i]], indent + 1))
      }, "")
      return(paste0("{\n", paste(items, collapse = ",\n"), "\n", endpad, "}"))
    }
    items <- vapply(x, function(e) paste0(pad, to_json(e, indent + 1)), "")
    return(paste0("[\n", paste(items, collapse = ",\n"), "\n", endpad, "]"))
  }
  x <- unname(x)
  if (length(x) == 1) return(scalar_str(x))
  to_json(arr(x), indent)
}

# ---------------------------------------------------------------------------
# Data.
# ---------------------------------------------------------------------------
annual <- function(x) {
  yr <- as.numeric(time(x))
  list(year = yr, t = yr + 0.5, y = as.numeric(x))
}

en <- read.csv(elnino_path)
stopifnot(identical(names(en), c("YEAR", "JAN", "FEB", "MAR", "APR", "MAY",
                                 "JUN", "JUL", "AUG", "SEP", "OCT", "NOV", "DEC")))
en_year <- rep(en$YEAR, each = 12)
en_month <- rep(1:12, times = nrow(en))
en_y <- as.vector(t(as.matrix(en[, 2:13])))   # row by row: time order

datasets <- list(
  LakeHuron = c(annual(LakeHuron), list(
    source = "R datasets::LakeHuron",
    description = "level of Lake Huron, annual 1875-1972, feet",
    frequency = "annual")),
  Nile = c(annual(Nile), list(
    source = "R datasets::Nile",
    description = "annual flow of the river Nile at Aswan, 1871-1970, 1e8 m^3",
    frequency = "annual")),
  nhtemp = c(annual(nhtemp), list(
    source = "R datasets::nhtemp",
    description = "mean annual temperature in New Haven, 1912-1971, degrees F",
    frequency = "annual")),
  elnino = list(
    year = en_year, month = en_month,
    t = en_year + (en_month - 0.5) / 12, y = en_y,
    source = "statsmodels elnino dataset, testdata/elnino/elnino.csv",
    description = "monthly sea surface temperature, 1950-2010, degrees C (seasonal cycle not removed)",
    frequency = "monthly")
)

# Datasets that get the segmented fit / Davies test, with the start value.
seg_start <- list(LakeHuron = 1924, nhtemp = 1942, elnino = 1980)
# Datasets that get the nlme::gls AR(1) fit.
gls_sets <- c("LakeHuron", "nhtemp")

# ---------------------------------------------------------------------------
# Pieces.
# ---------------------------------------------------------------------------
lm_part <- function(t, y) {
  fit <- lm(y ~ t)
  cf <- summary(fit)$coefficients
  list(
    coef = list(intercept = cf["(Intercept)", 1], slope = cf["t", 1]),
    se = list(intercept = cf["(Intercept)", 2], slope = cf["t", 2]),
    sigma = summary(fit)$sigma,
    df = fit$df.residual,
    rss = deviance(fit),
    r_squared = summary(fit)$r.squared
  )
}

acf_part <- function(t, y) {
  e <- residuals(lm(y ~ t))
  a <- acf(e, lag.max = 3, plot = FALSE, demean = TRUE)$acf[2:4]
  list(lags = arr(1:3), acf = arr(a))
}

arima_part <- function(t, y, order) {
  xreg <- matrix(t, ncol = 1, dimnames = list(NULL, "t"))
  fit <- arima(y, order = order, xreg = xreg, method = "ML")
  cf <- coef(fit)
  se <- sqrt(diag(fit$var.coef))
  nm <- names(cf)
  key <- ifelse(nm == "t", "slope", nm)
  list(
    order = arr(order),
    method = "ML",
    coef = setNames(as.list(unname(cf)), key),
    se = setNames(as.list(unname(se)), key),
    loglik = fit$loglik,
    sigma2 = fit$sigma2,
    aic = fit$aic,
    nobs = fit$nobs,
    converged = fit$code == 0
  )
}

kendall_one <- function(ct) {
  list(
    tau = unname(ct$estimate),
    statistic_name = names(ct$statistic),
    statistic = unname(ct$statistic),
    p_value = ct$p.value,
    exact_used = names(ct$statistic) == "T",
    method = ct$method
  )
}

kendall_part <- function(t, y) {
  n <- length(y)
  ties <- anyDuplicated(y) > 0
  list(
    n = n,
    ties_in_y = ties,
    default = c(kendall_one(cor.test(y, t, method = "kendall")),
                list(call = "cor.test(y, t, method = \"kendall\")")),
    exact_false = c(kendall_one(suppressWarnings(
                      cor.test(y, t, method = "kendall", exact = FALSE))),
                    list(call = "cor.test(y, t, method = \"kendall\", exact = FALSE)")),
    exact_false_continuity = c(kendall_one(suppressWarnings(
                      cor.test(y, t, method = "kendall", exact = FALSE, continuity = TRUE))),
                    list(call = "cor.test(y, t, method = \"kendall\", exact = FALSE, continuity = TRUE)"))
  )
}

# Mann-Kendall S and variance, Sen slope and its rank-based CI, by brute force.
mk_sen_part <- function(t, y, conf = 0.95) {
  n <- length(y)
  stopifnot(!is.unsorted(t, strictly = TRUE))
  ij <- which(upper.tri(matrix(0, n, n)), arr.ind = TRUE)  # row i < col j
  i <- ij[, 1]; j <- ij[, 2]
  S <- sum(sign(y[j] - y[i]))
  tie_sizes <- as.vector(table(y))
  tie_sizes <- tie_sizes[tie_sizes > 1]
  var_s_no_ties <- n * (n - 1) * (2 * n + 5) / 18
  var_s <- var_s_no_ties - sum(tie_sizes * (tie_sizes - 1) * (2 * tie_sizes + 5)) / 18
  z <- if (S > 0) (S - 1) / sqrt(var_s) else if (S < 0) (S + 1) / sqrt(var_s) else 0
  slopes <- sort((y[j] - y[i]) / (t[j] - t[i]))
  N <- length(slopes)
  C <- qnorm(1 - (1 - conf) / 2) * sqrt(var_s)
  M1 <- (N - C) / 2
  M2 <- (N + C) / 2
  at <- function(k) slopes[min(max(k, 1), N)]
  interp <- function(r) {           # linear interpolation at 1-based rank r
    lo <- floor(r); f <- r - lo
    at(lo) + f * (at(lo + 1) - at(lo))
  }
  list(
    n = n,
    S = S,
    tie_group_sizes = arr(sort(tie_sizes)),
    var_S = var_s,
    var_S_no_ties = var_s_no_ties,
    z_continuity = z,
    p_value_two_sided_continuity = 2 * pnorm(-abs(z)),
    sen_slope = median(slopes),
    n_slopes = N,
    ci = list(
      conf_level = conf,
      z = qnorm(1 - (1 - conf) / 2),
      C = C,
      M1 = M1,
      M2 = M2,
      convention = paste(
        "slopes = all (y_j - y_i)/(t_j - t_i), i < j, sorted ascending, 1-based rank;",
        "C = qnorm(0.975) * sqrt(var_S) with the tie-corrected var_S;",
        "M1 = (N - C)/2, M2 = (N + C)/2 with N = n_slopes;",
        "lower_round = slopes[round(M1)], upper_round = slopes[round(M2 + 1)] (R round, half to even);",
        "lower_interp / upper_interp = linear interpolation between the neighbouring ranks at M1 and M2 + 1;",
        "the *_floor / *_ceil entries give slopes[floor(.)] and slopes[ceiling(.)] at M1 and M2 + 1"),
      lower_round = at(round(M1)),
      upper_round = at(round(M2 + 1)),
      lower_interp = interp(M1),
      upper_interp = interp(M2 + 1),
      lower_rank_round = round(M1),
      upper_rank_round = round(M2 + 1),
      lower_floor = at(floor(M1)),
      lower_ceil = at(ceiling(M1)),
      upper_floor = at(floor(M2 + 1)),
      upper_ceil = at(ceiling(M2 + 1))
    )
  )
}

seg_part <- function(t, y, psi0) {
  fit <- lm(y ~ t)
  ctrl <- seg.control()
  s <- segmented(fit, seg.Z = ~t, psi = psi0, control = ctrl)
  sl <- slope(s, digits = 22)$t   # default digits would round to 4-5 figures
  cf <- summary(s)$coefficients
  alpha <- max(0.05, 1 / length(y))   # segmented's default range limit
  lim <- quantile(t, c(alpha, 1 - alpha), names = FALSE)
  # Profile residual sum of squares of the continuous broken stick,
  # minimised by brute force (fine grid then optimize) within segmented's range.
  rss_at <- function(p) deviance(lm(y ~ t + pmax(t - p, 0)))
  step <- if (length(y) > 200) 1 / 48 else 0.01
  grid <- seq(lim[1], lim[2], by = step)
  r <- vapply(grid, rss_at, 0)
  k <- which.min(r)
  opt <- optimize(rss_at, c(grid[max(1, k - 2)], grid[min(length(grid), k + 2)]),
                  tol = 1e-9)
  psi_hat <- unname(s$psi[1, "Est."])
  # Self-checks: slope() agrees with the coefficients and with est -/+ qt * se.
  stopifnot(abs(sl["slope1", "Est."] - cf["t", 1]) < 1e-12,
            abs(sl["slope2", "Est."] - (cf["t", 1] + cf["U1.t", 1])) < 1e-12,
            abs(sl["slope2", 5] - sl["slope2", 1] -
                qt(0.975, s$df.residual) * sl["slope2", 2]) < 1e-10)
  list(
    call = sprintf("segmented(lm(y ~ t), seg.Z = ~t, psi = %s) with seg.control() defaults", psi0),
    psi_start = psi0,
    n_boot = ctrl$n.boot,
    seed = ctrl$seed,
    psi = psi_hat,
    psi_se = unname(s$psi[1, "St.Err"]),
    psi_on_observation = any(abs(t - psi_hat) < 1e-4),
    psi_note = if (any(abs(t - psi_hat) < 1e-4)) {
      paste("psi sits on an observation time, where the profile RSS has a kink:",
            "psi is well defined, but psi_se depends on where the iterations stop",
            "(a few percent between start values); compare psi_se loosely")
    } else "psi lies between observation times; the profile RSS is smooth there",
    coef = list(intercept = cf["(Intercept)", 1], slope1 = cf["t", 1],
                U1_t = cf["U1.t", 1]),
    se = list(intercept = cf["(Intercept)", 2], slope1 = cf["t", 2],
              U1_t = cf["U1.t", 2]),
    slope_before = list(est = sl["slope1", "Est."], se = sl["slope1", "St.Err."],
                        ci_lower = sl["slope1", 4], ci_upper = sl["slope1", 5]),
    slope_after = list(est = sl["slope2", "Est."], se = sl["slope2", "St.Err."],
                       ci_lower = sl["slope2", 4], ci_upper = sl["slope2", 5]),
    slope_ci_note = "slope CIs are est -/+ qt(0.975, df) * se (slope() default for lm fits)",
    slope_ci_t = unname(qt(0.975, df = s$df.residual)),
    rss = deviance(s),
    df = s$df.residual,
    psi_range = arr(lim),
    psi_range_alpha = alpha,
    profile = list(
      note = "brute-force minimiser of the broken-stick RSS over psi in psi_range (grid, then optimize)",
      grid_step = step,
      psi = opt$minimum,
      rss = opt$objective
    )
  )
}

davies_part <- function(t, y) {
  fit <- lm(y ~ t)
  d <- davies.test(fit, seg.Z = ~t)
  proc <- d$process
  list(
    call = "davies.test(lm(y ~ t), seg.Z = ~t)",
    k = 10,
    alternative = d$alternative,
    type = "lrt",
    branch = if (length(y) <= 300) {
      "daviesLM (n <= 300): t statistics of the added pmax(t - p, 0) term, t-based Davies bound"
    } else {
      "daviesGLM (n > 300): gaussian glm, type switched to 'wald', normal-based Davies bound"
    },
    points_rule = "p values = seq(sort(t)[2], sort(t)[n - 1], length = k)",
    best_at = unname(d$statistic),
    n_points = unname(d$parameter),
    p_value = d$p.value,
    process_psi = arr(proc[, "psi.values"]),
    process_stat = arr(proc[, "stat.values"])
  )
}

gls_part <- function(t, y) {
  fit <- gls(y ~ t, correlation = corAR1(), method = "ML")
  cf <- coef(fit)
  se <- sqrt(diag(vcov(fit)))
  list(
    call = "nlme::gls(y ~ t, correlation = corAR1(), method = \"ML\")",
    coef = list(intercept = unname(cf["(Intercept)"]), slope = unname(cf["t"])),
    se = list(intercept = unname(se["(Intercept)"]), slope = unname(se["t"])),
    phi = unname(coef(fit$modelStruct$corStruct, unconstrained = FALSE)),
    sigma = fit$sigma,
    loglik = as.numeric(logLik(fit))
  )
}

# ---------------------------------------------------------------------------
# Run.
# ---------------------------------------------------------------------------
res <- list()
for (nm in names(datasets)) {
  d <- datasets[[nm]]
  t <- d$t; y <- d$y
  e <- list(
    source = d$source,
    description = d$description,
    frequency = d$frequency,
    n = length(y),
    year = arr(d$year)
  )
  if (!is.null(d$month)) e$month <- arr(d$month)
  e$t <- arr(t)
  e$y <- arr(y)
  e$lm <- lm_part(t, y)
  e$acf_resid <- acf_part(t, y)
  e$arima_101 <- arima_part(t, y, c(1, 0, 1))
  e$arima_100 <- arima_part(t, y, c(1, 0, 0))
  if (!is.null(seg_start[[nm]])) {
    e$segmented <- seg_part(t, y, seg_start[[nm]])
    e$davies <- davies_part(t, y)
  }
  e$kendall <- kendall_part(t, y)
  e$mann_kendall_sen <- mk_sen_part(t, y)
  if (nm %in% gls_sets) e$gls_ar1 <- gls_part(t, y)
  res[[nm]] <- e
}

# Exact Kendall test on a short tie-free series (first 30 LakeHuron values).
lh30_t <- as.numeric(time(LakeHuron))[1:30] + 0.5
lh30_y <- as.numeric(LakeHuron)[1:30]
stopifnot(anyDuplicated(lh30_y) == 0)
kendall_exact <- list(
  source = "R datasets::LakeHuron, first 30 values (1875-1904), no ties",
  t = arr(lh30_t),
  y = arr(lh30_y),
  default = c(kendall_one(cor.test(lh30_y, lh30_t, method = "kendall")),
              list(call = "cor.test(y, t, method = \"kendall\")")),
  exact_false = c(kendall_one(cor.test(lh30_y, lh30_t, method = "kendall", exact = FALSE)),
                  list(call = "cor.test(y, t, method = \"kendall\", exact = FALSE)")),
  mann_kendall_sen = mk_sen_part(lh30_t, lh30_y)
)

# Documented example from ?arima (default method "CSS-ML").
ex <- arima(LakeHuron, order = c(2, 0, 0), xreg = time(LakeHuron) - 1920)
ex_cf <- coef(ex)
ex_se <- sqrt(diag(ex$var.coef))
ex_key <- c("ar1", "ar2", "intercept", "slope")
arima_doc <- list(
  call = "arima(LakeHuron, order = c(2,0,0), xreg = time(LakeHuron) - 1920)",
  method = "CSS-ML (arima default)",
  xreg_note = "xreg is the calendar year (1875..1972) minus 1920, not the mid-year t",
  coef = setNames(as.list(unname(ex_cf)), ex_key),
  se = setNames(as.list(unname(ex_se)), ex_key),
  loglik = ex$loglik,
  sigma2 = ex$sigma2,
  aic = ex$aic
)

# strucchange on Nile: mean-shift model.
bp <- breakpoints(Nile ~ 1)
sbp <- summary(bp)
nile_years <- as.numeric(time(Nile))
m_max <- ncol(sbp$RSS) - 1
by_m <- lapply(0:m_max, function(m) {
  b <- if (m == 0) integer(0) else breakpoints(bp, breaks = m)$breakpoints
  ll <- logLik(breakpoints(bp, breaks = m))
  list(
    breaks = m,
    breakpoints = arr(b),
    breakdates = arr(nile_years[b]),
    rss = unname(sbp$RSS["RSS", m + 1]),
    bic = unname(sbp$RSS["BIC", m + 1]),
    loglik = as.numeric(ll),
    df = attr(ll, "df")
  )
})
b1 <- breakpoints(bp, breaks = 1)
nile_bp <- list(
  call = "strucchange::breakpoints(Nile ~ 1)",
  h = 0.15,
  h_obs = floor(0.15 * length(Nile)),
  n = length(Nile),
  index_note = paste("breakpoints are 1-based indices of the last observation before the break;",
                     "breakdates are the calendar years of those observations (ts time, not year + 0.5)"),
  breakpoints = arr(bp$breakpoints),
  breakdates = arr(nile_years[bp$breakpoints]),
  breaks1 = list(breakpoints = arr(b1$breakpoints),
                 breakdates = arr(nile_years[b1$breakpoints])),
  by_breaks = by_m,
  bic_note = "BIC from summary(bp)$RSS[\"BIC\", ]; loglik/df from logLik(breakpoints(bp, breaks = m))"
)

pkg_ver <- function(p) as.character(packageVersion(p))
top <- list(
  generator = "testdata/ref/trend_ref.R",
  r_version = R.version.string,
  packages = list(stats = pkg_ver("stats"), nlme = pkg_ver("nlme"),
                  segmented = pkg_ver("segmented"),
                  strucchange = pkg_ver("strucchange")),
  conventions = list(
    time = "t = year + 0.5 for annual series, year + (month - 0.5)/12 for monthly series",
    lm = "lm(y ~ t); sigma = residual SD sqrt(rss/df)",
    acf = "R acf of lm residuals: mean removed, r_k = sum e_t e_{t+k} / sum e_t^2",
    arima = "arima(y, order, xreg = t, method = \"ML\"); se = sqrt(diag(var.coef)); key 'slope' is the xreg coefficient; 'intercept' is the mean at t = 0",
    kendall = "cor.test(y, t, method = \"kendall\"): tau is tau-b; exact_used is true when R reported statistic T (exact null distribution), false when z",
    segmented = "slope_before/slope_after from segmented::slope(); U1_t is the slope difference; psi_se from the fit's psi table",
    gls = "sigma is the ML estimate; se = sqrt(diag(vcov(fit)))"
  ),
  datasets = res,
  kendall_exact_short = kendall_exact,
  arima_lakehuron_doc_example = arima_doc,
  nile_breakpoints = nile_bp
)

writeLines(to_json(top), out_path)
cat("wrote", out_path, "\n")
