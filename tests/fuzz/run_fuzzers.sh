#!/usr/bin/env bash
# Builds the libFuzzer targets with clang (address and undefined-behaviour sanitizers) into
# BUILD_DIR, replays every saved regression input, then fuzzes each target for a bounded time.
# Exits non-zero if any input crashes, hangs or trips a sanitizer; such inputs are copied into
# tests/fuzz/regressions/<target>/ so that they are replayed from then on (commit them).
#
#   tests/fuzz/run_fuzzers.sh BUILD_DIR [TARGET...]
#   PLANMILL_FUZZ_SECONDS  time per target (default 20)
#   PLANMILL_FUZZ_MAX_LEN  largest input in bytes (default 4096)
set -euo pipefail

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
build="${1:?usage: run_fuzzers.sh BUILD_DIR [TARGET...]}"
shift
seconds="${PLANMILL_FUZZ_SECONDS:-20}"
max_len="${PLANMILL_FUZZ_MAX_LEN:-4096}"

CC=clang CXX=clang++ cmake -S "$here/project" -B "$build" -G Ninja -DCMAKE_BUILD_TYPE=RelWithDebInfo >/dev/null
ninja -C "$build" >/dev/null

if [ "$#" -gt 0 ]; then
  targets=("$@")
else
  targets=()
  for source in "$here"/*_fuzz.cpp; do targets+=("$(basename "$source" .cpp)"); done
fi

failed=0
for target in "${targets[@]}"; do
  binary="$build/$target"
  regressions="$here/regressions/$target"
  corpus="$build/corpus/$target"
  artifacts="$build/artifacts/$target"
  mkdir -p "$regressions" "$corpus" "$artifacts"
  rm -f "$artifacts"/*

  saved=("$regressions"/*)
  if [ -e "${saved[0]}" ]; then
    echo "== $target: replaying ${#saved[@]} regression input(s)"
    if ! "$binary" -timeout=10 -rss_limit_mb=2048 "${saved[@]}" >"$build/$target.replay.log" 2>&1; then
      echo "!! $target fails on a saved regression input; see $build/$target.replay.log"
      tail -n 30 "$build/$target.replay.log"
      failed=1
      continue
    fi
  fi

  dict="$here/$target.dict"
  [ -f "$dict" ] || dict="$here/csv.dict"
  seeds=()
  [ -d "$here/seeds/$target" ] && seeds+=("$here/seeds/$target")
  echo "== $target: fuzzing for $seconds s"
  if ! "$binary" -max_total_time="$seconds" -max_len="$max_len" -timeout=10 -rss_limit_mb=2048 \
      -dict="$dict" -artifact_prefix="$artifacts/" -print_final_stats=1 \
      "$corpus" "${seeds[@]}" >"$build/$target.log" 2>&1; then
    echo "!! $target found a failing input; see $build/$target.log"
    tail -n 40 "$build/$target.log"
    failed=1
  fi
  for found in "$artifacts"/*; do
    [ -e "$found" ] || continue
    cp "$found" "$regressions/"
    echo "   saved $(basename "$found") in tests/fuzz/regressions/$target/"
  done
  grep -E "^stat::number_of_executed_units|^stat::peak_rss_mb" "$build/$target.log" | sed "s/^/   /" || true
done
exit "$failed"
