# Neighbour lists of a polygon layer by R's spdep::poly2nb (Debian r-cran-spdep), read with sf
# (Debian r-cran-sf). Usage: Rscript nc_neighbours.R LAYER ID_FIELD rook|queen OUT.csv
# Writes "a,b" per neighbouring pair, a < b as strings, sorted. poly2nb's snap is left at its
# default, sqrt(.Machine$double.eps) (about 1.5e-8 in the layer's units, here degrees).
suppressPackageStartupMessages({library(sf); library(spdep)})
args <- commandArgs(trailingOnly = TRUE)
layer <- st_read(args[1], quiet = TRUE)
ids <- as.character(layer[[args[2]]])
nb <- poly2nb(layer, queen = args[3] == "queen")
pairs <- character(0)
for (i in seq_along(nb)) for (j in nb[[i]]) if (j > 0 && ids[i] < ids[j]) pairs <- c(pairs, paste(ids[i], ids[j], sep = ","))
writeLines(c("a,b", sort(pairs)), args[4])
