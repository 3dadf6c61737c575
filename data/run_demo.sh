#!/bin/sh
# The demo scenario end to end (invented data: see data/README.md).
#   sh data/run_demo.sh PATH/TO/scatterprop OUTDIR
# The demo owns OUTDIR: its files are replaced on every run (--force).
set -eu
SP=${1:-build/scatterprop}
OUT=${2:-demo-out}
DATA=$(dirname "$0")
mkdir -p "$OUT/fits" "$OUT/run"

step() { printf '\n==== %s\n' "$*"; }

step "1. Incoming wire: diameter by lot (data/wire_d.csv)"
"$SP" summary "$DATA/wire_d.csv" --column wire_d --by lot
step "2. Wound coils: mean coil diameter (data/coil_dm.csv)"
"$SP" summary "$DATA/coil_dm.csv"
step "3. Torsion coupons: shear modulus (data/shear_modulus.csv)"
"$SP" summary "$DATA/shear_modulus.csv" --by lot
step "4. Assembly line: load at assembled length (data/assembly_load.csv)"
"$SP" summary "$DATA/assembly_load.csv" --by station

step "5. Fit the wire diameter, lot by lot and pooled"
"$SP" fit "$DATA/wire_d.csv" --column wire_d --by lot --out "$OUT/fits/wire_d.json" \
  --plots "$OUT/plots" --force
step "6. Fit the coil diameter, the shear modulus (by lot) and the assembly load (by station)"
"$SP" fit "$DATA/coil_dm.csv" --column Dm --out "$OUT/fits/coil_dm.json" \
  --plots "$OUT/plots" --force
"$SP" fit "$DATA/shear_modulus.csv" --column G --by lot --out "$OUT/fits/shear_modulus.json" \
  --plots "$OUT/plots" --force
"$SP" fit "$DATA/assembly_load.csv" --column load --by station \
  --out "$OUT/fits/assembly_load.json" --plots "$OUT/plots" --force

step "7. Propagate the measured scatter through the spring model (data/spring.spm)"
cp "$DATA/spring.spm" "$OUT/spring.spm"
"$SP" propagate "$OUT/spring.spm" --samples 1000000 --seed 20261201 --out "$OUT/run" \
  --plots "$OUT/plots" --force

step "8. The report: provenance, data, fits, model, results, limits, sensitivity"
"$SP" report "$OUT/run/run.json" --force

printf '\nDemo finished. Fit records: %s/fits/, run record and tables: %s/run/,\n' "$OUT" "$OUT"
printf 'charts: %s/plots/, report: %s/run/report.html\n' "$OUT" "$OUT"
