# JSON writers shared by the scripts/reference-*.R scripts (they print the figures the reference tests read).
# Numbers with 17 significant digits (exact round trip); NA, NULL, empty and non-finite values as null.
# Used as:  source(file.path(dirname(sub("^--file=", "", grep("^--file=", commandArgs(FALSE), value = TRUE))), "reference-json.R"))
options(digits = 17)
num <- function(x) if (is.null(x) || length(x) == 0 || is.na(x) || !is.finite(x)) "null" else sprintf("%.17g", x)
vec <- function(x) paste0("[", paste(vapply(x, num, ""), collapse = ","), "]")
obj <- function(...) {
  a <- list(...)
  paste0("{", paste(sprintf("\"%s\":%s", names(a), unlist(a)), collapse = ","), "}")
}
str <- function(s) sprintf("\"%s\"", gsub("\"", "\\\\\"", s))
arr <- function(items) paste0("[", paste(items, collapse = ","), "]")
