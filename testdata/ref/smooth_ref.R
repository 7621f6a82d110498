# Reference values for the display smoothers in core/trend (smooth.go).
#
# Run once from the repository root with Debian's R 4.2 (r-base-core only):
#
#     Rscript testdata/ref/smooth_ref.R
#
# It writes testdata/ref/smooth_ref.json. CI never runs this script; the Go
# tests read the committed JSON. Every number is written with the shortest
# of %.15g / %.17g that reads back as the same double.
#
# Inputs are datasets shipped with R ("datasets" package): nhtemp (annual,
# time = year + 0.5), cars (speed has many ties), LakeHuron (annual), and
# co2 (monthly, time = year + (month - 0.5)/12).
#
# Keys:
#   r_version
#   lowess: [ {name, source, call, f, iter, delta, x[], y[], fit[]} ]
#       fit = lowess(x, y, f, iter, delta)$y; x is already sorted, so the
#       output is aligned with the input.
#   running_mean: [ {name, source, call, window, y[], fit[]} ]
#       fit = stats::filter(y, weights, sides = 2); NA (window past an end)
#       is written as null.

out_path <- file.path("testdata", "ref", "smooth_ref.json")
if (!dir.exists(dirname(out_path))) stop("run from the repository root")

num <- function(x) {
  vapply(x, function(v) {
    if (is.na(v) || !is.finite(v)) return("null")
    s <- sprintf("%.15g", v)
    if (as.numeric(s) != v) s <- sprintf("%.17g", v)
    s
  }, "")
}
arr <- function(x) paste0("[", paste(num(x), collapse = ", "), "]")
str <- function(s) paste0("\"", gsub("\"", "\\\\\"", s), "\"")
obj <- function(fields) {
  paste0("{\n", paste0("   ", str(names(fields)), ": ", unlist(fields), collapse = ",\n"), "\n  }")
}

lowess_case <- function(name, source, x, y, f, iter, delta, delta_text) {
  stopifnot(!is.unsorted(x))
  fit <- lowess(x, y, f = f, iter = iter, delta = delta)$y
  obj(list(
    name = str(name), source = str(source),
    call = str(sprintf("lowess(x, y, f = %s, iter = %d, delta = %s)",
                       format(f, digits = 15), iter, delta_text)),
    f = num(f), iter = num(iter), delta = num(delta),
    x = arr(x), y = arr(y), fit = arr(fit)))
}

rm_case <- function(name, source, y, window) {
  w <- if (window %% 2 == 1) rep(1 / window, window) else
    c(0.5, rep(1, window - 1), 0.5) / window
  fit <- as.numeric(stats::filter(y, w, sides = 2))
  call <- if (window %% 2 == 1) sprintf("stats::filter(y, rep(1/%d, %d), sides = 2)", window, window) else
    sprintf("stats::filter(y, c(0.5, rep(1, %d), 0.5)/%d, sides = 2)", window - 1, window)
  obj(list(name = str(name), source = str(source), call = str(call),
           window = num(window), y = arr(y), fit = arr(fit)))
}

nh_t <- as.numeric(time(nhtemp)) + 0.5
nh_y <- as.numeric(nhtemp)
cars_x <- cars$speed
cars_y <- cars$dist
lh_y <- as.numeric(LakeHuron)
co2_y <- as.numeric(co2)
co2_t <- floor(as.numeric(time(co2)) + 1e-9) + (as.numeric(cycle(co2)) - 0.5) / 12

lw <- c(
  lowess_case("nhtemp_f2/3", "R datasets::nhtemp", nh_t, nh_y, 2/3, 3L, 0, "0"),
  lowess_case("nhtemp_f0.3", "R datasets::nhtemp", nh_t, nh_y, 0.3, 3L, 0, "0"),
  lowess_case("nhtemp_f0.3_iter0", "R datasets::nhtemp", nh_t, nh_y, 0.3, 0L, 0, "0"),
  lowess_case("cars_f2/3", "R datasets::cars (speed, dist)", cars_x, cars_y, 2/3, 3L, 0, "0"),
  lowess_case("cars_f2/3_default_delta", "R datasets::cars (speed, dist)", cars_x, cars_y, 2/3, 3L,
              0.01 * diff(range(cars_x)), "0.01 * diff(range(x))"),
  lowess_case("co2_f0.1_default_delta", "R datasets::co2", co2_t, co2_y, 0.1, 3L,
              0.01 * diff(range(co2_t)), "0.01 * diff(range(x))")
)
rmc <- c(
  rm_case("nhtemp_5", "R datasets::nhtemp", nh_y, 5),
  rm_case("LakeHuron_11", "R datasets::LakeHuron", lh_y, 11),
  rm_case("co2_12", "R datasets::co2", co2_y, 12)
)

json <- paste0(
  "{\n",
  " \"generator\": \"testdata/ref/smooth_ref.R\",\n",
  " \"r_version\": ", str(R.version.string), ",\n",
  " \"lowess\": [\n  ", paste(lw, collapse = ",\n  "), "\n ],\n",
  " \"running_mean\": [\n  ", paste(rmc, collapse = ",\n  "), "\n ]\n",
  "}\n")
writeLines(json, out_path, sep = "")
cat("wrote", out_path, "\n")
