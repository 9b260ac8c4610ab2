#!/usr/bin/env bash
# The loopwright demo: recordings/demo.sh BINARY OUTDIR (run by `./bootstrap demo`).
#
# A walk through the tool on synthetic data only: it reads and writes files, it drives no
# hardware. Each step has a banner; later steps (fit, band, predict) are appended at the marker
# near the end, one numbered step each.
set -euo pipefail
bin=${1:?usage: recordings/demo.sh BINARY OUTDIR}
out=${2:?usage: recordings/demo.sh BINARY OUTDIR}
here=$(cd "$(dirname "$0")" && pwd)
mkdir -p "$out"
out=$(cd "$out" && pwd)

step=0
banner() {
  step=$((step + 1))
  printf '\n=== step %d: %s ===\n' "$step" "$*"
}
say_command() { printf '$ %s\n' "$*" | sed "s#$bin#loopwright#; s#$out/##g; s#$here/##g"; }
run() {
  say_command "$@"
  "$@"
}
# The command line shown, its output not (tables already shown in an earlier step).
quiet() {
  say_command "$@"
  "$@" > /dev/null
}

cat <<'TEXT'
loopwright demo: the extruder heater zone of recordings/README.md (synthetic data).
This demo drives no hardware. On a real rig: keep the emergency stop within reach, verify the
actuator and process limits, start at a low gain, let a qualified person decide, and follow
local codes and the site's procedures first.
TEXT

# The scenario: zone 3 of an extruder barrel, heater power (%) to zone temperature (degC above
# ambient), true model 2.6 exp(-38 s) / ((240 s + 1)(45 s + 1)) (see recordings/README.md).
zone='2.6*exp(-38*s)/((240*s+1)*(45*s+1))'

banner "simulate the open-loop step test of the heater zone (a dry run before the rig)"
run "$bin" simulate --plant "$zone" --input step:55:65:120 --rate 1 --duration 1800 \
  --noise 0.15 --quantize 0.1 --seed 101 -o "$out/heater_zone_step.csv"
if cmp -s <(tail -n +2 "$out/heater_zone_step.csv") <(tail -n +2 "$here/heater_zone_step.csv"); then
  echo "same data as the bundled recordings/heater_zone_step.csv (same seed, same file)"
else
  echo "note: differs from the bundled recording; run recordings/make_recordings.sh to refresh it"
fi

banner "simulate the zone under PI control with the heater limited to 0-100 %"
run "$bin" simulate --plant "$zone" --controller pi:0.005 --gain 1.2 \
  --reference step:150:170:60 --saturate 0:100 --rate 1 --duration 1500 \
  -o "$out/heater_zone_closed_loop_dry_run.csv"

banner "fit a model to the step test: every structure, chosen by AICc, with 95 % intervals"
run "$bin" fit "$out/heater_zone_step.csv" -o "$out/heater_zone_model.json" \
  --plot "$out/heater_zone_fit.svg"
echo "model file: heater_zone_model.json (parameters, covariance, provenance)"

banner "find every PI gain whose closed loop overshoots <= 10 % and settles (2 %) within 1000 s"
run "$bin" band "$out/heater_zone_model.json" --controller pi:0.004 --overshoot-max 10 \
  --settle-max 1000 --save "$out/heater_zone_band.json" --plot "$out/heater_zone_locus.svg"
echo "band figures: $out/heater_zone_locus.svg (root locus over the admissible region)"
echo "              $out/heater_zone_locus-metrics.svg (rise, overshoot, settling against K)"

banner "predict the loop at a gain inside the band, for a 150 -> 170 setpoint step, heater 0-100 %"
run "$bin" predict "$out/heater_zone_model.json" --controller pi:0.004 --gain 0.46 \
  --reference step:150:170:60 --duration 1500 --actuator 0:100 --overshoot-max 10 \
  --save "$out/heater_zone_prediction.json" --plot "$out/heater_zone_response.svg"
echo "prediction figure: $out/heater_zone_response.svg (envelope over the fit's parameter draws)"

# Pattern for further steps: banner "what this step shows"; run "$bin" COMMAND ...; files go to "$out".

