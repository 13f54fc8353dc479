# Reference figures from R (stats and datasets packages only) for the statistics tests of Curvewright.
# Run:  Rscript scripts/reference-r.R > test/fixtures/reference/r-stats.json
# The output is committed; the tests read it, so CI never needs R. Every figure names its dataset and R function.
source(file.path(dirname(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))), "reference-json.R"))

out <- list()

# ---------------------------------------------------------------- distributions (stats::pnorm, qnorm)
out$distributions <- obj(
  source = str("R stats::pnorm / qnorm"),
  pnorm_minus8 = num(pnorm(-8)),
  qnorm_0.25 = num(qnorm(0.25)), qnorm_0.001 = num(qnorm(0.001)), qnorm_1e_20 = num(qnorm(1e-20)), qnorm_0.975 = num(qnorm(0.975))
)

# ---------------------------------------------------------------- Shapiro–Wilk (stats::shapiro.test), weights of 11 men (Shapiro & Wilk 1965)
men <- c(148, 154, 158, 160, 161, 162, 166, 170, 182, 195, 236)
sw <- shapiro.test(men)
out$shapiro_men <- obj(source = str("R stats::shapiro.test on the 11 weights of Shapiro & Wilk (1965)"), x = vec(men), W = num(sw$statistic), p = num(sw$p.value))

# ---------------------------------------------------------------- Puromycin (treated), Michaelis–Menten (datasets::Puromycin, stats::nls)
pt <- subset(Puromycin, state == "treated")
fit <- nls(rate ~ Vm * conc / (K + conc), data = pt, start = list(Vm = 200, K = 0.1), control = nls.control(tol = 1e-7, maxiter = 200))
s <- summary(fit)
sres <- s$sigma
dofp <- df.residual(fit)
tq <- qt(0.975, dofp)
sse0 <- sum(residuals(fit)^2)
# profile-t limits (Bates & Watts 1988), exactly: tau(v) = sign(v - est) sqrt(S(v) - S_hat)/s = +-t, by uniroot on
# the profile S(v) = min over the other parameter (stats::nls with the parameter held)
profS <- function(par, v) {
  ctl <- nls.control(tol = 1e-7, maxiter = 200)
  if (par == "Vm") { f <- nls(rate ~ v * conc / (K + conc), data = pt, start = list(K = coef(fit)[["K"]]), control = ctl) }
  else { f <- nls(rate ~ Vm * conc / (v + conc), data = pt, start = list(Vm = coef(fit)[["Vm"]]), control = ctl) }
  sum(residuals(f)^2)
}
lim <- function(par, dir) {
  est <- coef(fit)[[par]]; se <- s$coefficients[par, "Std. Error"]
  g <- function(v) sqrt(max(0, profS(par, v) - sse0)) / sres - tq
  uniroot(g, sort(c(est + dir * 0.5 * tq * se, est + dir * 4 * tq * se)), tol = 1e-12)$root
}
out$puromycin <- obj(
  source = str("R datasets::Puromycin (state treated), stats::nls; profile-t limits by uniroot on the exact profile"),
  conc = vec(pt$conc), rate = vec(pt$rate),
  Vm = num(coef(fit)[["Vm"]]), K = num(coef(fit)[["K"]]),
  se_Vm = num(s$coefficients["Vm", "Std. Error"]), se_K = num(s$coefficients["K", "Std. Error"]), sigma = num(sres),
  profile_Vm = vec(c(lim("Vm", -1), lim("Vm", 1))), profile_K = vec(c(lim("K", -1), lim("K", 1)))
)

