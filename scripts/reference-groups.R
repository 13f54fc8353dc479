# Reference figures from R (stats and datasets packages only) for the grouped and joint (shared-parameter) fits.
# Run:  Rscript scripts/reference-groups.R
# Writes test/fixtures/puromycin.csv (datasets::Puromycin as CSV) and test/fixtures/reference/r-groups.json; both
# are committed and read by test/reference/r-groups.test.ts, so CI never needs R.
# Model: Michaelis–Menten rate = Vm*conc/(K + conc), groups by state (treated, untreated);
# separate fits per group (stats::nls), a joint fit with K common and Vm per state (indexed parameters in nls),
# and stats::anova of the joint fit against the separate fits written as one nls with Vm and K indexed by state.
source(file.path(dirname(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))), "reference-json.R"))
ctl <- nls.control(tol = 1e-8, maxiter = 500, minFactor = 1e-10)

d <- datasets::Puromycin
d$state <- as.character(d$state)
write.csv(d[, c("conc", "rate", "state")], "test/fixtures/puromycin.csv", row.names = FALSE, quote = FALSE)

pe <- function(fit) {
  s <- summary(fit)$coefficients
  paste0("{", paste(sprintf("\"%s\":%s", rownames(s), mapply(function(v, se) obj(value = num(v), se = num(se)), s[, 1], s[, 2])), collapse = ","), "}")
}
groups <- unique(d$state)
sep <- lapply(groups, function(g) nls(rate ~ Vm * conc / (K + conc), data = subset(d, state == g), start = list(Vm = 200, K = 0.1), control = ctl))
names(sep) <- groups
sepJson <- paste0("{", paste(sprintf("\"%s\":%s", groups, vapply(groups, function(g) obj(params = pe(sep[[g]]), sse = num(deviance(sep[[g]])), dof = num(df.residual(sep[[g]]))), "")), collapse = ","), "}")

d$s <- factor(d$state, levels = groups)
joint <- nls(rate ~ Vm[s] * conc / (K + conc), data = d, start = list(Vm = c(200, 160), K = 0.1), control = ctl)
both <- nls(rate ~ Vm[s] * conc / (K[s] + conc), data = d, start = list(Vm = c(200, 160), K = c(0.1, 0.1)), control = ctl)
js <- summary(joint)$coefficients
jointJson <- obj(
  params = paste0("{", paste(c(
    sprintf("\"Vm[%s]\":%s", groups, mapply(function(v, se) obj(value = num(v), se = num(se)), js[1:2, 1], js[1:2, 2])),
    sprintf("\"K\":%s", obj(value = num(js[3, 1]), se = num(js[3, 2])))
  ), collapse = ","), "}"),
  sse = num(deviance(joint)), dof = num(df.residual(joint)), sigma = num(summary(joint)$sigma)
)
a <- anova(joint, both)
cat(paste0("{",
  "\"source\":", str(paste0(R.version.string, "; datasets::Puromycin; stats::nls and stats::anova")), ",",
  "\"separate\":", sepJson, ",",
  "\"joint\":", jointJson, ",",
  "\"anova\":", obj(F = num(a$`F value`[2]), df1 = num(a$Df[2]), df2 = num(a$`Res.Df`[2]), p = num(a$`Pr(>F)`[2])),
  "}\n"), file = "test/fixtures/reference/r-groups.json")
