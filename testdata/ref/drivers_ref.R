# Reference values for the lagged regression of core/drivers.
#
# Run once from the repository root with Debian's R 4.2 (base R only):
#
#     Rscript testdata/ref/drivers_ref.R
#
# It writes testdata/ref/drivers_ref.json. CI never runs this script; the Go
# tests (core/drivers/ref_test.go) read the committed JSON.
#
# Inputs:
#   - the invented Tessary demo world, testdata/demo/tessary_surface.csv and
#     tessary_forcing.csv (surface_anomaly, second_record, ocean_index, aod,
#     tsi, co2, aerosol_erf), with months punched out of two drivers (listed
#     below) to make gaps;
#   - R's datasets nhtemp (annual) and sunspot.year (annual).
# Every input series goes into the JSON (its first step index and values,
# null = missing) so the Go tests need no CSV parsing to reproduce R's input.
#
# Conventions (as core/drivers): a monthly step index is year*12 + month - 1
# and its time the mid-month year + (month - 0.5)/12; an annual step index is
# the year, its time year + 0.5. A driver at lag L months enters the row of
# month m with its value at month m - L, found BY TIME (match on the step
# index), so a gap stays a gap; rows with any term missing are dropped by
# na.omit. The design is: intercept, trend (t - tc, tc = mean time of the
# rows kept), hinges pmax(t - tb, 0), drivers in order, then cos(2 pi h t),
# sin(2 pi h t) for h = 1..H. Coefficients and standard errors are lm's.

out_path <- file.path("testdata", "ref", "drivers_ref.json")
surf_path <- file.path("testdata", "demo", "tessary_surface.csv")
forc_path <- file.path("testdata", "demo", "tessary_forcing.csv")
if (!file.exists(surf_path)) stop("run from the repository root: ", surf_path, " not found")

# ---------------------------------------------------------------------------
# Minimal JSON writer (as trend_ref.R): named list -> object, unnamed list ->
# array, length-1 vector -> scalar unless wrapped in arr(), NA/NaN -> null.
# Numbers: the shortest of %.15g / %.17g that reads back as the same double.
# ---------------------------------------------------------------------------
arr <- function(x) structure(list(v = x), class = "json_array")
num_str <- function(x) {
  if (!is.finite(x)) return("null")
  if (x == round(x) && abs(x) < 1e15) return(sprintf("%.0f", x))
  s <- sprintf("%.15g", x)
  if (as.numeric(s) != x) s <- sprintf("%.17g", x)
  s
}
str_esc <- function(s) paste0("\"", gsub("\"", "\\\\\"", gsub("\\\\", "\\\\\\\\", s)), "\"")
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
# Input series: list(name, resolution, first, idx, t, values).
# ---------------------------------------------------------------------------
month_idx <- function(label) {
  y <- as.integer(substr(label, 1, 4))
  m <- as.integer(substr(label, 6, 7))
  y * 12 + m - 1
}
monthly <- function(name, labels, values) {
  idx <- month_idx(labels)
  stopifnot(all(diff(idx) == 1))
  y <- idx %/% 12
  m <- idx %% 12 + 1
  list(name = name, resolution = "monthly", first = idx[1], idx = idx,
       t = y + (m - 0.5) / 12, values = values)
}
annual <- function(name, x) {
  yr <- as.integer(round(as.numeric(time(x))))
  list(name = name, resolution = "annual", first = yr[1], idx = yr,
       t = yr + 0.5, values = as.numeric(x))
}

surf <- read.csv(surf_path, comment.char = "#", check.names = FALSE)
forc <- read.csv(forc_path, comment.char = "#", check.names = FALSE)
stopifnot(identical(surf$date, forc$date))
col <- function(df, prefix) df[[grep(paste0("^", prefix, " "), names(df))]]

# Months punched out of the drivers to make gaps (invented for the check).
aod_gaps <- c(sprintf("1960-%02d", 3:8), "1971-11", sprintf("1985-%02d", 1:12),
              "1999-07", "1999-09", "2008-04")
index_gaps <- c("1966-05", "2003-01", "2003-02")

S <- list()
add <- function(s) S[[s$name]] <<- s
add(monthly("surface_anomaly", surf$date, col(surf, "surface_anomaly")))
add(monthly("second_record", surf$date, col(surf, "second_record")))
add(monthly("ocean_index", surf$date, col(surf, "ocean_index")))
add(monthly("aod", forc$date, col(forc, "aod")))
add(monthly("tsi", forc$date, col(forc, "tsi")))
gap <- function(s, name, months) {
  s$name <- name
  s$values[match(month_idx(months), s$idx)] <- NA
  s
}
add(gap(S$aod, "aod_gappy", aod_gaps))
add(gap(S$ocean_index, "ocean_index_gappy", index_gaps))
forced <- monthly("forcing_co2_aerosol", forc$date,
                  5.35 * log(col(forc, "co2") / 278) + col(forc, "aerosol_erf"))