# ---------------------------------------------------------------- bounded linear model (datasets::cars): dist = c0 + c1 speed + c2 speed^2, c2 <= 0
x <- cars$speed; y <- cars$dist; n <- length(y)
unc <- lm(y ~ x + I(x^2))
con <- lm(y ~ x)                               # c2 = 0 on its bound (the unconstrained c2 is > 0)
sseB <- sum(residuals(con)^2)
dofB <- n - 3                                  # every parameter counts, the bounded one too
sB <- sqrt(sseB / dofB)
tB <- qt(0.975, dofB)
# profile S(v) with the bound kept: the other parameters minimise S with c2 <= 0 (one active-set step is exact here)
Sfix <- function(which, v) {
  if (which == "c2") return(sum(residuals(lm(I(y - v * x^2) ~ x))^2))
  if (which == "c0") { f <- lm(I(y - v) ~ 0 + x + I(x^2)); if (coef(f)[2] > 0) f <- lm(I(y - v) ~ 0 + x); return(sum(residuals(f)^2)) }
  f <- lm(I(y - v * x) ~ 1 + I(x^2)); if (coef(f)[2] > 0) f <- lm(I(y - v * x) ~ 1); sum(residuals(f)^2)
}
estB <- c(c0 = coef(con)[[1]], c1 = coef(con)[[2]], c2 = 0)
limB <- function(which, dir) {
  g <- function(v) sqrt(max(0, Sfix(which, v) - sseB)) / sB - tB
  est <- estB[[which]]
  if (which == "c2" && dir > 0) return(NA)    # above the bound: the limit does not exist
  step <- abs(est) + 1
  hi <- est + dir * step
  while (g(hi) < 0) { step <- 2 * step; hi <- est + dir * step }
  uniroot(g, sort(c(est, hi)), tol = 1e-13)$root
}
out$cars_bounded <- obj(
  source = str("R datasets::cars, stats::lm; profile-t limits with c2 <= 0 kept, by uniroot on the exact constrained profile"),
  speed = vec(x), dist = vec(y),
  c2_unconstrained = num(coef(unc)[[3]]),
  c0 = num(estB[["c0"]]), c1 = num(estB[["c1"]]), sse = num(sseB),
  profile_c0 = vec(c(limB("c0", -1), limB("c0", 1))), profile_c1 = vec(c(limB("c1", -1), limB("c1", 1))),
  profile_c2 = vec(c(limB("c2", -1), limB("c2", 1)))
)

# ---------------------------------------------------------------- known sigma (sigmaMode absolute): cars with sigma = 15 for every row
sig <- 15
l1 <- lm(y ~ x); l2 <- lm(y ~ x + I(x^2))
ll <- function(f) sum(dnorm(y, fitted(f), sig, log = TRUE))
chi <- function(f) sum((residuals(f) / sig)^2)
ic <- function(f, k) { L <- ll(f); aic <- -2 * L + 2 * k; c(L, aic, aic + 2 * k * (k + 1) / (n - k - 1), -2 * L + k * log(n)) }
d <- chi(l1) - chi(l2)
out$cars_known_sigma <- obj(
  source = str("R datasets::cars, stats::lm, sum(dnorm(y, fitted, sigma = 15, log = TRUE)), pchisq"),
  sigma = num(sig),
  line = vec(ic(l1, 2)), quadratic = vec(ic(l2, 3)),
  chi2_line = num(chi(l1)), chi2_quadratic = num(chi(l2)), delta_chi2 = num(d), p = num(pchisq(d, 1, lower.tail = FALSE))
)

