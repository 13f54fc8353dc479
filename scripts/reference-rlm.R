# Reference figures from R's MASS::rlm (Huber M-estimation, scale re-estimated by the MAD every iteration) for the
# robust-loss tests of Curvewright (models[].loss "huber" with lossScale "mad-iterated").
# Run:  Rscript scripts/reference-rlm.R > test/fixtures/reference/r-rlm.json
# Dataset: the stack-loss data of Brownlee (1965), R's datasets::stackloss (also test/fixtures/stackloss.csv), the
# classic robust regression example (Venables & Ripley, MASS 4th ed., §6.5). The output is committed; CI never needs R.
# rlm's MAD is median|r|/0.6745 where Curvewright's is 1.482602·median|r|; k is scaled by 0.6745·1.482602 so that
# both put the threshold t = k·s at the same residual size (1.345 × 1.482602 × median|r|), i.e. the same objective.
suppressPackageStartupMessages(library(MASS))
source(file.path(dirname(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))), "reference-json.R"))
k <- 1.345 * 0.6745 * 1.482602218505602
fit <- rlm(stack.loss ~ Air.Flow + Water.Temp + Acid.Conc., data = stackloss, psi = psi.huber, k = k,
           scale.est = "MAD", method = "M", acc = 1e-15, maxit = 5000)
cat(sprintf('{"source":"%s, MASS %s, rlm(stack.loss ~ ., psi.huber, k = 1.345 (threshold-matched), scale.est = \\"MAD\\", acc = 1e-15)",\n',
            R.version.string, as.character(packageVersion("MASS"))))
cat(sprintf('"coefficients":%s,\n"scale":%s,\n"weights":%s,\n"converged":%s}\n', vec(coef(fit)), num(fit$s), vec(fit$w),
            if (fit$converged) "true" else "false"))