add(forced)
add(annual("nhtemp", nhtemp))
add(annual("sunspot_year", sunspot.year))

# ---------------------------------------------------------------------------
# Model pieces.
# ---------------------------------------------------------------------------
# Value of series s at step index idx - lag_steps, by time (NA outside).
lagged <- function(s, idx, lag_steps) s$values[match(idx - lag_steps, s$idx)]

smooth3 <- function(s) {
  s$values <- as.numeric(stats::filter(s$values, rep(1 / 3, 3), sides = 2))
  s
}
detrend_over <- function(s, t0, t1) {
  keep <- !is.na(s$values) & s$t >= t0 & s$t <= t1
  d <- data.frame(x = s$values[keep], t = s$t[keep])
  f <- lm(x ~ t, data = d)
  s$values <- s$values - (coef(f)[1] + coef(f)[2] * s$t)
  s
}

window_rows <- function(target, from, to) {
  a <- if (target$resolution == "monthly") month_idx(from) else as.integer(from)
  b <- if (target$resolution == "monthly") month_idx(to) else as.integer(to)
  which(target$idx >= a & target$idx <= b)
}

# Build the data frame of a case at the given lags (months); returns the
# frame before na.omit, the window rows' times, and the prepared drivers.
build_frame <- function(cs, lags) {
  target <- S[[cs$target]]
  rows <- window_rows(target, cs$from, cs$to)
  idx <- target$idx[rows]
  t <- target$t[rows]
  step <- if (target$resolution == "monthly") 1 else 12
  df <- data.frame(t = t, y = target$values[rows])
  if (!is.null(cs$trend_series)) df$zs <- lagged(S[[cs$trend_series]], idx, 0)
  for (k in seq_along(cs$drivers)) {
    d <- cs$drivers[[k]]
    s <- S[[d$name]]
    if (isTRUE(d$smooth3)) s <- smooth3(s)
    if (isTRUE(d$detrend)) s <- detrend_over(s, min(t), max(t))
    df[[paste0("x", k)]] <- lagged(s, idx, lags[k] / step)
  }
  list(df = df, idx = idx)
}

design <- function(df, cs) {
  tc <- mean(df$t)
  X <- data.frame(row.names = seq_len(nrow(df)))
  if (cs$trend %in% c("linear", "broken")) X$trend <- df$t - tc
  if (cs$trend == "broken") for (j in seq_along(cs$breaks)) X[[paste0("hinge", j)]] <- pmax(df$t - cs$breaks[j], 0)
  if (cs$trend == "series") X$zs <- df$zs
  for (k in seq_along(cs$drivers)) X[[paste0("x", k)]] <- df[[paste0("x", k)]]
  if (cs$harmonics > 0) for (h in 1:cs$harmonics) {
    X[[paste0("cos", h)]] <- cos(2 * pi * h * df$t)
    X[[paste0("sin", h)]] <- sin(2 * pi * h * df$t)
  }
  list(X = X, tc = tc)
}

fit_case <- function(cs, lags) {
  b <- build_frame(cs, lags)
  full <- b$df
  df <- na.omit(full)
  d <- design(df, cs)
  X <- as.matrix(d$X)
  f <- lm(df$y ~ X)
  list(fit = f, df = df, full = full, X = X, tc = d$tc)
}

# Drop counts: each month of the window under its first cause (target, trend
# series, drivers in order; "missing" = NA inside the driver's record, "out
# of range" = the lagged month is outside the record).
drop_counts <- function(cs, lags, full) {
  target <- S[[cs$target]]
  rows <- window_rows(target, cs$from, cs$to)
  idx <- target$idx[rows]
  step <- if (target$resolution == "monthly") 1 else 12
  cause <- rep(NA_character_, length(idx))
  cause[is.na(full$y)] <- "target missing"
  if (!is.null(cs$trend_series)) cause[is.na(cause) & is.na(full$zs)] <- "trend series missing"
  for (k in seq_along(cs$drivers)) {
    s <- S[[cs$drivers[[k]]$name]]
    src <- idx - lags[k] / step
    miss <- is.na(cause) & is.na(full[[paste0("x", k)]])
    out <- src < min(s$idx) | src > max(s$idx)
    cause[miss & out] <- paste0("driver out of range:", k)
    cause[miss & !out] <- paste0("driver missing:", k)
  }
  tab <- table(cause)
  lapply(names(tab), function(nm) list(cause = nm, count = as.integer(tab[[nm]])))
}

