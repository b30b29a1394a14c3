#!/bin/sh
# kp_cli.sh [BINARY] — `epiwell dispersion` (k·p hole subbands): its JSON read by Python's
# json module (an independent parser) against the CSV of the same run and against `solve`'s
# single-band levels at k = 0 (same grid: the k = 0 limit of the 4-band model); the 8-band
# model's two sides against its CSV; the k grid;
# the picture; usage errors.  POSIX sh; last line "kp_cli: N passed, M failed".
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp kpcli "kp_cli: 0 passed, 1 failed"

cat >"$tmp/w.cfg" <<'CFG'
temperature = 300.0;
grid_step = 0.1;
layers = (
  { name = "b1"; material = "AlGaAs"; x = 0.3; thickness = 5.0; },
  { name = "well"; material = "GaAs"; thickness = 6.0; },
  { name = "b2"; material = "AlGaAs"; x = 0.3; thickness = 5.0; }
);
CFG

run "$bin" dispersion "$tmp/w.cfg" --points 6 --kmax 0.3 --json --csv "$tmp/d.csv" \
  --plot "$tmp/d.svg"
cp "$tmp/out" "$tmp/d.json"
if [ "$rc" -eq 0 ]; then ok "dispersion --json --csv --plot: exit 0"; else nok "dispersion: exit 0" "exit $rc: $(head -n 2 "$tmp/err")"; fi

run "$bin" solve "$tmp/w.cfg" --json --no-estimate
cp "$tmp/out" "$tmp/s.json"

out=$(python3 - "$tmp/d.json" "$tmp/d.csv" "$tmp/s.json" <<'PY' 2>&1
import csv, json, sys
d = json.load(open(sys.argv[1]))
rows = list(csv.reader(open(sys.argv[2])))
s = json.load(open(sys.argv[3]))
bad = []
if list(d.keys()) != ["model", "direction", "k_inv_nm", "subbands"]: bad.append("keys %s" % list(d.keys()))
if d["model"] != "4band" or d["direction"] != "100": bad.append("model/direction")
ks = d["k_inv_nm"]
if len(ks) != 6 or any(abs(k - 0.3 * i / 5) > 1e-12 for i, k in enumerate(ks)): bad.append("k grid %s" % ks)
# CSV columns = JSON subbands, value by value
if rows[0] != ["k_inv_nm"] + [b["label"] + "_eV" for b in d["subbands"]]: bad.append("csv header %s" % rows[0])
for i, r in enumerate(rows[1:]):
    if abs(float(r[0]) - ks[i]) > 1e-12: bad.append("csv k row %d" % i)
    for j, b in enumerate(d["subbands"]):
        if abs(float(r[j + 1]) - b["energy_eV"][i]) > 1e-12: bad.append("csv %s row %d" % (b["label"], i))
# k = 0: the single-band levels of solve on the same grid (to solver precision)
levels = {st["label"]: st["energy_eV"] for st in s["states"]}
n = 0
for b in d["subbands"]:
    if b["label"] in levels:
        n += 1
        if abs(b["energy_eV"][0] - levels[b["label"]]) > 1e-8: bad.append("k=0 %s %r vs %r" % (b["label"], b["energy_eV"][0], levels[b["label"]]))
    if b["band"] != b["label"][:2]: bad.append("band of %s" % b["label"])
if n < 3: bad.append("only %d labels matched solve's levels" % n)
print("; ".join(bad) if bad else "OK")
PY
)
if [ "$out" = OK ]; then ok "JSON = CSV value by value; k grid; k = 0 levels = solve's single-band levels"; else nok "JSON/CSV/solve agreement" "$out"; fi

if [ -s "$tmp/d.svg" ] && grep -q 'hh1' "$tmp/d.svg" && grep -q '<svg' "$tmp/d.svg"; then
  ok "--plot writes an SVG naming the subbands"
else
  nok "--plot SVG" "missing or without labels"
fi

run "$bin" dispersion "$tmp/w.cfg" --model 10band
if [ "$rc" -eq 1 ] && grep -q -- '--model' "$tmp/err"; then ok "--model 10band: exit 1 naming the option"; else nok "--model 10band" "exit $rc"; fi

# 8-band: electron and hole sides; JSON read back against the CSV of the same run, the
# electron side first (e1 upwards), then the holes from the top down
run "$bin" dispersion "$tmp/w.cfg" --model 8band --points 3 --kmax 0.2 --json --csv "$tmp/d8.csv"
cp "$tmp/out" "$tmp/d8.json"
out=$(python3 - "$tmp/d8.json" "$tmp/d8.csv" <<'PY' 2>&1
import csv, json, sys
d = json.load(open(sys.argv[1]))
rows = list(csv.reader(open(sys.argv[2])))
bad = []
if d["model"] != "8band": bad.append("model %s" % d["model"])
labs = [b["label"] for b in d["subbands"]]
if labs[0] != "e1" or d["subbands"][0]["band"] != "e" or "hh1" not in labs: bad.append("labels %s" % labs)
for b in d["subbands"]:
    if b["band"] != b["label"].rstrip("0123456789"): bad.append("band of %s" % b["label"])
if rows[0] != ["k_inv_nm"] + [l + "_eV" for l in labs]: bad.append("csv header %s" % rows[0])
for i, r in enumerate(rows[1:]):
    for j, b in enumerate(d["subbands"]):
        if abs(float(r[j + 1]) - b["energy_eV"][i]) > 1e-12: bad.append("csv %s row %d" % (b["label"], i))
e = [b["energy_eV"][0] for b in d["subbands"] if b["band"] == "e"]
h = [b["energy_eV"][0] for b in d["subbands"] if b["band"] != "e"]
if e != sorted(e) or h != sorted(h, reverse=True) or not min(e) > max(h) + 1.0: bad.append("order/gap %s %s" % (e, h))
print("; ".join(bad) if bad else "OK")
PY
)
if [ "$rc" -eq 0 ] && [ "$out" = OK ]; then ok "--model 8band: JSON = CSV, e1 first, GaAs-sized gap"; else nok "--model 8band" "exit $rc: $out $(head -n 2 "$tmp/err")"; fi
run "$bin" dispersion "$tmp/w.cfg" --direction 111
if [ "$rc" -eq 1 ]; then ok "--direction 111: exit 1"; else nok "--direction 111" "exit $rc"; fi
run "$bin" dispersion "$tmp/w.cfg" --points 1
if [ "$rc" -eq 1 ]; then ok "--points 1: exit 1"; else nok "--points 1" "exit $rc"; fi

# a layer of one material only binds no hole subband: an input error (exit 2)
printf 'layers = ( { name = "bulk"; material = "GaAs"; thickness = 20.0; } );\n' >"$tmp/bulk.cfg"
run "$bin" dispersion "$tmp/bulk.cfg" --points 3
if [ "$rc" -eq 2 ]; then ok "no bound hole subband: exit 2"; else nok "no bound subband" "exit $rc"; fi

finish kp_cli
