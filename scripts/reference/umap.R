#!/usr/bin/Rscript
# Reference layouts for lib/projection/umap.ts from R's uwot (Debian's r-cran-uwot,
# `apt-get install -y r-cran-uwot`). Writes tests/fixtures/projection/umap-uwot-digits.json, which
# tests/unit/projection/umap-uwot-reference.test.ts reads (CI has no R).
#
#     Rscript scripts/reference/umap.R
#
# Data: the digits data scikit-learn ships (tests/fixtures/projection/pca-digits.csv.gz, 1797 x 64,
# written by scripts/reference/pca.py). Settings as our UMAP defaults: n_neighbors = 15 (uwot, like
# us, counts the point itself), min_dist = 0.1, spread = 1, n_epochs = 500 (uwot's and our default
# below 10,000 points), init = "pca", exact neighbours (nn_method = "fnn", brute force, which
# uwot also picks by itself below 4,096 points), one SGD thread so that set.seed fixes the result.
# Three seeds, to show the spread of the reference itself. The layouts are stored rounded to 1e-4
# (trustworthiness, the quantity compared, only depends on the neighbour order).
suppressMessages(library(uwot))
library(jsonlite)

root <- normalizePath(file.path(dirname(sub("--file=", "", grep("--file=", commandArgs(FALSE), value = TRUE))), "..", ".."))
x <- as.matrix(read.csv(gzfile(file.path(root, "tests", "fixtures", "projection", "pca-digits.csv.gz")), header = FALSE))
storage.mode(x) <- "double"

layouts <- lapply(c(1, 2, 3), function(seed) {
  set.seed(seed)
  started <- proc.time()[["elapsed"]]
  y <- umap(x, n_neighbors = 15, min_dist = 0.1, spread = 1, n_epochs = 500, init = "pca",
            nn_method = "fnn", n_threads = 1, n_sgd_threads = 0, verbose = FALSE)
  list(seed = seed, seconds = proc.time()[["elapsed"]] - started, layout = round(as.numeric(t(y)), 4))
})

result <- list(
  source = "scripts/reference/umap.R",
  uwot = as.character(packageVersion("uwot")),
  r = R.version.string,
  n = nrow(x),
  d = ncol(x),
  settings = list(n_neighbors = 15, min_dist = 0.1, spread = 1, n_epochs = 500, init = "pca", nn_method = "fnn"),
  runs = layouts
)
out <- file.path(root, "tests", "fixtures", "projection", "umap-uwot-digits.json")
writeLines(toJSON(result, auto_unbox = TRUE, digits = NA), out)
cat("wrote", out, "\n")
