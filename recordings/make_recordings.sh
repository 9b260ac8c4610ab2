#!/usr/bin/env bash
# Regenerates the synthetic demo recordings of this folder with `loopwright simulate`.
#   recordings/make_recordings.sh [BINARY [OUTDIR]]
# BINARY defaults to build/src/app/loopwright, OUTDIR to this folder. Every file is synthetic:
# the true model, noise and seed of each are on its card in README.md, and a test
# (app_recordings_determinism) checks that a fresh run reproduces the committed files exactly.
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
bin=${1:-"$here/../build/src/app/loopwright"}
out=${2:-"$here"}
bin=$(cd "$(dirname "$bin")" && pwd)/$(basename "$bin")
mkdir -p "$out"
cd "$out"
# Run as plain `loopwright` from the output folder so the provenance line in each file names
# neither this machine's paths nor the build folder.
lw() { PATH="$(dirname "$bin"):$PATH" loopwright "$@" >/dev/null; }

# 1. Extruder barrel heater zone, open-loop step of heater power 55 -> 65 % at 120 s.
lw simulate --plant '2.6*exp(-38*s)/((240*s+1)*(45*s+1))' --input step:55:65:120 \
  --rate 1 --duration 1800 --noise 0.15 --quantize 0.1 --seed 101 -o heater_zone_step.csv

# 2. Conveyor belt drive, open-loop speed command 30 -> 50 % at 1 s, back to 40 % at 5 s.
lw simulate --plant '0.021*exp(-0.12*s)/(0.85*s+1)' --input step:30:50:1,step:50:40:5 \
  --rate 100 --duration 9 --noise 0.002 --seed 202 -o conveyor_drive_step.csv

# 3. Tank level (integrating): inflow valve 0 -> 8 % above the balance point at 30 s.
lw simulate --plant '0.05*exp(-2.5*s)/(s*(6*s+1))' --input step:0:8:30 \
  --rate 2 --duration 300 --noise 0.3 --seed 303 -o tank_level_step.csv

# 4. The heater zone of (1) under PI control, set-point 150 -> 170 degC at 60 s, heater 0-100 %.
lw simulate --plant '2.6*exp(-38*s)/((240*s+1)*(45*s+1))' --controller pi:0.005 --gain 1.2 \
  --reference step:150:170:60 --saturate 0:100 --rate 1 --duration 1500 --noise 0.15 \
  --quantize 0.1 --seed 404 -o heater_zone_closed_loop.csv

# 5. The same zone after a rework (new heater band): slower and a little weaker.
lw simulate --plant '2.4*exp(-41*s)/((312*s+1)*(45*s+1))' --input step:55:65:120 \
  --rate 1 --duration 1800 --noise 0.15 --quantize 0.1 --seed 505 -o heater_zone_after_rework.csv
