#!/usr/bin/env bash
# Fuzz smoke run of the rig protocol parser (tests/fuzz/fuzz_protocol.cc): builds it with clang's
# libFuzzer, address and undefined-behaviour sanitizers, then runs it for a bounded time on a copy
# of tests/fuzz/corpus_protocol. Fails when the target crashes, leaks or breaks an invariant; the
# crashing input is kept in the work folder.
#   fuzz_protocol.sh CLANGXX SOURCE_DIR WORK_DIR SECONDS
set -euo pipefail
cxx=$1 src=$2 work=$3 seconds=${4:-10}
mkdir -p "$work"
"$cxx" -std=c++20 -O1 -g -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=undefined \
  -I"$src" -I"$src/src" -w "$src/tests/fuzz/fuzz_protocol.cc" "$src/io/rig_protocol.cc" \
  -o "$work/fuzz_protocol"
corpus="$work/corpus_protocol"
rm -rf "$corpus" && mkdir -p "$corpus"
echo "fuzz_protocol: running for ${seconds}s"
if ! (cd "$work" && ./fuzz_protocol -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
      -max_len=4096 -print_final_stats=1 "$corpus" "$src/tests/fuzz/corpus_protocol" \
      > "$work/fuzz_protocol.log" 2>&1); then
  tail -40 "$work/fuzz_protocol.log"
  echo "fuzz_protocol: FAILED; crashing input in $work (crash-* / leak-* / timeout-*)"
  exit 1
fi
grep -E '^stat::number_of_executed_units|^Done' "$work/fuzz_protocol.log" || true
