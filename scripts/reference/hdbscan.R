#!/usr/bin/Rscript
# Reference values for lib/projection/hdbscan.ts from R's dbscan package (Debian's r-cran-dbscan,
# `apt-get install -y r-cran-dbscan`; dbscan::hdbscan by Hahsler, Piekenbrock & Doran, after
# Campello, Moulavi & Sander 2013). Writes tests/fixtures/projection/hdbscan-reference.json, which
# tests/unit/projection/hdbscan-reference.test.ts reads (CI has no R).
#
#     Rscript scripts/reference/hdbscan.R
#
# Cases:
# - "iris": the iris data scikit-learn ships (read from tests/fixtures/projection/pca-iris.csv, not
#   R's datasets::iris, which differs in two rows), minPts = 5, 10, 20.
# - "blobs": three Gaussian blobs of different spread and size plus uniform background noise in 3-D,
#   drawn here with set.seed(20261201) and rounded to multiples of 1/1024 (exact in float32, the
#   precision Asterism stores factors in), minPts = 5, 10, 20.
# dbscan::hdbscan(x, minPts) uses minPts both as min_samples (core distance = distance to the
# (minPts - 1)-th nearest other point) and as the smallest cluster size; cluster 0 is noise.
suppressMessages(library(dbscan))
library(jsonlite)

root <- normalizePath(file.path(dirname(sub("--file=", "", grep("--file=", commandArgs(FALSE), value = TRUE))), "..", ".."))
iris <- as.matrix(read.csv(file.path(root, "tests", "fixtures", "projection", "pca-iris.csv")))

set.seed(20261201)
blob <- function(size, centre, sd) matrix(rnorm(size * 3, sd = sd), ncol = 3) + matrix(centre, nrow = size, ncol = 3, byrow = TRUE)
blobs <- rbind(
  blob(150, c(0, 0, 0), 0.5),
  blob(100, c(5, 0, 1), 1.0),
  blob(60, c(0, 6, -2), 0.3),
  matrix(runif(40 * 3, min = -4, max = 9), ncol = 3)
)
blobs <- round(blobs * 1024) / 1024

run <- function(name, x, with_data) {
  fits <- lapply(c(5, 10, 20), function(minPts) {
    started <- proc.time()[["elapsed"]]
    fit <- hdbscan(x, minPts = minPts)
    list(
      minPts = minPts,
      cluster = as.integer(fit$cluster),
      coredist = as.numeric(fit$coredist),
      clusterScores = as.numeric(fit$cluster_scores),
      seconds = proc.time()[["elapsed"]] - started
    )
  })
  out <- list(name = name, n = nrow(x), d = ncol(x), fits = fits)
  if (with_data) out$data <- as.numeric(t(x))
  out
}

result <- list(
  source = "scripts/reference/hdbscan.R",
  dbscan = as.character(packageVersion("dbscan")),
  r = R.version.string,
  cases = list(run("iris", iris, FALSE), run("blobs", blobs, TRUE))
)
out <- file.path(root, "tests", "fixtures", "projection", "hdbscan-reference.json")
writeLines(toJSON(result, auto_unbox = TRUE, digits = NA), out)
cat("wrote", out, "\n")
