#!/usr/bin/Rscript
# Reference values for lib/fit's Poisson likelihood with an exposure offset, from R's glm (r-base).
#
# Simulates a small long table (shop, category, one numeric covariate, exposure, count) with a fixed
# seed, fits the main-effects-only Poisson model
#
#     glm(count ~ shop + category + temperature + offset(log(exposure)), family = poisson)
#
# with a convergence tolerance far below the test's 1e-4 (epsilon = 1e-14), and writes the table as
# strings, the coefficients and the fitted linear predictors to tests/fixtures/fit/poisson-glm.json,
# which tests/unit/fit/reference.test.ts reads. Shop and category names are zero-padded so that R's
# alphabetical factor levels equal lib/fit's first-appearance order (the first rows show every level
# in order), and R's treatment contrasts drop the first level, as lib/fit's one-hot encoding does.
#
#     Rscript scripts/reference/fit_poisson_glm.R
#
# JSON is written by hand (sprintf %.17g round-trips doubles), so only r-base is needed.

args <- commandArgs(trailingOnly = FALSE)
script <- normalizePath(sub("^--file=", "", args[grep("^--file=", args)]))
root <- normalizePath(file.path(dirname(script), "..", ".."))
out <- file.path(root, "tests", "fixtures", "fit", "poisson-glm.json")

set.seed(20261207)
shops <- 10
categories <- 6
n <- 360
shop <- sample.int(shops, n, replace = TRUE)
category <- sample.int(categories, n, replace = TRUE)
shop[1:shops] <- 1:shops
category[1:categories] <- 1:categories
temperature <- round(rnorm(n, 12, 5), 2)
exposure <- round(runif(n, 50, 400))
a <- rnorm(shops, 0, 0.4)
b <- rnorm(categories, 0, 0.4)
eta <- -3 + a[shop] + b[category] + 0.03 * temperature + log(exposure)
count <- rpois(n, exp(eta))

shop_name <- sprintf("s%02d", shop - 1)
category_name <- sprintf("k%02d", category - 1)
data <- data.frame(shop = factor(shop_name), category = factor(category_name), temperature = temperature, exposure = exposure, count = count)
fit <- glm(count ~ shop + category + temperature + offset(log(exposure)), family = poisson, data = data, control = glm.control(epsilon = 1e-14, maxit = 100))
stopifnot(fit$converged)

num <- function(x) sprintf("%.17g", x)
vec <- function(x) paste0("[", paste(num(x), collapse = ","), "]")
str <- function(x) paste0("\"", x, "\"")
cells <- paste0("[", paste(sprintf("[%s,%s,%s,%s,%s]", str(shop_name), str(category_name), str(format(temperature, nsmall = 2, trim = TRUE)), str(exposure), str(count)), collapse = ","), "]")
coefficients <- coef(fit)
json <- paste0(
  "{\n",
  "\"source\": ", str(paste(R.version.string, "glm(family = poisson), epsilon = 1e-14")), ",\n",
  "\"rows\": ", shops, ",\n",
  "\"columns\": ", categories, ",\n",
  "\"header\": [\"shop\",\"category\",\"temperature\",\"exposure\",\"count\"],\n",
  "\"cells\": ", cells, ",\n",
  "\"coefficientNames\": [", paste(str(names(coefficients)), collapse = ","), "],\n",
  "\"coefficients\": ", vec(unname(coefficients)), ",\n",
  "\"eta\": ", vec(unname(predict(fit, type = "link"))), ",\n",
  "\"deviance\": ", num(deviance(fit)), "\n",
  "}\n"
)
dir.create(dirname(out), showWarnings = FALSE, recursive = TRUE)
writeLines(json, out, sep = "")
cat("wrote", out, "\n")
