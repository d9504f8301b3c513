#!/usr/bin/env bash
# Tests scripts/demo.sh (run by hand: bash scripts/demo_test.sh; not part of
# make test because it builds and runs the whole pipeline, about a minute).
#
#  1. A full run exits 0, writes every output it announces, stops its server
#     and finishes in under 2 minutes (issue 8).
#  2. A step that fails makes the demo exit non-zero with the step named.
#  3. A failure while the server runs still stops the server (the EXIT trap).
set -uo pipefail
cd "$(dirname "$0")/.."
tmp=$(mktemp -d)
trap 'rm -rf "$tmp"' EXIT
# Built into the temporary folder so that bin/termgrove (from make build,
# with its version) is left alone.
real=$tmp/termgrove
go build -o "$real" ./cmd/termgrove || exit 1
failures=0
bad() { echo "FAIL: $*"; failures=$((failures + 1)); }
ok() { echo "ok: $*"; }

# server_alive DIR: is a termgrove serve of the model under DIR still running?
server_alive() {
  local p
  for p in /proc/[0-9]*; do
    { tr '\0' ' ' <"$p/cmdline"; } 2>/dev/null | grep -q -- "serve --model demo=$1/demo.grove" && return 0
  done
  return 1
}

# 1. the whole demo
out1=$tmp/full
start=$(date +%s)
TERMGROVE=$real DEMO_OUT=$out1 bash scripts/demo.sh >"$tmp/full.log" 2>&1
rc=$?
secs=$(($(date +%s) - start))
if [ $rc -ne 0 ]; then
  bad "full demo exited $rc"
  tail -20 "$tmp/full.log"
else
  ok "full demo exited 0 in $secs s"
fi
[ "$secs" -lt 120 ] || bad "full demo took $secs s (limit 120 s)"
for f in demo.grove holdout.html holdout.json holdout.ttl gaps.html gaps.txt gaps.json score.txt serve.log; do
  [ -s "$out1/$f" ] || bad "missing or empty output $f"
  grep -q "$out1/$f" "$tmp/full.log" || bad "the demo does not print where $f is"
done
grep -q 'msg=stopped drained=true' "$out1/serve.log" || bad "server log has no clean stop"
grep -q 'demo: all steps passed' "$tmp/full.log" || bad "no final 'all steps passed'"
grep -q '^hv-9001' "$tmp/full.log" || bad "annotate terminal view lacks hv-9001"
[ "$(grep -c '^hv-900[1-6] ' "$tmp/full.log")" -ge 7 ] || bad "fewer than 6 held-out records + 1 server call in the terminal view"
server_alive "$out1" && bad "server still running after the full demo"

# A wrapper binary that fails one chosen command and runs the real one otherwise.
cat >"$tmp/tg" <<EOF
#!/usr/bin/env bash
case " \$* " in
  *" \$FAIL_WHEN "*) echo "injected failure" >&2; exit 7 ;;
esac
exec "$real" "\$@"
EOF
chmod +x "$tmp/tg"

# 2. a failing step stops the demo with its name
out2=$tmp/failfit
FAIL_WHEN="--free-topics" TERMGROVE=$tmp/tg DEMO_OUT=$out2 bash scripts/demo.sh >"$tmp/failfit.log" 2>&1
rc=$?
if [ $rc -eq 0 ]; then bad "demo exited 0 although fit failed"; else ok "failing fit: exit $rc"; fi
grep -q 'demo: FAILED: fit exited with status 7' "$tmp/failfit.log" || bad "failure message does not name the fit step"
grep -q '3/6 annotate' "$tmp/failfit.log" && bad "demo went on after fit failed"

# 3. a failure while the server runs: the trap stops the server
out3=$tmp/failclient
FAIL_WHEN="--server" TERMGROVE=$tmp/tg DEMO_OUT=$out3 bash scripts/demo.sh >"$tmp/failclient.log" 2>&1
rc=$?
if [ $rc -eq 0 ]; then bad "demo exited 0 although the --server call failed"; else ok "failing --server call: exit $rc"; fi
grep -q 'annotate --server exited with status 7' "$tmp/failclient.log" || bad "failure message does not name the --server step"
sleep 1
if server_alive "$out3"; then bad "server left running after a failed step"; else ok "server stopped by the trap"; fi
grep -q 'msg=stopped' "$out3/serve.log" || bad "server was not stopped gracefully by the trap"

if [ $failures -gt 0 ]; then
  echo "demo_test: $failures failure(s)"
  exit 1
fi
echo "demo_test: all passed"