# ---------------------------------------------------------------- inverse prediction, classical limits (Draper & Smith §3.2) on datasets::BOD
xb <- BOD$Time; yb <- BOD$demand
fb <- lm(yb ~ xb)
inv <- function(y0, level = 0.95) {
  a <- coef(fb)[[1]]; b <- coef(fb)[[2]]
  g <- function(x0) { p <- predict(fb, data.frame(xb = x0), interval = "prediction", level = level); (p[, "lwr"] - y0) * (p[, "upr"] - y0) }
  r <- (y0 - a) / b
  side <- function(dir) { step <- diff(range(xb)); h <- r + dir * step; k <- 0
    while (g(h) < 0 && k < 60) { step <- 2 * step; h <- r + dir * step; k <- k + 1 }
    if (g(h) < 0) NA else uniroot(g, sort(c(r, h)), tol = 1e-13)$root }
  c(r, side(-1), side(1))
}
iv <- inv(11, 0.90); ivs <- inv(14, 0.999)
out$bod_inverse <- obj(
  source = str("R datasets::BOD, stats::lm and predict(interval = 'prediction'); the x where a prediction limit equals y0 (uniroot)"),
  time = vec(xb), demand = vec(yb),
  y0 = num(11), level = num(0.90), root = num(iv[1]), interval = vec(iv[2:3]),
  y0_999 = num(14), level_999 = num(0.999), root_999 = num(ivs[1]), interval_999 = vec(ivs[2:3]),
  slope_t = num(summary(fb)$coefficients[2, 3]), dof = num(df.residual(fb)), t_090 = num(qt(0.95, df.residual(fb))), t_0999 = num(qt(0.9995, df.residual(fb)))
)

# ---------------------------------------------------------------- Durbin–Watson in row order (definition; datasets::mtcars, mpg ~ wt)
fm <- lm(mpg ~ wt, data = mtcars)
e <- residuals(fm)
out$mtcars_dw <- obj(
  source = str("R datasets::mtcars, stats::lm(mpg ~ wt); d = sum(diff(e)^2)/sum(e^2) in row order"),
  wt = vec(mtcars$wt), mpg = vec(mtcars$mpg), dw = num(sum(diff(e)^2) / sum(e^2)),
  dw_by_wt = num({ o <- order(mtcars$wt, seq_along(e)); sum(diff(e[o])^2) / sum(e^2) })
)

# ---------------------------------------------------------------- weighted prediction interval with a given weight (stats::predict.lm weights)
wts <- 1 / cars$speed
fw <- lm(dist ~ speed, data = cars, weights = wts)
pw <- predict(fw, data.frame(speed = 21), interval = "prediction", weights = 2)
near <- cars$speed[which.min(abs(cars$speed - 21))]
pn <- predict(fw, data.frame(speed = 21), interval = "prediction", weights = 1 / near)
out$cars_weighted_predict <- obj(
  source = str("R datasets::cars, stats::lm(dist ~ speed, weights = 1/speed), predict(interval = 'prediction', weights = w_new)"),
  x0 = num(21), weight_spec = num(2), pi_spec = vec(pw[1, c("lwr", "upr")]),
  weight_nearest = num(1 / near), pi_nearest = vec(pn[1, c("lwr", "upr")])
)

# ---------------------------------------------------------------- frequency weights = expanded data (datasets::cars binned into counts)
tab <- as.data.frame(table(x = cars$speed %/% 5 * 5, y = cars$dist %/% 20 * 20))
tab <- subset(tab, Freq > 0)
tab$x <- as.numeric(as.character(tab$x)); tab$y <- as.numeric(as.character(tab$y))
ex <- tab[rep(seq_len(nrow(tab)), tab$Freq), ]
fe <- lm(y ~ x, data = ex)
se <- summary(fe)
out$counts_expanded <- obj(
  source = str("R datasets::cars binned (speed %/% 5 * 5, dist %/% 20 * 20) as counts; stats::lm on the expanded rows"),
  x = vec(tab$x), y = vec(tab$y), count = vec(tab$Freq),
  intercept = num(coef(fe)[[1]]), slope = num(coef(fe)[[2]]),
  se_intercept = num(se$coefficients[1, 2]), se_slope = num(se$coefficients[2, 2]),
  sigma = num(se$sigma), dof = num(df.residual(fe)), logLik = num(as.numeric(logLik(fe))), aic = num(AIC(fe)), bic = num(BIC(fe))
)

cat("{\n", sprintf("\"R\": %s,\n", str(R.version.string)),
    paste(sprintf("  \"%s\": %s", names(out), unlist(out)), collapse = ",\n"), "\n}\n", sep = "")