stats_part <- function(r, cs, lags, gaps_in_rows) {
  f <- r$fit
  sm <- summary(f)
  cf <- sm$coefficients
  names_out <- c("intercept", colnames(r$X))
  out <- list(
    lags = arr(lags),
    columns = arr(names_out),
    coef = arr(unname(cf[, 1])),
    se = arr(unname(cf[, 2])),
    sigma = sm$sigma,
    df = f$df.residual,
    rss = deviance(f),
    r_squared = sm$r.squared,
    adj_r_squared = sm$adj.r.squared,
    aic = AIC(f),
    n = nrow(r$df),
    window_months = nrow(r$full),
    tc = r$tc,
    dropped = drop_counts(cs, lags, r$full)
  )
  # Standardised coefficients and VIFs of the drivers: sd of the lagged
  # driver over the rows kept; VIF = diagonal of the inverse correlation
  # matrix of the non-constant columns.
  Rinv <- solve(cor(r$X))
  stopifnot(nrow(cf) == ncol(r$X) + 1)
  sdy <- sd(r$df$y)
  out$drivers <- lapply(seq_along(cs$drivers), function(k) {
    nm <- paste0("x", k)
    b <- cf[1 + match(nm, colnames(r$X)), 1]
    list(name = cs$drivers[[k]]$name, mean = mean(r$X[, nm]), sd = sd(r$X[, nm]),
         effect_1sd = b * sd(r$X[, nm]), beta = b * sd(r$X[, nm]) / sdy,
         vif = Rinv[nm, nm])
  })
  # Foster and Rahmstorf 2011 ARMA(1,1) inflation from R's acf of the
  # residuals: only where the rows kept are consecutive steps (acf assumes
  # a regular series).
  if (!gaps_in_rows) {
    a <- acf(residuals(f), lag.max = 2, plot = FALSE, demean = TRUE)$acf[2:3]
    phi <- a[2] / a[1]
    nu <- if (a[1] > 0 && phi >= 0 && phi < 1) 1 + 2 * a[1] / (1 - phi) else NA
    out$acf <- list(rho1 = a[1], rho2 = a[2], phi = phi, nu = nu,
                    se_arma11 = arr(unname(cf[, 2]) * sqrt(nu)))
  }
  out
}

consecutive <- function(r, cs) {
  target <- S[[cs$target]]
  rows <- window_rows(target, cs$from, cs$to)
  keep <- !is.na(rowSums(as.matrix(r$full)))
  all(diff(which(keep)) == 1)
}

case_json <- function(cs) {
  base <- list(target = cs$target, from = cs$from, to = cs$to,
               harmonics = cs$harmonics, trend = cs$trend,
               breaks = arr(if (is.null(cs$breaks)) numeric(0) else cs$breaks),
               trend_series = if (is.null(cs$trend_series)) NA else cs$trend_series,
               drivers = lapply(cs$drivers, function(d) list(
                 name = d$name, min_lag = d$min_lag, max_lag = d$max_lag,
                 smooth3 = isTRUE(d$smooth3), detrend = isTRUE(d$detrend))))
  lo <- sapply(cs$drivers, function(d) d$min_lag)
  hi <- sapply(cs$drivers, function(d) d$max_lag)
  step <- if (S[[cs$target]]$resolution == "monthly") 1 else 12
  if (all(lo == hi)) {
    r <- fit_case(cs, lo)
    base$fit <- stats_part(r, cs, lo, !consecutive(r, cs))
    return(base)
  }
  # Lag search by brute force over the common sample: the window rows with
  # the target, the trend series and every driver at every candidate lag.
  grids <- lapply(seq_along(lo), function(k) seq(lo[k], hi[k], by = step))
  common <- NULL
  for (k in seq_along(lo)) for (L in grids[[k]]) {
    lg <- lo; lg[k] <- L
    ok <- stats::complete.cases(build_frame(cs, lg)$df)
    common <- if (is.null(common)) ok else common & ok
  }
  # Combinations in lexicographic order, the first driver slowest.
  combos <- as.matrix(rev(expand.grid(rev(grids))))
  rss <- apply(combos, 1, function(lg) {
    b <- build_frame(cs, lg)
    df <- b$df[common, , drop = FALSE]
    stopifnot(!anyNA(df))
    deviance(lm(df$y ~ as.matrix(design(df, cs)$X)))
  })
  best <- which.min(rss)
  blags <- unname(combos[best, ])
  neighbour <- function(k, d) {
    lg <- blags; lg[k] <- lg[k] + d * step
    i <- which(apply(combos, 1, function(r) all(r == lg)))
    if (length(i) == 0) NA else rss[i] - rss[best]
  }
  profile <- lapply(seq_along(lo), function(k) {
    arr(sapply(grids[[k]], function(L) {
      lg <- blags; lg[k] <- L
      rss[which(apply(combos, 1, function(r) all(r == lg)))]
    }))
  })
  n_common <- sum(common)
  p <- ncol(design(na.omit(build_frame(cs, blags)$df), cs)$X) + 1
  base$search <- list(
    n_common = n_common,
    combinations = nrow(combos),
    best_lags = arr(blags),
    best_rss = rss[best],
    best_aic = n_common * log(2 * pi * rss[best] / n_common) + n_common + 2 * (p + 1),
    rss_increase_minus_1 = arr(sapply(seq_along(lo), function(k) neighbour(k, -1))),
    rss_increase_plus_1 = arr(sapply(seq_along(lo), function(k) neighbour(k, 1))),
    profile = profile,
    grid_rss = arr(unname(rss))
  )
  r <- fit_case(cs, blags)
  base$fit <- stats_part(r, cs, blags, !consecutive(r, cs))
  base
}

