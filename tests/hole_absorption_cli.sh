#!/bin/sh
# hole_absorption_cli.sh [BINARY] — `epiwell hole-absorption`: its JSON read by Python's json
# module (an independent parser) against the CSV and the table of the same run, the contract
# keys, the k∥ = 0 selection rule read off the written transitions (hh1 -> hh2 TM only:
# Y.-C. Chang, R. B. James, Phys. Rev. B 39, 12672 (1989), from memory), the picture, usage
# and input errors.  POSIX sh; last line "hole_absorption_cli: N passed, M failed".
. "$(dirname "$0")/lib.sh"
use_binary "${1:-build/epiwell}"
cd "$root" || exit 1
make_tmp holeabscli "hole_absorption_cli: 0 passed, 1 failed"

cat >"$tmp/w.cfg" <<'CFG'
temperature = 77.0;
layers = (
  { name = "b1"; material = "AlGaAs"; x = 0.3; thickness = 12.0; },
  { name = "well"; material = "GaAs"; thickness = 5.0; },
  { name = "b2"; material = "AlGaAs"; x = 0.3; thickness = 12.0; }
);
CFG

run "$bin" hole-absorption "$tmp/w.cfg" --density 3e11 --linewidth 5 --energy 0.01:0.2:0.002 \
  --json --csv "$tmp/a.csv" --plot "$tmp/a.svg"
cp "$tmp/out" "$tmp/a.json"
if [ "$rc" -eq 0 ]; then ok "hole-absorption --json --csv --plot: exit 0"; else nok "hole-absorption: exit 0" "exit $rc: $(head -n 2 "$tmp/err")"; fi
run "$bin" hole-absorption "$tmp/w.cfg" --density 3e11 --linewidth 5 --energy 0.01:0.2:0.002
cp "$tmp/out" "$tmp/a.txt"

out=$(python3 - "$tmp/a.json" "$tmp/a.csv" "$tmp/a.txt" <<'PY' 2>&1
import csv, json, sys
d = json.load(open(sys.argv[1]))
rows = list(csv.DictReader(open(sys.argv[2])))
table = open(sys.argv[3]).read().split("\n")
bad = []
for k in ["density_cm2", "fermi_eV", "energy_eV", "absorption_te_cm", "absorption_tm_cm", "transitions"]:
    if k not in d: bad.append("no " + k)
if d["density_cm2"] != 3e11: bad.append("density %s" % d["density_cm2"])
if d["linewidth_meV"] != 5 or d["lineshape"] != "sech": bad.append("lineshape")
e = d["energy_eV"]
if len(e) != 96 or abs(e[0] - 0.01) > 1e-12 or abs(e[-1] - 0.2) > 1e-9: bad.append("energies %d" % len(e))
if len(rows) != len(e): bad.append("csv rows %d" % len(rows))
for i, row in enumerate(rows):
    for k in ["energy_eV", "absorption_te_cm", "absorption_tm_cm"]:
        v = d[k][i]
        if abs(float(row[k]) - v) > 1e-9 * abs(v) + 1e-300: bad.append("csv %s row %d" % (k, i)); break
tr = {(t["from"], t["to"]): t for t in d["transitions"]}
t = tr.get(("hh1", "hh2"))
if not t: bad.append("no hh1 -> hh2")
else:
    if not (t["tm_eV2nm2"] > 1e-3 and t["te_eV2nm2"] < 1e-9 * t["tm_eV2nm2"]): bad.append("hh1->hh2 not TM only")
    # the TM peak lies on the hh1 -> hh2 line (within the 5 meV width)
    tm = d["absorption_tm_cm"]
    peak = e[tm.index(max(tm))]
    if abs(peak - t["energy_eV"]) > 0.005: bad.append("TM peak %g vs hh1->hh2 %g" % (peak, t["energy_eV"]))
# table: Fermi level (%.6f) and one row per transition (%.6f energies)
head = table[0]
if "%.6f" % d["fermi_eV"] not in head: bad.append("table Fermi level")
rows_t = [l.split() for l in table if len(l.split()) == 5 and l.split()[0] in ("hh1", "lh1", "hh2", "lh2", "hh3", "so1")]
if len(rows_t) != len(d["transitions"]): bad.append("table rows %d" % len(rows_t))
for x, r in zip(d["transitions"], rows_t):
    if r[0] != x["from"] or r[1] != x["to"] or abs(float(r[2]) - x["energy_eV"]) > 6e-7: bad.append("table row %s" % r)
print("; ".join(bad) if bad else "OK")
PY
)
if [ "$out" = OK ]; then ok "JSON = CSV = table; contract keys; hh1 -> hh2 TM only"; else nok "JSON/CSV/table agreement" "$out"; fi

if [ -s "$tmp/a.svg" ] && grep -q '<svg' "$tmp/a.svg" && grep -q 'TM' "$tmp/a.svg"; then
  ok "--plot writes an SVG with the TE and TM curves"
else
  nok "--plot SVG" "missing or without labels"
fi

run "$bin" hole-absorption "$tmp/w.cfg"
if [ "$rc" -eq 1 ] && grep -q -- '--density' "$tmp/err"; then ok "no --density: exit 1 naming it"; else nok "no --density" "exit $rc"; fi
run "$bin" hole-absorption "$tmp/w.cfg" --density -1
if [ "$rc" -eq 1 ]; then ok "--density -1: exit 1"; else nok "--density -1" "exit $rc"; fi
run "$bin" hole-absorption "$tmp/w.cfg" --density 1e11 --model 8band
if [ "$rc" -eq 1 ] && grep -q -- '--model' "$tmp/err"; then ok "--model 8band: exit 1"; else nok "--model 8band" "exit $rc"; fi
# the pointer to the usage names the whole command, hyphen and all (it once said 'epiwell hole')
if grep -q "run 'epiwell hole-absorption --help'" "$tmp/err"; then ok "usage error points at 'epiwell hole-absorption --help'"; else nok "usage pointer" "$(tail -n 1 "$tmp/err")"; fi
run "$bin" hole-absorption "$tmp/w.cfg" "$tmp/w.cfg" --density 1e11
if [ "$rc" -eq 1 ] && grep -q 'more than one stack file' "$tmp/err"; then ok "two stack files: exit 1"; else nok "two stack files" "exit $rc"; fi
run "$bin" hole-absorption "$tmp/w.cfg" --density 1e11 --csv "$tmp/no/such/dir/a.csv"
if [ "$rc" -ne 0 ] && grep -q -- '--csv' "$tmp/err" && [ ! -s "$tmp/out" ]; then ok "--csv into a missing directory: refused before any work"; else nok "--csv missing dir" "exit $rc"; fi
run "$bin" hole-absorption "$tmp/w.cfg" --density 1e11 --energy 0.2:0.1:0.01
if [ "$rc" -eq 1 ]; then ok "--energy TO < FROM: exit 1"; else nok "--energy reversed" "exit $rc"; fi
sed 's/thickness = 5.0; }/thickness = 5.0; doping = { acceptors = 1e18; }; }/' "$tmp/w.cfg" >"$tmp/doped.cfg"
run "$bin" hole-absorption "$tmp/doped.cfg" --density 1e11
if [ "$rc" -eq 2 ] && grep -q 'doped' "$tmp/err"; then ok "doped stack: exit 2"; else nok "doped stack" "exit $rc: $(head -n 1 "$tmp/err")"; fi

finish hole_absorption_cli
