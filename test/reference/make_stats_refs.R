# Reference values from base R for the statistics engine (electron/engine/stats).
# Run after make_stats_refs.py (which writes the CSV datasets):
#   Rscript test/reference/make_stats_refs.R
# Writes test/reference/goldens/stats/glm_r.json: lm() coefficient contrasts (t), anova() of nested
# models (F), and p.adjust(method = "BH"). Base R only; the R version is recorded in the file.
args <- commandArgs(trailingOnly = FALSE)
here <- dirname(normalizePath(sub("^--file=", "", args[grep("^--file=", args)])))
out <- file.path(here, "goldens", "stats")
num <- function(x) sprintf("%.17g", x)
arr <- function(x) paste0("[", paste(num(x), collapse = ", "), "]")

pair_t <- function(fit, L) {
  est <- sum(L * coef(fit))
  se <- sqrt(as.numeric(t(L) %*% vcov(fit) %*% L))
  t <- est / se
  c(t, 2 * pt(-abs(t), df.residual(fit)), df.residual(fit))
}

lines <- c("{", sprintf('  "tools": { "R": "%s" },', R.version.string),
           '  "source": "R lm() with treatment contrasts; t of a coefficient contrast from vcov(); F from anova(reduced, full); p.adjust(method = \\"BH\\")",')

# Two groups (control, patient) with age and site: contrast control - patient.
d <- read.csv(file.path(out, "glm_two_groups.csv"), na.strings = "NA")
d <- d[complete.cases(d[, c("age", "site")]), ]
d$dx <- factor(d$dx, levels = c("control", "patient"))
d$site <- factor(d$site)
res <- c()
for (f in grep("^f", names(d), value = TRUE)) {
  fit <- lm(as.formula(paste(f, "~ dx + age + site")), data = d)
  L <- setNames(rep(0, length(coef(fit))), names(coef(fit)))
  L["dxpatient"] <- -1
  res <- rbind(res, pair_t(fit, L))
}
lines <- c(lines, '  "two_groups": {', paste0('    "t": ', arr(res[, 1]), ","), paste0('    "p": ', arr(res[, 2]), ","),
           paste0('    "df": ', arr(res[, 3])), "  },")

# Three groups (a, b, c) with age: F over all levels, and the contrast c - b.
d <- read.csv(file.path(out, "glm_three_groups.csv"), na.strings = "NA")
d <- d[complete.cases(d[, c("age")]), ]
d$dx <- factor(d$dx, levels = c("a", "b", "c"))
fs <- c(); tt <- c()
for (f in grep("^f", names(d), value = TRUE)) {
  full <- lm(as.formula(paste(f, "~ dx + age")), data = d)
  reduced <- lm(as.formula(paste(f, "~ age")), data = d)
  a <- anova(reduced, full)
  fs <- rbind(fs, c(a$F[2], a[["Pr(>F)"]][2], a$Df[2], a$Res.Df[2]))
  L <- setNames(rep(0, length(coef(full))), names(coef(full)))
  L["dxc"] <- 1
  L["dxb"] <- -1
  tt <- rbind(tt, pair_t(full, L))
}
lines <- c(lines, '  "three_groups": {', paste0('    "F": ', arr(fs[, 1]), ","), paste0('    "F_p": ', arr(fs[, 2]), ","),
           paste0('    "df1": ', arr(fs[, 3]), ","), paste0('    "df": ', arr(fs[, 4]), ","),
           paste0('    "t_c_minus_b": ', arr(tt[, 1]), ","), paste0('    "t_p": ', arr(tt[, 2])), "  },")

# Benjamini-Hochberg on the p-values of bh.json.
b <- read.csv(file.path(out, "bh_cases.csv"))
qs <- sapply(sort(unique(b$case)), function(k) arr(p.adjust(b$p[b$case == k], method = "BH")))
lines <- c(lines, paste0('  "bh": [', paste(qs, collapse = ", "), "]"), "}")
writeLines(lines, file.path(out, "glm_r.json"))
cat("wrote", file.path(out, "glm_r.json"), "\n")
