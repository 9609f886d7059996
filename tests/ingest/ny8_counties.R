# Counties of the NY8 tracts (digits 3-5 of AREAKEY) and how many hold more people than one
# district may: floor((1 + tolerance) * total / k). Prints "<counties> <too big>".
# Usage: Rscript ny8_counties.R NY8_utm18.shp K TOLERANCE
args <- commandArgs(trailingOnly = TRUE)
suppressMessages(library(sf))
x <- st_read(args[1], quiet = TRUE)
k <- as.numeric(args[2]); tol <- as.numeric(args[3])
people <- tapply(round(x$POP8), substr(x$AREAKEY, 3, 5), sum)
hi <- floor((1 + tol) * sum(round(x$POP8)) / k)
cat(length(people), sum(people > hi), "\n")