# ---- refit after a hardware change ----
banner "after the heater band was replaced: refit the zone, compare with the first model and band"
run "$bin" fit "$here/heater_zone_after_rework.csv" --compare "$out/heater_zone_model.json" \
  --band "$out/heater_zone_band.json" -o "$out/heater_zone_rework_model.json"
echo "new model file: heater_zone_rework_model.json (its details hold the comparison)"

banner "fit the plant inside the loop from the closed-loop recording (PI 1.2 (s + 0.005)/s)"
run "$bin" fit "$here/heater_zone_closed_loop.csv" --closed-loop --controller pi:0.005 --gain 1.2

# ---- check the model against the closed-loop recording ----
banner "check the model against the zone's closed-loop recording (PI 1.2 (s + 0.005)/s, heater 0-100 %)"
check_status=0
run "$bin" check "$out/heater_zone_model.json" --controller pi:0.005 --gain 1.2 \
  "$here/heater_zone_closed_loop.csv" --actuator 0:100 --plot "$out/heater_zone_check.svg" \
  --save "$out/heater_zone_check.json" || check_status=$?
echo "check verdict: $(sed -n 's/.*"verdict": "\([a-z]*\)".*/\1/p' "$out/heater_zone_check.json") (exit status $check_status: 0 means confirmed, 1 stale or saturated)"

# ---- rig workspace and logbook ----
banner "keep a rig workspace: a profile and a logbook; fit both heater zone step tests into it"
rm -rf "$out/heater_rig"  # the demo's own workspace from an earlier run
run "$bin" init "$out/heater_rig" --name "extruder zone 3" --period 1 --actuator 0:100 \
  --actuator-unit % --trip -20:260 --output-unit degC --max-gain 2
quiet "$bin" --rig "$out/heater_rig" fit "$here/heater_zone_step.csv" --structure sopdt
quiet "$bin" --rig "$out/heater_rig" fit "$here/heater_zone_after_rework.csv" --structure sopdt
echo "(each fit logged in the workspace; its table as in steps 3 and 6)"

banner "the rig's history, and how its parameters moved after the heater band was replaced"
run "$bin" log --rig "$out/heater_rig"
run "$bin" drift --rig "$out/heater_rig" --plot "$out/heater_rig/drift.svg"
echo "drift figure: $out/heater_rig/drift.svg"

# ---- the whole tune job on the emulated heater zone ----
banner "tune the emulated heater zone end to end: step test, fit, band, gain, verify, report"
echo "(loopwright emulate runs the zone's synthetic plant on a pseudo-terminal, 300x real time)"
emu_out=$(mktemp)
"$bin" emulate --scenario heater-zone --pty --speed 300 --seed 7 >"$emu_out" 2>"$out/emulator.log" &
emu_pid=$!
for _ in $(seq 100); do [ -s "$emu_out" ] && break; sleep 0.1; done
rig_port=$(head -n 1 "$emu_out")
rm -rf "$out/heater_tune"
tune_status=0
run "$bin" --rig "$out/heater_rig" tune --port "$rig_port" --controller pi:0.004 \
  --overshoot-max 10 --settle-max 1000 --yes --dir "$out/heater_tune" || tune_status=$?
kill -TERM "$emu_pid" 2>/dev/null || true
wait "$emu_pid" 2>/dev/null || true
rm -f "$emu_out"
echo "tune exit status $tune_status (0: verify confirmed); files in $out/heater_tune"

# ---- figures and the report: keep this the last step ----
banner "assemble the one-page HTML report from the model, band, prediction and fit figure"
report_inputs=("$out/heater_zone_model.json")
for f in "$out"/*_band.json "$out"/*_prediction.json "$out"/*_check.json "$out"/*.svg; do
  [ -f "$f" ] && report_inputs+=("$f")
done
run "$bin" report "${report_inputs[@]}" --title "Extruder heater zone tuning (synthetic demo)" \
  -o "$out/report.html"
echo "figure: $out/heater_zone_fit.svg"
echo "report: $out/report.html (self-contained; open it in a browser or print it on A4)"

printf '\ndemo done: files in %s\n' "$out"
