# The slope and interaction references of make_design_refs.py again, from base R (a second tool).
# Run after make_design_refs.py (which writes the CSV datasets):
#   Rscript test/reference/make_design_refs.R
# Writes test/reference/goldens/stats/designs_r.json: lm() t and p of the age slope in y ~ age + sex,
# and anova(reduced, full) F, p and df for each interaction. Base R only; the R version is recorded.
args <- commandArgs(trailingOnly = FALSE)
here <- dirname(normalizePath(sub("^--file=", "", args[grep("^--file=", args)])))
out <- file.path(here, "goldens", "stats")
num <- function(x) sprintf("%.17g", x)

s <- read.csv(file.path(out, "designs_slope.csv"))
s$sex <- factor(s$sex)
fit <- lm(y ~ age + sex, data = s)
co <- summary(fit)$coefficients
lines <- c("{", sprintf('  "tools": { "R": "%s" },', R.version.string),
           '  "source": "R lm() with treatment contrasts; anova(reduced, full)",',
           sprintf('  "slope": { "t": %s, "p": %s, "df": %s },',
                   num(co["age", "t value"]), num(co["age", "Pr(>|t|)"]), num(df.residual(fit))))

d <- read.csv(file.path(out, "designs_interactions.csv"))
d$arm <- factor(d$arm)
d$sex <- factor(d$sex)
cases <- list(
  "arm:sex" = c("y ~ arm * sex", "y ~ arm + sex"),
  "arm:dose" = c("y ~ arm * dose + age", "y ~ arm + dose + age"),
  "dose:age" = c("y ~ dose * age + sex", "y ~ dose + age + sex")
)
entries <- c()
for (name in names(cases)) {
  full <- lm(as.formula(cases[[name]][1]), data = d)
  reduced <- lm(as.formula(cases[[name]][2]), data = d)
  a <- anova(reduced, full)
  entries <- c(entries, sprintf('    "%s": { "F": %s, "p": %s, "df_num": %s, "df": %s }', name,
                                num(a$F[2]), num(a[["Pr(>F)"]][2]), num(a$Df[2]), num(a$Res.Df[2])))
}
lines <- c(lines, '  "interactions": {', paste(entries, collapse = ",\n"), "  }", "}")
writeLines(lines, file.path(out, "designs_r.json"))
cat("wrote designs_r.json\n")
