#!/usr/bin/env bash
# Fuzz smoke run: builds the libFuzzer targets with clang (address and undefined-behaviour
# sanitizers) straight from the sources, then runs each for a bounded time on a copy of its seed
# corpus. Fails (non-zero exit) when a target crashes, leaks, trips a sanitizer or breaks an
# invariant; the crashing input is kept in the work folder and named in the output.
#   fuzz_smoke.sh CLANGXX SOURCE_DIR WORK_DIR SECONDS_PER_TARGET
set -euo pipefail
cxx=$1 src=$2 work=$3 seconds=${4:-15}
mkdir -p "$work/obj"

flags=(-std=c++20 -O1 -g -fsanitize=fuzzer,address,undefined -fno-sanitize-recover=undefined
       -I"$src" -I"$src/src" -I/usr/include/eigen3 -w)

# Compile one source into an object unless the object is newer than the source and every file
# it included (from the dependency list clang writes beside it with -MMD).
stale() {  # stale OBJECT
  local object=$1 dep
  [ -f "$object" ] && [ -f "$object.d" ] || return 0
  for dep in $(sed -e 's/^[^:]*://' -e 's/\\$//' "$object.d"); do
    [ "$dep" -nt "$object" ] && return 0
  done
  return 1
}
compile() {
  local source=$1 object
  object="$work/obj/$(echo "${source#"$src"/}" | tr '/' '_').o"
  if stale "$object"; then
    "$cxx" "${flags[@]}" -fsanitize=fuzzer-no-link -MMD -MF "$object.d" -c "$source" \
      -o "$object" || return 1
  fi
  echo "$object"
}

build() {  # build NAME SOURCES... (file names, ".cc" added when missing)
  local name=$1; shift
  local objects=() pids=() outs=() i=0
  for s in "$@"; do
    [[ $s == *.cc ]] || s=$s.cc
    outs+=("$work/obj/.list.$name.$i")
    compile "$s" > "${outs[-1]}" &
    pids+=($!)
    i=$((i + 1))
    if [ ${#pids[@]} -ge 2 ]; then wait "${pids[0]}"; pids=("${pids[@]:1}"); fi
  done
  for p in "${pids[@]}"; do wait "$p"; done
  for o in "${outs[@]}"; do
    [ -s "$o" ] || { echo "fuzz_smoke: compiling for $name failed"; return 1; }
    objects+=("$(cat "$o")")
  done
  "$cxx" "${flags[@]}" "${objects[@]}" -o "$work/$name"
}

run() {  # run NAME SEED_CORPUS
  local name=$1 seeds=$2 corpus="$work/corpus_$1"
  rm -rf "$corpus" && mkdir -p "$corpus"
  echo "fuzz_smoke: running $name for ${seconds}s"
  if ! (cd "$work" && "./$name" -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 \
        -max_len=4096 -print_final_stats=1 "$corpus" "$seeds" > "$work/$name.log" 2>&1); then
    tail -40 "$work/$name.log"
    echo "fuzz_smoke: $name FAILED; crashing input in $work (crash-* / leak-* / timeout-*)"
    return 1
  fi
  grep -E '^stat::number_of_executed_units|^Done' "$work/$name.log" || true
}

build fuzz_csv "$src/tests/fuzz/fuzz_csv.cc" "$src"/io/csv_reader.cc "$src"/io/recording.cc \
  "$src"/io/csv_writer.cc "$src"/io/atomic_file.cc || exit 1
# The parser and what it links against; every src/lti source should that set stop linking.
lti=(plant_formula polynomial transfer_function number_text pade)
build fuzz_formula "$src/tests/fuzz/fuzz_formula.cc" "${lti[@]/#/$src/src/lti/}" 2>/dev/null ||
  build fuzz_formula "$src/tests/fuzz/fuzz_formula.cc" "$src"/src/lti/*.cc

status=0
run fuzz_csv "$src/tests/fuzz/corpus_csv" || status=1
run fuzz_formula "$src/tests/fuzz/corpus_formula" || status=1
exit $status
