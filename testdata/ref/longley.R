# Writes testdata/ref/longley.csv from R's datasets::longley (R 4.2, Debian
# r-base-core). Run once from the repository root:
#
#     Rscript testdata/ref/longley.R
#
# The NIST StRD certified OLS values for this data set (Longley 1967) are in
# the Go test core/linreg/ols_test.go. R stores Employed in thousands
# (NIST: persons), so coefficients fitted to this file are NIST's / 1000.
write.csv(longley, file.path("testdata", "ref", "longley.csv"), row.names = FALSE)
