# Reference figures from R (stats package only) for the calibration tests of Curvewright (test/unit/calibration.test.ts).
# Run:  Rscript scripts/reference-calibration.R > test/fixtures/reference/r-calibration.json
# The output is committed; the tests read it, so CI never needs R. Each figure names its data and R functions.
# Back-calculation interval (the definition Curvewright implements): the x whose prediction interval for the mean of m
# new readings, f(x) ± t·sqrt(gᵀVg + s²/m), contains the mean reading — found here with stats::uniroot on R's own fit.
source(file.path(dirname(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))), "reference-json.R"))

# inverse of a fitted curve f (vectorised) with the half-width function hw(x, m): root in [lo, hi], limits by uniroot
invert <- function(f, hw, y0, m, lo, hi, extLo, extHi) {
  x0 <- uniroot(function(x) f(x) - y0, c(lo, hi), tol = 1e-14)$root
  h <- function(x) abs(f(x) - y0) - hw(x, m)
  low <- if (h(extLo) > 0) uniroot(h, c(extLo, x0), tol = 1e-14)$root else NA
  high <- if (h(extHi) > 0) uniroot(h, c(x0, extHi), tol = 1e-14)$root else NA
  c(x0, low, high)
}

out <- list()

# ---------------------------------------------------------------- a straight line: fluorescence standards (0–12 pg/mL)
# the worked example of Miller & Miller, Statistics and Chemometrics for Analytical Chemistry, ch. 5 (figures from memory)
x <- c(0, 2, 4, 6, 8, 10, 12)
y <- c(2.1, 5.0, 9.0, 12.6, 17.3, 21.0, 24.7)
fit <- lm(y ~ x)
s <- summary(fit)$sigma
tq <- qt(0.975, df.residual(fit))
f <- function(x0) predict(fit, data.frame(x = x0))
hw <- function(x0, m) { p <- predict(fit, data.frame(x = x0), se.fit = TRUE); tq * sqrt(p$se.fit^2 + s^2 / m) }
line_reads <- list()
for (r in list(c(2.9, 1), c(13.5, 1), c(23.0, 1), c(13.5, 4), c(2.9, 3))) {
  v <- invert(f, hw, r[1], r[2], 0, 12, -12, 24)
  line_reads[[length(line_reads) + 1]] <- obj(y = num(r[1]), m = num(r[2]), x = num(v[1]), low = num(v[2]), high = num(v[3]))
}
# Hubaux & Vos (1970): decision level yC = upper prediction limit at x = 0; xD = smallest x whose lower limit reaches yC
yC <- f(0) + hw(0, 1)
xD <- uniroot(function(x0) f(x0) - hw(x0, 1) - yC, c(0, 12), tol = 1e-14)$root
out$line <- obj(
  source = str("R stats::lm, predict(se.fit = TRUE), qt, uniroot on the fluorescence standards of Miller & Miller ch. 5"),
  x = vec(x), y = vec(y),
  intercept = num(coef(fit)[[1]]), slope = num(coef(fit)[[2]]), sigma = num(s),
  reads = arr(unlist(line_reads)),
  decisionY = num(yC), detectionX = num(xD)
)

# ---------------------------------------------------------------- a 4PL: the Tarnwell demo standards (invented data)
std <- read.csv("examples/data/assay-standards.csv")
fit4 <- nls(absorbance ~ lower + (upper - lower) / (1 + (ec50 / conc_ng_ml)^slope), data = std,
  start = list(lower = 0.1, upper = 2.5, ec50 = 7, slope = 0.9), control = nls.control(tol = 1e-8, maxiter = 500))
