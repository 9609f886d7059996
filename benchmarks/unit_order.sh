#!/usr/bin/env bash
# Unit order and what it buys (docs/performance.md, "Unit order"): one map read three ways by
# planmill ingest, then the same recombination run on each, timed, and its plan files measured.
#   source    the layer's feature order (synth's own, already local: --source-order)
#   shuffled  the same features in a random order (seed 1), kept so (--source-order)
#   hilbert   the shuffled layer numbered along a Hilbert curve (ingest's default)
# Usage: benchmarks/unit_order.sh [UNITS] [DISTRICTS] [STEPS] [LAYER ID POP]   (from the checkout)
# With LAYER (any polygon layer, e.g. r-cran-sf's shape/nc.shp, FIPS, BIR74) it is read instead
# of synth's state; POP is the attribute taken as population.
set -euo pipefail
units=${1:-10000} districts=${2:-100} steps=${3:-2000}
bin=$(pwd)/build/planmill
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
cd "$work"
if [ $# -ge 6 ]; then
  ogr2ogr -f GeoJSON -lco SIGNIFICANT_FIGURES=17 layer.geojson "$4" >/dev/null
  id=$5 pop=$6 planar=""
  python3 - "$id" "$pop" "$districts" <<'PY'
import json, sys
layer = json.load(open("layer.geojson"))
rows = ["%s,%s" % (sys.argv[1], "pop")]
for f in layer["features"]:
    rows.append("%s,%d" % (f["properties"][sys.argv[1]], round(f["properties"][sys.argv[2]])))
open("extra.csv", "w").write("\n".join(rows) + "\n")
open("job-head.toml", "w").write('[map]\nunits = "units.csv"\nadjacency = "adjacency.csv"\nid = "%s"\npopulation = "pop"\n'
                                 'area = "area"\nperimeter = "perimeter"\nouter_boundary = "outer"\n[districts]\ncount = %s\n'
                                 '[rules]\npopulation_tolerance = 0.10\n' % (sys.argv[1], sys.argv[3]))
PY
else
  "$bin" synth --units "$units" --districts "$districts" --seed 2026 --out state >/dev/null
  cp state/units.geojson layer.geojson
  id=unit planar=--planar
  cp state/units.csv extra.csv
  grep -v '^geometry = ' state/job.toml | sed 's/^units = .*/units = "units.csv"/; s/^adjacency = .*/adjacency = "adjacency.csv"/' > job-head.toml
fi
python3 - <<'PY'
import json, random
layer = json.load(open("layer.geojson"))
random.Random(1).shuffle(layer["features"])
json.dump(layer, open("shuffled.geojson", "w"))
PY
for way in source shuffled hilbert; do
  case $way in
    source) src=layer.geojson order=--source-order ;;
    shuffled) src=shuffled.geojson order=--source-order ;;
    hilbert) src=shuffled.geojson order= ;;
  esac
  "$bin" ingest "$src" --id "$id" $planar $order --out "$way" >/dev/null
  # The unit table in ingest's order with the counts of the source table joined by id.
  python3 - "$way" "$id" <<'PY'
import csv, sys
way, id_field = sys.argv[1], sys.argv[2]
extra = {r[id_field]: r for r in csv.DictReader(open("extra.csv"))}
rows = list(csv.DictReader(open(way + "/units.csv")))
names = [id_field] + [c for c in next(iter(extra.values())) if c not in (id_field, "area", "perimeter", "outer")] + ["area", "perimeter", "outer"]
with open(way + "/units.csv", "w", newline="") as f:
    w = csv.writer(f)
    w.writerow(names)
    for r in rows:
        both = dict(extra[r[id_field]], **{k: r[k] for k in ("area", "perimeter", "outer")})
        w.writerow([both[n] for n in names])
PY
  { cat job-head.toml; printf '[sampler]\nkernel = "recombination"\nchains = 1\nsteps = %s\nrecord_every = 1\nseed = 3\n[output]\ncheckpoint_seconds = 3000\n' "$steps"; } > "$way/job.toml"
  start=$(date +%s.%N)
  "$bin" run "$way/job.toml" --output "$way/run" --quiet >/dev/null
  end=$(date +%s.%N)
  bytes=$(cat "$way"/run/plans/*.h5 | wc -c)
  python3 -c "import sys; s, e, b, n = map(float, sys.argv[1:]); print('%-8s %8.0f steps/s  %10d bytes of plan files  %7.1f bytes/plan' % ('$way', n / (e - s), b, b / n))" "$start" "$end" "$bytes" "$steps"
done