drv <- function(name, lo, hi = lo, smooth3 = FALSE, detrend = FALSE)
  list(name = name, min_lag = lo, max_lag = hi, smooth3 = smooth3, detrend = detrend)

cases <- list(
  demo_fixed = list(
    target = "surface_anomaly", from = "1955-01", to = "2019-12", harmonics = 2, trend = "linear",
    drivers = list(drv("ocean_index", 3), drv("aod", 7), drv("tsi", 1))),
  gappy_drivers = list(
    target = "surface_anomaly", from = "1955-01", to = "2019-12", harmonics = 2, trend = "linear",
    drivers = list(drv("ocean_index_gappy", 3), drv("aod_gappy", 7), drv("tsi", 1))),
  options = list(
    target = "second_record", from = "1955-01", to = "2024-12", harmonics = 1, trend = "broken",
    breaks = c(1980, 1998.5),
    drivers = list(drv("ocean_index", 2, smooth3 = TRUE), drv("aod_gappy", 5), drv("tsi", 0, detrend = TRUE))),
  trend_series = list(
    target = "surface_anomaly", from = "1950-01", to = "2025-12", harmonics = 2, trend = "series",
    trend_series = "forcing_co2_aerosol",
    drivers = list(drv("ocean_index", 3), drv("aod", 14), drv("tsi", 2))),
  no_trend = list(
    target = "surface_anomaly", from = "1990-01", to = "2009-12", harmonics = 0, trend = "none",
    drivers = list(drv("ocean_index", 4))),
  search = list(
    target = "surface_anomaly", from = "1960-01", to = "2015-12", harmonics = 2, trend = "linear",
    drivers = list(drv("ocean_index", 0, 6), drv("aod_gappy", 0, 12), drv("tsi", 0, 3))),
  annual = list(
    target = "nhtemp", from = "1912", to = "1971", harmonics = 0, trend = "linear",
    drivers = list(drv("sunspot_year", 12))),
  annual_search = list(
    target = "nhtemp", from = "1912", to = "1971", harmonics = 0, trend = "linear",
    drivers = list(drv("sunspot_year", 0, 36)))
)

series_json <- lapply(S, function(s) list(
  name = s$name, resolution = s$resolution, first = s$first, values = arr(s$values)))

out <- list(
  generator = "testdata/ref/drivers_ref.R",
  r_version = R.version.string,
  sources = list(
    demo = "Tessary invented demo world, testdata/demo/tessary_surface.csv and tessary_forcing.csv",
    aod_gappy = paste("aod with these months set missing:", paste(aod_gaps, collapse = " ")),
    ocean_index_gappy = paste("ocean_index with these months set missing:", paste(index_gaps, collapse = " ")),
    forcing_co2_aerosol = "5.35 log(co2 / 278) + aerosol_erf from tessary_forcing.csv",
    nhtemp = "R datasets::nhtemp, mean annual temperature in New Haven 1912-1971, degrees F",
    sunspot_year = "R datasets::sunspot.year, yearly sunspot numbers 1700-1988"),
  series = series_json,
  cases = lapply(cases, case_json)
)
writeLines(to_json(out), out_path)
cat("wrote", out_path, "\n")
