# test_spectrum.sh -- `tzero spectrum` from the command line: files and --job, CSV
# and JSON, output only when complete, and refusals with their exit statuses. The
# survey is written with segyio by tests/xcheck/test_stack_segyio.py (independent
# of tzero); its wavelet is a 25 Hz Ricker (Ricker 1953: the amplitude
# spectrum peaks at f_p). Statuses: sysexits(3).
. "$TOP/tests/e2e/lib.sh"
D="$T/sv"
"$PYTHON" "$TOP/tests/xcheck/test_stack_segyio.py" --make-survey "$D" || { notok "survey"; exit 1; }
J="$D/line.json"
expect_status 0 "--help" -- "$TZERO" spectrum --help
expect_stdout '[Ii]nterpretation aid' "--help carries the caution"
expect_stdout 'window START:END +time window in ms' "--help names the window option with units"
expect_status 0 "spectrum of a job's shots" -- "$TZERO" spectrum --job "$J" --records 1-3 --max-hz 100
expect_stdout '^frequency_hz,amplitude,amplitude_db$' "CSV header"
"$PYTHON" - "$T/out" <<'PY' && ok "CSV rows: peak 0 dB near the 25 Hz wavelet, up to 100 Hz" || notok "CSV rows"
import sys
rows = [l.split(",") for l in open(sys.argv[1]) if l[0].isdigit()]
f = [float(r[0]) for r in rows]; db = [float(r[2]) for r in rows]
k = db.index(max(db))
sys.exit(0 if max(db) == 0 and 18 <= f[k] <= 32 and f[-1] <= 100 else 1)
PY
expect_status 0 "JSON to a file" -- "$TZERO" spectrum --job "$J" --records 2 --window 100:700 \
  --json --out "$D/out/s.json"
"$PYTHON" -c 'import json,sys; d=json.load(open(sys.argv[1])); sys.exit(0 if d["traces"] > 0 and len(d["amplitude"]) == len(d["frequency_hz"]) else 1)' \
  "$D/out/s.json" && ok "JSON file parses, arrays of one length" || notok "JSON file"
SHOT=$(ls "$D"/shots/*.sgy | head -n 1)
expect_status 0 "spectrum of a file, --quiet --out" -- "$TZERO" spectrum --quiet --out "$D/out/f.csv" "$SHOT"
[ -s "$D/out/f.csv" ] && [ ! -s "$T/out" ] && ok "CSV written, nothing printed" || notok "--quiet --out"
expect_status 64 "no input" -- "$TZERO" spectrum
expect_status 64 "files and --job together" -- "$TZERO" spectrum --job "$J" "$SHOT"
expect_status 64 "backwards range" -- "$TZERO" spectrum --records 9-3 "$SHOT"
expect_stderr "runs backwards" "backwards range: message"
expect_status 64 "bad window" -- "$TZERO" spectrum --window 500:100 "$SHOT"
expect_status 64 "selection of nothing" -- "$TZERO" spectrum --records 9999 --out "$D/out/none.csv" "$SHOT"
expect_no_file "$D/out/none.csv" "no output after a failure"
expect_status 66 "missing file" -- "$TZERO" spectrum "$D/no-such.sgy"
expect_status 73 "output would replace the input" -- "$TZERO" spectrum --out "$SHOT" "$SHOT"

# --- pictures: spectra and the f-k spectrum of one record (PNG and SVG)
"$TZERO" spectrum --job "$J" --records 1-3 --quiet --out "$D/out/a.csv"
"$TZERO" spectrum --job "$J" --records 4-6 --window 300:900 --quiet --out "$D/out/b.csv"
expect_status 0 "picture of two spectra" -- "$TZERO" picture --spectrum "$D/out/a.csv,$D/out/b.csv" \
  --labels "records 1-3,records 4-6" --max-hz 120 --out "$D/out/spec.svg"
grep -c 'data-curve=' "$D/out/spec.svg" | grep -qx 2 && ok "SVG holds two curves" || notok "SVG curves"
grep -q 'FREQUENCY (Hz)' "$D/out/spec.svg" && ok "frequency axis labelled with its unit" || notok "axis label"
expect_status 0 "f-k picture of record 2" -- "$TZERO" picture --fk-record 2 "$D/shots/shot_0002.sgy" \
  --fan 300,600 --out "$D/out/fk.png"
expect_stdout '24 traces at 10 m' "f-k picture: the record's 24 traces at the 10 m receiver interval"
"$PYTHON" -c 'import sys; b=open(sys.argv[1],"rb").read(8); sys.exit(0 if b==b"\x89PNG\r\n\x1a\n" else 1)' \
  "$D/out/fk.png" && ok "f-k picture is a PNG" || notok "f-k picture is not a PNG"
expect_status 64 "f-k picture without a SEG-Y file" -- "$TZERO" picture --fk-record 2 --out "$D/out/x.png"
expect_status 65 "a spectrum picture of a file that is not a spectrum" -- "$TZERO" picture \
  --spectrum "$J" --out "$D/out/x.png"
expect_stderr 'frequency_hz and amplitude_db' "the message names the columns it needs"
expect_no_file "$D/out/x.png" "no picture after a failure"
expect_status 64 "labels and spectra of different counts" -- "$TZERO" picture \
  --spectrum "$D/out/a.csv" --labels "a,b" --out "$D/out/x.png"

# --- after the job's chain: a spiking deconvolution widens the band (the wavelet is
# whitened, Robinson & Treitel 1980), and the conditioned traces can be written
"$PYTHON" - "$J" "$D/decon.json" <<'PY'
import json, sys
job = json.load(open(sys.argv[1]))
job["conditioning"] = [{"step": "deconvolution", "operator_ms": 100, "prewhitening_pct": 1,
                        "window": [[0, 50, 950]], "ensemble": "record"}]
json.dump(job, open(sys.argv[2], "w"))
PY
expect_status 0 "spectrum after the job's chain" -- "$TZERO" spectrum --job "$D/decon.json" \
  --records 3-5 --conditioned --json --out "$D/out/after.json" --traces-out "$D/out/rec.sgy"
expect_status 0 "the same records as recorded" -- "$TZERO" spectrum --job "$D/decon.json" \
  --records 3-5 --json --out "$D/out/before.json"
"$PYTHON" - "$D/out/before.json" "$D/out/after.json" <<'PY' && ok "deconvolution widens the -20 dB band" || notok "decon did not widen the band"
import json, sys
def width(p):
    d = json.load(open(p))
    return sum(1 for v in d["amplitude_db"] if v > -20) * d["frequency_step_hz"]
b, a = width(sys.argv[1]), width(sys.argv[2])
print(f"# -20 dB band: {b:.1f} Hz recorded, {a:.1f} Hz after deconvolution")
sys.exit(0 if a > 1.3 * b else 1)
PY
"$PYTHON" -c 'import segyio,sys; f=segyio.open(sys.argv[1], ignore_geometry=True); sys.exit(0 if f.tracecount >= 60 else 1)' \
  "$D/out/rec.sgy" && ok "--traces-out writes the conditioned records (segyio reads them)" || notok "--traces-out"
expect_status 64 "--conditioned without --records" -- "$TZERO" spectrum --job "$D/decon.json" --conditioned