th <- coef(fit4)
V <- vcov(fit4)
s4 <- summary(fit4)$sigma
t4 <- qt(0.975, df.residual(fit4))
g <- deriv(~ lower + (upper - lower) / (1 + (ec50 / x)^slope), c("lower", "upper", "ec50", "slope"), function(x, lower, upper, ec50, slope) {})
f4 <- function(x0) as.numeric(g(x0, th[["lower"]], th[["upper"]], th[["ec50"]], th[["slope"]]))
hw4 <- function(x0, m) vapply(x0, function(xx) {
  G <- attr(g(xx, th[["lower"]], th[["upper"]], th[["ec50"]], th[["slope"]]), "gradient")
  t4 * sqrt(as.numeric(G %*% V %*% t(G)) + s4^2 / m)
}, 0)
lo <- min(std$conc_ng_ml); hi <- max(std$conc_ng_ml)
reads4 <- list()
for (r in list(c(0.82, 2), c(1.919, 2), c(0.661, 1), c(1.438, 1), c(1.453, 2))) {
  v <- invert(f4, hw4, r[1], r[2], lo, hi, lo / 10, hi * 10)
  reads4[[length(reads4) + 1]] <- obj(y = num(r[1]), m = num(r[2]), x = num(v[1]), low = num(v[2]), high = num(v[3]))
}
out$logistic4 <- obj(
  source = str("R stats::nls, vcov, deriv, qt, uniroot on examples/data/assay-standards.csv (4PL)"),
  lower = num(th[["lower"]]), upper = num(th[["upper"]]), ec50 = num(th[["ec50"]]), slope = num(th[["slope"]]), sigma = num(s4),
  reads = arr(unlist(reads4))
)

# ---------------------------------------------------------------- relative potency: the Tarnwell two-lot demo (invented)
# joint 4PL with lower, upper, slope shared and ec50 per lot (indexed parameters in nls); Fieller intervals found from
# their definition, {rho : (a - rho b)^2 <= t^2 (va - 2 rho c + rho^2 vb)}, by uniroot (not the closed form)
pl <- read.csv("examples/data/potency-lots.csv")
pl$g <- ifelse(pl$lot == "RS-04", 1L, 2L)
fj <- nls(response ~ lower + (upper - lower) / (1 + (ec50[g] / dose_ng_ml)^slope), data = pl,
  start = list(lower = 0.131, upper = 1.858, ec50 = c(14.59, 10.30), slope = 1.306), control = nls.control(tol = 1e-7, maxiter = 500))
cj <- coef(fj); Vj <- vcov(fj)
fieller_root <- function(a, b, va, vb, c, t) {
  h <- function(r) (a - r * b)^2 - t^2 * (va - 2 * r * c + r^2 * vb)
  r0 <- a / b
  c(r0, uniroot(h, c(r0 / 10, r0), tol = 1e-14)$root, uniroot(h, c(r0, r0 * 10), tol = 1e-14)$root)
}
tj <- qt(0.975, df.residual(fj))
pot <- fieller_root(cj[["ec501"]], cj[["ec502"]], Vj["ec501", "ec501"], Vj["ec502", "ec502"], Vj["ec501", "ec502"], tj)
sep <- lapply(c("RS-04", "L-221"), function(l) nls(response ~ lower + (upper - lower) / (1 + (ec50 / dose_ng_ml)^slope), data = subset(pl, lot == l),
  start = list(lower = 0.13, upper = 1.86, ec50 = if (l == "RS-04") 14.7 else 10.26, slope = 1.3), control = nls.control(tol = 1e-7, maxiter = 500)))
te <- qt(0.95, min(df.residual(sep[[1]]), df.residual(sep[[2]])))
sl <- function(f) c(coef(f)[["slope"]], vcov(f)["slope", "slope"])
sp <- function(f) { V <- vcov(f); c(coef(f)[["upper"]] - coef(f)[["lower"]], V["upper", "upper"] + V["lower", "lower"] - 2 * V["upper", "lower"]) }
slr <- fieller_root(sl(sep[[2]])[1], sl(sep[[1]])[1], sl(sep[[2]])[2], sl(sep[[1]])[2], 0, te)
spr <- fieller_root(sp(sep[[2]])[1], sp(sep[[1]])[1], sp(sep[[2]])[2], sp(sep[[1]])[2], 0, te)
out$potency <- obj(
  source = str("R stats::nls (joint fit with ec50[lot]), vcov, qt, uniroot on examples/data/potency-lots.csv"),
  ec50_ref = num(cj[["ec501"]]), ec50_test = num(cj[["ec502"]]), dof = num(df.residual(fj)),
  ratio = num(pot[1]), low = num(pot[2]), high = num(pot[3]),
  slope_ratio = vec(slr), span_ratio = vec(spr)
)

cat("{\n", sprintf("\"R\": %s,\n", str(R.version.string)),
  paste(sprintf("\"%s\": %s", names(out), unlist(out)), collapse = ",\n"), "\n}\n", sep = "")
