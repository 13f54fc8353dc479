# Reference figures from R's nlme (gls, gnls with varPower on the fitted values) for the variance-function tests of
# Curvewright (data.sigma { "power": θ | "estimate" }).
# Run:  Rscript scripts/reference-variance.R > test/fixtures/reference/r-variance.json
# Datasets: datasets::cars (Ezekiel 1930; stopping distance against speed, replicate speeds; test/fixtures/cars.csv)
# with a straight line, and the treated rows of datasets::Puromycin (Treloar 1974; each concentration twice;
# test/fixtures/puromycin.csv) with Michaelis–Menten. Given θ: for cars nlme's generalised least squares with
# varPower(fixed = θ, form = ~fitted(.)), iterated by nlme to its fixed point; for Puromycin stats::nls (see below). Estimated θ: the same fit at the θ
# that equals the (m−1)-weighted slope of log sd(y) on log |fitted| over the replicated x values, found here by
# iterating gls/gnls and lm (the estimator of docs/robust.md, coded independently). The output is committed.
suppressPackageStartupMessages(library(nlme))
source(file.path(dirname(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))), "reference-json.R"))
ctl <- glsControl(tolerance = 1e-12, returnObject = TRUE, maxIter = 500, msMaxIter = 500)
slope <- function(y, x, mu) {
  g <- split(seq_along(y), x)
  g <- g[vapply(g, length, 1L) >= 2]
  s <- vapply(g, function(i) sd(y[i]), 0); m <- vapply(g, function(i) abs(mu[i[1]]), 0); w <- vapply(g, length, 1L) - 1
  ok <- s > 0 & m > 0
  unname(coef(lm(log(s[ok]) ~ log(m[ok]), weights = w[ok]))[2])
}
fitCars <- function(theta) gls(dist ~ speed, cars, weights = varPower(fixed = theta, form = ~fitted(.)), control = ctl)
pt <- subset(Puromycin, state == "treated")
# (gnls stops 7e-6 short of the fixed point here, "step halving factor reduced below minimum"; stats::nls with the
# weights |fitted|^(-2θ) refitted 100 times reaches it — the figures below are from that)
fitPur <- function(theta) {
  f <- nls(rate ~ Vm * conc / (K + conc), pt, start = c(Vm = 200, K = 0.05))
  for (k in 1:100) {
    w <- abs(fitted(f))^(-2 * theta); w <- w / mean(w)
    f <- nls(rate ~ Vm * conc / (K + conc), pt, start = coef(f), weights = w, control = nls.control(tol = 1e-9, scaleOffset = 1, warnOnly = TRUE))
  }
  f
}
estimate <- function(fitf, y, x) {
  f <- fitf(0); theta <- slope(y, x, fitted(f))
  for (k in 1:200) { f <- fitf(theta); t2 <- slope(y, x, fitted(f)); if (abs(t2 - theta) < 1e-11) { theta <- t2; break }; theta <- t2 }
  list(fit = fitf(theta), theta = theta)
}
out <- function(f, theta) sprintf('{"theta":%s,"coef":%s,"se":%s}', num(theta), vec(coef(f)), vec(sqrt(diag(vcov(f)))))
ce <- estimate(fitCars, cars$dist, cars$speed)
pe <- estimate(fitPur, pt$rate, pt$conc)
cat(sprintf('{"source":"%s, nlme %s: gls with varPower(fixed = theta, form = ~fitted(.)), tolerance 1e-12 (cars); stats::nls refitted with weights |fitted|^(-2 theta) (Puromycin)",\n',
            R.version.string, as.character(packageVersion("nlme"))))
cat(sprintf('"cars_fixed1":%s,\n"cars_estimate":%s,\n"puromycin_fixed05":%s,\n"puromycin_estimate":%s}\n',
            out(fitCars(1), 1), out(ce$fit, ce$theta), out(fitPur(0.5), 0.5), out(pe$fit, pe$theta)))
